import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { NetcdfAttribute, NetcdfDataset, NetcdfType, NetcdfVariable } from './dataset';
import { NetcdfFileError } from './errors';

type H5 = typeof import('h5wasm/node');
type H5Dataset = InstanceType<H5['Dataset']>;

let loading: Promise<H5> | null = null;

/**
 * h5wasm's Node build (the package's `h5wasm/node` export, which reads the host file system through Emscripten's
 * NODERAWFS), loaded once. HDF5 errors are made to throw instead of printing the library's error stack.
 */
function h5wasm(): Promise<H5> {
  loading ??= import('h5wasm/node').then(async (h5) => {
    await h5.ready;
    h5.Module.activate_throwing_error_handler();
    return h5;
  });
  return loading;
}

/** HDF5 datatype classes (H5Tpublic.h: H5T_INTEGER 0, H5T_FLOAT 1, H5T_STRING 3). */
const H5T_INTEGER = 0;
const H5T_FLOAT = 1;
const H5T_STRING = 3;

function typeOf(metadata: { type: number; size: number; signed: boolean }): NetcdfType | null {
  if (metadata.type === H5T_FLOAT) return metadata.size === 4 ? 'float' : metadata.size === 8 ? 'double' : null;
  if (metadata.type === H5T_STRING) return 'string';
  if (metadata.type !== H5T_INTEGER) return null;
  const names: Record<number, [NetcdfType, NetcdfType]> = { 1: ['byte', 'ubyte'], 2: ['short', 'ushort'], 4: ['int', 'uint'], 8: ['int64', 'uint64'] };
  const pair = names[metadata.size];
  return pair ? pair[metadata.signed ? 0 : 1] : null;
}

/** Attributes netCDF-4 keeps for itself (dimension scales and its own bookkeeping), not the file's metadata. */
const INTERNAL = /^(?:CLASS|NAME|REFERENCE_LIST|DIMENSION_LIST|DIMENSION_LABELS|_Netcdf4Coordinates|_Netcdf4Dimid|_nc3_strict|_NCProperties|_IsNetcdf4)$/;

function attributeOf(value: unknown, type: NetcdfType | null): NetcdfAttribute | null {
  if (typeof value === 'string') return { type: 'text', text: value };
  if (Array.isArray(value) && value.every((v) => typeof v === 'string')) return { type: 'text', text: value.join(' ') };
  if (type === null || type === 'string') return null;
  if (typeof value === 'number' || typeof value === 'bigint') return { type, numbers: [Number(value)] };
  if (ArrayBuffer.isView(value)) return { type, numbers: Array.from(value as unknown as ArrayLike<number | bigint>, Number) };
  return null;
}

/** A dataset that only carries a dimension (netCDF-4 writes one for each dimension without a coordinate variable). */
function isBareDimension(dataset: H5Dataset): boolean {
  const name = dataset.attrs.NAME?.value;
  return typeof name === 'string' && name.startsWith('This is a netCDF dimension but not a netCDF variable');
}

/**
 * Opens a netCDF-4 (HDF5) file with h5wasm and gives its root group's variables, each dimension named by the HDF5
 * dimension scale attached to it (how netCDF-4 records dimensions: netCDF User Guide, "NetCDF-4 Format"). Values
 * are read inside `use`, and the file is closed after it. An upload's bytes are written to a private temporary
 * file first, since the HDF5 library reads files.
 */
export async function withHdf5<T>(source: { path: string } | { bytes: Uint8Array }, use: (dataset: NetcdfDataset) => T): Promise<T> {
  const h5 = await h5wasm();
  let folder: string | null = null;
  let file = 'path' in source ? source.path : '';
  if ('bytes' in source) {
    folder = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-netcdf-'));
    file = path.join(folder, 'upload.nc');
    fs.writeFileSync(file, source.bytes, { mode: 0o600 });
  }
  try {
    let handle: InstanceType<H5['File']>;
    try {
      handle = new h5.File(file, 'r');
    } catch (error) {
      throw damaged(error);
    }
    try {
      return use(variablesOf(h5, handle));
    } catch (error) {
      if (error instanceof NetcdfFileError) throw error;
      throw damaged(error);
    } finally {
      handle.close();
    }
  } finally {
    if (folder) fs.rmSync(folder, { recursive: true, force: true });
  }
}

function variablesOf(h5: H5, file: InstanceType<H5['File']>): NetcdfDataset {
  const variables = new Map<string, NetcdfVariable>();
  for (const name of file.keys()) {
    const dataset = file.get(name);
    if (!(dataset instanceof h5.Dataset) || isBareDimension(dataset)) continue;
    const metadata = dataset.metadata;
    const type = typeOf(metadata);
    if (!type) continue;
    const shape = dataset.shape ?? [];
    const dimensions = shape.map((_, i) => {
      const scale = dataset.get_attached_scales(i)[0];
      return scale ? scale.replace(/^.*\//, '') : shape.length === 1 && dataset.attrs.CLASS?.value === 'DIMENSION_SCALE' ? name : `${name}#${i}`;
    });
    const attributes = new Map<string, NetcdfAttribute>();
    for (const [attributeName, attribute] of Object.entries(dataset.attrs)) {
      if (INTERNAL.test(attributeName)) continue;
      const value = attributeOf(attribute.value, typeOf(attribute.metadata));
      if (value) attributes.set(attributeName, value);
    }
    variables.set(name, {
      name,
      type,
      dimensions,
      shape,
      attributes,
      read: () => {
        const value = dataset.value;
        if (!ArrayBuffer.isView(value)) throw new NetcdfFileError('not-numeric', `The variable "${name}" does not hold numbers.`);
        return Float64Array.from(value as unknown as ArrayLike<number | bigint>, Number);
      },
    });
  }
  return { format: 'netCDF-4', variables };
}

function damaged(error: unknown): NetcdfFileError {
  const text = error instanceof Error ? error.message : String(error);
  if (/truncated file/i.test(text)) {
    const sizes = /eof = (\d+).*stored_eof = (\d+)/.exec(text);
    return new NetcdfFileError(
      'truncated',
      `The netCDF-4 file is truncated${sizes ? `: it has ${Number(sizes[1]).toLocaleString('en-US')} of its ${Number(sizes[2]).toLocaleString('en-US')} bytes` : ''}. Send the whole file again.`,
    );
  }
  // The HDF5 error stack's last "minor" line says what failed; the full stack goes to the server log only.
  const minors = [...text.matchAll(/minor: (.+)/g)].map((m) => m[1].trim());
  console.error('[intake] netCDF-4 file could not be read:', text.slice(0, 4000));
  return new NetcdfFileError(
    'damaged',
    `The netCDF-4 (HDF5) file could not be read${minors.length ? ` (${minors[minors.length - 1]})` : ''}; it may be damaged.`,
  );
}

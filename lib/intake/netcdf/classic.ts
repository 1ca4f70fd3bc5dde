import type { NetcdfAttribute, NetcdfDataset, NetcdfType, NetcdfVariable } from './dataset';
import { NetcdfFileError } from './errors';
import type { NetcdfFormat } from './format';

const BYTES: Partial<Record<NetcdfType, number>> = { byte: 1, char: 1, short: 2, int: 4, float: 4, double: 8 };

/** netcdfjs hands NC_BYTE attributes out as unsigned octets; the classic format's byte is signed (NUG, "Data Types"). */
function signedByte(n: number): number {
  return n > 127 ? n - 256 : n;
}

const READERS: Partial<Record<NetcdfType, (view: DataView, at: number) => number>> = {
  byte: (view, at) => view.getInt8(at),
  short: (view, at) => view.getInt16(at),
  int: (view, at) => view.getInt32(at),
  float: (view, at) => view.getFloat32(at),
  double: (view, at) => view.getFloat64(at),
};

/**
 * A variable's values, big-endian as the format stores them (NetCDF Classic Format Specification, "Data"):
 * `count` values from `offset` for a fixed-size variable; for a record variable `perRecord` values in each of
 * `records` records, `recordStep` bytes apart. Read here rather than through netcdfjs's getDataVariable, which
 * takes the header's vsize (rounded up to 4 bytes) for the number of values and so reads padding as data for
 * byte and short variables.
 */
function readValues(bytes: Uint8Array, type: NetcdfType, offset: number, records: number, perRecord: number, recordStep: number): Float64Array {
  const read = READERS[type];
  if (!read) throw new NetcdfFileError('not-numeric', `A ${type} variable holds no numbers.`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const width = BYTES[type]!;
  const values = new Float64Array(records * perRecord);
  for (let r = 0, k = 0; r < records; r++) {
    const start = offset + r * recordStep;
    for (let j = 0; j < perRecord; j++, k++) values[k] = read(view, start + j * width);
  }
  return values;
}

function attributeOf(type: string, value: unknown): NetcdfAttribute {
  if (type === 'char') return { type: 'text', text: String(value) };
  const numbers = (Array.isArray(value) ? value : [value]).map(Number);
  return { type: type as NetcdfType, numbers: type === 'byte' ? numbers.map(signedByte) : numbers };
}

/**
 * Opens a classic (CDF-1) or 64-bit offset (CDF-2) file with netcdfjs. The file's length is checked against what
 * its header describes before any data is read, so a file cut short in transfer is refused as truncated instead
 * of read past its end. CDF-5 (64-bit data) is refused: netcdfjs 4 reads only CDF-1 and CDF-2. netcdfjs reads the
 * header; the values are read by `readValues`.
 */
export async function openClassic(bytes: Uint8Array, format: NetcdfFormat): Promise<NetcdfDataset> {
  if (format === '64-bit data') {
    throw new NetcdfFileError(
      'unsupported-format',
      'This is a 64-bit data (CDF-5) netCDF file, which Brinkwatch does not read. Convert it to netCDF-4 or 64-bit offset, e.g. with "nccopy -k nc4 in.nc out.nc".',
    );
  }
  const { NetCDFReader } = await import('netcdfjs');
  let reader: InstanceType<typeof NetCDFReader>;
  try {
    reader = new NetCDFReader(bytes);
  } catch (error) {
    if (error instanceof RangeError) throw truncated(bytes.length, null);
    throw new NetcdfFileError('damaged', `The netCDF header could not be read (${error instanceof Error ? error.message : String(error)}).`);
  }
  const records = reader.recordDimension;
  const dimensions = reader.dimensions.map((d, id) => ({ name: d.name, size: id === records.id ? records.length : d.size }));
  const variables = new Map<string, NetcdfVariable>();
  for (const header of reader.variables) {
    const type = header.type as NetcdfType;
    const shape = header.dimensions.map((id) => dimensions[id].size);
    const count = shape.reduce((a, b) => a * b, 1);
    const width = BYTES[type] ?? 1;
    const perRecord = header.record ? shape.slice(1).reduce((a, b) => a * b, 1) : count;
    const end = header.record ? header.offset + Math.max(records.length - 1, 0) * (records.recordStep ?? 0) + perRecord * width : header.offset + count * width;
    if (count > 0 && end > bytes.length) throw truncated(bytes.length, end);
    const attributes = new Map<string, NetcdfAttribute>();
    for (const attribute of header.attributes as { name: string; type: string; value: unknown }[]) {
      attributes.set(attribute.name, attributeOf(attribute.type, attribute.value));
    }
    variables.set(header.name, {
      name: header.name,
      type,
      dimensions: header.dimensions.map((id) => dimensions[id].name),
      shape,
      attributes,
      read: () => readValues(bytes, type, header.offset, header.record ? records.length : 1, perRecord, records.recordStep ?? 0),
    });
  }
  return { format, variables };
}

function truncated(length: number, needed: number | null): NetcdfFileError {
  return new NetcdfFileError(
    'truncated',
    needed === null
      ? `The netCDF file is truncated: it ends inside its header, after ${length.toLocaleString('en-US')} bytes. Send the whole file again.`
      : `The netCDF file is truncated: it has ${length.toLocaleString('en-US')} bytes, but its header places data up to byte ${needed.toLocaleString('en-US')}. Send the whole file again.`,
  );
}

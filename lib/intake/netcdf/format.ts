import fs from 'node:fs';
import path from 'node:path';

/**
 * The netCDF file formats, as the netCDF User Guide names them: classic (CDF-1), 64-bit offset (CDF-2), 64-bit
 * data (CDF-5), and netCDF-4, which is an HDF5 file.
 */
export type NetcdfFormat = 'classic' | '64-bit offset' | '64-bit data' | 'netCDF-4';

/** Where a netCDF file is: a path (drop folders) or the bytes of an upload. */
export type NetcdfSource = { path: string } | { bytes: Uint8Array };

/** File names a drop folder takes as netCDF besides what the magic bytes say (the content decides the reader). */
const NETCDF_EXTENSIONS = ['.nc', '.nc4', '.cdf', '.netcdf'];

export function hasNetcdfExtension(name: string): boolean {
  return NETCDF_EXTENSIONS.includes(path.extname(name).toLowerCase());
}

/** The HDF5 format signature (HDF5 File Format Specification, "Format Signature": \211HDF\r\n\032\n). */
const HDF5_SIGNATURE = [0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a];

/**
 * The format from a file's first bytes: "CDF" and a version byte 1, 2 or 5 (NetCDF Classic and 64-bit Offset
 * Format specification: magic = 'C' 'D' 'F' VERSION), or the HDF5 signature at offset 0, where netCDF-4 writes it.
 * Null for anything else (a CSV, say).
 */
export function netcdfFormatOf(head: Uint8Array): NetcdfFormat | null {
  if (head[0] === 0x43 && head[1] === 0x44 && head[2] === 0x46) {
    if (head[3] === 1) return 'classic';
    if (head[3] === 2) return '64-bit offset';
    if (head[3] === 5) return '64-bit data';
    return null;
  }
  return HDF5_SIGNATURE.every((byte, i) => head[i] === byte) ? 'netCDF-4' : null;
}

/** The bytes of an upload as a netCDF source when they carry a netCDF signature; null for a CSV. */
export function netcdfBytes(input: unknown): NetcdfSource | null {
  return input instanceof Uint8Array && netcdfFormatOf(input.subarray(0, 8)) ? { bytes: input } : null;
}

/**
 * A dropped file as a netCDF source: when its first bytes carry a netCDF signature, or when its name says netCDF
 * (then the reader reports what it found instead of the CSV reader guessing at binary data); null for a CSV.
 */
export function netcdfFile(file: string): NetcdfSource | null {
  return netcdfFormatOf(readHead(file)) || hasNetcdfExtension(file) ? { path: file } : null;
}

/** The first 8 bytes of a file, enough for either signature. */
export function readHead(file: string): Uint8Array {
  const head = new Uint8Array(8);
  const fd = fs.openSync(file, 'r');
  try {
    fs.readSync(fd, head, 0, 8, 0);
  } finally {
    fs.closeSync(fd);
  }
  return head;
}

// Browser-safe (type imports only besides plain values): the upload form reads `NetcdfLayout` from here.
import type { NetcdfFormat } from './format';

/** netCDF external type names (netCDF User Guide, "Data Types"); CDF-5 and netCDF-4 add the unsigned and 64-bit ones. */
export type NetcdfType = 'byte' | 'ubyte' | 'char' | 'short' | 'ushort' | 'int' | 'uint' | 'int64' | 'uint64' | 'float' | 'double' | 'string';

/** An attribute: text, or numbers with the type they were stored in (packing rules compare types). */
export type NetcdfAttribute = { type: 'text'; text: string } | { type: NetcdfType; numbers: number[] };

/** One variable as both readers give it: names of its dimensions with their sizes, attributes, and its values on demand. */
export interface NetcdfVariable {
  name: string;
  type: NetcdfType;
  dimensions: string[];
  shape: number[];
  attributes: Map<string, NetcdfAttribute>;
  /** every value in storage order, as stored (packed values are not unpacked); numeric types only */
  read(): Float64Array;
}

/** The variables of a file (the root group of a netCDF-4 file), whichever format it has. */
export interface NetcdfDataset {
  format: NetcdfFormat;
  variables: Map<string, NetcdfVariable>;
}

/** What a run reports about a netCDF input: its format and where the rows came from. */
export interface NetcdfLayout {
  format: NetcdfFormat;
  variable: string;
  flagVariable: string | null;
  timeVariable: string;
  timeUnits: string;
  calendar: string;
  /** the data variables on the time dimension a series could take (for the upload form's choice) */
  candidates: string[];
}

export const NUMERIC_TYPES: ReadonlySet<NetcdfType> = new Set(['byte', 'ubyte', 'short', 'ushort', 'int', 'uint', 'int64', 'uint64', 'float', 'double']);

export function textAttribute(variable: NetcdfVariable, name: string): string | null {
  const attribute = variable.attributes.get(name);
  return attribute?.type === 'text' ? attribute.text : null;
}

export function numberAttribute(variable: NetcdfVariable, name: string): { type: NetcdfType; numbers: number[] } | null {
  const attribute = variable.attributes.get(name);
  return attribute && attribute.type !== 'text' ? attribute : null;
}

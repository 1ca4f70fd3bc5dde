import { NUMERIC_TYPES, textAttribute, type NetcdfDataset, type NetcdfVariable } from './dataset';
import { NetcdfFileError } from './errors';

/**
 * Time coordinates of a file (CF 1.x §4.4): one-dimensional variables whose units read "<unit> since <date>", or
 * that say they are time through axis "T" or standard_name "time" (then their units are checked when read).
 */
function timeCoordinates(dataset: NetcdfDataset): NetcdfVariable[] {
  return [...dataset.variables.values()].filter(
    (v) =>
      v.dimensions.length === 1 &&
      (/\ssince\s/i.test(textAttribute(v, 'units') ?? '') || textAttribute(v, 'axis')?.toUpperCase() === 'T' || textAttribute(v, 'standard_name') === 'time'),
  );
}

/** The dimension a variable is read along: its one dimension longer than 1 (a station file may add size-1 dimensions). */
function alongDimension(variable: NetcdfVariable): string | null {
  const long = variable.dimensions.filter((_, i) => variable.shape[i] !== 1);
  if (long.length > 1) return null;
  return long[0] ?? variable.dimensions[variable.dimensions.length - 1] ?? null;
}

/** The time coordinate of a data variable: on its dimension, the coordinate variable (named as it) first. */
export function timeOf(dataset: NetcdfDataset, data: NetcdfVariable): NetcdfVariable {
  const dimension = alongDimension(data);
  const candidates = timeCoordinates(dataset).filter((t) => t.dimensions[0] === dimension);
  const time = candidates.find((t) => t.name === dimension) ?? candidates[0];
  if (!time) {
    throw new NetcdfFileError(
      'no-time',
      `No time variable was found for "${data.name}": CF time coordinates have units "<unit> since <date>" (CF 1.x §4.4) and lie along the variable's dimension${dimension ? ` "${dimension}"` : ''}.`,
    );
  }
  return time;
}

/** Variables that describe others rather than measure: coordinates, bounds, flags and other ancillary variables. */
function describing(dataset: NetcdfDataset): Set<string> {
  const names = new Set<string>();
  for (const v of dataset.variables.values()) {
    if (v.dimensions.length === 1 && v.dimensions[0] === v.name) names.add(v.name);
    if (v.attributes.has('flag_values') || v.attributes.has('flag_meanings') || v.attributes.has('flag_masks')) names.add(v.name);
    for (const attribute of ['bounds', 'ancillary_variables', 'coordinates']) {
      for (const name of (textAttribute(v, attribute) ?? '').split(/\s+/)) if (name) names.add(name);
    }
  }
  for (const t of timeCoordinates(dataset)) names.add(t.name);
  return names;
}

/** The data variables a series could take: numeric, along one time dimension, and not describing another variable. */
export function dataVariables(dataset: NetcdfDataset): string[] {
  const times = new Set(timeCoordinates(dataset).map((t) => t.dimensions[0]));
  const skip = describing(dataset);
  return [...dataset.variables.values()]
    .filter((v) => !skip.has(v.name) && NUMERIC_TYPES.has(v.type) && times.has(alongDimension(v) ?? ''))
    .map((v) => v.name)
    .sort();
}

/** A variable by name: exactly, else ignoring ASCII case when that is unambiguous (as feed columns match). */
function byName(dataset: NetcdfDataset, name: string): NetcdfVariable | null {
  const exact = dataset.variables.get(name);
  if (exact) return exact;
  const folded = [...dataset.variables.values()].filter((v) => v.name.toLowerCase() === name.toLowerCase());
  return folded.length === 1 ? folded[0] : null;
}

function listed(names: string[]): string {
  return names.length ? names.map((n) => `"${n}"`).join(', ') : 'none';
}

/**
 * The data variable to read: the one named (the upload's `variable`, the series' `variable`, a feed's column), or,
 * when none is named, the file's only data variable on a time dimension.
 */
export function chooseVariable(dataset: NetcdfDataset, name: string | undefined): NetcdfVariable {
  const candidates = dataVariables(dataset);
  if (name === undefined) {
    if (candidates.length === 1) return dataset.variables.get(candidates[0])!;
    if (candidates.length === 0) {
      const anyTime = timeCoordinates(dataset).length > 0;
      throw new NetcdfFileError(
        anyTime ? 'missing-variable' : 'no-time',
        anyTime
          ? 'The file has no numeric data variable along its time dimension.'
          : 'The file has no time variable: CF time coordinates have units "<unit> since <date>" (CF 1.x §4.4).',
      );
    }
    throw new NetcdfFileError(
      'variable-needed',
      `The file has several data variables (${listed(candidates)}); name the one to read (the upload's "variable", or the series' intake settings).`,
      candidates,
    );
  }
  const variable = byName(dataset, name);
  if (!variable) throw new NetcdfFileError('missing-variable', `The file has no variable "${name}" (its data variables: ${listed(candidates)}).`, candidates);
  if (!NUMERIC_TYPES.has(variable.type))
    throw new NetcdfFileError('not-numeric', `The variable "${variable.name}" holds ${variable.type} values, not numbers.`);
  if (alongDimension(variable) === null) {
    throw new NetcdfFileError(
      'not-on-time',
      `The variable "${variable.name}" has the dimensions ${variable.dimensions.join(' × ')}; Brinkwatch reads a variable along time only (other dimensions of size 1).`,
    );
  }
  return variable;
}

/**
 * The flag variable of a data variable: the one named (the mapping's `flagVariable`, a feed's `flagColumns`), else
 * the variable among its ancillary_variables (CF 1.x §3.4) that carries flag_values or flag_meanings (§3.5); none
 * otherwise.
 */
export function flagVariableOf(dataset: NetcdfDataset, data: NetcdfVariable, name: string | undefined): NetcdfVariable | null {
  if (name !== undefined) {
    const variable = byName(dataset, name);
    if (!variable) throw new NetcdfFileError('missing-variable', `The file has no flag variable "${name}" for "${data.name}".`);
    return variable;
  }
  for (const ancillary of (textAttribute(data, 'ancillary_variables') ?? '').split(/\s+/)) {
    const variable = ancillary ? dataset.variables.get(ancillary) : undefined;
    if (variable && (variable.attributes.has('flag_values') || variable.attributes.has('flag_meanings'))) return variable;
  }
  return null;
}

import type { AnyIndicator } from './definition';
import { ac1 } from './ac1';
import { bimodality } from './bimodality';
import { ch } from './ch';
import { cv } from './cv';
import { dfa } from './dfa';
import { kurtosis } from './kurtosis';
import { potentialWells } from './potential-wells';
import { recovery } from './recovery';
import { restoringRate } from './restoring-rate';
import { sd } from './sd';
import { skewness } from './skewness';
import { spectralRatio } from './spectral-ratio';
import { variance } from './variance';

/**
 * Every indicator the engine computes, one file each, in the order settings, charts, exports and the command
 * line list them. Adding an indicator is a file here and a line in this list (DEVELOPERS.md, "Adding an indicator").
 */
export const INDICATORS = [variance, sd, cv, ac1, skewness, kurtosis, recovery, restoringRate, spectralRatio, ch, dfa, bimodality, potentialWells] as const;

export type IndicatorDefinition = (typeof INDICATORS)[number];
export type IndicatorName = IndicatorDefinition['name'];

type Names<T extends readonly { name: string }[]> = { readonly [K in keyof T]: T[K]['name'] };
export const INDICATOR_NAMES = INDICATORS.map((d) => d.name) as unknown as Names<typeof INDICATORS>;

/** The indicators an analysis computes when its settings name none. */
export const DEFAULT_INDICATORS: IndicatorName[] = INDICATORS.filter((d) => d.byDefault).map((d) => d.name);

const BY_NAME = new Map<string, AnyIndicator>(INDICATORS.map((d) => [d.name, d]));

/** The definition of an indicator by name (undefined for a name the engine does not know). O(1). */
export function indicatorDefinition(name: string): AnyIndicator | undefined {
  return BY_NAME.get(name);
}

/** Whether any of the named indicators needs the raw values' rolling mean. O(names). */
export function needsRawMean(names: readonly string[]): boolean {
  return names.some((name) => {
    const d = indicatorDefinition(name);
    return d?.kind === 'moments' && d.needsRawMean === true;
  });
}

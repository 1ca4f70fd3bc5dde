import { analysisSettingsSchema, type AnalysisSettings, type IndicatorName } from '@/lib/engine/settings';
import type { SeriesCreateInput } from '@/lib/schemas/series';
import type { SiteRuleCreateInput } from '@/lib/schemas/rule';
import { RandomStream } from '@/lib/engine/random';
import {
  cessiDynamics,
  cessiFolds,
  doubleWellDynamics,
  eulerMaruyamaSample,
  grazingDynamics,
  grazingFolds,
  simulateAr1,
  simulateCessi,
  simulateDoubleWell,
  simulateDrift,
  simulateGrazing,
  simulateSeasonal,
  type Dynamics,
  type ForcedRun,
  type GrazingParameters,
} from './models';

/**
 * The demo: an invented observing network (every place and station name is fictional) whose records are
 * generated from published models with one fixed seed. Values depend only on DEMO_SEED, except the
 * phase of the seasonal series, which follows the calendar of the record's end day.
 *
 * The demo is live: each record ends DEMO_BACKLOG_SAMPLES sampling intervals before the last instant of its grid
 * at seeding (demoRecordEnd), which keeps it fresh (late only after three intervals, lib/overview) and leaves the
 * demo feed (lib/demo/feed.ts) points to deliver from its first cycle on; the feed then continues each model from
 * the stored record's last value, one sample at a time (`DemoFeedModel.next`). The series approaching its fold
 * (the sedge biomass) already passes its ac1 rule on the seeded record; the rule asks for two passing analyses in a
 * row, and the feed's first samples bring the second within minutes of a fresh start, so its alert opens and its
 * e-mail goes out then. Nothing was tuned for that: it is the record the published model gives with DEMO_SEED (its
 * verdict checked by tests/demo/scenario.test.ts); continued, the ramp reaches the fold about 177 samples (days) past the seeded record.
 */

export const DEMO_SEED = 730_519;

export const DEMO_SITES = {
  mooring: 'Veskary Sound Mooring',
  lake: 'Orlemere Lake Station',
  fen: 'Brandwhistle Fen Plot',
  ridge: 'Kestrith Ridge Climate Station',
} as const;

/**
 * Where the invented sites lie: made-up positions a few tens of kilometres apart (a sound, a lake, a fen and a
 * ridge of one fictional basin), so the sites map has something to draw; no real station is meant.
 */
export const DEMO_SITE_PLACES: readonly { name: string; latitude: number; longitude: number; timeZone: string; description: string }[] = [
  {
    name: DEMO_SITES.mooring,
    latitude: 60.412,
    longitude: 5.118,
    timeZone: 'UTC',
    description: 'Subsurface mooring in the sound: salinity and temperature at depth (invented).',
  },
  {
    name: DEMO_SITES.lake,
    latitude: 60.655,
    longitude: 5.604,
    timeZone: 'Europe/Oslo',
    description: 'Shallow-lake monitoring raft: oxygen and algal biomass (invented).',
  },
  {
    name: DEMO_SITES.fen,
    latitude: 60.528,
    longitude: 5.893,
    timeZone: 'Europe/London',
    description: 'Fen vegetation plot with a water-table logger (invented).',
  },
  {
    name: DEMO_SITES.ridge,
    latitude: 60.881,
    longitude: 6.247,
    timeZone: 'Europe/Helsinki',
    description: 'Ridge-top climate station: pressure and air temperature (invented).',
  },
];

const HOUR_MS = 3_600_000;
const DAY_MS = 24 * HOUR_MS;

/** A rule to create on a demo series: the fields of the AlertRule model (seriesId and createdBy are set by the seed). */
export interface DemoRule {
  indicator: IndicatorName;
  minTau: number;
  maxSurrogateP: number | null;
  maxKendallP: number | null;
  levelThreshold: number | null;
  levelDirection: 'above' | 'below';
  persistence: number;
  severity: 'watch' | 'warning';
  quietPeriodHours: number;
  fdrLevel: number | null;
}

/**
 * A mark on a record: a marked tipping point (the fold of a forced run) or a maintenance break (a probe cleaned), with
 * the sample where it lies and its instant (UTC ms) in the built record.
 */
export interface DemoMark {
  index: number;
  at: number;
  note: string;
  kind: 'tipping-point' | 'maintenance';
}

export interface DemoSeries {
  /** Everything `createSeries` takes; settings already parsed by analysisSettingsSchema. */
  input: SeriesCreateInput & { slug: string; intervalMs: number; settings: AnalysisSettings };
  /** Short name of the generating model, for listings. */
  model: string;
  /** Sample instants, UTC ms, one interval apart, the last at the record's end. */
  times: Float64Array;
  /** Values at those instants; NaN marks a missing sample (no observation is stored). */
  values: Float64Array;
  marks: DemoMark[];
  rules: DemoRule[];
}

/** Samples between a seeded record's end and the last instant of its grid at seeding: the feed's first deliveries. */
export const DEMO_BACKLOG_SAMPLES = 2;

/**
 * A record's last instant: DEMO_BACKLOG_SAMPLES intervals before the last instant ≤ `now` of the series' grid
 * (whole multiples of the interval since the Unix epoch: 00:00 UTC for daily series, the full hour for hourly ones).
 * Its age at seeding is below DEMO_BACKLOG_SAMPLES + 1 intervals, so the series is not late.
 */
export function demoRecordEnd(now: Date, intervalMs: number): number {
  return (Math.floor(now.getTime() / intervalMs) - DEMO_BACKLOG_SAMPLES) * intervalMs;
}

const rule = (fields: Partial<DemoRule> & Pick<DemoRule, 'indicator' | 'minTau' | 'severity'>): DemoRule => ({
  maxSurrogateP: null,
  maxKendallP: null,
  levelThreshold: null,
  levelDirection: 'above',
  persistence: 1,
  quietPeriodHours: 24,
  fdrLevel: null,
  ...fields,
});

/** Rising memory and rising variance, the two classic signs of critical slowing down, judged against surrogates. */
const SLOWING_DOWN_RULES: DemoRule[] = [
  rule({ indicator: 'ac1', minTau: 0.5, maxSurrogateP: 0.05, persistence: 2, severity: 'warning', quietPeriodHours: 72 }),
  rule({ indicator: 'variance', minTau: 0.4, maxSurrogateP: 0.1, severity: 'watch' }),
];

/**
 * For records where strong memory itself is the concern: ac1 already high and still rising, judged against
 * surrogates (the Kendall p assumes independent values, which overlapping windows are not, so it gates nothing).
 */
const HIGH_MEMORY_RULE = rule({ indicator: 'ac1', minTau: 0.3, maxSurrogateP: 0.05, levelThreshold: 0.9, severity: 'watch', quietPeriodHours: 48 });

/**
 * The rule the demo sets on a site's site-level indicators: at the fen plot the sedge biomass nears its fold while
 * the water table is a stationary control, so the memory of the slowest-changing combination of the two (maf-ac1)
 * is watched for a rise against surrogates, as a lead would watch a sonde or logger array.
 */
export const DEMO_SITE_RULES: readonly { site: string; rule: SiteRuleCreateInput }[] = [
  {
    site: DEMO_SITES.fen,
    rule: {
      indicator: 'maf-ac1',
      minTau: 0.4,
      maxSurrogateP: 0.05,
      persistence: 2,
      severity: 'watch',
      quietPeriodHours: 72,
      reason: 'Demo: the plot’s sensors watched together for slowing down.',
    },
  },
];

/** Controls carry the same rules as the watched records, so a firing on them shows the false-alarm rate. */
const CONTROL_RULES: DemoRule[] = [SLOWING_DOWN_RULES[0], rule({ indicator: 'sd', minTau: 0.4, maxSurrogateP: 0.05, severity: 'watch', quietPeriodHours: 48 })];

/**
 * Analysis settings every demo series shares, as a live series would run: 199 AR(1) surrogates (Benjamini–Hochberg
 * at q = 0.05 over the nine demo series needs N ≥ 9/0.05 − 1 = 179 before its smallest p can pass; see
 * LIVE_SETTINGS_DEFAULTS in lib/schemas/series.ts), shift detection on and the 80 % coverage floor. Each plan gives
 * its span as an ISO 8601 duration suited to its sampling and the timescale it is watched on, and its window as a
 * duration (controls: a year of daily readings, a month of hourly ones) or, where the stretch may start late after
 * a shift or a mark (the collapsing records, the cleaned probe, the flickering record whose every flip between
 * states is an abrupt shift), as a fraction of the stretch, so that a short stretch is still judged rather than
 * refused.
 */
const LIVE: Partial<AnalysisSettings> = { surrogates: 199, shiftDetection: 'on', minCoverage: 0.8 };

interface SeriesPlan {
  slug: string;
  name: string;
  site: string;
  unit: string;
  description: string;
  model: string;
  timeZone: string;
  intervalMs: number;
  n: number;
  settings: Partial<AnalysisSettings>;
  rules: DemoRule[];
  /** Values of the record (NaN = missing) and, for forced runs, the run itself. */
  generate: (start: number) => { values: Float64Array; run?: ForcedRun };
  /** How the series' station delivers live points (see DemoFeedModel). */
  delivery: DemoDelivery;
  /** The live continuation (see DemoFeedModel.next). */
  next: DemoFeedModel['next'];
  /**
   * For a run forced through its fold: the tipping point is marked at the fold instant of the deterministic
   * part (known exactly, whatever the noise did); `crossed` tells when the record has passed the unstable
   * branch, so the note can say how far the simulated jump lies from the fold.
   */
  tippingPoint?: { crossed: (value: number) => boolean; note: (when: string) => string };
  /** A maintenance break marked on the record: the sample where it lies and its note. */
  maintenance?: { index: number; note: string };
}

/**
 * A model value in the series' unit (scale × model value), rounded to the resolution a logger would write;
 * NaN (a missing sample) stays NaN.
 */
function inUnits(x: number, scale: number, decimals: number): number {
  const f = 10 ** decimals;
  return Math.round(scale * x * f) / f;
}

function toUnits(x: Float64Array, scale: number, decimals: number): Float64Array {
  return x.map((v) => inUnits(v, scale, decimals));
}

/**
 * One sample of a stochastic differential equation continued from the stored value `previous` (series units,
 * divided by `scale` into model units) at sample `index`, model time (index − 1)·dt, with 10 substeps as the
 * records use. Cost O(substeps). Source: as eulerMaruyama (lib/demo/models.ts).
 */
function sdeNext(dynamics: Dynamics, dt: number, scale: number, decimals: number) {
  return (previous: number, index: number, rng: RandomStream) =>
    inUnits(eulerMaruyamaSample(dynamics.drift, dynamics.diffusion, previous / scale, (index - 1) * dt, dt, 10, rng), scale, decimals);
}

/**
 * One step of a stationary AR(1) about `level(index)` continued from the stored value: x_i = level(i) +
 * φ(x_{i−1} − level(i − 1)) + σ ε_i, rounded like the record. Exact for the process (Box et al. 2015, Sec. 3.2);
 * the rounding of the stored value carries over, as it would from a real logger. O(1).
 */
function ar1Next(phi: number, sigma: number, decimals: number, level: (index: number, start: number) => number) {
  return (previous: number, index: number, rng: RandomStream, start: number) =>
    inUnits(level(index, start) + phi * (previous - level(index - 1, start)) + sigma * rng.normal(), 1, decimals);
}

function foldMark(plan: SeriesPlan, run: ForcedRun, values: Float64Array): { index: number; note: string } {
  const index = Math.round(run.foldIndex);
  const jump = values.findIndex(plan.tippingPoint!.crossed);
  const steps = jump - index;
  const unit = plan.intervalMs === DAY_MS ? 'day' : 'sample';
  const plural = (k: number) => `${k} ${unit}${k === 1 ? '' : 's'}`;
  const when =
    jump < 0 ? 'only after the record ends' : steps === 0 ? 'at the fold instant' : steps > 0 ? `${plural(steps)} later` : `${plural(-steps)} earlier`;
  return { index, note: plan.tippingPoint!.note(when) };
}

const CESSI = { mu2: 6.2, p0: 0.6, sigma: 0.05, n: 4000, dt: 0.05, foldAt: 0.9 };
const GRAZING: GrazingParameters = { r: 1, K: 10, h: 1 };
const LAKE_STOCK = { n: 3000, dt: 0.1, c0: 1.0, sigma: 0.1, foldAt: 0.85 };
const FEN = { n: 3000, dt: 0.1, c0: 1.2, sigma: 0.05, endShare: 0.97 };
/** The drifting oxygen probe: fouling lowers the reading by `drift` a day until it is cleaned at sample `cleaning`. */
const OXYGEN = { n: 2500, drift: -0.0008, cleaning: 1800, mean: 10.4 };
const CESSI_FOLDS = cessiFolds(CESSI.mu2);
const GRAZING_FOLDS = grazingFolds(GRAZING);
/** Ramp rates that put each fold where the plan says: at `foldAt` of the record, or `endShare` of the way at its end. */
const CESSI_RATE = (CESSI_FOLDS.rising.p - CESSI.p0) / (CESSI.foldAt * (CESSI.n - 1) * CESSI.dt);
const LAKE_STOCK_RATE = (GRAZING_FOLDS.collapse.c - LAKE_STOCK.c0) / (LAKE_STOCK.foldAt * (LAKE_STOCK.n - 1) * LAKE_STOCK.dt);
const FEN_RATE = (FEN.endShare * GRAZING_FOLDS.collapse.c - FEN.c0) / ((FEN.n - 1) * FEN.dt);
const LAKE_TEMPERATURE = { phi: 0.7, sigma: 0.6, mean: 10.5, amplitude: 7, samplesPerCycle: 365.2425 };
const DOUBLE_WELL = { dt: 0.25, amplitude: 0.12, period: 66, sigma: 0.5 };

/** Phase of the lake's annual cycle at the record's first sample: peak in early August (day 213), as in a northern temperate lake. */
function lakePhase(start: number): number {
  return (((yearFraction(start) - 213 / 365.2425 + 0.25) % 1) + 1) % 1;
}

/** Mean reading of the fouling oxygen probe at sample `index`: fouling since the cleaning (or since the start, before it). */
function oxygenLevel(index: number): number {
  return OXYGEN.mean + OXYGEN.drift * (index >= OXYGEN.cleaning ? index - OXYGEN.cleaning : index);
}

/** Day of the year (0-based, UTC) of an instant, as a fraction of the mean Gregorian year. */
function yearFraction(t: number): number {
  const d = new Date(t);
  return (t - Date.UTC(d.getUTCFullYear(), 0, 1)) / DAY_MS / 365.2425;
}

const PLANS: SeriesPlan[] = [
  {
    slug: 'veskary-salinity-contrast',
    name: 'Salinity contrast, subpolar minus subtropical box',
    site: DEMO_SITES.mooring,
    unit: 'psu',
    description:
      'Synthetic demo data: the salinity contrast of a two-box overturning circulation under slowly rising ' +
      'freshwater input, simulated from Cessi’s (1994) stochastic box model (J. Phys. Oceanogr. 24, 1911–1920) ' +
      'with a seeded generator. The forcing passes the model’s fold and the circulation collapses near the end of the record. ' +
      'The live analysis judges only the record since the marked collapse (the abrupt shift shows on the charts); ' +
      'the warning signs before it are what a backtest replays.',
    model: 'Cessi (1994) two-box thermohaline model',
    timeZone: 'UTC',
    intervalMs: DAY_MS,
    n: CESSI.n,
    settings: { ...LIVE, seed: 11, span: 'P10Y', window: 0.5 },
    rules: [...SLOWING_DOWN_RULES, HIGH_MEMORY_RULE],
    generate: () => {
      const run = simulateCessi({ ...CESSI, rate: CESSI_RATE, substeps: 10, seed: DEMO_SEED, stream: 1 });
      return { values: toUnits(run.values, 2.5, 4), run };
    },
    delivery: 'drop',
    next: sdeNext(cessiDynamics({ ...CESSI, rate: CESSI_RATE }), CESSI.dt, 2.5, 4),
    tippingPoint: {
      crossed: (v) => v > 2.5 * ((CESSI_FOLDS.rising.y + CESSI_FOLDS.falling.y) / 2),
      note: (when) =>
        `Freshwater forcing reaches the saddle-node fold of the deterministic model (p = ${CESSI_FOLDS.rising.p.toFixed(4)}, μ² = ${CESSI.mu2}); the simulated contrast crosses the unstable branch ${when}.`,
    },
  },
  {
    slug: 'veskary-deep-temperature',
    name: 'Deep water temperature, 1,800 m',
    site: DEMO_SITES.mooring,
    unit: '°C',
    description:
      'Synthetic demo data: a stationary control, simulated as a Gaussian AR(1) process (Box & Jenkins) with a ' +
      'seeded generator, hourly. Nothing approaches a tipping point here; an alert on it is a false alarm.',
    model: 'stationary AR(1), φ = 0.6',
    timeZone: 'UTC',
    intervalMs: HOUR_MS,
    n: 4800,
    settings: { ...LIVE, seed: 12, span: 'P120D', window: 'P30D' },
    rules: CONTROL_RULES,
    generate: () => ({ values: toUnits(simulateAr1({ n: 4800, phi: 0.6, sigma: 0.004, mean: 3.82, seed: DEMO_SEED, stream: 2 }), 1, 4) }),
    delivery: 'intermittent',
    next: ar1Next(0.6, 0.004, 4, () => 3.82),
  },
  {
    slug: 'orlemere-whitefish-stock',
    name: 'Whitefish spawning stock',
    site: DEMO_SITES.lake,
    unit: 't',
    description:
      'Synthetic demo data: a fished stock under a steadily rising catch, simulated from May’s (1977) harvested-' +
      'population model (Nature 269, 471–477) with environmental noise and a seeded generator. The harvest passes ' +
      'the model’s fold and the stock collapses to its depleted state. The live analysis judges only the record since ' +
      'the marked collapse; the warning signs before it are what a backtest replays.',
    model: 'May (1977) harvested population',
    timeZone: 'Europe/Oslo',
    intervalMs: DAY_MS,
    n: LAKE_STOCK.n,
    settings: { ...LIVE, seed: 13, span: 'P7Y', window: 0.5 },
    rules: SLOWING_DOWN_RULES,
    generate: () => {
      const run = simulateGrazing({ ...GRAZING, ...LAKE_STOCK, rate: LAKE_STOCK_RATE, substeps: 10, seed: DEMO_SEED, stream: 3 });
      return { values: toUnits(run.values, 12, 2), run };
    },
    delivery: 'drop',
    next: sdeNext(grazingDynamics({ ...GRAZING, ...LAKE_STOCK, rate: LAKE_STOCK_RATE }), LAKE_STOCK.dt, 12, 2),
    tippingPoint: {
      crossed: (v) => v < 12 * ((GRAZING_FOLDS.collapse.x + GRAZING_FOLDS.recovery.x) / 2),
      note: (when) =>
        `Harvest rate reaches the fold of the deterministic model (c = ${GRAZING_FOLDS.collapse.c.toFixed(4)} with r = 1, K = 10, h = 1); the simulated stock falls below the unstable branch ${when}.`,
    },
  },
  {
    slug: 'orlemere-surface-temperature',
    name: 'Lake surface temperature',
    site: DEMO_SITES.lake,
    unit: '°C',
    description:
      'Synthetic demo data: an annual cycle over AR(1) weather noise, daily, with missing days (short gaps of up to ' +
      'three days and one three-week logger outage early on), simulated with a seeded generator. Analysed after ' +
      'removing the day-of-year mean, on the latest stretch without a long gap.',
    model: 'annual sinusoid + AR(1) noise, with gaps',
    timeZone: 'Europe/Oslo',
    intervalMs: DAY_MS,
    n: 5000,
    settings: { ...LIVE, seed: 14, seasonal: 'day-of-year', maxGap: 3, gapPolicy: 'latest-stretch', span: 'P8Y', window: 'P2Y' },
    rules: CONTROL_RULES,
    generate: (start) => {
      const x = simulateSeasonal({
        n: 5000,
        ...LAKE_TEMPERATURE,
        phaseAtStart: lakePhase(start),
        shortGapRate: 0.01,
        maxShortGap: 3,
        longGap: { start: 420, length: 21 },
        seed: DEMO_SEED,
        stream: 4,
      });
      return { values: toUnits(x, 1, 2) };
    },
    delivery: 'drop',
    // The live points have no gaps: the logger outage and the short gaps belong to the record's past.
    next: ar1Next(
      LAKE_TEMPERATURE.phi,
      LAKE_TEMPERATURE.sigma,
      2,
      (index, start) =>
        LAKE_TEMPERATURE.mean + LAKE_TEMPERATURE.amplitude * Math.sin(2 * Math.PI * (lakePhase(start) + index / LAKE_TEMPERATURE.samplesPerCycle)),
    ),
  },
  {
    slug: 'orlemere-oxygen-probe',
    name: 'Dissolved oxygen, drifting probe',
    site: DEMO_SITES.lake,
    unit: 'mg/L',
    description:
      'Synthetic demo data: a stationary AR(1) signal (Box & Jenkins) read through a probe whose fouling lowers the ' +
      'reading linearly, simulated with a seeded generator. The probe was cleaned once (marked as a maintenance ' +
      'break): the reading jumps back up and the fouling starts again, and the live analysis judges only the record ' +
      'since the cleaning. After linear detrending the drift is gone; an alert here would be a false alarm caused by the instrument.',
    model: 'stationary AR(1) + linear sensor drift',
    timeZone: 'Europe/Oslo',
    intervalMs: DAY_MS,
    n: OXYGEN.n,
    settings: { ...LIVE, seed: 15, detrend: 'linear', span: 'P5Y', window: 0.5 },
    rules: CONTROL_RULES,
    generate: () => {
      const x = simulateDrift({ n: OXYGEN.n, phi: 0.5, sigma: 0.15, mean: OXYGEN.mean, driftPerSample: OXYGEN.drift, seed: DEMO_SEED, stream: 5 });
      // Cleaning removes the fouling: from then on the reading has lost only the drift since the cleaning.
      for (let t = OXYGEN.cleaning; t < x.length; t++) x[t] -= OXYGEN.drift * OXYGEN.cleaning;
      return { values: toUnits(x, 1, 3) };
    },
    delivery: 'drop',
    next: ar1Next(0.5, 0.15, 3, oxygenLevel),
    maintenance: { index: OXYGEN.cleaning, note: 'Probe cleaned and recalibrated: readings jump back to the clean-probe level.' },
  },
  {
    slug: 'brandwhistle-sedge-biomass',
    name: 'Sedge biomass under grazing',
    site: DEMO_SITES.fen,
    unit: 'g/m²',
    description:
      'Synthetic demo data: standing biomass under steadily rising grazing pressure, simulated from May’s (1977) ' +
      'grazing model (Nature 269, 471–477) with environmental noise and a seeded generator. The grazing rate is ' +
      'still just below the model’s fold at the end of the record: the tipping point has not happened yet.',
    model: 'May (1977) grazing model, approaching its fold',
    timeZone: 'Europe/London',
    intervalMs: DAY_MS,
    n: FEN.n,
    settings: { ...LIVE, seed: 16, span: 'P8Y', window: 0.5 },
    rules: [...SLOWING_DOWN_RULES, HIGH_MEMORY_RULE],
    generate: () => {
      const run = simulateGrazing({ ...GRAZING, ...FEN, rate: FEN_RATE, substeps: 10, seed: DEMO_SEED, stream: 6 });
      return { values: toUnits(run.values, 40, 1), run };
    },
    delivery: 'drop',
    next: sdeNext(grazingDynamics({ ...GRAZING, ...FEN, rate: FEN_RATE }), FEN.dt, 40, 1),
  },
  {
    slug: 'brandwhistle-water-table',
    name: 'Water table depth',
    site: DEMO_SITES.fen,
    unit: 'cm',
    description:
      'Synthetic demo data: a stationary control with strong memory, simulated as a Gaussian AR(1) process ' +
      '(Box & Jenkins) with a seeded generator. High autocorrelation that does not rise is no early warning.',
    model: 'stationary AR(1), φ = 0.85',
    timeZone: 'Europe/London',
    intervalMs: DAY_MS,
    n: 2000,
    settings: { ...LIVE, seed: 17, span: 'P4Y', window: 'P1Y' },
    rules: CONTROL_RULES,
    generate: () => ({ values: toUnits(simulateAr1({ n: 2000, phi: 0.85, sigma: 1.2, mean: -24, seed: DEMO_SEED, stream: 7 }), 1, 1) }),
    delivery: 'drop',
    next: ar1Next(0.85, 1.2, 1, () => -24),
  },
  {
    slug: 'kestrith-temperature-anomaly',
    name: 'Surface temperature anomaly',
    site: DEMO_SITES.ridge,
    unit: 'K',
    description:
      'Synthetic demo data: a bistable energy-balance (double-well) climate with weak periodic forcing and noise ' +
      'that flickers between a cold and a warm state, simulated with a seeded generator (stochastic resonance: ' +
      'Benzi, Sutera & Vulpiani 1981, J. Phys. A 14, L453). Flickering is not a slow approach to a fold.',
    model: 'double-well energy balance with periodic forcing',
    timeZone: 'Europe/Helsinki',
    intervalMs: DAY_MS,
    n: 3650,
    settings: { ...LIVE, seed: 18, span: 'P5Y', window: 0.5 },
    rules: SLOWING_DOWN_RULES,
    generate: () => ({
      values: toUnits(simulateDoubleWell({ n: 3650, ...DOUBLE_WELL, substeps: 10, x0: -1, seed: DEMO_SEED, stream: 8 }), 1.8, 3),
    }),
    delivery: 'drop',
    next: sdeNext(doubleWellDynamics(DOUBLE_WELL), DOUBLE_WELL.dt, 1.8, 3),
  },
  {
    slug: 'kestrith-station-pressure',
    name: 'Station pressure',
    site: DEMO_SITES.ridge,
    unit: 'hPa',
    description:
      'Synthetic demo data: a stationary control, simulated as a Gaussian AR(1) process (Box & Jenkins) with a ' +
      'seeded generator. Nothing approaches a tipping point here; an alert on it is a false alarm.',
    model: 'stationary AR(1), φ = 0.3',
    timeZone: 'Europe/Helsinki',
    intervalMs: DAY_MS,
    n: 1500,
    settings: { ...LIVE, seed: 19, span: '1000 points', window: '250 points' },
    rules: CONTROL_RULES,
    generate: () => ({ values: toUnits(simulateAr1({ n: 1500, phi: 0.3, sigma: 4, mean: 912, seed: DEMO_SEED, stream: 9 }), 1, 1) }),
    delivery: 'push',
    next: ar1Next(0.3, 4, 1, () => 912),
  },
];

/** Slugs of the demo series, in seeding order. */
export const DEMO_SERIES_SLUGS: readonly string[] = PLANS.map((plan) => plan.slug);

/**
 * How a demo station delivers its live points: 'drop' writes CSV files into the series' drop folder, 'push' sends
 * them to the push API with an ingest token, 'intermittent' is a drop-folder logger that goes silent for stretches
 * and then sends everything it held at once.
 */
export type DemoDelivery = 'drop' | 'push' | 'intermittent';

/** What the demo feed needs to continue one demo series. */
export interface DemoFeedModel {
  slug: string;
  intervalMs: number;
  delivery: DemoDelivery;
  /** The series' position in the network (1-based), the stream its record was drawn from; live points use their own streams of it. */
  position: number;
  /**
   * The value of sample `index` (0 = the record's first sample, at instant `start`) from the stored value of sample
   * index − 1, both in the series' units, drawing from `rng`: the record's model continued one step. O(1).
   */
  next: (previous: number, index: number, rng: RandomStream, start: number) => number;
}

/** The live continuation of every demo series, in seeding order. */
export const DEMO_FEED_MODELS: readonly DemoFeedModel[] = PLANS.map((plan, k) => ({
  slug: plan.slug,
  intervalMs: plan.intervalMs,
  delivery: plan.delivery,
  position: k + 1,
  next: plan.next,
}));

/**
 * Builds the whole demo network with each record ending at `demoRecordEnd(now, interval)`: each series' create
 * input, sample instants and values, marked tipping points and alert rules. Deterministic for a given end instant.
 * Cost O(total samples × substeps), a few milliseconds.
 */
export function buildDemoScenario(now: Date = new Date()): DemoSeries[] {
  return PLANS.map((plan) => {
    const end = demoRecordEnd(now, plan.intervalMs);
    const start = end - (plan.n - 1) * plan.intervalMs;
    const times = new Float64Array(plan.n);
    for (let i = 0; i < plan.n; i++) times[i] = start + i * plan.intervalMs;
    const { values, run } = plan.generate(start);
    const marks = [
      ...(run && plan.tippingPoint ? [{ ...foldMark(plan, run, values), kind: 'tipping-point' as const }] : []),
      ...(plan.maintenance ? [{ ...plan.maintenance, kind: 'maintenance' as const }] : []),
    ].sort((a, b) => a.index - b.index);
    return {
      input: {
        slug: plan.slug,
        name: plan.name,
        site: plan.site,
        unit: plan.unit,
        description: plan.description,
        intervalMs: plan.intervalMs,
        timeZone: plan.timeZone,
        settings: analysisSettingsSchema.parse(plan.settings),
      },
      model: plan.model,
      times,
      values,
      marks: marks.map((mark) => ({ ...mark, at: start + mark.index * plan.intervalMs })),
      rules: plan.rules,
    };
  });
}

/** The marked tipping points of the demo network for records ending on `now`'s day, by series slug. */
export function demoMarks(now: Date = new Date()): ({ slug: string } & DemoMark)[] {
  return buildDemoScenario(now).flatMap((series) => series.marks.map((mark) => ({ slug: series.input.slug, ...mark })));
}

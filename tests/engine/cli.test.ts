import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { collectCsvRows } from '@/lib/intake/rows';
import { formatInstant } from '@/lib/intake/time-formats';

const root = path.resolve(__dirname, '../..');
const dir = mkdtempSync(path.join(tmpdir(), 'bw-cli-'));

function analyze(args: string[]) {
  const r = spawnSync(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'scripts/analyze.ts'), ...args], { encoding: 'utf8', cwd: root });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

function csv(name: string, text: string): string {
  const file = path.join(dir, name);
  writeFileSync(file, text);
  return file;
}

const rows = (n: number, f: (i: number) => string) => Array.from({ length: n }, (_, i) => f(i)).join('\n');
const good = csv(
  'good.csv',
  `day,level,flow\n${rows(
    120,
    (i) => `2022-01-${String(1 + (i % 28)).padStart(2, '0')}T00:00:00Z,${(5 + Math.sin(i / 9) + ((i * 37) % 11) / 11).toFixed(4)},${i}`,
  ).replace(/.*/s, () =>
    rows(120, (i) => `${new Date(Date.UTC(2022, 0, 1 + i)).toISOString().slice(0, 10)},${(5 + Math.sin(i / 9) + ((i * 37) % 11) / 11).toFixed(4)},${i % 7}`),
  )}\n`,
);

// The command line contract of the engine (README, "Command line"); common practice for exit codes.
describe('analyze command line', () => {
  it('prints the full JSON: series, indicators with nulls before w − 1, kendall, significance', () => {
    // shift detection off here and below where the test counts points: the curve is made up, and a detected
    // shift would legitimately shorten the stretch
    const r = analyze([good, '--surrogates', '20', '--indicators', 'variance,ac1', '--shift-detection', 'off']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.n).toBe(120);
    expect(out.windowPoints).toBe(60);
    expect(out.bandwidthPoints).toBeCloseTo(12, 12);
    expect(out.series.time[0]).toBe('2022-01-01T00:00:00.000Z');
    for (const k of ['value', 'trend', 'residual']) expect(out.series[k]).toHaveLength(120);
    expect(Object.keys(out.indicators)).toEqual(['variance', 'ac1']);
    expect(out.indicators.ac1[58]).toBeNull();
    expect(typeof out.indicators.ac1[59]).toBe('number');
    expect(out.kendall.ac1).toEqual({ tau: expect.any(Number), p: expect.any(Number), direction: 'rising' });
    expect(out.kendall.recovery).toBeUndefined();
    expect(out.significance.variance).toMatchObject({ count: 20, method: 'ar1' });
    expect(out.sensitivity).toBeNull();
    expect(r.stderr).toBe('');
  });

  it('--indicators takes the further indicators; companions and the evaluation stride are printed', () => {
    const r = analyze([good, '--indicators', 'restoring-rate,spectral-ratio,ch,dfa,bimodality', '--shift-detection', 'off']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(Object.keys(out.indicators)).toEqual(['restoring-rate', 'spectral-ratio', 'ch', 'dfa', 'bimodality']);
    // 61 windows of 60 points: all fit under the default maxEvaluatedWindows
    expect(out.evaluatedEvery).toEqual({ 'restoring-rate': 1, 'spectral-ratio': 1, ch: 1, dfa: 1, bimodality: 1 });
    expect(typeof out.companions['restoring-rate'].standardError[119]).toBe('number');
    expect(out.companions.ch.p[119]).toBeGreaterThanOrEqual(0);
    expect(out.companions.ch.p[58]).toBeNull();
    for (const name of Object.keys(out.indicators)) expect(out.kendall[name].direction).toBe('rising');
    const summary = JSON.parse(analyze([good, '--summary', '--indicators', 'ch', '--shift-detection', 'off']).stdout);
    expect(summary.companions).toBeUndefined();
    expect(summary.latest.ch.companions.p).toEqual(expect.any(Number));
    expect(analyze([good, '--indicators', 'variance,spectral']).code).toBe(2);
  });

  it('--multivariate --value a,b,c gives the site-level indicators of several columns; one column is refused', () => {
    const file = csv(
      'site.csv',
      `t,a,b,c\n${rows(200, (i) => `${i},${Math.sin(i / 7) + ((i * 37) % 11) / 11},${Math.sin(i / 7) + ((i * 17) % 13) / 13},${((i * 29) % 7) / 7}`)}\n`,
    );
    const r = analyze([file, '--multivariate', '--value', 'a,b,c', '--surrogates', '9']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.series).toEqual(['a', 'b', 'c']);
    expect(out.windowPoints).toBe(100);
    expect(Object.keys(out.indicators)).toEqual(['pc1-variance', 'pc1-share', 'maf-ac1']);
    expect(out.indicators['pc1-share'][199]).toBeGreaterThan(1 / 3);
    expect(out.kendall['maf-ac1'].direction).toBe('rising');
    expect(out.significance['pc1-variance']).toMatchObject({ count: 9, method: 'phase' });
    expect(JSON.parse(analyze([file, '--multivariate', '--value', 'a,b', '--summary']).stdout).indicators).toBeUndefined();
    const one = analyze([file, '--multivariate', '--value', 'a']);
    expect(one.code).toBe(2);
    expect(one.stderr).toMatch(/two or more columns/);
  });

  it('--summary leaves out the per-point arrays; numeric times stay numbers', () => {
    const file = csv('numeric.csv', `t,x\n${rows(50, (i) => `${1990 + i},${Math.cos(i) + i / 10}`)}\n`);
    const r = analyze([file, '--summary', '--detrend', 'linear', '--shift-detection', 'off']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.series).toBeUndefined();
    expect(out.indicators).toBeUndefined();
    expect(out.kendall.variance.tau).toEqual(expect.any(Number));
    expect(out.latest.ac1.time).toBe(2039);
    expect(out.rateUnit).toBe('per time unit');
  });

  it('--summary carries directions, shifts and the stretch, with times as the time column has them', () => {
    const r = analyze([
      good,
      '--summary',
      '--surrogates',
      '19',
      '--indicators',
      'ac1,recovery,skewness',
      '--tipping-point',
      '2022-01-21',
      '--shift-detection',
      'off',
    ]);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.significance.ac1).toMatchObject({ direction: 'rising', p: expect.any(Number), count: 19 });
    expect(out.significance.recovery.direction).toBe('falling');
    expect(out.significance.skewness.direction).toBe('two-sided');
    expect(out.kendall.recovery.direction).toBe('falling');
    expect(out.shifts).toEqual(expect.any(Array));
    expect(out.stretch).toEqual({ from: '2022-01-21T00:00:00.000Z', to: '2022-04-30T00:00:00.000Z', startsAfter: 'tipping-point' });
    expect(out.n).toBe(100);
    expect(out.latest.ac1.time).toBe('2022-04-30T00:00:00.000Z');
    expect(out.quality).toMatchObject({ coverage: 1, windowsBelowCoverage: 0, flatRuns: [], samplingChanges: [], samplingHandling: null });
  });

  it('takes every analysis setting: extents in points and ISO 8601 durations, gaps, coverage, sampling, shifts', () => {
    const r = analyze([
      good,
      '--summary',
      '--window',
      'P30D',
      '--bandwidth',
      '10 points',
      '--span',
      'P100D',
      '--detrend',
      'local-linear',
      '--seasonal',
      'none',
      '--max-gap',
      '2',
      '--gap-policy',
      'latest-stretch',
      '--min-coverage',
      '0.9',
      '--sampling-change',
      'subsample',
      '--shift-detection',
      'off',
      '--indicators',
      'variance',
    ]);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.n).toBe(100);
    expect(out.windowPoints).toBe(30);
    expect(out.bandwidthPoints).toBe(10);
    expect(out.stretch.startsAfter).toBe('span');
  });

  const bad: [string, string, string[], RegExp][] = [
    ['bad extent', `t,x\n1,2\n`, ['--window', 'ninety days'], /: option --window: must be a fraction, "<n> points" or an ISO 8601 duration/],
    [
      'duration on numeric times',
      `t,x\n${rows(40, (i) => `${i},${(i * 7) % 5}`)}\n`,
      ['--window', 'P10D'],
      /: lines 2-41, column "x": the duration "P10D" needs calendar timestamps/,
    ],
    ['missing column', `t,x\n1,2\n`, ['--value', 'level'], /: line 1, column "level": The header has no column "level" \(it has: "t", "x"\)\.$/],
    ['non-numeric value', `t,x\n${rows(20, (i) => `${i},${i === 6 ? 'n/a' : i}`)}\n`, [], /: line 8, column "x": "n\/a" is not a number$/],
    ['bad date', `t,x\n2020-01-01,1\n2020-02-30,2\n`, [], /: line 3, column "t": 2020-02-30 does not exist \(that month has 29 days\)$/],
    [
      'too short for w ≥ 8',
      `t,x\n${rows(10, (i) => `${i},${(i * i) % 7}`)}\n`,
      [],
      /: lines 2-11, column "x": rolling window 0\.5 × 10 points = 5 points; at least 8 are needed/,
    ],
    [
      'long gap',
      `t,x\n${rows(40, (i) => `${i < 20 ? i : i + 10},${i % 5}`)}\n`,
      [],
      /: line 22, column "x": gap of 10 missing points from 20 to 29 is longer than maxGap = 3/,
    ],
    ['bad option', `t,x\n1,2\n`, ['--window', '2'], /: option --window: /],
  ];
  for (const [what, text, args, message] of bad) {
    it(`bad input (${what}): exit 2, one line on stderr naming the file, nothing on stdout`, () => {
      const file = csv(`${what.replace(/\W+/g, '-')}.csv`, text);
      const r = analyze([file, ...args]);
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      const lines = r.stderr.split('\n').filter(Boolean);
      expect(lines).toHaveLength(1);
      expect(lines[0].startsWith(`${file}: `)).toBe(true);
      expect(lines[0]).toMatch(message);
    });
  }
});

// One reader for the command line and the product: the CLI reads a file through lib/intake exactly as an upload of a
// series with that time format and zone is read, so both turn one file into the same instants.
describe('analyze reads a file as intake does', () => {
  const value = (i: number) => (5 + Math.sin(i / 3) + ((i * 37) % 11) / 11).toFixed(4);
  const intake = async (text: string, timeFormat: 'iso8601' | 'decimal-year', zone: string) =>
    collectCsvRows(text, { timeColumn: 0, valueColumn: 1, timeFormat, header: true }, zone);

  it('times without an offset are placed in --time-zone, across a daylight-saving change', async () => {
    const text = `when,level\n${rows(40, (i) => `${new Date(Date.UTC(2024, 2, 10 + i)).toISOString().slice(0, 10)}T12:00:00,${value(i)}`)}\n`;
    const r = analyze([csv('oslo.csv', text), '--time-zone', 'Europe/Oslo', '--shift-detection', 'off', '--indicators', 'variance']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    const rowsRead = await intake(text, 'iso8601', 'Europe/Oslo');
    expect(out.series.time).toEqual(Array.from(rowsRead.t, formatInstant));
    // Noon in Oslo is 11:00 UTC under CET (UTC+1) and 10:00 UTC under CEST (UTC+2), which in the EU starts on the
    // last Sunday of March, 2024-03-31 (Directive 2000/84/EC, art. 2).
    expect(out.series.time[0]).toBe('2024-03-10T11:00:00.000Z');
    expect(out.series.time[39]).toBe('2024-04-18T10:00:00.000Z');
  });

  it('expanded years (±YYYYYY, ISO 8601 §4.1.2.4) are read and written back as such', async () => {
    const day = 86_400_000;
    const start = -377_736_739_200_000; // -010000-01-01T00:00:00Z
    const text = `when,level\n${rows(40, (i) => `${formatInstant(start + i * day)},${value(i)}`)}\n`;
    const r = analyze([csv('deep.csv', text), '--summary', '--shift-detection', 'off', '--indicators', 'variance']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(formatInstant(start)).toBe('-010000-01-01T00:00:00.000Z');
    expect(out.stretch.from).toBe('-010000-01-01T00:00:00.000Z');
    expect(out.stretch.to).toBe(formatInstant((await intake(text, 'iso8601', 'UTC')).t[39]));
  });

  it('a year and month alone (2024-05) is refused as intake refuses it, naming line and column', async () => {
    const text = `when,level\n2024-04-30,1\n2024-05,2\n${rows(20, (i) => `2024-06-${String(i + 1).padStart(2, '0')},${value(i)}`)}\n`;
    const file = csv('month.csv', text);
    const r = analyze([file]);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    const rejected = (await intake(text, 'iso8601', 'UTC')).rejectedRows;
    expect(rejected).toHaveLength(1);
    expect(r.stderr).toBe(`${file}: line 3, column "when": ${rejected[0].reason}\n`);
  });

  it('--time-format takes the intake formats (decimal years become instants); plain numbers stay numbers by default', async () => {
    const text = `year,level\n${rows(40, (i) => `${(1990 + i / 4).toFixed(2)},${value(i)}`)}\n`;
    const file = csv('decimal.csv', text);
    const asYears = analyze([file, '--time-format', 'decimal-year', '--shift-detection', 'off', '--indicators', 'variance']);
    expect(asYears.code, asYears.stderr).toBe(0);
    expect(JSON.parse(asYears.stdout).series.time).toEqual(Array.from((await intake(text, 'decimal-year', 'UTC')).t, formatInstant));
    // 1990.25 is a quarter of 1990's 365 days after its start: 91.25 days, 1990-04-02T06:00Z (common practice, see time-formats.ts).
    expect(JSON.parse(asYears.stdout).series.time[1]).toBe('1990-04-02T06:00:00.000Z');
    const plain = analyze([file, '--shift-detection', 'off', '--indicators', 'variance']);
    expect(plain.code, plain.stderr).toBe(0);
    expect(JSON.parse(plain.stdout).series.time.slice(0, 2)).toEqual([1990, 1990.25]);
    const bad = analyze([file, '--time-format', 'fortnights']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/: option --time-format: 'fortnights' is not one of iso8601, date, /);
  });
});

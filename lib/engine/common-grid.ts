/** One series' record as the grid takes it: instants in time order (any unit) and its own sampling interval. */
export interface GridMember {
  time: Float64Array;
  value: Float64Array;
  /** the series' sampling interval, in the unit of `time` */
  interval: number;
}

export interface CommonGrid {
  /** the grid step: the coarsest member interval */
  interval: number;
  /** grid instants, ascending, ending at the earliest of the members' last instants */
  time: Float64Array;
  /** each member's value at every grid instant (no gaps: see `dropped`) */
  values: Float64Array[];
  /** grid instants before the kept stretch, back to the latest common start, left out because some member had no value there */
  dropped: number;
}

/**
 * The member's value at instant t: its own reading at t, else the straight line between its readings either side,
 * when they are at most `reach` apart (one missing reading of its own interval bridged); NaN otherwise. `from` is
 * where the search may start (grid instants ascend, so the cursor only moves forward). O(1) amortised.
 */
function valueAt(member: GridMember, t: number, cursor: { at: number }, reach: number): number {
  const { time, value } = member;
  while (cursor.at + 1 < time.length && time[cursor.at + 1] <= t) cursor.at++;
  const i = cursor.at;
  if (time[i] === t) return value[i];
  if (time[i] > t || i + 1 >= time.length) return Number.NaN;
  const gap = time[i + 1] - time[i];
  if (gap > reach) return Number.NaN;
  return value[i] + ((value[i + 1] - value[i]) * (t - time[i])) / gap;
}

/**
 * Several series of one site on one regular grid, as the site-level indicators need them (every series at every
 * instant). The step is the coarsest member's interval Δ, so no member is filled in more finely than it was
 * measured; the grid ends at the earliest of the members' last instants and steps back by Δ to the latest of their
 * first instants, at most `maxPoints` instants. A member's value at a grid instant is its own reading there, else
 * linear interpolation between its readings either side when they lie at most two of its own intervals apart;
 * otherwise it has none, and the grid keeps only the instants after the latest such hole, so the stretch analysed
 * is gap-free for every member. Common practice for putting sensors of different rates on one time base
 * (subsampling onto the coarsest clock, linear interpolation between neighbouring readings); no averaging.
 * Cost O(k·(n + grid)) for k members of n readings.
 */
export function commonGrid(members: readonly GridMember[], maxPoints: number): CommonGrid {
  const interval = Math.max(...members.map((m) => m.interval));
  const empty: CommonGrid = { interval, time: new Float64Array(0), values: members.map(() => new Float64Array(0)), dropped: 0 };
  if (members.length === 0 || members.some((m) => m.time.length === 0) || !(interval > 0)) return empty;
  const start = Math.max(...members.map((m) => m.time[0]));
  const end = Math.min(...members.map((m) => m.time[m.time.length - 1]));
  if (end < start) return empty;
  const points = Math.min(maxPoints, Math.floor((end - start) / interval) + 1);
  const time = Float64Array.from({ length: points }, (_, k) => end - (points - 1 - k) * interval);
  const values = members.map((member) => {
    const cursor = { at: 0 };
    return Float64Array.from(time, (t) => valueAt(member, t, cursor, 2 * member.interval));
  });
  let first = 0;
  for (let k = 0; k < points; k++) if (values.some((v) => !Number.isFinite(v[k]))) first = k + 1;
  return { interval, time: time.subarray(first), values: values.map((v) => v.subarray(first)), dropped: first };
}

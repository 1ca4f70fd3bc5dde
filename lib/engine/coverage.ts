/**
 * Which rolling windows of w points are judged. A window ending at index s + w − 1 is not judged when the share
 * of observed (not interpolated) points in it is below minCoverage, or when it lies wholly inside a run of
 * identical values (a stuck sensor, whose indicators would be rounding residue, not evidence). Returns
 * skip[s] = 1 for such windows (s = 0..n−w) and how many fell below the coverage floor. Cost O(n) (sliding count).
 * Common practice (minimum data completeness per averaging period, e.g. WMO-No. 1203 (2017), Guidelines on the
 * Calculation of Climate Normals, Sec. 4.4, from memory).
 */
export function unjudgedWindows(
  observed: Uint8Array,
  flat: readonly { start: number; end: number }[],
  w: number,
  minCoverage: number,
): { skip: Uint8Array; belowCoverage: number } {
  const n = observed.length;
  const count = Math.max(0, n - w + 1);
  const skip = new Uint8Array(count);
  let belowCoverage = 0;
  let seen = 0;
  for (let i = 0; i < Math.min(w, n); i++) seen += observed[i];
  // Compare counts, not shares, so a floor of exactly k/w is met by k observed points without rounding doubt.
  const need = minCoverage * w - 1e-9;
  for (let s = 0; s < count; s++) {
    if (s > 0) seen += observed[s + w - 1] - observed[s - 1];
    if (seen < need) {
      skip[s] = 1;
      belowCoverage++;
    }
  }
  for (const run of flat) for (let s = run.start; s + w <= run.end; s++) skip[s] = 1;
  return { skip, belowCoverage };
}

/** Benjamini–Hochberg adjusted p-values and the rejection set of one family of tests. */
export interface FdrResult {
  /** BH adjusted p-value (q-value) of each input, NaN where the input p was missing or not in [0, 1]. */
  q: Float64Array;
  /** true where the hypothesis is rejected at the requested level (q ≤ level). */
  rejected: boolean[];
  /** number of p-values taken into the family (m) */
  m: number;
  /** number rejected (k, the largest i with p_(i) ≤ i·level/m) */
  rejections: number;
}

/**
 * Benjamini–Hochberg step-up procedure. With the m valid p-values sorted, p_(1) ≤ … ≤ p_(m):
 * q_(i) = min_{j ≥ i} min(1, m·p_(j)/j) (the adjusted p-value, a running minimum from the largest down),
 * and H_(i) is rejected at level α iff q_(i) ≤ α, which is the same as i ≤ k = max{i : p_(i) ≤ i·α/m}.
 * Missing or out-of-range p-values (null, NaN, < 0, > 1) are left out of the family and get q = NaN.
 * Controls the false-discovery rate at α for independent or positively dependent tests.
 * Cost O(m log m) (one sort). Source: Benjamini & Hochberg (1995), "Controlling the false discovery rate",
 * J. R. Stat. Soc. B 57, 289–300; matches scipy.stats.false_discovery_control(method='bh').
 */
export function benjaminiHochberg(p: ArrayLike<number | null>, level = 0.05): FdrResult {
  const n = p.length;
  const q = new Float64Array(n).fill(Number.NaN);
  const valid: number[] = [];
  for (let i = 0; i < n; i++) {
    const v = p[i];
    if (v !== null && v >= 0 && v <= 1) valid.push(i);
  }
  const m = valid.length;
  // Stable order by p, so equal p-values keep input order (does not change q, only iteration).
  valid.sort((a, b) => (p[a] as number) - (p[b] as number) || a - b);
  let running = 1;
  for (let r = m - 1; r >= 0; r--) {
    const i = valid[r];
    running = Math.min(running, (m * (p[i] as number)) / (r + 1));
    q[i] = running;
  }
  const rejected = new Array<boolean>(n).fill(false);
  let rejections = 0;
  for (const i of valid) {
    if (q[i] <= level) {
      rejected[i] = true;
      rejections++;
    }
  }
  return { q, rejected, m, rejections };
}

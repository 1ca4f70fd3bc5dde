/**
 * Least-squares polynomial y ≈ Σ_{i=0}^{d} a_i x^i by Householder QR of the Vandermonde matrix (never the normal
 * equations, whose condition number is the square of the matrix's); coefficients in ascending powers. Callers keep x
 * within [−1, 1] so the columns stay well scaled. Needs more points than coefficients. Cost O(m·d²) for m points.
 * Source: Golub & Van Loan (2013), Matrix Computations, 4th ed., Sec. 5.2 and 5.3 (Householder QR, least squares).
 */
export function polynomialFit(x: ArrayLike<number>, y: ArrayLike<number>, degree: number): Float64Array {
  const m = x.length;
  const p = degree + 1;
  if (m < p) throw new RangeError(`a polynomial of degree ${degree} needs at least ${p} points (got ${m})`);
  // Column-major copy of the Vandermonde matrix and of y, reduced in place.
  const a = new Float64Array(m * p);
  for (let i = 0; i < m; i++) {
    let power = 1;
    for (let j = 0; j < p; j++) {
      a[j * m + i] = power;
      power *= x[i];
    }
  }
  const b = Float64Array.from(y);
  const diagonal = new Float64Array(p);
  for (let k = 0; k < p; k++) {
    // Powers of |x| ≤ 1 cannot overflow a plain sum of squares.
    let squares = 0;
    for (let i = k; i < m; i++) squares += a[k * m + i] * a[k * m + i];
    const norm = Math.sqrt(squares);
    const alpha = a[k * m + k] > 0 ? -norm : norm;
    // v = column − alpha e_k, stored over the column; H = I − 2vvᵀ/vᵀv.
    a[k * m + k] -= alpha;
    let vv = 0;
    for (let i = k; i < m; i++) vv += a[k * m + i] * a[k * m + i];
    diagonal[k] = alpha;
    if (vv === 0) continue;
    for (let j = k + 1; j < p; j++) {
      let dot = 0;
      for (let i = k; i < m; i++) dot += a[k * m + i] * a[j * m + i];
      const f = (2 * dot) / vv;
      for (let i = k; i < m; i++) a[j * m + i] -= f * a[k * m + i];
    }
    let dot = 0;
    for (let i = k; i < m; i++) dot += a[k * m + i] * b[i];
    const f = (2 * dot) / vv;
    for (let i = k; i < m; i++) b[i] -= f * a[k * m + i];
  }
  // Back substitution R a = Qᵀ y (R's diagonal in `diagonal`, above it in the reduced columns).
  const coef = new Float64Array(p);
  for (let k = p - 1; k >= 0; k--) {
    let s = b[k];
    for (let j = k + 1; j < p; j++) s -= a[j * m + k] * coef[j];
    coef[k] = s / diagonal[k];
  }
  return coef;
}

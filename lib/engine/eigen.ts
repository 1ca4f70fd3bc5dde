/**
 * Eigenvalues of a real symmetric k×k matrix (row-major), ascending, by the cyclic Jacobi method: sweeps of plane
 * rotations that zero each off-diagonal entry in turn until the off-diagonal mass is below 1e-30 of the total.
 * Accurate to a few units in the last place relative to the matrix norm; meant for the small matrices of a site's
 * sensors. Cost O(k³) per sweep, a handful of sweeps. Source: Golub & Van Loan (2013), Matrix Computations, 4th ed.,
 * Sec. 8.5 (the symmetric Jacobi method).
 */
export function symmetricEigenvalues(matrix: Float64Array, k: number): Float64Array {
  const a = Float64Array.from(matrix);
  let total = 0;
  for (const v of a) total += v * v;
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let p = 0; p < k; p++) for (let q = p + 1; q < k; q++) off += 2 * a[p * k + q] * a[p * k + q];
    if (off <= 1e-30 * total) break;
    for (let p = 0; p < k; p++) {
      for (let q = p + 1; q < k; q++) {
        const apq = a[p * k + q];
        if (apq === 0) continue;
        // Rotation angle from the symmetric Schur decomposition of the 2×2 block (Golub & Van Loan, Alg. 8.5.1).
        const tau = (a[q * k + q] - a[p * k + p]) / (2 * apq);
        const t = Math.sign(tau || 1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = t * c;
        for (let r = 0; r < k; r++) {
          const arp = a[r * k + p];
          const arq = a[r * k + q];
          a[r * k + p] = c * arp - s * arq;
          a[r * k + q] = s * arp + c * arq;
        }
        for (let r = 0; r < k; r++) {
          const apr = a[p * k + r];
          const aqr = a[q * k + r];
          a[p * k + r] = c * apr - s * aqr;
          a[q * k + r] = s * apr + c * aqr;
        }
      }
    }
  }
  return Float64Array.from({ length: k }, (_, i) => a[i * k + i]).sort();
}

/**
 * Eigenvalues λ of the symmetric-definite pencil A v = λ B v (B positive definite), ascending: with the Cholesky
 * factor B = L Lᵀ they are those of the symmetric C = L⁻¹ A L⁻ᵀ (symmetricEigenvalues). NaN-filled when B is not
 * positive definite. Cost O(k³). Source: Golub & Van Loan (2013), Sec. 8.7.2 (Cholesky reduction of the pencil).
 */
export function generalizedEigenvalues(a: Float64Array, b: Float64Array, k: number): Float64Array {
  const l = new Float64Array(k * k);
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let s = b[i * k + j];
      for (let m = 0; m < j; m++) s -= l[i * k + m] * l[j * k + m];
      if (i === j) {
        if (!(s > 0)) return new Float64Array(k).fill(Number.NaN);
        l[i * k + i] = Math.sqrt(s);
      } else l[i * k + j] = s / l[j * k + j];
    }
  }
  // X = L⁻¹ A (forward substitution on each column), then C = L⁻¹ Xᵀ = L⁻¹ A L⁻ᵀ (A symmetric).
  const solveLower = (rhs: Float64Array) => {
    const out = new Float64Array(k * k);
    for (let col = 0; col < k; col++) {
      for (let i = 0; i < k; i++) {
        let s = rhs[i * k + col];
        for (let m = 0; m < i; m++) s -= l[i * k + m] * out[m * k + col];
        out[i * k + col] = s / l[i * k + i];
      }
    }
    return out;
  };
  const x = solveLower(a);
  const xt = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) xt[i * k + j] = x[j * k + i];
  const c = solveLower(xt);
  // Symmetrise away rounding before the symmetric solver.
  for (let i = 0; i < k; i++) for (let j = 0; j < i; j++) c[i * k + j] = c[j * k + i] = (c[i * k + j] + c[j * k + i]) / 2;
  return symmetricEigenvalues(c, k);
}

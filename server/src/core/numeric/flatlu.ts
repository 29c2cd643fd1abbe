/**
 * Small dense LU kernels on row-major Float64Array storage, used by the
 * time-domain code (ode.ts, expm.ts). Gaussian elimination with partial
 * (row) pivoting; no allocation inside the kernels.
 *
 * Kept local to the time-domain kernels so they do not depend on the general
 * matrix module; the algorithms are the textbook ones (Golub & Van Loan,
 * Matrix Computations, Alg. 3.4.1).
 */

/**
 * Factor the n×n row-major matrix `a` in place as P·A = L·U (unit lower L
 * below the diagonal, U on and above). `piv[k]` is the row swapped with row k
 * at step k. Returns false when a pivot is exactly zero or not finite
 * (singular or corrupted matrix); `a` is then partially overwritten.
 */
export function luFactorInPlace(a: Float64Array, n: number, piv: Int32Array): boolean {
  for (let k = 0; k < n; k++) {
    // pivot search in column k
    let p = k;
    let best = Math.abs(a[k * n + k]);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(a[i * n + k]);
      if (v > best) {
        best = v;
        p = i;
      }
    }
    piv[k] = p;
    if (!(best > 0) || !Number.isFinite(best)) return false;
    if (p !== k) {
      const rk = k * n;
      const rp = p * n;
      for (let j = 0; j < n; j++) {
        const tmp = a[rk + j];
        a[rk + j] = a[rp + j];
        a[rp + j] = tmp;
      }
    }
    const rk = k * n;
    const inv = 1 / a[rk + k];
    for (let i = k + 1; i < n; i++) {
      const ri = i * n;
      const l = a[ri + k] * inv;
      a[ri + k] = l;
      if (l !== 0) {
        for (let j = k + 1; j < n; j++) a[ri + j] -= l * a[rk + j];
      }
    }
  }
  return true;
}

/** Solve A x = b in place (b becomes x) with the factors from luFactorInPlace. */
export function luSolveInPlace(lu: Float64Array, n: number, piv: Int32Array, b: Float64Array): void {
  for (let k = 0; k < n; k++) {
    const p = piv[k];
    if (p !== k) {
      const tmp = b[k];
      b[k] = b[p];
      b[p] = tmp;
    }
  }
  for (let i = 1; i < n; i++) {
    const ri = i * n;
    let s = b[i];
    for (let k = 0; k < i; k++) s -= lu[ri + k] * b[k];
    b[i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    const ri = i * n;
    let s = b[i];
    for (let k = i + 1; k < n; k++) s -= lu[ri + k] * b[k];
    b[i] = s / lu[ri + i];
  }
}

/**
 * Solve A X = B in place for an n×m row-major right-hand side B (B becomes X),
 * working row-wise so the inner loops are contiguous.
 */
export function luSolveMatrixInPlace(
  lu: Float64Array,
  n: number,
  piv: Int32Array,
  b: Float64Array,
  m: number,
): void {
  for (let k = 0; k < n; k++) {
    const p = piv[k];
    if (p !== k) {
      const rk = k * m;
      const rp = p * m;
      for (let j = 0; j < m; j++) {
        const tmp = b[rk + j];
        b[rk + j] = b[rp + j];
        b[rp + j] = tmp;
      }
    }
  }
  for (let i = 1; i < n; i++) {
    const bi = i * m;
    const li = i * n;
    for (let k = 0; k < i; k++) {
      const l = lu[li + k];
      if (l === 0) continue;
      const bk = k * m;
      for (let j = 0; j < m; j++) b[bi + j] -= l * b[bk + j];
    }
  }
  for (let i = n - 1; i >= 0; i--) {
    const bi = i * m;
    const li = i * n;
    for (let k = i + 1; k < n; k++) {
      const u = lu[li + k];
      if (u === 0) continue;
      const bk = k * m;
      for (let j = 0; j < m; j++) b[bi + j] -= u * b[bk + j];
    }
    const inv = 1 / lu[li + i];
    for (let j = 0; j < m; j++) b[bi + j] *= inv;
  }
}

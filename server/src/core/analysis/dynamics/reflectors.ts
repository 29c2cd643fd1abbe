/** Householder reflectors shared by the controllable staircase and the Hessenberg reduction of the frequency response. */

/**
 * Householder reflector I − f·v·vᵀ taking x (length L) to alpha·e₁, alpha = −sign(x₀)·‖x‖ (common practice;
 * Golub & Van Loan, Matrix Computations, §5.1): v (length L) is written, f = 2/(vᵀv), 0 when x = 0.
 */
export function householder(x: Float64Array, L: number, v: Float64Array): { alpha: number; f: number } {
  let s = 0;
  for (let i = 0; i < L; i++) s += x[i] * x[i];
  const nx = Math.sqrt(s);
  const alpha = x[0] > 0 ? -nx : nx;
  for (let i = 0; i < L; i++) v[i] = x[i];
  v[0] -= alpha;
  let beta = 0;
  for (let i = 0; i < L; i++) beta += v[i] * v[i];
  return { alpha, f: beta === 0 ? 0 : 2 / beta };
}

/** M ← (I − f·v·vᵀ)·M on the rows off..off+L−1 of M (row-major, `cols` columns). */
export function reflectRows(M: Float64Array, cols: number, v: Float64Array, L: number, off: number, f: number): void {
  for (let j = 0; j < cols; j++) {
    let t = 0;
    for (let i = 0; i < L; i++) t += v[i] * M[(off + i) * cols + j];
    if (t === 0) continue;
    t *= f;
    for (let i = 0; i < L; i++) M[(off + i) * cols + j] -= t * v[i];
  }
}

/** M ← M·(I − f·v·vᵀ) on the columns off..off+L−1 of M (row-major, `rows` rows of length `stride`). */
export function reflectCols(M: Float64Array, rows: number, stride: number, v: Float64Array, L: number, off: number, f: number): void {
  for (let i = 0; i < rows; i++) {
    let t = 0;
    const ro = i * stride + off;
    for (let j = 0; j < L; j++) t += M[ro + j] * v[j];
    if (t === 0) continue;
    t *= f;
    for (let j = 0; j < L; j++) M[ro + j] -= t * v[j];
  }
}

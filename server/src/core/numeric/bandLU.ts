/**
 * LU factorisation with partial pivoting of a banded matrix (kl sub-, ku super-diagonals), in the
 * column-major band storage of LAPACK's dgbtrf (Anderson et al., "LAPACK Users' Guide", 3rd ed., SIAM
 * 1999, Sect. 5.3.3: the factors need kl extra super-diagonals for the row interchanges). Solves with the
 * matrix and with its transpose (as dgbtrs). Work O(n·kl·(kl + ku)), no allocation per solve beyond the
 * result. Knows no model.
 */

export interface BandLU {
  ok: boolean;
  n: number;
  /** x with A x = b (b unchanged). */
  solve(b: ArrayLike<number>): Float64Array;
  /** y with Aᵀ y = c (c unchanged). */
  solveTranspose(c: ArrayLike<number>): Float64Array;
}

/** Lower and upper bandwidth of a matrix given by its entries (row, column). */
export function bandwidths(rows: ArrayLike<number>, cols: ArrayLike<number>, count: number): { kl: number; ku: number } {
  let kl = 0;
  let ku = 0;
  for (let t = 0; t < count; t++) {
    const d = rows[t] - cols[t];
    if (d > kl) kl = d;
    else if (-d > ku) ku = -d;
  }
  return { kl, ku };
}

/** Factors the n×n matrix with entries (rows[t], cols[t], vals[t]) (repeated entries add), bandwidths kl, ku. */
export function bandLU(n: number, kl: number, ku: number, rows: ArrayLike<number>, cols: ArrayLike<number>, vals: ArrayLike<number>, count: number): BandLU {
  const w = kl + ku; // upper bandwidth of U
  const ld = 2 * kl + ku + 1;
  const off = kl + ku;
  const ab = new Float64Array(ld * n);
  // element (i, j) at ab[j*ld + off + i − j]
  for (let t = 0; t < count; t++) {
    const i = rows[t];
    const j = cols[t];
    ab[j * ld + off + i - j] += vals[t];
  }
  const piv = new Int32Array(n);
  let ok = true;
  for (let k = 0; k < n; k++) {
    const last = Math.min(n - 1, k + kl);
    let p = k;
    let big = Math.abs(ab[k * ld + off]);
    for (let i = k + 1; i <= last; i++) {
      const a = Math.abs(ab[k * ld + off + i - k]);
      if (a > big) {
        big = a;
        p = i;
      }
    }
    piv[k] = p;
    if (!(big > 0) || !Number.isFinite(big)) {
      ok = false;
      break;
    }
    const jEnd = Math.min(n - 1, k + w);
    if (p !== k) {
      for (let j = k; j <= jEnd; j++) {
        const a = j * ld + off + k - j;
        const b = j * ld + off + p - j;
        const tmp = ab[a];
        ab[a] = ab[b];
        ab[b] = tmp;
      }
    }
    const pivot = ab[k * ld + off];
    for (let i = k + 1; i <= last; i++) {
      const li = k * ld + off + i - k;
      const l = ab[li] / pivot;
      ab[li] = l;
      if (l === 0) continue;
      for (let j = k + 1; j <= jEnd; j++) ab[j * ld + off + i - j] -= l * ab[j * ld + off + k - j];
    }
  }
  const notOk = (): never => {
    throw new Error('bandLU: matrix is singular; solve is unavailable');
  };
  const solve = (b: ArrayLike<number>): Float64Array => {
    if (!ok) notOk();
    const x = Float64Array.from(b);
    for (let k = 0; k < n; k++) {
      const p = piv[k];
      if (p !== k) {
        const tmp = x[k];
        x[k] = x[p];
        x[p] = tmp;
      }
      const xk = x[k];
      if (xk === 0) continue;
      const last = Math.min(n - 1, k + kl);
      for (let i = k + 1; i <= last; i++) x[i] -= ab[k * ld + off + i - k] * xk;
    }
    for (let k = n - 1; k >= 0; k--) {
      let s = x[k];
      const jEnd = Math.min(n - 1, k + w);
      for (let j = k + 1; j <= jEnd; j++) s -= ab[j * ld + off + k - j] * x[j];
      x[k] = s / ab[k * ld + off];
    }
    return x;
  };
  const solveTranspose = (c: ArrayLike<number>): Float64Array => {
    if (!ok) notOk();
    const y = Float64Array.from(c);
    // Uᵀ z = c
    for (let k = 0; k < n; k++) {
      let s = y[k];
      const iStart = Math.max(0, k - w);
      for (let i = iStart; i < k; i++) s -= ab[k * ld + off + i - k] * y[i];
      y[k] = s / ab[k * ld + off];
    }
    // then the multipliers and interchanges in reverse
    for (let k = n - 1; k >= 0; k--) {
      const last = Math.min(n - 1, k + kl);
      let s = y[k];
      for (let i = k + 1; i <= last; i++) s -= ab[k * ld + off + i - k] * y[i];
      y[k] = s;
      const p = piv[k];
      if (p !== k) {
        const tmp = y[k];
        y[k] = y[p];
        y[p] = tmp;
      }
    }
    return y;
  };
  return { ok, n, solve, solveTranspose };
}

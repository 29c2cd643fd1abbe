/**
 * Balancing of a dense matrix before the eigenvalue QR: D⁻¹ A D with a power-of-two diagonal D chosen so
 * that each row and the matching column have about equal 1-norms (Parlett & Reinsch, "Balancing a matrix
 * for calculation of eigenvalues and eigenvectors", Numer. Math. 13, 1969; EISPACK balanc without the
 * permutations). Scaling by powers of two is exact, so the eigenvalues are unchanged.
 */

/**
 * Balances h (n×n, row-major) in place; returns D's diagonal. The column sums are read from a transposed
 * copy kept in step with h, so that no pass runs down a column of a row-major matrix except to apply a
 * scaling; the sums are taken in the same order as down the column, so the result is the same.
 */
export function balance(h: Float64Array, n: number): Float64Array {
  const scale = new Float64Array(n).fill(1);
  const RADIX = 2;
  const SQRDX = RADIX * RADIX;
  const ht = transpose(h, n);
  let noconv = true;
  let sweeps = 0;
  while (noconv && sweeps++ < 200) {
    noconv = false;
    for (let i = 0; i < n; i++) {
      const row = i * n;
      let c = rowSumExcept(ht, row, n, i);
      const r = rowSumExcept(h, row, n, i);
      if (c !== 0 && r !== 0) {
        let g = r / RADIX;
        let f = 1;
        const s = c + r;
        let guard = 0;
        while (c < g && guard++ < 2100) {
          f *= RADIX;
          c *= SQRDX;
        }
        g = r * RADIX;
        guard = 0;
        while (c > g && guard++ < 2100) {
          f /= RADIX;
          c /= SQRDX;
        }
        if ((c + r) / f < 0.95 * s) {
          noconv = true;
          g = 1 / f;
          scale[i] *= f;
          scaleRowAndColumn(h, n, i, g, f);
          scaleRowAndColumn(ht, n, i, f, g);
        }
      }
    }
  }
  return scale;
}

function transpose(h: Float64Array, n: number): Float64Array {
  const t = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    const row = i * n;
    for (let j = 0, o = i; j < n; j++, o += n) t[o] = h[row + j];
  }
  return t;
}

/** Σ_{j ≠ i} |m[row + j]|, j ascending. */
function rowSumExcept(m: Float64Array, row: number, n: number, i: number): number {
  let s = 0;
  for (let j = 0; j < n; j++) {
    if (j === i) continue;
    s += Math.abs(m[row + j]);
  }
  return s;
}

/** Row i of m times g, then column i times f. */
function scaleRowAndColumn(m: Float64Array, n: number, i: number, g: number, f: number): void {
  const row = i * n;
  for (let j = 0; j < n; j++) m[row + j] *= g;
  for (let j = 0, o = i; j < n; j++, o += n) m[o] *= f;
}

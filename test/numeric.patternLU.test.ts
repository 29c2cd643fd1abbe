/**
 * PatternLU (numeric/patternLU.ts): the pivot order of sparseLU kept, values refactorised in place.
 * Checked by an independent route: the residual ‖A x − b‖ of every solve (and of the transposed solve)
 * against the matrix itself, and the solution against ml-matrix's dense LU (a reference library).
 */
import { describe, expect, it } from 'vitest';
import { Matrix, LuDecomposition } from 'ml-matrix';
import { PatternLU } from '../server/src/core/numeric/patternLU';

/** Deterministic pseudo-random numbers in [0, 1) (a 32-bit linear congruential generator, Numerical Recipes' constants). */
function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

interface Sparse { n: number; rows: Int32Array; cols: Int32Array; nnz: number }

/** A random sparse pattern with a full diagonal (some diagonal entries set to zero later) plus `extra` entries per row. */
function pattern(n: number, extra: number, r: () => number): Sparse {
  const rows: number[] = [];
  const cols: number[] = [];
  for (let i = 0; i < n; i++) {
    rows.push(i);
    cols.push(i);
    for (let e = 0; e < extra; e++) {
      rows.push(i);
      cols.push(Math.floor(r() * n));
    }
  }
  return { n, rows: Int32Array.from(rows), cols: Int32Array.from(cols), nnz: rows.length };
}

function dense(s: Sparse, vals: Float64Array): Matrix {
  const A = Matrix.zeros(s.n, s.n);
  for (let q = 0; q < s.nnz; q++) A.set(s.rows[q], s.cols[q], A.get(s.rows[q], s.cols[q]) + vals[q]);
  return A;
}

function residual(A: Matrix, x: Float64Array, b: Float64Array, transpose = false): number {
  const n = A.rows;
  let worst = 0;
  let scale = 0;
  for (let i = 0; i < n; i++) {
    let s = -b[i];
    for (let j = 0; j < n; j++) {
      const a = transpose ? A.get(j, i) : A.get(i, j);
      s += a * x[j];
      scale = Math.max(scale, Math.abs(a * x[j]));
    }
    worst = Math.max(worst, Math.abs(s));
  }
  return worst / Math.max(scale, 1e-300);
}

describe('PatternLU', () => {
  it('solves and solves transposed like a dense LU, for the analysed values and for new ones', () => {
    const r = rng(7);
    for (const [n, extra] of [[1, 0], [5, 1], [30, 2], [60, 3]] as const) {
      const s = pattern(n, extra, r);
      const vals = Float64Array.from({ length: s.nnz }, () => r() * 2 - 1 + 0.0);
      for (let q = 0; q < s.nnz; q++) if (s.rows[q] === s.cols[q]) vals[q] += 4; // diagonally strong
      const lu = PatternLU.analyse(n, { ...s, vals });
      expect(lu).toBeDefined();
      for (let round = 0; round < 4; round++) {
        // new values on the same pattern (a drift of each entry by up to 30 %)
        const v2 = round === 0 ? vals : Float64Array.from(vals, (v) => v * (0.7 + 0.6 * r()));
        const ok = lu!.refactor(v2);
        const A = dense(s, v2);
        const b = Float64Array.from({ length: n }, () => r() - 0.5);
        if (!ok) {
          // a failed reuse test must be fixed by a fresh analysis
          expect(PatternLU.analyse(n, { ...s, vals: v2 })).toBeDefined();
          continue;
        }
        const x = lu!.solve(b, new Float64Array(n));
        expect(residual(A, x, b)).toBeLessThan(1e-13);
        const ref = new LuDecomposition(A).solve(Matrix.columnVector(Array.from(b)));
        for (let i = 0; i < n; i++) expect(Math.abs(x[i] - ref.get(i, 0))).toBeLessThan(1e-11 * (1 + Math.abs(ref.get(i, 0))));
        const y = lu!.solveTranspose(b, new Float64Array(n));
        expect(residual(A, y, b, true)).toBeLessThan(1e-13);
        // in place
        const bb = Float64Array.from(b);
        lu!.solve(bb, bb);
        for (let i = 0; i < n; i++) expect(bb[i]).toBe(x[i]);
      }
    }
  });

  it('needs pivoting off the diagonal: zero diagonal entries, a permutation matrix', () => {
    // a cyclic shift (every diagonal entry zero) plus a diagonal that is structurally present but zero
    const n = 6;
    const rows: number[] = [];
    const cols: number[] = [];
    const vals: number[] = [];
    for (let i = 0; i < n; i++) {
      rows.push(i, i);
      cols.push((i + 1) % n, i);
      vals.push(1 + i, 0);
    }
    const t = { rows: Int32Array.from(rows), cols: Int32Array.from(cols), vals: Float64Array.from(vals), nnz: rows.length };
    const lu = PatternLU.analyse(n, t)!;
    expect(lu).toBeDefined();
    const b = Float64Array.from([1, 2, 3, 4, 5, 6]);
    const x = lu.solve(b, new Float64Array(n));
    // x[(i+1)%n] = b[i]/(1+i)
    for (let i = 0; i < n; i++) expect(x[(i + 1) % n]).toBeCloseTo(b[i] / (1 + i), 14);
    // the same pattern with the diagonal now dominant: the shift's pivots fail the reuse test
    const v2 = Float64Array.from(vals.map((v, q) => (q % 2 === 1 ? 100 : v)));
    expect(lu.refactor(v2)).toBe(false);
    const again = PatternLU.analyse(n, { ...t, vals: v2 })!;
    const A = dense({ n, rows: t.rows, cols: t.cols, nnz: t.nnz }, v2);
    const x2 = again.solve(b, new Float64Array(n));
    expect(residual(A, x2, b)).toBeLessThan(1e-14);
  });

  it('refuses singular and non-finite values', () => {
    const t = { rows: Int32Array.from([0, 0, 1, 1]), cols: Int32Array.from([0, 1, 0, 1]), vals: Float64Array.from([1, 2, 3, 4]), nnz: 4 };
    const lu = PatternLU.analyse(2, t)!;
    expect(lu.refactor(Float64Array.from([1, 2, 2, 4]))).toBe(false); // rank 1
    expect(lu.refactor(Float64Array.from([1, NaN, 3, 4]))).toBe(false);
    // the last good factors stay in use: [[1, 2], [3, 4]] x = (5, 11) → x = (1, 2)
    const x = lu.solve(Float64Array.from([5, 11]), new Float64Array(2));
    expect(x[0]).toBeCloseTo(1, 14);
    expect(x[1]).toBeCloseTo(2, 14);
    expect(lu.refactor(Float64Array.from([1, 2, 3, 4]))).toBe(true);
    expect(PatternLU.analyse(2, { ...t, vals: Float64Array.from([1, 2, 2, 4]) })).toBeUndefined();
  });
});

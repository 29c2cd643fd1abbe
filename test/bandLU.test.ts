/**
 * The band LU (server/src/core/numeric/bandLU.ts) against the dense LU with partial pivoting
 * (numeric/dense.ts, an independent route) and against the residual itself: random banded matrices whose
 * diagonal is small, so that rows are interchanged, solved with the matrix and with its transpose.
 */
import { describe, expect, it } from 'vitest';
import { bandLU, bandwidths } from '../server/src/core/numeric/bandLU';
import { luFactor } from '../server/src/core/numeric/dense';

function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32) * 2 - 1;
}

describe('band LU', () => {
  for (const [n, kl, ku] of [[1, 0, 0], [7, 1, 1], [30, 2, 1], [25, 0, 3], [40, 3, 0], [50, 4, 5]] as const) {
    it(`n = ${n}, kl = ${kl}, ku = ${ku}: A x = b and Aᵀ y = c as the dense LU, residuals at rounding`, () => {
      const r = rng(n * 100 + kl * 10 + ku);
      const rows: number[] = [], cols: number[] = [], vals: number[] = [];
      const dense = new Float64Array(n * n);
      for (let i = 0; i < n; i++) {
        for (let j = Math.max(0, i - kl); j <= Math.min(n - 1, i + ku); j++) {
          // a small diagonal makes rows swap; a triangular band keeps a sizeable one (else nearly singular)
          const v = i === j ? (kl > 0 && ku > 0 ? 0.01 * r() : 1.5 + 0.5 * r()) : r();
          rows.push(i); cols.push(j); vals.push(v);
          dense[i * n + j] += v;
        }
      }
      expect(bandwidths(rows, cols, rows.length)).toEqual({ kl: n > 1 ? kl : 0, ku: n > 1 ? ku : 0 });
      const lu = bandLU(n, kl, ku, rows, cols, vals, vals.length);
      expect(lu.ok).toBe(true);
      const b = Float64Array.from({ length: n }, () => r());
      const x = lu.solve(b);
      const y = lu.solveTranspose(b);
      const ref = luFactor({ rows: n, cols: n, data: dense });
      const At = new Float64Array(n * n);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) At[j * n + i] = dense[i * n + j];
      const refT = luFactor({ rows: n, cols: n, data: At });
      const xr = ref.solve(b);
      const yr = refT.solve(b);
      const scale = Math.max(1, ...Array.from(xr, Math.abs), ...Array.from(yr, Math.abs));
      for (let i = 0; i < n; i++) {
        expect(Math.abs(x[i] - xr[i])).toBeLessThan(1e-9 * scale);
        expect(Math.abs(y[i] - yr[i])).toBeLessThan(1e-9 * scale);
        let rx = -b[i], ry = -b[i];
        for (let j = 0; j < n; j++) {
          rx += dense[i * n + j] * x[j];
          ry += dense[j * n + i] * y[j];
        }
        expect(Math.abs(rx)).toBeLessThan(1e-11 * scale * n);
        expect(Math.abs(ry)).toBeLessThan(1e-11 * scale * n);
      }
    });
  }

  it('says when the matrix is singular', () => {
    const lu = bandLU(3, 1, 1, [0, 1, 1, 2], [0, 0, 1, 2], [1, 2, 0, 0], 4);
    expect(lu.ok).toBe(false);
    expect(() => lu.solve([1, 2, 3])).toThrow(/singular/);
  });
});

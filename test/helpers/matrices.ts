/**
 * Random test matrices for the numeric tests: a small seeded generator so a failure reproduces, random
 * dense matrices, and the conversion to ml-matrix (the reference library the results are checked against).
 */
import { Matrix } from 'ml-matrix';
import { expect } from 'vitest';
import { dense, toArrays, type DenseMatrix } from '../../server/src/core/numeric/dense';

/** Seeded pseudo-random numbers in [0, 1) (mulberry32, common practice for reproducible test data). */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * A rows×cols matrix of entries uniform in [−1, 1). With `zeroFraction` (0 included) each entry takes two
 * draws: the first makes it 0 with that probability, the second gives its value.
 */
export function randomDense(rows: number, cols: number, rand: () => number, zeroFraction?: number): DenseMatrix {
  const m = dense(rows, cols);
  for (let i = 0; i < m.data.length; i++) m.data[i] = zeroFraction === undefined ? 2 * rand() - 1 : rand() < zeroFraction ? 0 : 2 * rand() - 1;
  return m;
}

/** The same matrix as an ml-matrix Matrix. */
export const toMl = (m: DenseMatrix): Matrix => new Matrix(toArrays(m));

/** A complex number as the eigenvalue routines return it. */
export type Complex = { re: number; im: number };

/**
 * Largest distance between two multisets of eigenvalues, each of `got` matched to its nearest unused one of
 * `ref`; relative to max(1, |λ|) unless `relative` is false.
 */
export function spectrumMismatch(got: Complex[], ref: Complex[], relative = true): number {
  expect(got.length).toBe(ref.length);
  const used = new Array(ref.length).fill(false);
  let worst = 0;
  for (const g of got) {
    let best = -1, bd = Infinity;
    for (let k = 0; k < ref.length; k++) {
      if (used[k]) continue;
      const d = Math.hypot(g.re - ref[k].re, g.im - ref[k].im);
      if (d < bd) (bd = d), (best = k);
    }
    used[best] = true;
    worst = Math.max(worst, relative ? bd / Math.max(1, Math.hypot(ref[best].re, ref[best].im)) : bd);
  }
  return worst;
}

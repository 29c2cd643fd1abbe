/**
 * Random test matrices for the numeric tests: a small seeded generator so a failure reproduces, random
 * dense matrices, and the conversion to ml-matrix (the reference library the results are checked against).
 */
import { Matrix } from 'ml-matrix';
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

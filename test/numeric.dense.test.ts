import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { LuDecomposition, Matrix, SingularValueDecomposition } from 'ml-matrix';
import {
  complexSolve,
  dense,
  luFactor,
  matMul,
  numericalRank,
  svdValues,
  toArrays,
} from '../server/src/core/numeric/dense';
import { randomDense, rng, toMl } from './helpers/matrices';

describe('dense basics', () => {
  it('dense/toArrays round-trip and matMul agree with ml-matrix mmul', () => {
    const rand = rng(1);
    for (const [m, k, n] of [[1, 1, 1], [3, 4, 2], [7, 5, 9], [0, 3, 2]]) {
      const a = randomDense(m, k, rand);
      const b = randomDense(k, n, rand);
      expect(toArrays(dense(m, k, toArrays(a)))).toEqual(toArrays(a));
      const c = matMul(a, b);
      expect(c.rows).toBe(m);
      expect(c.cols).toBe(n);
      const ref = toMl(a).mmul(toMl(b)).to2DArray(); // ml-matrix as reference
      const got = toArrays(c);
      for (let i = 0; i < m; i++) for (let j = 0; j < n; j++) expect(got[i][j]).toBeCloseTo(ref[i][j], 13);
    }
    expect(() => matMul(dense(2, 3), dense(2, 3))).toThrow(RangeError);
    expect(() => dense(2, 2, [[1, 2]])).toThrow(RangeError);
  });
});

describe('luFactor', () => {
  it('solves like ml-matrix LuDecomposition and has the same determinant', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 25 }), fc.integer({ min: 1, max: 2 ** 31 - 1 }), (n, seed) => {
        const rand = rng(seed);
        const a = randomDense(n, n, rand);
        const ml = toMl(a);
        const svd = new SingularValueDecomposition(ml);
        fc.pre(svd.condition < 1e8);
        const f = luFactor(a);
        expect(f.ok).toBe(true);
        expect(f.rank).toBe(n);
        expect(f.singularCols).toEqual([]);
        const b = Float64Array.from({ length: n }, () => rand() - 0.5);
        const x = f.solve(b);
        const ref = new LuDecomposition(ml); // reference library
        const xr = ref.solve(Matrix.columnVector(Array.from(b))).to1DArray();
        let d = 0, nr = 0;
        for (let i = 0; i < n; i++) {
          d += (x[i] - xr[i]) ** 2;
          nr += xr[i] ** 2;
        }
        expect(Math.sqrt(d / nr)).toBeLessThan(1e-9);
        const det = f.det();
        expect(Math.abs(det - ref.determinant)).toBeLessThan(1e-10 * Math.max(1, Math.abs(ref.determinant)));
      }),
      { numRuns: 120 },
    );
  });

  it('handles row pivoting with a zero leading entry and a permutation determinant sign', () => {
    // [[0, 1], [1, 0]] has determinant −1 (common practice)
    const f = luFactor(dense(2, 2, [[0, 1], [1, 0]]));
    expect(f.ok).toBe(true);
    expect(f.det()).toBe(-1);
    const x = f.solve(Float64Array.from([3, 5]));
    expect(Array.from(x)).toEqual([5, 3]);
  });

  it('is accurate on badly scaled matrices (equilibration)', () => {
    const rand = rng(2);
    const n = 8;
    const a = randomDense(n, n, rand);
    const s = dense(n, n);
    const rsc = Array.from({ length: n }, (_, i) => 10 ** (2 * i - 7));
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) s.data[i * n + j] = a.data[i * n + j] * rsc[i];
    const f = luFactor(s);
    expect(f.ok).toBe(true);
    const b = Float64Array.from({ length: n }, (_, i) => rsc[i] * (rand() - 0.5));
    const x = f.solve(b);
    // row scaling does not change the solution: compare with ml-matrix on the unscaled rows (common practice)
    const xr = new LuDecomposition(toMl(a)).solve(Matrix.columnVector(Array.from(b, (v, i) => v / rsc[i]))).to1DArray();
    for (let i = 0; i < n; i++) expect(x[i]).toBeCloseTo(xr[i], 9);
  });

  it('reports singular columns and the rank of rank-deficient matrices like ml-matrix SVD', () => {
    const rand = rng(3);
    for (const [n, r] of [[4, 2], [10, 7], [12, 1], [6, 5]]) {
      const u = randomDense(n, r, rand);
      const v = randomDense(r, n, rand);
      const a = matMul(u, v);
      const f = luFactor(a);
      const ref = new SingularValueDecomposition(toMl(a)).rank; // reference library
      expect(ref).toBe(r);
      expect(f.ok).toBe(false);
      expect(f.rank).toBe(r);
      expect(f.singularCols.length).toBe(n - r);
      expect(f.det()).toBe(0);
      expect(() => f.solve(new Float64Array(n))).toThrow();
    }
    // a zero column is reported as such
    const z = dense(3, 3, [[1, 0, 2], [3, 0, 4], [5, 0, 7]]);
    expect(luFactor(z).singularCols).toEqual([1]);
  });
});

describe('complexSolve', () => {
  it('solves (Are + i Aim) X = B, checked by multiplying back', () => {
    const rand = rng(4);
    for (const [n, m] of [[1, 1], [3, 2], [12, 4], [30, 1]]) {
      const ar = randomDense(n, n, rand), ai = randomDense(n, n, rand);
      const br = randomDense(n, m, rand), bi = randomDense(n, m, rand);
      const x = complexSolve(ar, ai, br, bi);
      // (Ar + i Ai)(Xr + i Xi) = (Ar Xr − Ai Xi) + i (Ar Xi + Ai Xr)  (common practice)
      const rr = matMul(ar, x.re), ii = matMul(ai, x.im), ri = matMul(ar, x.im), ir = matMul(ai, x.re);
      for (let k = 0; k < n * m; k++) {
        expect(rr.data[k] - ii.data[k]).toBeCloseTo(br.data[k], 9);
        expect(ri.data[k] + ir.data[k]).toBeCloseTo(bi.data[k], 9);
      }
    }
  });

  it('gives the frequency response of a first-order lag: (jω + a)⁻¹ = (a − jω)/(a² + ω²)', () => {
    // textbook closed form (common practice)
    const a = 2;
    for (const w of [0, 0.1, 1, 10, 1000]) {
      const x = complexSolve(dense(1, 1, [[a]]), dense(1, 1, [[w]]), dense(1, 1, [[1]]), dense(1, 1, [[0]]));
      expect(x.re.data[0]).toBeCloseTo(a / (a * a + w * w), 14);
      expect(x.im.data[0]).toBeCloseTo(-w / (a * a + w * w), 14);
    }
  });

  it('solves (jωI − A) X = B for a 2-state oscillator against the closed-form transfer function', () => {
    // A = [[0, 1], [−ωn², −2ζωn]], B = [0; 1], C = [1, 0]: G(s) = 1/(s² + 2ζωn s + ωn²) (textbook closed form)
    const wn = 3, z = 0.2;
    const A = [[0, 1], [-wn * wn, -2 * z * wn]];
    for (const w of [0.5, 3, 7]) {
      const are = dense(2, 2, [[-A[0][0], -A[0][1]], [-A[1][0], -A[1][1]]]);
      const aim = dense(2, 2, [[w, 0], [0, w]]);
      const x = complexSolve(are, aim, dense(2, 1, [[0], [1]]), dense(2, 1, [[0], [0]]));
      // 1/(ωn² − ω² + 2iζωnω)
      const dr = wn * wn - w * w, di = 2 * z * wn * w;
      const den = dr * dr + di * di;
      expect(x.re.data[0]).toBeCloseTo(dr / den, 12);
      expect(x.im.data[0]).toBeCloseTo(-di / den, 12);
    }
  });

  it('throws on an exactly singular matrix', () => {
    expect(() => complexSolve(dense(2, 2, [[1, 2], [2, 4]]), dense(2, 2), dense(2, 1, [[1], [1]]), dense(2, 1))).toThrow();
  });
});

describe('svdValues and numericalRank', () => {
  it('matches hand-computed singular values of [[3, 0], [4, 5]] (√45 and √5)', () => {
    // AᵀA = [[25, 20], [20, 25]] has eigenvalues 45 and 5 (worked by hand, common practice)
    const s = svdValues(dense(2, 2, [[3, 0], [4, 5]]));
    expect(s[0]).toBeCloseTo(Math.sqrt(45), 13);
    expect(s[1]).toBeCloseTo(Math.sqrt(5), 13);
  });

  it('returns the absolute diagonal of a diagonal matrix, sorted descending, also for rectangular shapes', () => {
    const s = svdValues(dense(3, 4, [[0, 0, 0, 0], [0, -5, 0, 0], [0, 0, 2, 0]]));
    expect(Array.from(s)).toEqual([5, 2, 0]);
    const t = svdValues(dense(4, 2, [[1, 0], [0, 0], [0, -3], [0, 0]]));
    expect(Array.from(t)).toEqual([3, 1]);
    expect(svdValues(dense(0, 3)).length).toBe(0);
  });

  it('finds the rank of sums of outer products', () => {
    const rand = rng(5);
    for (const [m, n, r] of [[5, 5, 3], [8, 4, 2], [3, 9, 3], [6, 6, 0], [7, 7, 7]]) {
      const a = r === 0 ? dense(m, n) : matMul(randomDense(m, r, rand), randomDense(r, n, rand));
      // rank of a product of generic m×r and r×n factors is r (common practice)
      expect(numericalRank(a)).toBe(r);
    }
    // a larger tolerance ignores small singular values
    expect(numericalRank(dense(2, 2, [[1, 0], [0, 1e-6]]), 1e-3)).toBe(1);
    expect(numericalRank(dense(2, 2, [[1, 0], [0, 1e-6]]))).toBe(2);
  });
});

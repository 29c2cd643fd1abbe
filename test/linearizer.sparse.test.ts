/**
 * The sparse route from the Jacobian to A, B, C, D (server/src/core/solve/linearizer.ts,
 * numeric/sparseSolve.ts):
 * - solves with sparse right-hand sides give, bit for bit, what the dense substitution of the same
 *   factors gives (the reference route inside the project: lu.solve), and what ml-matrix's LU gives
 *   within round-off (reference library);
 * - the chain of N tanks has A, B, C derived by hand below (tridiagonal A, 3N − 2 non-zeros), and its
 *   sparse A–D hold exactly those non-zeros;
 * - a coefficient of 1e-16 beside ones of order 1 keeps every entry (issue 9): compared with the hand
 *   derivation and with a rescaled copy of the same model (k = 1), whose entries must agree exactly.
 */
import { describe, expect, it } from 'vitest';
import { LuDecomposition, Matrix } from 'ml-matrix';
import { sparseLU } from '../server/src/core/numeric/sparseLU';
import { SparseSolver } from '../server/src/core/numeric/sparseSolve';
import { analyze } from '../server/src/core/pipeline/analysis';
import { tankChain } from '../bench/models';
import { rng } from './helpers/matrices';
import { dedent } from './helpers/model';

describe('sparse right-hand sides', () => {
  for (const [n, density, seed] of [[12, 0.3, 1], [60, 0.06, 2], [200, 0.015, 3]] as const) {
    it(`n = ${n}: equal to the dense substitution bit for bit, and to ml-matrix within round-off`, () => {
      const r = rng(seed);
      const rows: number[] = [], cols: number[] = [], vals: number[] = [];
      for (let i = 0; i < n; i++) {
        rows.push(i), cols.push(i), vals.push(4 + r());
        for (let j = 0; j < n; j++) if (j !== i && r() < density) rows.push(i), cols.push(j), vals.push(r() * 2 - 1);
      }
      const lu = sparseLU(n, { rows: Int32Array.from(rows), cols: Int32Array.from(cols), vals: Float64Array.from(vals), nnz: rows.length });
      expect(lu.ok).toBe(true);
      const dense = Matrix.zeros(n, n);
      rows.forEach((i, k) => dense.set(i, cols[k], dense.get(i, cols[k]) + vals[k]));
      const ref = new LuDecomposition(dense);
      const solver = new SparseSolver(lu.factors);
      for (let t = 0; t < 20; t++) {
        const nb = 1 + Math.floor(r() * 3);
        const br: number[] = [], bv: number[] = [];
        const b = new Float64Array(n);
        for (let e = 0; e < nb; e++) {
          const i = Math.floor(r() * n);
          if (br.includes(i)) continue;
          br.push(i), bv.push(r() * 10 - 5);
          b[i] = bv[bv.length - 1];
        }
        const want = lu.solve(b);
        const got = solver.solve(br, bv, br.length, true);
        const x = new Float64Array(n);
        for (let c = 0; c < got.count; c++) x[got.cols[c]] = got.x[got.cols[c]];
        for (let i = 0; i < n; i++) expect(x[i]).toBe(want[i] === 0 ? 0 : want[i]); // -0 and 0 alike
        const xr = ref.solve(Matrix.columnVector(Array.from(b))).to1DArray();
        for (let i = 0; i < n; i++) expect(Math.abs(x[i] - xr[i])).toBeLessThan(1e-12 * (1 + Math.abs(xr[i])));
        // the bound dominates every entry
        for (let c = 0; c < got.count; c++) expect(got.bound[got.cols[c]]).toBeGreaterThanOrEqual(Math.abs(got.x[got.cols[c]]) * (1 - 1e-12));
      }
    });
  }
});

describe('chain of tanks (hand derivation)', () => {
  // area*h_i' = q_{i−1} − q_i, q_i = k*sqrt(h_i − h_{i+1}), q_N = k*sqrt(h_N); at the point every drop is
  // (qin/k)² = 1 m, so ∂q_i/∂h_i = k/(2·1 m) = 0.005 m²/s and ∂q_i/∂h_{i+1} = −0.005 m²/s. Hence
  // A[i][i−1] = 0.005/1.5, A[i][i] = −0.01/1.5 (−0.005/1.5 for the first tank), A[i][i+1] = 0.005/1.5,
  // B[0][0] = 1/1.5 (qin into the first tank), C[0][N−1] = 100 (level_last in cm), D = 0.
  const N = 300;
  const a = analyze(tankChain(N));
  const lin = a.linear('nominal')!;
  it('sparse A, B, C, D hold exactly the non-zeros of the hand derivation', () => {
    expect(lin.ok).toBe(true);
    const { A, B, C, D } = lin.sparse;
    expect(A.values.length).toBe(3 * N - 2);
    expect(B.values.length).toBe(1);
    expect(C.values.length).toBe(1);
    expect(D.values.length).toBe(0);
    const g = 0.005 / 1.5;
    for (let i = 0; i < N; i++) {
      for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) {
        const j = A.colIdx[t];
        const want = j === i - 1 ? g : j === i + 1 ? g : i === 0 ? -g : -2 * g;
        expect(Math.abs(A.values[t] - want)).toBeLessThan(1e-9 * g);
      }
    }
    expect(B.colIdx[0]).toBe(0);
    expect(Math.abs(B.values[0] - 1 / 1.5)).toBeLessThan(1e-12);
    expect(C.colIdx[0]).toBe(N - 1);
    expect(Math.abs(C.values[0] - 100)).toBeLessThan(1e-9);
  });
  it('the dense views are the sparse matrices', () => {
    const { A } = lin.sparse;
    let nz = 0;
    for (let k = 0; k < N * N; k++) if (lin.A[k] !== 0) nz++;
    expect(nz).toBe(A.values.length);
    for (let i = 0; i < N; i++) for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) expect(lin.A[i * N + A.colIdx[t]]).toBe(A.values[t]);
  });
});

describe('widely different magnitudes keep their entries (issue 9)', () => {
  // by hand: k*y = u gives y = u/k, so x' = −x + y = −x + u/k: A = −1, B = 1/k, C (z = y) = 0, D = 1/k.
  // With k = 1e-16 the row of [A B] spans 16 orders of magnitude; a row-wide round-off threshold would
  // wipe out A = −1 (it did before the elimination compared each entry with its own terms).
  const model = (k: string) => dedent(`
    const k = ${k}
    input u
    state x
    var y
    x' = -x + y
    k*y = u
    output z = y
    point p:
      u = 0
      x ~ 0
      y ~ 0
  `);
  const tiny = analyze(model('1e-16')).linear('p')!;
  const plain = analyze(model('1')).linear('p')!;
  const near = (got: number, want: number) => expect(Math.abs(got / want - 1)).toBeLessThan(1e-15);
  it('k = 1e-16 gives the hand-derived entries', () => {
    expect(tiny.ok).toBe(true);
    expect(Array.from(tiny.A)).toEqual([-1]);
    near(tiny.B[0], 1e16);
    expect(Array.from(tiny.C)).toEqual([0]);
    near(tiny.D[0], 1e16);
  });
  it('and the entries of the rescaled copy (k = 1) times the scale', () => {
    expect(Array.from(plain.A)).toEqual([-1]);
    expect(Array.from(tiny.A)).toEqual(Array.from(plain.A));
    near(tiny.B[0] * 1e-16, plain.B[0]);
    expect(Array.from(tiny.C)).toEqual(Array.from(plain.C));
    near(tiny.D[0] * 1e-16, plain.D[0]);
  });
});

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { LuDecomposition, Matrix, SingularValueDecomposition, inverse } from 'ml-matrix';
import { SparseEntry, sparseLU, solveMany } from '../server/src/core/numeric/sparseLU';
import { rng } from './helpers/matrices';

function toDense(n: number, entries: SparseEntry[]): Matrix {
  const m = Matrix.zeros(n, n);
  for (const e of entries) m.set(e.row, e.col, m.get(e.row, e.col) + e.val);
  return m;
}

function mulVec(a: Matrix, x: Float64Array): Float64Array {
  const n = a.rows;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < a.columns; j++) s += a.get(i, j) * x[j];
    out[i] = s;
  }
  return out;
}

function relResidual(a: Matrix, x: Float64Array, b: Float64Array): number {
  const ax = mulVec(a, x);
  let r = 0, nb = 0;
  for (let i = 0; i < b.length; i++) {
    r += (ax[i] - b[i]) ** 2;
    nb += b[i] ** 2;
  }
  return Math.sqrt(r / nb);
}

/** Normwise backward error ‖Ax−b‖∞ / (‖A‖∞‖x‖∞ + ‖b‖∞) (Rigal–Gaches; common practice). */
function backwardError(a: Matrix, x: Float64Array, b: Float64Array): number {
  const ax = mulVec(a, x);
  let r = 0, na = 0, nx = 0, nb = 0;
  for (let i = 0; i < b.length; i++) {
    r = Math.max(r, Math.abs(ax[i] - b[i]));
    nx = Math.max(nx, Math.abs(x[i]));
    nb = Math.max(nb, Math.abs(b[i]));
    let s = 0;
    for (let j = 0; j < a.columns; j++) s += Math.abs(a.get(i, j));
    na = Math.max(na, s);
  }
  return r / (na * nx + nb);
}

function relDiff(x: Float64Array, y: ArrayLike<number>): number {
  let d = 0, ny = 0;
  for (let i = 0; i < x.length; i++) {
    d += (x[i] - y[i]) ** 2;
    ny += y[i] ** 2;
  }
  return Math.sqrt(d / Math.max(ny, 1e-300));
}

/** Rank by ml-matrix's SVD (reference library). */
function svdRank(a: Matrix): number {
  if (a.rows === 0 || a.columns === 0) return 0;
  return new SingularValueDecomposition(a, { autoTranspose: true }).rank;
}

function removeRowsCols(a: Matrix, rows: number[], cols: number[]): Matrix {
  const keepR: number[] = [];
  const keepC: number[] = [];
  for (let i = 0; i < a.rows; i++) if (!rows.includes(i)) keepR.push(i);
  for (let j = 0; j < a.columns; j++) if (!cols.includes(j)) keepC.push(j);
  return a.selection(keepR, keepC);
}

function randomSparse(n: number, perRow: number, rand: () => number, withDiag: boolean): SparseEntry[] {
  const e: SparseEntry[] = [];
  for (let i = 0; i < n; i++) {
    if (withDiag) e.push({ row: i, col: i, val: 1 + rand() });
    for (let k = 0; k < perRow; k++) e.push({ row: i, col: Math.floor(rand() * n), val: 2 * rand() - 1 });
  }
  return e;
}

describe('sparseLU on random matrices', () => {
  it('solves random sparse systems: residual < 1e-10 and agreement with ml-matrix dense LU', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 70 }),
        fc.integer({ min: 1, max: 8 }),
        fc.boolean(),
        fc.integer({ min: 1, max: 2 ** 31 - 1 }),
        (n, perRow, withDiag, seed) => {
          const rand = rng(seed);
          const entries = randomSparse(n, perRow, rand, withDiag);
          const A = toDense(n, entries);
          const svd = new SingularValueDecomposition(A);
          // only well-conditioned cases are compared numerically (reference: ml-matrix SVD condition)
          fc.pre(svd.rank === n && svd.condition < 1e8);
          const lu = sparseLU(n, entries);
          expect(lu.ok).toBe(true);
          expect(lu.rank).toBe(n);
          expect(lu.singularCols).toEqual([]);
          expect(lu.singularRows).toEqual([]);
          const b = Float64Array.from({ length: n }, () => rand() - 0.5);
          const x = lu.solve(b);
          // residual of A x = b, computed by multiplying back (common practice). A backward-stable
          // solver guarantees ‖Ax−b‖ ≲ eps·‖A‖‖x‖, i.e. ‖Ax−b‖/‖b‖ ≲ eps·κ(A): the 1e-10 bound is
          // checked where κ < 1e5, the normwise backward error everywhere
          if (svd.condition < 1e5) expect(relResidual(A, x, b)).toBeLessThan(1e-10);
          expect(backwardError(A, x, b)).toBeLessThan(1e-13);
          // ml-matrix LuDecomposition as the reference solution
          const xref = new LuDecomposition(A).solve(Matrix.columnVector(Array.from(b))).to1DArray();
          expect(relDiff(x, xref)).toBeLessThan(1e-8 * Math.max(1, svd.condition / 1e4));
          // transpose solve, checked by multiplying back with Aᵀ (common practice)
          const xt = lu.solveTranspose(b);
          if (svd.condition < 1e5) expect(relResidual(A.transpose(), xt, b)).toBeLessThan(1e-10);
          expect(backwardError(A.transpose(), xt, b)).toBeLessThan(1e-13);
        },
      ),
      { numRuns: 150 },
    );
  });

  it('finds the rank of random (possibly structurally singular) matrices like ml-matrix SVD, and the left-out rows/columns are exactly the deficient ones', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 40 }),
        fc.integer({ min: 1, max: 3 }),
        fc.integer({ min: 1, max: 2 ** 31 - 1 }),
        (n, perRow, seed) => {
          const rand = rng(seed);
          // no forced diagonal and few entries: structural singularity is common
          const entries = randomSparse(n, perRow, rand, false);
          const A = toDense(n, entries);
          const svd = new SingularValueDecomposition(A);
          const refRank = svd.rank;
          // skip nearly-singular but full-rank cases, where the answer depends on a tolerance
          fc.pre(refRank < n || svd.condition < 1e8);
          const lu = sparseLU(n, entries);
          expect(lu.rank).toBe(refRank);
          expect(lu.ok).toBe(refRank === n);
          expect(lu.singularCols.length).toBe(n - refRank);
          expect(lu.singularRows.length).toBe(n - refRank);
          // removing the reported rows and columns leaves a nonsingular matrix (ml-matrix SVD rank)
          const sub = removeRowsCols(A, lu.singularRows, lu.singularCols);
          expect(svdRank(sub)).toBe(refRank);
        },
      ),
      { numRuns: 150 },
    );
  });

  it('handles denser random matrices (dense kernel) of size 150 against ml-matrix', () => {
    const rand = rng(99);
    const n = 150;
    const entries = randomSparse(n, 40, rand, true);
    const A = toDense(n, entries);
    const lu = sparseLU(n, entries);
    expect(lu.ok).toBe(true);
    const b = Float64Array.from({ length: n }, () => rand());
    const x = lu.solve(b);
    expect(relResidual(A, x, b)).toBeLessThan(1e-10);
    const xref = new LuDecomposition(A).solve(Matrix.columnVector(Array.from(b))).to1DArray();
    expect(relDiff(x, xref)).toBeLessThan(1e-9);
  });

  it('handles fill-in growth of size 300 (storage reallocation) against ml-matrix', () => {
    for (const [n, per, seed] of [[300, 3, 303], [400, 2, 402]]) {
      const rand = rng(seed);
      const entries = randomSparse(n, per, rand, true);
      const A = toDense(n, entries);
      const lu = sparseLU(n, entries);
      expect(lu.ok).toBe(true);
      const b = Float64Array.from({ length: n }, () => rand() - 0.5);
      const x = lu.solve(b);
      expect(backwardError(A, x, b)).toBeLessThan(1e-14);
      const xref = new LuDecomposition(A).solve(Matrix.columnVector(Array.from(b))).to1DArray();
      expect(relDiff(x, xref)).toBeLessThan(1e-8);
    }
  });

  it('handles a chain (tridiagonal) of 3000 unknowns', () => {
    const rand = rng(7);
    const n = 3000;
    const rows = new Int32Array(3 * n), cols = new Int32Array(3 * n), vals = new Float64Array(3 * n);
    let k = 0;
    for (let i = 0; i < n; i++) {
      rows[k] = i; cols[k] = i; vals[k++] = -(1 + rand());
      if (i > 0) { rows[k] = i; cols[k] = i - 1; vals[k++] = 0.4 + rand(); }
      if (i < n - 1) { rows[k] = i; cols[k] = i + 1; vals[k++] = 0.4 + rand(); }
    }
    const lu = sparseLU(n, { rows, cols, vals, nnz: k });
    expect(lu.ok).toBe(true);
    const b = Float64Array.from({ length: n }, () => rand() - 0.5);
    const x = lu.solve(b);
    // residual by multiplying back through the triplets (common practice)
    const ax = new Float64Array(n);
    for (let t = 0; t < k; t++) ax[rows[t]] += vals[t] * x[cols[t]];
    let r = 0, nb = 0;
    for (let i = 0; i < n; i++) {
      r += (ax[i] - b[i]) ** 2;
      nb += b[i] ** 2;
    }
    expect(Math.sqrt(r / nb)).toBeLessThan(1e-12);
    // a chain has no fill beyond its band: the factors stay O(n)
    expect(lu.factorNnz).toBeLessThan(6 * n);
  });
});

describe('sparseLU pivoting and scaling', () => {
  it('pivots when the diagonal is zero (permutation-like and saddle-point matrices)', () => {
    const rand = rng(3);
    for (const n of [2, 5, 12, 40]) {
      // A = P·(D + small off-diagonals) with P a cyclic shift: every diagonal entry is zero
      const entries: SparseEntry[] = [];
      for (let i = 0; i < n; i++) {
        entries.push({ row: i, col: (i + 1) % n, val: 2 + rand() });
        if (n > 2) entries.push({ row: i, col: (i + 2) % n, val: 0.3 * (rand() - 0.5) });
      }
      const A = toDense(n, entries);
      for (let i = 0; i < n; i++) expect(A.get(i, i)).toBe(0);
      const lu = sparseLU(n, entries);
      expect(lu.ok).toBe(true);
      const b = Float64Array.from({ length: n }, () => rand());
      const x = lu.solve(b);
      expect(relResidual(A, x, b)).toBeLessThan(1e-12);
      const xref = new LuDecomposition(A).solve(Matrix.columnVector(Array.from(b))).to1DArray();
      expect(relDiff(x, xref)).toBeLessThan(1e-10);
    }
    // saddle point [[0, Bᵀ], [B, I]] with B square and nonsingular
    const m = 6;
    const entries: SparseEntry[] = [];
    for (let i = 0; i < m; i++) {
      entries.push({ row: m + i, col: m + i, val: 1 });
      entries.push({ row: m + i, col: i, val: 3 + rand() });
      entries.push({ row: i, col: m + i, val: 3 + rand() });
      if (i + 1 < m) {
        const v = rand();
        entries.push({ row: m + i, col: i + 1, val: v });
        entries.push({ row: i + 1, col: m + i, val: v });
      }
    }
    const A = toDense(2 * m, entries);
    const lu = sparseLU(2 * m, entries);
    expect(lu.ok).toBe(true);
    const b = Float64Array.from({ length: 2 * m }, () => rand());
    expect(relResidual(A, lu.solve(b), b)).toBeLessThan(1e-12);
  });

  it('uses values, not only structure: a small structural diagonal is not taken as pivot blindly', () => {
    // [[1e-9, 1], [1, 1]]: pivoting on 1e-9 would lose about 7 digits of x0 to cancellation
    const d = 1e-9;
    const entries: SparseEntry[] = [
      { row: 0, col: 0, val: d },
      { row: 0, col: 1, val: 1 },
      { row: 1, col: 0, val: 1 },
      { row: 1, col: 1, val: 1 },
    ];
    const lu = sparseLU(2, entries);
    expect(lu.ok).toBe(true);
    const x = lu.solve(Float64Array.from([1, 2]));
    // exact solution by Cramer's rule (common practice): x0 = (1·1 − 1·2)/(d − 1), x1 = (2d − 1)/(d − 1)
    expect(Math.abs(x[0] - (1 - 2) / (d - 1))).toBeLessThan(1e-14);
    expect(Math.abs(x[1] - (2 * d - 1) / (d - 1))).toBeLessThan(1e-14);
  });

  it('is insensitive to row and column scaling (equilibration)', () => {
    const rand = rng(11);
    const n = 30;
    const base = randomSparse(n, 4, rand, true);
    const rsc = Array.from({ length: n }, (_, i) => 10 ** ((i % 7) * 2 - 6));
    const csc = Array.from({ length: n }, (_, j) => 10 ** (((j * 3) % 5) * 2 - 4));
    const entries = base.map((e) => ({ row: e.row, col: e.col, val: e.val * rsc[e.row] * csc[e.col] }));
    const A = toDense(n, entries);
    const lu = sparseLU(n, entries);
    expect(lu.ok).toBe(true);
    const b = Float64Array.from({ length: n }, (_, i) => rsc[i] * (rand() - 0.5));
    const x = lu.solve(b);
    // solution of the unscaled system, from ml-matrix: x_j = y_j / csc_j where B y = b / rsc (common practice)
    const B = toDense(n, base);
    const y = new LuDecomposition(B).solve(Matrix.columnVector(Array.from(b, (v, i) => v / rsc[i]))).to1DArray();
    const xref = y.map((v, j) => v / csc[j]);
    expect(relDiff(x, xref)).toBeLessThan(1e-9);
    expect(relResidual(A, x, b)).toBeLessThan(1e-10);
  });

  it('sums duplicate entries and accepts the triplet form', () => {
    const rand = rng(5);
    const n = 25;
    const entries = randomSparse(n, 3, rand, true);
    // split every entry in two halves plus an explicit zero
    const split: SparseEntry[] = [];
    for (const e of entries) {
      split.push({ row: e.row, col: e.col, val: e.val * 0.25 });
      split.push({ row: e.row, col: e.col, val: 0 });
      split.push({ row: e.row, col: e.col, val: e.val * 0.75 });
    }
    const rows = Int32Array.from(split, (e) => e.row);
    const cols = Int32Array.from(split, (e) => e.col);
    const vals = Float64Array.from(split, (e) => e.val);
    const A = toDense(n, entries);
    const b = Float64Array.from({ length: n }, () => rand());
    const x1 = sparseLU(n, split).solve(b);
    const x2 = sparseLU(n, { rows, cols, vals, nnz: split.length }).solve(b);
    const xref = new LuDecomposition(A).solve(Matrix.columnVector(Array.from(b))).to1DArray();
    expect(relDiff(x1, xref)).toBeLessThan(1e-10);
    expect(relDiff(x2, xref)).toBeLessThan(1e-10);
    // b is not modified
    const b2 = Float64Array.from(b);
    sparseLU(n, split).solve(b);
    expect(Array.from(b)).toEqual(Array.from(b2));
  });

  it('solveMany agrees with single solves and each residual is small', () => {
    const rand = rng(21);
    const n = 60;
    const entries = randomSparse(n, 4, rand, true);
    const A = toDense(n, entries);
    const lu = sparseLU(n, entries);
    const rhs = Array.from({ length: 10 }, () => Float64Array.from({ length: n }, () => rand() - 0.5));
    const xs = solveMany(lu, rhs);
    expect(xs.length).toBe(10);
    for (let k = 0; k < rhs.length; k++) {
      expect(relResidual(A, xs[k], rhs[k])).toBeLessThan(1e-10);
      expect(Array.from(xs[k])).toEqual(Array.from(lu.solve(rhs[k])));
    }
  });

  it('conditionEstimate is a lower bound of the exact 1-norm condition and within a factor 10 of it', () => {
    const rand = rng(17);
    for (const n of [3, 10, 40]) {
      const entries = randomSparse(n, 3, rand, true);
      const A = toDense(n, entries);
      const lu = sparseLU(n, entries);
      // exact κ₁ = ‖A‖₁‖A⁻¹‖₁ from ml-matrix's inverse (Hager's estimate never exceeds it: common practice)
      const norm1 = (m: Matrix): number => {
        let best = 0;
        for (let j = 0; j < m.columns; j++) {
          let s = 0;
          for (let i = 0; i < m.rows; i++) s += Math.abs(m.get(i, j));
          best = Math.max(best, s);
        }
        return best;
      };
      const exact = norm1(A) * norm1(inverse(A));
      const est = lu.conditionEstimate();
      expect(est).toBeLessThanOrEqual(exact * (1 + 1e-10));
      expect(est).toBeGreaterThanOrEqual(exact / 10);
    }
  });

  it('handles the empty and 1×1 cases', () => {
    const e = sparseLU(0, []);
    expect(e.ok).toBe(true);
    expect(e.solve(new Float64Array(0)).length).toBe(0);
    const one = sparseLU(1, [{ row: 0, col: 0, val: 4 }]);
    expect(one.ok).toBe(true);
    expect(one.solve(Float64Array.from([2]))[0]).toBe(0.5);
    const zero = sparseLU(1, []);
    expect(zero.ok).toBe(false);
    expect(zero.singularCols).toEqual([0]);
    expect(zero.singularRows).toEqual([0]);
  });
});

describe('sparseLU singular matrices', () => {
  function wellConditioned(n: number, seed: number): SparseEntry[] {
    const rand = rng(seed);
    const e: SparseEntry[] = [];
    for (let i = 0; i < n; i++) {
      e.push({ row: i, col: i, val: 4 + rand() });
      if (i > 0) e.push({ row: i, col: i - 1, val: rand() - 0.5 });
      if (i + 1 < n) e.push({ row: i, col: i + 1, val: rand() - 0.5 });
      e.push({ row: i, col: Math.floor(rand() * n), val: rand() - 0.5 });
    }
    return e;
  }

  it('reports a zero column as the singular unknown', () => {
    const n = 12;
    const zc = 5;
    const entries = wellConditioned(n, 1).filter((e) => e.col !== zc);
    const A = toDense(n, entries);
    const lu = sparseLU(n, entries);
    expect(lu.ok).toBe(false);
    expect(lu.rank).toBe(n - 1);
    expect(lu.singularCols).toEqual([zc]);
    expect(lu.singularRows.length).toBe(1);
    // deleting the reported row and column leaves a nonsingular matrix (ml-matrix SVD rank)
    expect(svdRank(removeRowsCols(A, lu.singularRows, lu.singularCols))).toBe(n - 1);
    expect(() => lu.solve(new Float64Array(n))).toThrow();
    expect(lu.conditionEstimate()).toBe(Infinity);
  });

  it('reports one of two identical rows as the singular equation', () => {
    const n = 10;
    const base = wellConditioned(n, 2).filter((e) => e.row !== 7);
    const entries = base.concat(base.filter((e) => e.row === 2).map((e) => ({ row: 7, col: e.col, val: e.val })));
    const A = toDense(n, entries);
    const lu = sparseLU(n, entries);
    expect(lu.ok).toBe(false);
    expect(lu.rank).toBe(n - 1);
    expect(lu.singularRows.length).toBe(1);
    expect([2, 7]).toContain(lu.singularRows[0]);
    expect(lu.singularCols.length).toBe(1);
    expect(svdRank(removeRowsCols(A, lu.singularRows, lu.singularCols))).toBe(n - 1);
  });

  it('reports a dependent row that is a combination of two others (numerical cancellation)', () => {
    const n = 9;
    const rand = rng(4);
    const base = wellConditioned(n, 4).filter((e) => e.row !== 8);
    const combo = new Map<number, number>();
    const a = 0.3 + rand(), c = -1.7 + rand();
    for (const e of base) {
      if (e.row === 1) combo.set(e.col, (combo.get(e.col) ?? 0) + a * e.val);
      if (e.row === 4) combo.set(e.col, (combo.get(e.col) ?? 0) + c * e.val);
    }
    const entries = base.concat([...combo].map(([col, val]) => ({ row: 8, col, val })));
    const A = toDense(n, entries);
    const lu = sparseLU(n, entries);
    expect(lu.ok).toBe(false);
    expect(lu.rank).toBe(new SingularValueDecomposition(A).rank);
    expect(lu.rank).toBe(n - 1);
    expect([1, 4, 8]).toContain(lu.singularRows[0]);
    expect(svdRank(removeRowsCols(A, lu.singularRows, lu.singularCols))).toBe(n - 1);
  });

  it('reports a structurally singular pattern (3 equations in only 2 unknowns)', () => {
    // rows 0..2 only involve columns 0 and 1; rows 3..n-1 involve all columns.
    // So columns 2..n-1 have entries in only n−3 rows: one of them must be left without pivot,
    // and one of rows 0..2 must be left (Dulmage–Mendelsohn reasoning, common practice).
    const n = 8;
    const rand = rng(8);
    const entries: SparseEntry[] = [];
    for (let i = 0; i < 3; i++) {
      entries.push({ row: i, col: 0, val: 1 + rand() });
      entries.push({ row: i, col: 1, val: 1 + rand() });
    }
    for (let i = 3; i < n; i++) {
      entries.push({ row: i, col: i - 1, val: 3 + rand() });
      entries.push({ row: i, col: i, val: 1 + rand() });
      entries.push({ row: i, col: 0, val: rand() });
    }
    const A = toDense(n, entries);
    const lu = sparseLU(n, entries);
    expect(lu.ok).toBe(false);
    expect(lu.rank).toBe(n - 1);
    expect(lu.singularRows.length).toBe(1);
    expect([0, 1, 2]).toContain(lu.singularRows[0]);
    expect(lu.singularCols.length).toBe(1);
    expect(lu.singularCols[0]).toBeGreaterThanOrEqual(2);
    expect(svdRank(removeRowsCols(A, lu.singularRows, lu.singularCols))).toBe(n - 1);
  });

  it('finds the rank of a dense low-rank product (dense kernel path)', () => {
    const rand = rng(13);
    const n = 20, r = 14;
    const U = Matrix.rand(n, r, { random: rand }).sub(0.5);
    const V = Matrix.rand(r, n, { random: rand }).sub(0.5);
    const A = U.mmul(V);
    const entries: SparseEntry[] = [];
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) entries.push({ row: i, col: j, val: A.get(i, j) });
    const lu = sparseLU(n, entries);
    expect(svdRank(A)).toBe(r);
    expect(lu.rank).toBe(r);
    expect(lu.singularCols.length).toBe(n - r);
    expect(lu.singularRows.length).toBe(n - r);
    expect(svdRank(removeRowsCols(A, lu.singularRows, lu.singularCols))).toBe(r);
  });

  it('reports rows and columns holding non-finite values', () => {
    const n = 6;
    const entries = wellConditioned(n, 9).concat([{ row: 3, col: 4, val: NaN }]);
    const lu = sparseLU(n, entries);
    expect(lu.ok).toBe(false);
    expect(lu.singularRows).toContain(3);
    expect(lu.singularCols).toContain(4);
  });

  it('rejects out-of-range indices', () => {
    expect(() => sparseLU(2, [{ row: 2, col: 0, val: 1 }])).toThrow(RangeError);
  });
});

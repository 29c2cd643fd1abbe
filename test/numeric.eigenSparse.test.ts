import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { EigenvalueDecomposition } from 'ml-matrix';
import { csrFromDense, csrFromTriplets, csrGet, csrToDense } from '../server/src/core/numeric/csr';
import { dense, DenseMatrix, toArrays } from '../server/src/core/numeric/dense';
import { BlockStats, eigenvalues, eigenvaluesSparse, stronglyConnectedCsr } from '../server/src/core/numeric/eigen';
import { symTridiagEigenvalues } from '../server/src/core/numeric/symTridiag';
import { randomDense, rng, toMl, spectrumMismatch } from './helpers/matrices';

type C = { re: number; im: number };

const pairs = (r: { re: Float64Array; im: Float64Array }): C[] => Array.from(r.re, (re, k) => ({ re, im: r.im[k] }));
const fromList = (l: number[][]): C[] => l.map(([re, im]) => ({ re, im }));

function mlReference(a: DenseMatrix): C[] {
  // ml-matrix EigenvalueDecomposition (a reference library; no structure splitting)
  const evd = new EigenvalueDecomposition(toMl(a));
  return evd.realEigenvalues.map((re, k) => ({ re, im: evd.imaginaryEigenvalues[k] }));
}

/** trace(A) = Σλ and trace(A²) = Σλ² (linear-algebra identities, common practice). */
function traceIdentities(a: DenseMatrix, ev: C[]): { t1: number; t2: number } {
  const n = a.rows;
  let tr = 0, tr2 = 0, s1 = 0, s2 = 0;
  for (let i = 0; i < n; i++) {
    tr += a.data[i * n + i];
    for (let k = 0; k < n; k++) tr2 += a.data[i * n + k] * a.data[k * n + i];
  }
  for (const z of ev) {
    s1 += z.re;
    s2 += z.re * z.re - z.im * z.im;
  }
  return { t1: Math.abs(s1 - tr) / Math.max(1, Math.abs(tr)), t2: Math.abs(s2 - tr2) / Math.max(1, Math.abs(tr2)) };
}

describe('CSR matrices', () => {
  it('triplets: duplicates summed, columns sorted, dense round trip', () => {
    const c = csrFromTriplets(3, 4, [2, 0, 0, 2, 1, 0], [1, 3, 0, 1, 2, 3], [1, 2, 3, 4, 5, -2]);
    expect(Array.from(c.rowPtr)).toEqual([0, 2, 3, 4]);
    expect(Array.from(c.colIdx)).toEqual([0, 3, 2, 1]);
    expect(Array.from(c.values)).toEqual([3, 0, 5, 5]);
    expect(toArrays(csrToDense(c))).toEqual([[3, 0, 0, 0], [0, 0, 5, 0], [0, 5, 0, 0]]);
    expect(csrGet(c, 2, 1)).toBe(5);
    expect(csrGet(c, 2, 2)).toBe(0);
    const d = dense(2, 3, [[0, 1.5, 0], [-2, 0, 7]]);
    const back = csrFromDense(d);
    expect(back.values.length).toBe(3);
    expect(toArrays(csrToDense(back))).toEqual(toArrays(d));
    expect(() => csrFromTriplets(2, 2, [2], [0], [1])).toThrow(RangeError);
  });
});

describe('eigenvalues against NumPy', () => {
  // reference values: numpy.linalg.eigvals (NumPy 2.4.6, OpenBLAS/LAPACK dgeev) on the same matrices, generated
  // in Python by a line-for-line copy of test/helpers/matrices.ts (mulberry32, entries 2·rand() − 1, row-major);
  // computed with python3 on 2026-12-05 and pasted here
  const numpy: [number, number, number[][]][] = [
    [5, 101, [[-1.27072607363208, 0], [-1.1757601016761, -0.696701580970318], [-1.1757601016761, 0.696701580970318], [0.0444050257149127, 0], [0.950130032953257, 0]]],
    [9, 202, [[-0.918857945516349, 0], [-0.783896651330238, -1.14996575529937], [-0.783896651330238, 1.14996575529937], [-0.250862707499368, -0.760955454805963], [-0.250862707499368, 0.760955454805963], [-0.244312304388608, 0], [0.491561839764819, 0], [0.951490527959147, -1.03292101256353], [0.951490527959147, 1.03292101256353]]],
    [16, 303, [[-1.39745093744062, -0.315201878849975], [-1.39745093744062, 0.315201878849975], [-0.932465882772529, -0.68230663372647], [-0.932465882772529, 0.68230663372647], [-0.493763094510646, -2.44745046535067], [-0.493763094510646, 2.44745046535067], [-0.390850467875155, -1.46408487708197], [-0.390850467875155, 1.46408487708197], [-0.126732799581541, 0], [0.67691667421586, 0], [0.963275546857299, -1.95542797223001], [0.963275546857299, 1.95542797223001], [1.54003634814886, -0.12261248594685], [1.54003634814886, 0.12261248594685], [2.2604817108603, -0.748941854155658], [2.2604817108603, 0.748941854155658]]],
  ];
  for (const [n, seed, ref] of numpy) {
    it(`random ${n}×${n} (seed ${seed}): equal to numpy.linalg.eigvals, and trace identities hold`, () => {
      const a = randomDense(n, n, rng(seed));
      const r = eigenvalues(a);
      expect(r.converged).toBe(true);
      expect(spectrumMismatch(pairs(r), fromList(ref))).toBeLessThan(1e-12);
      // independent route: trace and trace of the square
      const t = traceIdentities(a, pairs(r));
      expect(t.t1).toBeLessThan(1e-13);
      expect(t.t2).toBeLessThan(1e-12);
    });
  }

  it('a hidden block lower triangular 12×12 (blocks 3, 1, 4, 2, 2) equals NumPy, through the sparse path', () => {
    // built identically in Python: entry (i, j) drawn for every position from rng(404), kept when block(i) ≥ block(j),
    // then rows and columns moved by i → (5i + 3) mod 12; numpy.linalg.eigvals of the result (same session as above)
    const ref = [[-1.12932940278314, 0], [-1.07859480324994, 0], [-0.707770820294262, 0], [-0.66864492458682, 0], [-0.580002879768437, 0], [-0.158689602743834, 0], [-0.0250449592376188, 0], [0.0819874766509503, 0], [0.49414494266427, 0], [0.537852306429114, 0], [0.84232766139, 0], [1.12307532561649, 0]];
    const sizes = [3, 1, 4, 2, 2];
    const n = 12;
    const blk = sizes.flatMap((s, b) => new Array(s).fill(b));
    const rand = rng(404);
    const b = dense(n, n);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        const v = 2 * rand() - 1;
        if (blk[i] >= blk[j]) b.data[((5 * i + 3) % n) * n + ((5 * j + 3) % n)] = v;
      }
    }
    const stats: BlockStats = { blocks: 0, largest: 0 };
    const r = eigenvaluesSparse(csrFromDense(b), {}, stats);
    expect(stats).toEqual({ blocks: 5, largest: 4 });
    expect(spectrumMismatch(pairs(r), fromList(ref))).toBeLessThan(1e-12);
    expect(traceIdentities(b, pairs(r)).t2).toBeLessThan(1e-12);
  });
});

/** A random block triangular matrix (random block sizes 1–5, dense blocks) hidden by a random symmetric permutation. */
function hiddenBlockTriangular(n: number, rand: () => number, upper: boolean): { a: DenseMatrix; blocks: number[][] } {
  const blocks: number[][] = [];
  const blockOf: number[] = [];
  for (let i = 0; i < n; ) {
    const s = Math.min(n - i, 1 + Math.floor(rand() * 5));
    blocks.push(Array.from({ length: s }, (_, k) => i + k));
    for (let k = 0; k < s; k++) blockOf.push(blocks.length - 1);
    i += s;
  }
  const perm = Array.from({ length: n }, (_, i) => i);
  for (let i = n - 1; i > 0; i--) {
    const j = Math.floor(rand() * (i + 1));
    [perm[i], perm[j]] = [perm[j], perm[i]];
  }
  const a = dense(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const same = blockOf[i] === blockOf[j];
      const allowed = same || (upper ? blockOf[i] < blockOf[j] : blockOf[i] > blockOf[j]) && rand() < 0.3;
      if (allowed) a.data[perm[i] * n + perm[j]] = 2 * rand() - 1;
    }
  }
  return { a, blocks: blocks.map((b) => b.map((i) => perm[i])) };
}

describe('block triangular path', () => {
  it('sparse path = dense path exactly; both equal the blocks solved one by one and ml-matrix on the whole', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 40 }), fc.integer({ min: 1, max: 2 ** 31 - 1 }), fc.boolean(), (n, seed, upper) => {
        const rand = rng(seed);
        const { a, blocks } = hiddenBlockTriangular(n, rand, upper);
        const sparse = eigenvaluesSparse(csrFromDense(a));
        const full = eigenvalues(a);
        expect(sparse.converged).toBe(true);
        expect(Array.from(sparse.re)).toEqual(Array.from(full.re));
        expect(Array.from(sparse.im)).toEqual(Array.from(full.im));
        // one by one: each diagonal block on its own (a block may split further if its random entries allow it)
        const perBlock: C[] = [];
        for (const b of blocks) {
          const m = b.length;
          const sub = dense(m, m);
          for (let r = 0; r < m; r++) for (let c = 0; c < m; c++) sub.data[r * m + c] = a.data[b[r] * n + b[c]];
          perBlock.push(...pairs(eigenvalues(sub)));
        }
        expect(spectrumMismatch(pairs(sparse), perBlock)).toBeLessThan(1e-12);
        // ml-matrix is a second, independent QR: on random non-normal blocks an eigenvalue may be ill conditioned
        // (a near-defective pair), and two backward-stable routes then differ by up to κ·ε·‖A‖ (about √ε for a
        // nearly double eigenvalue); the sharp check is the per-block one above
        expect(spectrumMismatch(pairs(sparse), mlReference(a))).toBeLessThan(1e-6);
      }),
      { numRuns: Number(process.env.POISE_PROPERTY_RUNS ?? 60) },
    );
  });

  it('tank chain A (two-way tridiagonal) matches the closed form −4g·sin²((2k−1)π/(4n+2)), sparse and dense', () => {
    // A = g·tridiag(1, −2, 1) with A[0][0] = −g: the linearized chain of tanks in bench/models.ts (g = k/(2·area)).
    // Its eigenvalues −4g·sin²((2k−1)π/(2(2n+1))) are those of the second difference with one reflecting end
    // (derived by hand with the ansatz v_i = cos((i + ½)θ), common practice)
    const g = 0.005 / 1.5;
    for (const n of [7, 60, 3000]) {
      const ti: number[] = [], tj: number[] = [], tv: number[] = [];
      for (let i = 0; i < n; i++) {
        ti.push(i), tj.push(i), tv.push(i === 0 ? -g : -2 * g);
        if (i + 1 < n) ti.push(i, i + 1), tj.push(i + 1, i), tv.push(g, g);
      }
      const c = csrFromTriplets(n, n, ti, tj, tv);
      const r = eigenvaluesSparse(c);
      expect(r.converged).toBe(true);
      const got = Array.from(r.re).sort((x, y) => x - y);
      const exact = Array.from({ length: n }, (_, k) => -4 * g * Math.sin(((2 * k + 1) * Math.PI) / (4 * n + 2)) ** 2).sort((x, y) => x - y);
      let worst = 0;
      for (let k = 0; k < n; k++) worst = Math.max(worst, Math.abs(got[k] - exact[k]));
      expect(worst / (4 * g)).toBeLessThan(1e-13 * Math.max(1, n / 100));
      expect(r.im.every((v) => v === 0)).toBe(true);
      if (n <= 60) expect(spectrumMismatch(pairs(r), mlReference(csrToDense(c)))).toBeLessThan(1e-12);
    }
  });

  it('10⁵-state chains and cascades run without recursion (depth-first search to depth 10⁵)', () => {
    const n = 100_000;
    // upper bidiagonal: the search goes 0 → 1 → … → n−1; triangular, so the eigenvalues are the diagonal (common practice)
    const ti: number[] = [], tj: number[] = [], tv: number[] = [];
    for (let i = 0; i < n; i++) {
      ti.push(i), tj.push(i), tv.push(-1 - (i % 97) / 97);
      if (i + 1 < n) ti.push(i), tj.push(i + 1), tv.push(0.5);
    }
    const r = eigenvaluesSparse(csrFromTriplets(n, n, ti, tj, tv));
    expect(r.converged).toBe(true);
    const got = Array.from(r.re).sort((x, y) => x - y);
    const diag = Array.from({ length: n }, (_, i) => -1 - (i % 97) / 97).sort((x, y) => x - y);
    let differ = 0;
    for (let k = 0; k < n; k++) if (got[k] !== diag[k]) differ++;
    expect(differ).toBe(0);
    // a one-way cascade of 2×2 oscillators [[a, w], [−w, a]] coupled forward: eigenvalues a ± iw for every block
    const m = n / 2;
    const ui: number[] = [], uj: number[] = [], uv: number[] = [];
    for (let b = 0; b < m; b++) {
      const i = 2 * b, a = -0.1 * (1 + (b % 5)), w = 1 + (b % 3);
      ui.push(i, i, i + 1, i + 1), uj.push(i, i + 1, i, i + 1), uv.push(a, w, -w, a);
      if (b + 1 < m) ui.push(i + 1), uj.push(i + 2), uv.push(0.3);
    }
    const stats: BlockStats = { blocks: 0, largest: 0 };
    const s = eigenvaluesSparse(csrFromTriplets(n, n, ui, uj, uv), {}, stats);
    expect(stats).toEqual({ blocks: m, largest: 2 });
    let badPairs = 0;
    for (let k = 0; k < n; k += 2) if (!(s.im[k] > 0 && s.im[k + 1] === -s.im[k] && s.re[k] === s.re[k + 1])) badPairs++;
    expect(badPairs).toBe(0);
    const sumRe = Array.from(s.re).reduce((x, y) => x + y, 0);
    let tr = 0;
    for (let b = 0; b < m; b++) tr += 2 * -0.1 * (1 + (b % 5));
    expect(Math.abs(sumRe - tr)).toBeLessThan(1e-9);
  });

  it('components: Tarjan order puts every edge to an earlier component; oversize blocks are refused, not allocated', () => {
    const rand = rng(9);
    const { a } = hiddenBlockTriangular(30, rand, false);
    const c = csrFromDense(a);
    const { members, start, count } = stronglyConnectedCsr(c);
    const comp = new Int32Array(30);
    for (let k = 0; k < count; k++) for (let p = start[k]; p < start[k + 1]; p++) comp[members[p]] = k;
    for (let i = 0; i < 30; i++) {
      for (let p = c.rowPtr[i]; p < c.rowPtr[i + 1]; p++) expect(comp[c.colIdx[p]]).toBeLessThanOrEqual(comp[i]);
    }
    // a directed ring of 50 is one component of 50
    const n = 50;
    const ring = csrFromTriplets(n, n, Array.from({ length: n }, (_, i) => i), Array.from({ length: n }, (_, i) => (i + 1) % n), new Array(n).fill(1));
    const r = eigenvaluesSparse(ring, { maxDenseBlock: 10 });
    expect(r.converged).toBe(false);
    expect(Number.isNaN(r.re[0])).toBe(true);
    // within the limit: the n-th roots of unity (characteristic polynomial sⁿ − 1, common practice)
    const ok = eigenvaluesSparse(ring);
    const roots = Array.from({ length: n }, (_, k) => ({ re: Math.cos((2 * Math.PI * k) / n), im: Math.sin((2 * Math.PI * k) / n) }));
    expect(spectrumMismatch(pairs(ok), roots)).toBeLessThan(1e-10);
  });
});

describe('symmetric tridiagonal eigenvalues (root-free QL, four sweeps in flight)', () => {
  it('random symmetric tridiagonal matrices agree with ml-matrix', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 160 }), fc.integer({ min: 1, max: 2 ** 31 - 1 }), (n, seed) => {
        const rand = rng(seed);
        const d = Float64Array.from({ length: n }, () => 2 * rand() - 1);
        const e = Float64Array.from({ length: n }, () => (rand() < 0.05 ? 0 : 2 * rand() - 1));
        const a = dense(n, n);
        for (let i = 0; i < n; i++) {
          a.data[i * n + i] = d[i];
          if (i + 1 < n) a.data[i * n + i + 1] = a.data[(i + 1) * n + i] = e[i];
        }
        const got = Float64Array.from(d);
        expect(symTridiagEigenvalues(got, e, n)).toBe(true);
        // real spectra compared in sorted order (Weyl's inequality: the k-th eigenvalues of A and A + E differ by
        // at most ‖E‖₂, a textbook fact), not by nearest-neighbour matching, which can pair two close
        // eigenvalues crosswise and then report the gap to a far one
        const mine = Array.from(got).sort((x, y) => x - y);
        const ref = mlReference(a).map((c) => c.re).sort((x, y) => x - y);
        expect(mlReference(a).every((c) => c.im === 0)).toBe(true);
        for (let k = 0; k < n; k++) expect(Math.abs(mine[k] - ref[k]) / Math.max(1, Math.abs(ref[k]))).toBeLessThan(1e-12);
      }),
      { numRuns: 60 },
    );
  });

  it('zero diagonal and widely scaled entries: 2·cos(kπ/(n+1)) scaled', () => {
    // closed form for tridiag(1, 0, 1) (common practice); scaling by s scales every eigenvalue
    for (const s of [1, 1e-150, 1e150]) {
      const n = 200;
      const d = new Float64Array(n);
      const e = new Float64Array(n).fill(s);
      expect(symTridiagEigenvalues(d, e, n)).toBe(true);
      const got = Array.from(d).sort((x, y) => x - y);
      const exact = Array.from({ length: n }, (_, k) => 2 * s * Math.cos(((k + 1) * Math.PI) / (n + 1))).sort((x, y) => x - y);
      for (let k = 0; k < n; k++) expect(Math.abs(got[k] - exact[k])).toBeLessThan(1e-13 * s);
    }
  });
});

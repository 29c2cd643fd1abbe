import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { EigenvalueDecomposition, LuDecomposition, inverse } from 'ml-matrix';
import { dense, DenseMatrix, matMul, toArrays } from '../server/src/core/numeric/dense';
import { eigenvalues, eigenvectors, sortEigen } from '../server/src/core/numeric/eigen';
import { randomDense, rng, toMl, spectrumMismatch } from './helpers/matrices';

type C = { re: number; im: number };

/** A random n×n matrix with about `zeroFraction` of its entries 0. */
const randomSquare = (n: number, rand: () => number, zeroFraction = 0): DenseMatrix => randomDense(n, n, rand, zeroFraction);

function reference(a: DenseMatrix): C[] {
  // ml-matrix EigenvalueDecomposition as the reference library
  const evd = new EigenvalueDecomposition(toMl(a));
  return evd.realEigenvalues.map((re, k) => ({ re, im: evd.imaginaryEigenvalues[k] }));
}

function values(a: DenseMatrix): C[] {
  const r = eigenvalues(a);
  expect(r.converged).toBe(true);
  return Array.from(r.re, (re, k) => ({ re, im: r.im[k] }));
}

function companion(coeffs: number[]): DenseMatrix {
  // monic polynomial s^n + c[0] s^(n-1) + ... + c[n-1]; top-row companion form
  const n = coeffs.length;
  const m = dense(n, n);
  for (let j = 0; j < n; j++) m.data[j] = -coeffs[j];
  for (let i = 1; i < n; i++) m.data[i * n + i - 1] = 1;
  return m;
}

function polyFromRoots(roots: number[]): number[] {
  // coefficients of prod (s − r), leading 1 dropped
  let p = [1];
  for (const r of roots) {
    const q = new Array(p.length + 1).fill(0);
    for (let k = 0; k < p.length; k++) {
      q[k] += p[k];
      q[k + 1] -= r * p[k];
    }
    p = q;
  }
  return p.slice(1);
}

function similarity(b: DenseMatrix, rand: () => number): DenseMatrix {
  const n = b.rows;
  const t = randomSquare(n, rand);
  for (let i = 0; i < n; i++) t.data[i * n + i] += 3; // keep T well conditioned
  const tinv = dense(n, n, inverse(toMl(t)).to2DArray());
  return matMul(matMul(t, b), tinv);
}

describe('eigenvalues against ml-matrix', () => {
  it('random dense matrices (rel 1e-8)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 30 }), fc.integer({ min: 1, max: 2 ** 31 - 1 }), (n, seed) => {
        const a = randomSquare(n, rng(seed));
        expect(spectrumMismatch(values(a), reference(a))).toBeLessThan(1e-8);
      }),
      { numRuns: 80 },
    );
  });

  it('random matrices with many zeros (reducible structure, block triangular splitting)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 30 }),
        fc.double({ min: 0.5, max: 0.97, noNaN: true }),
        fc.integer({ min: 1, max: 2 ** 31 - 1 }),
        (n, zf, seed) => {
          const rand = rng(seed);
          const a = randomSquare(n, rand, zf);
          // keep a random diagonal: with zero diagonals many such matrices are nilpotent (defective), where
          // the reference itself is only accurate to about eps^(1/k)
          for (let i = 0; i < n; i++) a.data[i * n + i] = 2 * rand() - 1;
          expect(spectrumMismatch(values(a), reference(a))).toBeLessThan(1e-8);
        },
      ),
      { numRuns: 80 },
    );
  });

  it('sorted output matches the sorted reference for a 60×60 random matrix', () => {
    const a = randomSquare(60, rng(60));
    const r = eigenvalues(a);
    const got = sortEigen(r.re, r.im);
    const ref = reference(a);
    const refSorted = sortEigen(Float64Array.from(ref, (c) => c.re), Float64Array.from(ref, (c) => c.im));
    for (let k = 0; k < 60; k++) {
      expect(Math.abs(got[k].re - refSorted[k].re)).toBeLessThan(1e-8 * Math.max(1, Math.abs(refSorted[k].re)));
      expect(Math.abs(got[k].im - refSorted[k].im)).toBeLessThan(1e-8 * Math.max(1, Math.abs(refSorted[k].im)));
    }
  });

  it('is invariant under badly scaled diagonal similarity (balancing)', () => {
    const rand = rng(77);
    const n = 12;
    const a = randomSquare(n, rand);
    const d = Array.from({ length: n }, (_, i) => 10 ** (i - 6));
    const s = dense(n, n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) s.data[i * n + j] = (a.data[i * n + j] * d[j]) / d[i];
    // D⁻¹AD has the same eigenvalues as A (common practice); reference computed on A itself
    expect(spectrumMismatch(values(s), reference(a))).toBeLessThan(1e-8);
  });
});

describe('eigenvalues with known closed forms', () => {
  it('companion matrix of (s+1)(s+2)(s+3) = s³ + 6s² + 11s + 6 has eigenvalues −1, −2, −3', () => {
    // coefficients expanded by hand (common practice)
    const got = values(companion([6, 11, 6]));
    expect(spectrumMismatch(got, [{ re: -1, im: 0 }, { re: -2, im: 0 }, { re: -3, im: 0 }])).toBeLessThan(1e-10);
  });

  it('companion matrix of (s+1)…(s+6) has eigenvalues −1 … −6', () => {
    const roots = [-1, -2, -3, -4, -5, -6];
    const got = values(companion(polyFromRoots(roots)));
    expect(spectrumMismatch(got, roots.map((re) => ({ re, im: 0 })))).toBeLessThan(1e-7);
  });

  it('second-order system s² + 2ζωs + ω² has poles −ζω ± iω√(1−ζ²)', () => {
    // textbook closed form for an underdamped second-order system (common practice)
    for (const [zeta, w] of [[0.1, 1], [0.5, 3], [0.9, 0.2], [0, 5]]) {
      const got = values(companion([2 * zeta * w, w * w]));
      const wd = w * Math.sqrt(1 - zeta * zeta);
      expect(spectrumMismatch(got, [{ re: -zeta * w, im: wd }, { re: -zeta * w, im: -wd }])).toBeLessThan(1e-12);
      // a complex pair is returned with positive imaginary part first
      const r = eigenvalues(companion([2 * zeta * w, w * w]));
      expect(r.im[0]).toBeGreaterThan(0);
      expect(r.im[1]).toBe(-r.im[0]);
      expect(r.re[1]).toBe(r.re[0]);
    }
  });

  it('rotation block [[0, ω], [−ω, 0]] has ±iω, also hidden by a similarity in a larger matrix', () => {
    const w = 2.5;
    expect(spectrumMismatch(values(dense(2, 2, [[0, w], [-w, 0]])), [{ re: 0, im: w }, { re: 0, im: -w }])).toBeLessThan(1e-14);
    // block diag(rot(ω), −1, −2, rot(1) shifted by −0.5) under a random similarity
    const b = dense(6, 6, [
      [0, w, 0, 0, 0, 0],
      [-w, 0, 0, 0, 0, 0],
      [0, 0, -1, 0, 0, 0],
      [0, 0, 0, -2, 0, 0],
      [0, 0, 0, 0, -0.5, 1],
      [0, 0, 0, 0, -1, -0.5],
    ]);
    const a = similarity(b, rng(8));
    const expected = [
      { re: 0, im: w }, { re: 0, im: -w }, { re: -1, im: 0 }, { re: -2, im: 0 }, { re: -0.5, im: 1 }, { re: -0.5, im: -1 },
    ];
    expect(spectrumMismatch(values(a), expected)).toBeLessThan(1e-10);
  });

  it('cyclic shift matrices (a hard case for the standard shifts) give the n-th roots of unity', () => {
    for (const n of [2, 3, 4, 5, 8]) {
      const m = dense(n, n);
      for (let i = 0; i < n; i++) m.data[i * n + ((i + 1) % n)] = 1;
      // the characteristic polynomial of the cyclic permutation is sⁿ − 1 (common practice)
      const expected = Array.from({ length: n }, (_, k) => ({ re: Math.cos((2 * Math.PI * k) / n), im: Math.sin((2 * Math.PI * k) / n) }));
      expect(spectrumMismatch(values(m), expected)).toBeLessThan(1e-10);
      // the same with a similarity transform, so that the block triangular splitting cannot help
      expect(spectrumMismatch(values(similarity(m, rng(n))), expected)).toBeLessThan(1e-9);
    }
  });

  it('defective (Jordan) blocks at a loose tolerance', () => {
    // a Jordan block of size k perturbs its eigenvalue by about eps^(1/k) (common practice)
    const j3 = dense(3, 3, [[2, 1, 0], [0, 2, 1], [0, 0, 2]]);
    expect(spectrumMismatch(values(j3), [{ re: 2, im: 0 }, { re: 2, im: 0 }, { re: 2, im: 0 }])).toBeLessThan(1e-12);
    const hidden = similarity(j3, rng(33));
    expect(spectrumMismatch(values(hidden), [{ re: 2, im: 0 }, { re: 2, im: 0 }, { re: 2, im: 0 }])).toBeLessThan(1e-4);
    const j2 = similarity(dense(2, 2, [[-1, 1], [0, -1]]), rng(34));
    expect(spectrumMismatch(values(j2), [{ re: -1, im: 0 }, { re: -1, im: 0 }])).toBeLessThan(1e-6);
  });

  it('tridiagonal Toeplitz chains: a + 2√(bc)·cos(kπ/(n+1)) (positive and negative products)', () => {
    // closed form for tridiagonal Toeplitz matrices with diagonal a, super b, sub c (common practice)
    // unequal couplings make these strongly non-normal (b = 0.5, c = ±2, n = 200 is similar to a normal matrix only
    // through a diagonal scaling with condition 2^199), which the eigenvalue routine must not suffer from
    for (const [a, b, c, n] of [[-2, 1, 1, 50], [-3, 0.5, 2, 200], [-1, 1, -0.25, 40], [0.5, -2, 3, 7], [-1, 4, -0.01, 60], [-3, 0.5, -2, 200]]) {
      const m = dense(n, n);
      for (let i = 0; i < n; i++) {
        m.data[i * n + i] = a;
        if (i + 1 < n) {
          m.data[i * n + i + 1] = b;
          m.data[(i + 1) * n + i] = c;
        }
      }
      const expected: C[] = [];
      for (let k = 1; k <= n; k++) {
        const cs = 2 * Math.cos((k * Math.PI) / (n + 1));
        if (b * c >= 0) expected.push({ re: a + Math.sqrt(b * c) * cs, im: 0 });
        else expected.push({ re: a, im: Math.sqrt(-b * c) * cs });
      }
      expect(spectrumMismatch(values(m), expected)).toBeLessThan(1e-9);
    }
  });

  it('random two-way chains agree with ml-matrix; one-way cascades give their diagonal exactly', () => {
    const rand = rng(12);
    const n = 40;
    const chain = dense(n, n);
    const cascade = dense(n, n);
    for (let i = 0; i < n; i++) {
      chain.data[i * n + i] = -1 - rand();
      cascade.data[i * n + i] = -1 - rand();
      if (i + 1 < n) {
        chain.data[i * n + i + 1] = 0.2 + rand();
        chain.data[(i + 1) * n + i] = 0.2 + rand();
        cascade.data[(i + 1) * n + i] = 0.5 + rand();
      }
    }
    expect(spectrumMismatch(values(chain), reference(chain))).toBeLessThan(1e-9);
    // the eigenvalues of a triangular matrix are its diagonal entries (common practice)
    const diag = Array.from({ length: n }, (_, i) => ({ re: cascade.data[i * n + i], im: 0 }));
    expect(spectrumMismatch(values(cascade), diag)).toBe(0);
  });

  it('trace equals the sum and determinant the product of the eigenvalues', () => {
    const rand = rng(21);
    for (const n of [2, 5, 11, 20]) {
      const a = randomSquare(n, rand);
      const r = eigenvalues(a);
      let tr = 0;
      for (let i = 0; i < n; i++) tr += a.data[i * n + i];
      let sr = 0, pr = 1, pi = 0;
      for (let k = 0; k < n; k++) {
        sr += r.re[k];
        const nr = pr * r.re[k] - pi * r.im[k];
        pi = pr * r.im[k] + pi * r.re[k];
        pr = nr;
      }
      // linear-algebra identities (common practice); det from ml-matrix
      const det = new LuDecomposition(toMl(a)).determinant;
      expect(sr).toBeCloseTo(tr, 10);
      expect(Math.abs(pr - det)).toBeLessThan(1e-9 * Math.max(1, Math.abs(det)));
      expect(Math.abs(pi)).toBeLessThan(1e-9 * Math.max(1, Math.abs(det)));
    }
  });

  it('handles 0×0 and 1×1 matrices and rejects non-square ones', () => {
    const e = eigenvalues(dense(0, 0));
    expect(e.re.length).toBe(0);
    expect(e.converged).toBe(true);
    const one = eigenvalues(dense(1, 1, [[-4.5]]));
    expect(Array.from(one.re)).toEqual([-4.5]);
    expect(Array.from(one.im)).toEqual([0]);
    const v = eigenvectors(dense(1, 1, [[3]]));
    expect(v.re[0]).toBe(3);
    expect(v.vrRe.data[0]).toBe(1);
    expect(v.vlRe.data[0]).toBe(1);
    expect(eigenvectors(dense(0, 0)).re.length).toBe(0);
    expect(() => eigenvalues(dense(2, 3))).toThrow(RangeError);
  });

  it('non-finite input gives NaN and converged = false', () => {
    const r = eigenvalues(dense(2, 2, [[1, NaN], [0, 1]]));
    expect(r.converged).toBe(false);
    expect(Number.isNaN(r.re[0])).toBe(true);
  });
});

describe('eigenvectors', () => {
  /** max over k of ‖A v_k − λ_k v_k‖ and ‖w_kᴴ A − λ_k w_kᴴ‖ (relative to ‖A‖_F), and |w_kᴴ v_k − 1|. */
  function residuals(a: DenseMatrix): { right: number; left: number; biorth: number; norm: number } {
    const n = a.rows;
    const r = eigenvectors(a);
    expect(r.converged).toBe(true);
    let fro = 0;
    for (const v of a.data) fro += v * v;
    fro = Math.sqrt(fro) || 1;
    let right = 0, left = 0, biorth = 0, norm = 0;
    const A = (i: number, j: number): number => a.data[i * n + j];
    const Vr = (i: number, k: number): number => r.vrRe.data[i * n + k];
    const Vi = (i: number, k: number): number => r.vrIm.data[i * n + k];
    const Wr = (i: number, k: number): number => r.vlRe.data[i * n + k];
    const Wi = (i: number, k: number): number => r.vlIm.data[i * n + k];
    for (let k = 0; k < n; k++) {
      const lr = r.re[k], li = r.im[k];
      let nv = 0, br = 0, bi = 0;
      for (let i = 0; i < n; i++) {
        // (A v)_i − λ v_i
        let sr = 0, si = 0;
        for (let j = 0; j < n; j++) {
          sr += A(i, j) * Vr(j, k);
          si += A(i, j) * Vi(j, k);
        }
        sr -= lr * Vr(i, k) - li * Vi(i, k);
        si -= lr * Vi(i, k) + li * Vr(i, k);
        right = Math.max(right, Math.hypot(sr, si) / fro);
        // (wᴴ A)_i − λ (wᴴ)_i with (wᴴ)_j = conj(w_j)
        let tr = 0, ti = 0;
        for (let j = 0; j < n; j++) {
          tr += Wr(j, k) * A(j, i);
          ti -= Wi(j, k) * A(j, i);
        }
        const cr = Wr(i, k), ci = -Wi(i, k);
        tr -= lr * cr - li * ci;
        ti -= lr * ci + li * cr;
        left = Math.max(left, Math.hypot(tr, ti) / fro);
        nv += Vr(i, k) ** 2 + Vi(i, k) ** 2;
        // wᴴ v
        br += Wr(i, k) * Vr(i, k) + Wi(i, k) * Vi(i, k);
        bi += Wr(i, k) * Vi(i, k) - Wi(i, k) * Vr(i, k);
      }
      biorth = Math.max(biorth, Math.hypot(br - 1, bi));
      norm = Math.max(norm, Math.abs(Math.sqrt(nv) - 1));
    }
    return { right, left, biorth, norm };
  }

  it('A·v = λ·v and wᴴ·A = λ·wᴴ with wᴴv = 1 for random matrices (residual < 1e-9)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 25 }), fc.integer({ min: 1, max: 2 ** 31 - 1 }), (n, seed) => {
        const a = randomSquare(n, rng(seed));
        const res = residuals(a);
        expect(res.right).toBeLessThan(1e-9);
        expect(res.left).toBeLessThan(1e-9);
        expect(res.biorth).toBeLessThan(1e-9);
        expect(res.norm).toBeLessThan(1e-12);
      }),
      { numRuns: 40 },
    );
  });

  it('eigenvalues agree with eigenvalues() and with ml-matrix', () => {
    const a = randomSquare(20, rng(5));
    const r = eigenvectors(a);
    const got = Array.from(r.re, (re, k) => ({ re, im: r.im[k] }));
    expect(spectrumMismatch(got, reference(a))).toBeLessThan(1e-8);
    expect(spectrumMismatch(got, values(a))).toBeLessThan(1e-8);
  });

  it('structured cases: companion, oscillator, cascade, badly scaled, symmetric', () => {
    const rand = rng(6);
    const cases: DenseMatrix[] = [
      companion([6, 11, 6]),
      companion([2 * 0.3 * 2, 4]),
      dense(3, 3, [[-1, 0, 0], [1, -2, 0], [0, 1, -3]]),
      dense(2, 2, [[0, 1e6], [-1e-6, 0]]),
      dense(3, 3),
      dense(3, 3, [[0, 0, 1], [0, 0, 0], [0, 0, 0]].map((r, i) => r.map((v, j) => (i === j ? i - 1 : v)))),
    ];
    const sym = randomSquare(8, rand);
    for (let i = 0; i < 8; i++) for (let j = 0; j < i; j++) sym.data[i * 8 + j] = sym.data[j * 8 + i];
    cases.push(sym);
    for (const a of cases) {
      const res = residuals(a);
      expect(res.right).toBeLessThan(1e-9);
      expect(res.left).toBeLessThan(1e-9);
      expect(res.biorth).toBeLessThan(1e-9);
    }
  });

  it('the zero matrix has eigenvalues 0 and the unit vectors as eigenvectors', () => {
    // every vector is an eigenvector of the zero matrix (common practice); the unit vectors are the natural choice
    const r = eigenvectors(dense(3, 3));
    expect(r.converged).toBe(true);
    expect(Array.from(r.re)).toEqual([0, 0, 0]);
    expect(toArrays(r.vrRe)).toEqual([[1, 0, 0], [0, 1, 0], [0, 0, 1]]);
  });

  it('right eigenvector of a known 2×2: [[2, 1], [0, 3]] has v = (1, 1)/√2 for λ = 3', () => {
    // (A − 3I) v = 0 gives −v0 + v1 = 0 (worked by hand)
    const r = eigenvectors(dense(2, 2, [[2, 1], [0, 3]]));
    const k = r.re[0] === 3 ? 0 : 1;
    expect(r.re[k]).toBeCloseTo(3, 14);
    expect(r.vrRe.data[0 * 2 + k]).toBeCloseTo(Math.SQRT1_2, 14);
    expect(r.vrRe.data[1 * 2 + k]).toBeCloseTo(Math.SQRT1_2, 14);
  });
});

describe('sortEigen', () => {
  it('sorts by real part then imaginary part and keeps the multiset', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.integer({ min: -5, max: 5 }), fc.integer({ min: -5, max: 5 })), { maxLength: 30 }),
        (pairs) => {
          const re = Float64Array.from(pairs, (p) => p[0]);
          const im = Float64Array.from(pairs, (p) => p[1]);
          const s = sortEigen(re, im);
          expect(s.length).toBe(pairs.length);
          for (let k = 1; k < s.length; k++) {
            expect(s[k - 1].re < s[k].re || (s[k - 1].re === s[k].re && s[k - 1].im <= s[k].im)).toBe(true);
          }
          const key = (x: { re: number; im: number }): string => `${x.re},${x.im}`;
          expect(s.map(key).sort()).toEqual(pairs.map((p) => `${p[0]},${p[1]}`).sort());
        },
      ),
    );
  });
});

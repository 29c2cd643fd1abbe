/**
 * The parts of the dense eigenvalue route for large blocks: the blocked Hessenberg reduction (LAPACK
 * dgehrd/dlahr2; Quintana-Ortí & van de Geijn, ACM TOMS 32, 2006) and the multishift sweep as a chain
 * of small bulges (Braman, Byers & Mathias, SIAM J. Matrix Anal. Appl. 23, 2002). Checked by the
 * invariants of an orthogonal similarity and against ml-matrix's EigenvalueDecomposition (the classical
 * unblocked route, an independent implementation).
 */
import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { hessenbergBlocked } from '../server/src/core/numeric/hessenberg';
import { bulgeChainSweep } from '../server/src/core/numeric/bulgeChain';
import { balance } from '../server/src/core/numeric/balance';
import { randomDense, rng, spectrumMismatch } from './helpers/matrices';

type C = { re: number; im: number };

function mlValues(a: Float64Array, n: number): C[] {
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) rows.push(Array.from(a.subarray(i * n, i * n + n)));
  const evd = new EigenvalueDecomposition(new Matrix(rows));
  return evd.realEigenvalues.map((re, k) => ({ re, im: evd.imaginaryEigenvalues[k] }));
}

/** trace(A), trace(A²) and ‖A‖_F², unchanged by an orthogonal similarity. */
function invariants(a: Float64Array, n: number): number[] {
  let t1 = 0, t2 = 0, f = 0;
  for (let i = 0; i < n; i++) {
    t1 += a[i * n + i];
    for (let k = 0; k < n; k++) {
      t2 += a[i * n + k] * a[k * n + i];
      f += a[i * n + k] * a[i * n + k];
    }
  }
  return [t1, t2, f];
}

describe('blocked Hessenberg reduction', () => {
  for (const [n, nb] of [[3, 32], [10, 4], [131, 32], [200, 1], [200, 7], [257, 32]] as const) {
    it(`${n}×${n}, panels of ${nb}: Hessenberg, an orthogonal similarity, same eigenvalues as ml-matrix`, () => {
      const a = randomDense(n, n, rng(n * 31 + nb)).data;
      const h = Float64Array.from(a);
      hessenbergBlocked(h, n, nb);
      for (let i = 2; i < n; i++) for (let j = 0; j < i - 1; j++) expect(h[i * n + j]).toBe(0);
      const ia = invariants(a, n), ih = invariants(h, n);
      for (let k = 0; k < 3; k++) expect(Math.abs(ia[k] - ih[k])).toBeLessThan(1e-12 * Math.max(1, Math.abs(ia[2])));
      expect(spectrumMismatch(mlValues(h, n), mlValues(a, n), false)).toBeLessThan(1e-9);
    });
  }
});

describe('balancing', () => {
  it('equalises row and column norms of a badly scaled matrix by powers of two; eigenvalues unchanged', () => {
    const n = 40;
    const rand = rng(7);
    const a = randomDense(n, n, rand).data;
    const d = Array.from({ length: n }, () => 2 ** Math.round(40 * (rand() - 0.5)));
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i * n + j] *= d[i] / d[j];
    const b = Float64Array.from(a);
    const s = balance(b, n);
    for (let i = 0; i < n; i++) {
      expect(Number.isInteger(Math.log2(s[i]))).toBe(true);
      for (let j = 0; j < n; j++) expect(b[i * n + j]).toBe((a[i * n + j] / s[i]) * s[j]);
    }
    let ratio = 0;
    for (let i = 0; i < n; i++) {
      let r = 0, c = 0;
      for (let j = 0; j < n; j++) if (j !== i) (r += Math.abs(b[i * n + j])), (c += Math.abs(b[j * n + i]));
      ratio = Math.max(ratio, r / c, c / r);
    }
    expect(ratio).toBeLessThan(8);
  });
});

describe('bulge chain', () => {
  it('several shift pairs chased together = the same pairs swept one at a time (up to rounding)', () => {
    const n = 150;
    const h0 = randomDense(n, n, rng(99)).data;
    hessenbergBlocked(h0, n);
    const pairs: [number, number][] = [];
    const rand = rng(5);
    for (let k = 0; k < 9; k++) pairs.push([rand() - 0.5, 0.3 * rand()]);
    const one = Float64Array.from(h0), chain = Float64Array.from(h0);
    for (const p of pairs) bulgeChainSweep(one, n, 0, n - 1, [p]);
    bulgeChainSweep(chain, n, 0, n - 1, pairs, 10);
    let worst = 0, norm = 0;
    for (let i = 0; i < n; i++) {
      for (let j = Math.max(0, i - 1); j < n; j++) {
        worst = Math.max(worst, Math.abs(one[i * n + j] - chain[i * n + j]));
        norm = Math.max(norm, Math.abs(one[i * n + j]));
      }
    }
    expect(worst).toBeLessThan(1e-11 * norm);
    // still similar to the start: same invariants
    const zeroBelow = (m: Float64Array): Float64Array => {
      const c = Float64Array.from(m);
      for (let i = 2; i < n; i++) for (let j = 0; j < i - 1; j++) c[i * n + j] = 0;
      return c;
    };
    const i0 = invariants(h0, n), ic = invariants(zeroBelow(chain), n);
    for (let k = 0; k < 3; k++) expect(Math.abs(i0[k] - ic[k])).toBeLessThan(1e-10 * Math.max(1, Math.abs(i0[2])));
  });
});

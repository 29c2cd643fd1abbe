/**
 * When `poise linearize` computes A's eigenvalues unasked (docs/cli.md, "Eigenvalues of large models"):
 * the work estimate Σ m² over the diagonal blocks of A decides, never the number of states alone.
 */
import { describe, expect, it } from 'vitest';
import { eigenWork, linearEigenIfCheap, EIGEN_WORK_LIMIT } from '../server/src/core/present/format';
import type { LinearModel } from '../server/src/core/solve/linearizer';
import type { CsrMatrix } from '../server/src/core/numeric/csr';

/** A CSR matrix of n states: a two-way chain (one coupled block of n) or only its diagonal (n blocks of 1). */
function model(n: number, chain: boolean): LinearModel {
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [];
  const vals: number[] = [];
  for (let i = 0; i < n; i++) {
    if (chain && i > 0) { cols.push(i - 1); vals.push(1); }
    cols.push(i); vals.push(-(i + 1));
    if (chain && i < n - 1) { cols.push(i + 1); vals.push(1); }
    rowPtr[i + 1] = cols.length;
  }
  const A: CsrMatrix = { rows: n, cols: n, rowPtr, colIdx: Int32Array.from(cols), values: Float64Array.from(vals) };
  return { n, sparse: { A } } as unknown as LinearModel;
}

describe('eigenvalues of large linear models', () => {
  it('a model of up to 3,162 states always gets them', () => {
    expect(EIGEN_WORK_LIMIT).toBe(1e7);
    expect(eigenWork(model(3162, true)).cheap).toBe(true);
    expect(eigenWork(model(3163, true))).toEqual({ cheap: false, largest: 3163 });
  });
  it('a 20,000-state chain (one block) is left out unasked, with a note that says how to ask', () => {
    const w = eigenWork(model(20000, true));
    expect(w).toEqual({ cheap: false, largest: 20000 });
    const r = linearEigenIfCheap(model(20000, true));
    expect(r.eig).toBeUndefined();
    expect(r.note).toMatch(/20000 states.*--eigenvalues/);
  });
  it('20,000 uncoupled states (blocks of one) are cheap: their eigenvalues are the diagonal', () => {
    expect(eigenWork(model(20000, false))).toEqual({ cheap: true, largest: 1 });
    const r = linearEigenIfCheap(model(20000, false));
    // diagonal matrix: the eigenvalues are its entries -1 … -20000 (a fact of linear algebra)
    expect(r.eig!.length).toBe(20000);
    expect(new Set(r.eig!.map((e) => e.re)).has(-20000)).toBe(true);
  });
  it('asked, they are computed at any size; refused, never', () => {
    expect(linearEigenIfCheap(model(50, true), true).eig!.length).toBe(50);
    expect(linearEigenIfCheap(model(50, true), false).eig).toBeUndefined();
  });
});

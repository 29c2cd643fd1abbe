/**
 * Right and left eigenvectors of a large sparse A for the eigenvalue derivatives: each eigenvalue (from
 * the sparse eigenvalue solver) gets its vectors by inverse iteration with a sparse LU of A − σI, σ a hair
 * off λ (Wilkinson's inverse iteration: two or three solves from a fixed start give the vector to working
 * accuracy); a complex λ = σ + iω solves the real block system [[A − σI, ωI], [−ωI, A − σI]] of twice the
 * size. The left vector comes from the transposed factors. Small matrices use the dense QR route
 * (numeric/eigen.ts `eigenvectors`), which costs O(n³) and is faster below about sixty states.
 */
import { eigenvectors, eigenvaluesSparse, type EigenVectorsResult } from '../../numeric/eigen';
import { sparseLU } from '../../numeric/sparseLU';
import type { CsrMatrix } from '../../numeric/csr';

/** Above this size the sparse inverse iteration is used. */
export const DENSE_EIGENVECTORS_UP_TO = 60;

export function eigenpairs(A: Float64Array, csr: CsrMatrix, n: number, forceSparse = false): EigenVectorsResult {
  if (n <= DENSE_EIGENVECTORS_UP_TO && !forceSparse) return eigenvectors({ rows: n, cols: n, data: A });
  const ev = eigenvaluesSparse(csr);
  const mk = () => ({ rows: n, cols: n, data: new Float64Array(n * n) });
  const out: EigenVectorsResult = { re: ev.re, im: ev.im, converged: ev.converged, vrRe: mk(), vrIm: mk(), vlRe: mk(), vlIm: mk() };
  if (!ev.converged) return out;
  let rho = 0;
  for (let k = 0; k < n; k++) rho = Math.max(rho, Math.hypot(ev.re[k], ev.im[k]));
  for (let k = 0; k < n; k++) {
    if (ev.im[k] < 0) continue;
    const pair = inverseIteration(csr, n, ev.re[k], ev.im[k], rho);
    if (!pair) {
      out.converged = false;
      continue;
    }
    // normalise: v to unit 2-norm, w so that wᴴv = 1
    const { vr, vi, wr, wi } = pair;
    let nv = 0;
    for (let i = 0; i < n; i++) nv += vr[i] * vr[i] + vi[i] * vi[i];
    nv = Math.sqrt(nv);
    // wᴴv = Σ conj(w) v
    let dr = 0, di = 0;
    for (let i = 0; i < n; i++) {
      dr += (wr[i] * vr[i] + wi[i] * vi[i]) / nv;
      di += (wr[i] * vi[i] - wi[i] * vr[i]) / nv;
    }
    // w ← w / conj(wᴴv): then wᴴv = 1
    const d2 = dr * dr + di * di;
    for (let i = 0; i < n; i++) {
      out.vrRe.data[i * n + k] = vr[i] / nv;
      out.vrIm.data[i * n + k] = vi[i] / nv;
      // w / conj(d) = w·d/|d|²
      out.vlRe.data[i * n + k] = (wr[i] * dr - wi[i] * di) / d2;
      out.vlIm.data[i * n + k] = (wr[i] * di + wi[i] * dr) / d2;
    }
  }
  return out;
}

function inverseIteration(A: CsrMatrix, n: number, re: number, im: number, rho: number): { vr: Float64Array; vi: Float64Array; wr: Float64Array; wi: Float64Array } | undefined {
  const sigma = re + 1e-10 * Math.max(rho, 1e-300);
  const complex = im !== 0;
  const N = complex ? 2 * n : n;
  const rows: number[] = [], cols: number[] = [], vals: number[] = [];
  const push = (i: number, j: number, v: number) => {
    rows.push(i); cols.push(j); vals.push(v);
  };
  for (let b = 0; b < (complex ? 2 : 1); b++) {
    const off = b * n;
    for (let i = 0; i < n; i++) {
      let diag = false;
      for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) {
        const j = A.colIdx[t];
        const v = j === i ? A.values[t] - sigma : A.values[t];
        if (j === i) diag = true;
        push(off + i, off + j, v);
      }
      if (!diag) push(off + i, off + i, -sigma);
    }
  }
  if (complex) for (let i = 0; i < n; i++) {
    push(i, n + i, im);
    push(n + i, i, -im);
  }
  const lu = sparseLU(N, { rows: Int32Array.from(rows), cols: Int32Array.from(cols), vals: Float64Array.from(vals), nnz: vals.length }, { singularTolerance: 1e-300 });
  if (!lu.ok) return undefined;
  const iterate = (solve: (b: Float64Array) => Float64Array): Float64Array => {
    let x: Float64Array = new Float64Array(N);
    for (let i = 0; i < N; i++) x[i] = 1 + ((i * 7919) % 13) / 13; // a fixed start with no special direction
    for (let it = 0; it < 3; it++) {
      x = solve(x);
      let s = 0;
      for (let i = 0; i < N; i++) s = Math.max(s, Math.abs(x[i]));
      if (!(s > 0) || !Number.isFinite(s)) return x;
      for (let i = 0; i < N; i++) x[i] /= s;
    }
    return x;
  };
  const v = iterate((b) => lu.solve(b));
  // the transposed block is [[Aᵀ − σI, −ωI], [ωI, Aᵀ − σI]]: it solves (Aᵀ − conj(λ)·I)·w, the left vector's equation
  const w = iterate((b) => lu.solveTranspose(b));
  if (!complex) return { vr: v, vi: new Float64Array(n), wr: w, wi: new Float64Array(n) };
  return { vr: v.subarray(0, n), vi: v.subarray(n), wr: w.subarray(0, n), wi: w.subarray(n) };
}

/**
 * Right and left eigenvectors of a large sparse A for the eigenvalue derivatives: each eigenvalue (from
 * the sparse eigenvalue solver) gets its vectors by inverse iteration with a sparse LU of A − σI, σ a hair
 * off λ (Wilkinson's inverse iteration: two or three solves from a fixed start give the vector to working
 * accuracy); a complex λ = σ + iω solves the real block system [[A − σI, ωI], [−ωI, A − σI]] of twice the
 * size. The left vector comes from the transposed factors. Small matrices use the dense QR route
 * (numeric/eigen.ts `eigenvectors`), which costs O(n³) and is faster below about sixty states. A matrix
 * of small bandwidth (a chain, a discretised line) is factored as a band (numeric/bandLU.ts, the complex
 * block system with real and imaginary parts interleaved so that it stays banded): O(n) per eigenvalue.
 */
import { eigenvectors, eigenvaluesSparse, type EigenVectorsResult } from '../../numeric/eigen';
import { sparseLU } from '../../numeric/sparseLU';
import { bandLU } from '../../numeric/bandLU';
import type { CsrMatrix } from '../../numeric/csr';

/** Above this size the sparse inverse iteration is used. */
export const DENSE_EIGENVECTORS_UP_TO = 60;

/** Band storage rows (2·kl + ku + 1 of the complex block system) up to which the band LU is used. */
const BAND_UP_TO = 64;

function csrBandwidths(A: CsrMatrix, n: number): { kl: number; ku: number } {
  let kl = 0;
  let ku = 0;
  for (let i = 0; i < n; i++) {
    for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) {
      const d = i - A.colIdx[t];
      if (d > kl) kl = d;
      else if (-d > ku) ku = -d;
    }
  }
  return { kl, ku };
}

/** `forceSparse`: the inverse iteration at any size; 'lu' also without the band route (tests compare the routes). */
export function eigenpairs(A: Float64Array, csr: CsrMatrix, n: number, forceSparse: boolean | 'lu' = false): EigenVectorsResult {
  if (n <= DENSE_EIGENVECTORS_UP_TO && !forceSparse) return eigenvectors({ rows: n, cols: n, data: A });
  const ev = eigenvaluesSparse(csr);
  const mk = () => ({ rows: n, cols: n, data: new Float64Array(n * n) });
  const out: EigenVectorsResult = { re: ev.re, im: ev.im, converged: ev.converged, vrRe: mk(), vrIm: mk(), vlRe: mk(), vlIm: mk() };
  if (!ev.converged) return out;
  let rho = 0;
  for (let k = 0; k < n; k++) rho = Math.max(rho, Math.hypot(ev.re[k], ev.im[k]));
  const bw = csrBandwidths(csr, n);
  const banded = forceSparse !== 'lu' && 2 * (2 * bw.kl + 1) + 2 * bw.ku + 1 + 1 <= BAND_UP_TO;
  for (let k = 0; k < n; k++) {
    if (ev.im[k] < 0) continue;
    const pair = inverseIteration(csr, n, ev.re[k], ev.im[k], rho, banded ? bw : undefined);
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

function inverseIteration(
  A: CsrMatrix, n: number, re: number, im: number, rho: number, band?: { kl: number; ku: number },
): { vr: Float64Array; vi: Float64Array; wr: Float64Array; wi: Float64Array } | undefined {
  const sigma = re + 1e-10 * Math.max(rho, 1e-300);
  const complex = im !== 0;
  const N = complex ? 2 * n : n;
  if (band) return bandIteration(A, n, sigma, im, band);
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

/** A fixed start with no special direction (entry i of the N unknowns). */
const start = (i: number): number => 1 + ((i * 7919) % 13) / 13;

/**
 * The same inverse iteration on the band LU: the complex block system with unknown i's real part at 2i and
 * its imaginary part at 2i + 1 (the same equations and the same start, reordered), bandwidths 2kl + 1 and
 * 2ku + 1.
 */
function bandIteration(
  A: CsrMatrix, n: number, sigma: number, im: number, band: { kl: number; ku: number },
): { vr: Float64Array; vi: Float64Array; wr: Float64Array; wi: Float64Array } | undefined {
  const complex = im !== 0;
  const N = complex ? 2 * n : n;
  const rows: number[] = [], cols: number[] = [], vals: number[] = [];
  const push = (i: number, j: number, v: number) => {
    rows.push(i); cols.push(j); vals.push(v);
  };
  const blocks = complex ? 2 : 1;
  const at = (i: number, b: number) => (complex ? 2 * i + b : i);
  for (let b = 0; b < blocks; b++) {
    for (let i = 0; i < n; i++) {
      let diag = false;
      for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) {
        const j = A.colIdx[t];
        const v = j === i ? A.values[t] - sigma : A.values[t];
        if (j === i) diag = true;
        push(at(i, b), at(j, b), v);
      }
      if (!diag) push(at(i, b), at(i, b), -sigma);
    }
  }
  if (complex) for (let i = 0; i < n; i++) {
    push(2 * i, 2 * i + 1, im);
    push(2 * i + 1, 2 * i, -im);
  }
  const kl = complex ? 2 * band.kl + 1 : band.kl;
  const ku = complex ? 2 * band.ku + 1 : band.ku;
  const lu = bandLU(N, kl, ku, rows, cols, vals, vals.length);
  if (!lu.ok) return undefined;
  const iterate = (solve: (b: Float64Array) => Float64Array): Float64Array => {
    let x: Float64Array = new Float64Array(N);
    for (let i = 0; i < n; i++) {
      x[at(i, 0)] = start(i);
      if (complex) x[at(i, 1)] = start(n + i);
    }
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
  const w = iterate((b) => lu.solveTranspose(b));
  if (!complex) return { vr: v, vi: new Float64Array(n), wr: w, wi: new Float64Array(n) };
  const split = (x: Float64Array) => {
    const r = new Float64Array(n);
    const i2 = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      r[i] = x[2 * i];
      i2[i] = x[2 * i + 1];
    }
    return [r, i2];
  };
  const [vr, vi] = split(v);
  const [wr, wi] = split(w);
  return { vr, vi, wr, wi };
}

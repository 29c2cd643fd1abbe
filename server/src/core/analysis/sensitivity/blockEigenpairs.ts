/**
 * Eigenvectors block by block for the eigenvalue derivatives of a block-triangular A. When the non-zero
 * pattern of A together with that of every ∂A/∂p splits into strongly connected components (Tarjan 1972,
 * numeric/eigen.ts), A and all its derivatives are block lower triangular in one ordering, so each
 * eigenvalue is one of a diagonal block's and moves with that block alone:
 * ∂λ = w_kᴴ·∂A_kk·v_k / (w_kᴴ·v_k), v_k and w_k the block's own right and left vectors. The whole matrix's
 * vectors of a one-way chain (a cascade of pools or tanks) are extremely ill-conditioned (their condition
 * grows like a power of the chain's length), while the blocks' are not: a cascade's eigenvalues are its
 * diagonal entries and their derivatives are the diagonal entries of ∂A/∂p, exactly. The block vectors,
 * padded with zeros, are returned in the shape of the whole-matrix route, so wᴴ·∂A·v over the whole ∂A
 * gives the block formula.
 */
import { eigenvectors, stronglyConnectedCsr, type EigenVectorsResult } from '../../numeric/eigen';
import type { SparseDelta } from './derivatives';

/** Largest diagonal block this route solves densely (larger blocks: the whole-matrix route). */
const BLOCK_UP_TO = 60;

/** The block route's result, or undefined when A (with its derivatives) is one block or a block is too large. */
export function blockEigenpairs(A: Float64Array, n: number, deltas: readonly SparseDelta[]): EigenVectorsResult | undefined {
  if (n < 2) return undefined;
  // the union pattern of A and every ∂A/∂p, as a CSR matrix (values 1)
  const adj: Set<number>[] = Array.from({ length: n }, () => new Set<number>());
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (i !== j && A[i * n + j] !== 0) adj[i].add(j);
  for (const d of deltas) d.rows.forEach((i, t) => {
    if (i !== d.cols[t] && d.vals[t] !== 0) adj[i].add(d.cols[t]);
  });
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [];
  for (let i = 0; i < n; i++) {
    for (const j of [...adj[i]].sort((x, y) => x - y)) cols.push(j);
    rowPtr[i + 1] = cols.length;
  }
  const scc = stronglyConnectedCsr({ rows: n, cols: n, rowPtr, colIdx: Int32Array.from(cols), values: new Float64Array(cols.length).fill(1) });
  if (scc.count < 2) return undefined;
  for (let k = 0; k < scc.count; k++) if (scc.start[k + 1] - scc.start[k] > BLOCK_UP_TO) return undefined;
  const mk = () => ({ rows: n, cols: n, data: new Float64Array(n * n) });
  const out: EigenVectorsResult = { re: new Float64Array(n), im: new Float64Array(n), converged: true, vrRe: mk(), vrIm: mk(), vlRe: mk(), vlIm: mk() };
  let col = 0;
  for (let k = 0; k < scc.count; k++) {
    const idx = scc.members.subarray(scc.start[k], scc.start[k + 1]);
    const b = idx.length;
    const sub = new Float64Array(b * b);
    for (let r = 0; r < b; r++) for (let c = 0; c < b; c++) sub[r * b + c] = A[idx[r] * n + idx[c]];
    const ev = eigenvectors({ rows: b, cols: b, data: sub });
    if (!ev.converged) out.converged = false;
    for (let t = 0; t < b; t++, col++) {
      out.re[col] = ev.re[t];
      out.im[col] = ev.im[t];
      for (let r = 0; r < b; r++) {
        const i = idx[r] * n + col;
        out.vrRe.data[i] = ev.vrRe.data[r * b + t];
        out.vrIm.data[i] = ev.vrIm.data[r * b + t];
        out.vlRe.data[i] = ev.vlRe.data[r * b + t];
        out.vlIm.data[i] = ev.vlIm.data[r * b + t];
      }
    }
  }
  return out;
}

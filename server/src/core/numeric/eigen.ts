/**
 * Eigenvalues and eigenvectors of real non-symmetric dense matrices.
 *
 * eigenvalues():
 *  1. The directed graph of the non-zero pattern is split into strongly
 *     connected components (Tarjan). A symmetric permutation then makes the
 *     matrix block upper triangular, so the eigenvalues are those of the
 *     diagonal blocks (principal submatrices on the components). This is exact
 *     and turns cascades (e.g. tanks draining into each other one way) into
 *     1×1 blocks.
 *  2. A block that is tridiagonal with positive products b_k·c_k of its
 *     off-diagonal pairs (two-way chains) is similar, by a diagonal scaling,
 *     to a symmetric tridiagonal matrix with off-diagonal sqrt(b_k·c_k); its
 *     eigenvalues come from the implicit QL method in O(m²). A tridiagonal
 *     block with some negative products is first scaled the same way (each
 *     off-diagonal pair then has equal magnitudes) and goes to step 3; this
 *     removes the strong non-normality of chains with unequal couplings.
 *  3. Any other block is balanced (power-of-two diagonal similarity,
 *     balance.ts), reduced to upper Hessenberg form by Householder reflections
 *     (from 128 rows in panels, hessenberg.ts), and its eigenvalues found by
 *     Francis' implicit double-shift QR iteration with deflation on small
 *     subdiagonals and exceptional shifts (the classical hqr algorithm; only
 *     the active window is updated); from 75 rows with aggressive early
 *     deflation and the shifts chased as a chain of small bulges
 *     (bulgeChain.ts).
 *
 * eigenvectors(): the whole matrix is balanced, reduced to Hessenberg form
 * with the reflections accumulated, brought to real Schur form by the same
 * double-shift QR with full updates (hqr2), and the eigenvectors of the
 * quasi-triangular form are found by back substitution and transformed back.
 * Left eigenvectors are the rows of the inverse of the (complex) right
 * eigenvector matrix: if A V = V Λ then V⁻¹ A = Λ V⁻¹, so row k of V⁻¹ is
 * w_kᴴ with w_kᴴ A = λ_k w_kᴴ and w_kᴴ v_k = 1 by construction. For a defective
 * (or nearly defective) matrix V is (nearly) singular and the left vectors are
 * correspondingly inaccurate; when V is exactly singular they are NaN.
 */
import { CsrMatrix, csrFromDense } from './csr';
import { complexSolve, DenseMatrix } from './dense';
import { balance } from './balance';
import { bulgeChainSweep } from './bulgeChain';
import { hessenbergBlocked } from './hessenberg';
import { symTridiagEigenvalues } from './symTridiag';

export interface EigenResult {
  re: Float64Array;
  im: Float64Array;
  /** false when the QR iteration did not converge for some eigenvalue (those are NaN). */
  converged: boolean;
}

export interface EigenVectorsResult extends EigenResult {
  /** Right eigenvectors: column k (real part / imaginary part) belongs to eigenvalue k; unit 2-norm, largest component real positive. */
  vrRe: DenseMatrix;
  vrIm: DenseMatrix;
  /** Left eigenvectors w_k (column k), w_kᴴ A = λ_k w_kᴴ, normalised so that w_kᴴ v_k = 1. */
  vlRe: DenseMatrix;
  vlIm: DenseMatrix;
}

const EPS = 2.220446049250313e-16;
/** QR iterations allowed per deflation before giving up. */
const MAX_ITER = 120;

function checkSquare(a: DenseMatrix, who: string): void {
  if (a.rows !== a.cols) throw new RangeError(`${who}: matrix must be square, got ${a.rows}x${a.cols}`);
  if (a.data.length !== a.rows * a.cols) throw new RangeError(`${who}: data length does not match the size`);
}

function allFinite(d: Float64Array): boolean {
  for (let i = 0; i < d.length; i++) if (!Number.isFinite(d[i])) return false;
  return true;
}

// ---------------------------------------------------------------- structure

/**
 * Strongly connected components of the graph i → j (a_ij stored and ≠ 0, i ≠ j) of a square CSR
 * matrix, by Tarjan's depth-first search (Tarjan 1972) written with explicit stacks (no recursion,
 * so chains of any length are fine). Components come out in Tarjan's order (every edge leaving a
 * component goes to one listed earlier), members ascending: component k is
 * members[start[k]] … members[start[k+1]−1]. With the members in that order as a symmetric
 * permutation the matrix is block lower triangular, so its eigenvalues are those of the diagonal
 * blocks (the principal submatrices on the components).
 */
export function stronglyConnectedCsr(c: CsrMatrix): { members: Int32Array; start: Int32Array; count: number } {
  const n = c.rows;
  const { rowPtr, colIdx, values } = c;
  const index = new Int32Array(n).fill(-1);
  const low = new Int32Array(n);
  const onStack = new Uint8Array(n);
  const stack = new Int32Array(n);
  let sp = 0;
  const call = new Int32Array(n);
  const nextP = new Int32Array(n);
  let cp = 0;
  let counter = 0;
  const members = new Int32Array(n);
  const startList: number[] = [0];
  let out = 0;
  for (let root = 0; root < n; root++) {
    if (index[root] >= 0) continue;
    index[root] = low[root] = counter++;
    stack[sp++] = root;
    onStack[root] = 1;
    call[cp++] = root;
    nextP[root] = rowPtr[root];
    while (cp > 0) {
      const v = call[cp - 1];
      let p = nextP[v];
      const end = rowPtr[v + 1];
      while (p < end && (colIdx[p] === v || values[p] === 0)) p++;
      if (p < end) {
        const j = colIdx[p];
        nextP[v] = p + 1;
        if (index[j] < 0) {
          index[j] = low[j] = counter++;
          stack[sp++] = j;
          onStack[j] = 1;
          call[cp++] = j;
          nextP[j] = rowPtr[j];
        } else if (onStack[j] && index[j] < low[v]) {
          low[v] = index[j];
        }
      } else {
        nextP[v] = end;
        cp--;
        if (low[v] === index[v]) {
          let s0 = sp - 1;
          while (stack[s0] !== v) s0--;
          const from = out;
          for (let t = s0; t < sp; t++) {
            onStack[stack[t]] = 0;
            members[out++] = stack[t];
          }
          sp = s0;
          if (out - from > 1) members.subarray(from, out).sort();
          startList.push(out);
        }
        if (cp > 0) {
          const parent = call[cp - 1];
          if (low[v] < low[parent]) low[parent] = low[v];
        }
      }
    }
  }
  return { members, start: Int32Array.from(startList), count: startList.length - 1 };
}

// ------------------------------------------------------- symmetric tridiagonal

interface TridiagonalParts {
  d: Float64Array;
  e: Float64Array;
  up: Int8Array;
  lo: Int8Array;
  symmetric: boolean;
}

/**
 * The principal submatrix of c on the rows/columns comp (ascending), as m×m block b: if b is
 * tridiagonal with non-zero off-diagonal pairs, returns its diagonal d, the magnitudes
 * e[k] = sqrt(|b[k][k+1]·b[k+1][k]|) and the product signs without forming b. A diagonal similarity
 * takes b to the tridiagonal matrix with off-diagonals sign(b[k][k+1])·e[k] and sign(b[k+1][k])·e[k];
 * when every product is positive that matrix is symmetric. Returns null otherwise. local maps a
 * global index to its position in comp (−1 elsewhere).
 */
function tridiagonalParts(c: CsrMatrix, comp: Int32Array, local: Int32Array): TridiagonalParts | null {
  const m = comp.length;
  const d = new Float64Array(m);
  const u = new Float64Array(m);
  const l = new Float64Array(m);
  for (let r = 0; r < m; r++) {
    const i = comp[r];
    for (let p = c.rowPtr[i]; p < c.rowPtr[i + 1]; p++) {
      const v = c.values[p];
      const k = local[c.colIdx[p]];
      if (k < 0 || v === 0) continue;
      if (k === r) d[r] = v;
      else if (k === r + 1) u[r] = v;
      else if (k === r - 1) l[k] = v;
      else return null;
    }
  }
  const e = new Float64Array(m);
  const up = new Int8Array(m);
  const lo = new Int8Array(m);
  let symmetric = true;
  for (let k = 0; k + 1 < m; k++) {
    if (u[k] === 0 || l[k] === 0) return null;
    up[k] = u[k] > 0 ? 1 : -1;
    lo[k] = l[k] > 0 ? 1 : -1;
    if (up[k] !== lo[k]) symmetric = false;
    e[k] = Math.sqrt(Math.abs(u[k])) * Math.sqrt(Math.abs(l[k]));
  }
  return { d, e, up, lo, symmetric };
}

function hypot2(a: number, b: number): number {
  const x = Math.abs(a), y = Math.abs(b);
  if (x > y) {
    const r = y / x;
    return x * Math.sqrt(1 + r * r);
  }
  if (y === 0) return 0;
  const r = x / y;
  return y * Math.sqrt(1 + r * r);
}

/**
 * Eigenvalues of the symmetric tridiagonal matrix (diagonal d, off-diagonal
 * e[k] between k and k+1) by the implicit QL method with Wilkinson-type shift.
 * d is overwritten by the eigenvalues; returns false if an eigenvalue did not converge.
 */
function tql1(d: Float64Array, e: Float64Array, n: number): boolean {
  if (n > 0) e[n - 1] = 0;
  let f = 0;
  let tst1 = 0;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]) + Math.abs(e[l]));
    let m = l;
    while (m < n) {
      if (Math.abs(e[m]) <= EPS * tst1) break;
      m++;
    }
    if (m === n) m = n - 1;
    if (m > l) {
      let iter = 0;
      do {
        if (++iter > MAX_ITER) return false;
        let g = d[l];
        let p = (d[l + 1] - g) / (2 * e[l]);
        let r = hypot2(p, 1);
        if (p < 0) r = -r;
        d[l] = e[l] / (p + r);
        d[l + 1] = e[l] * (p + r);
        const dl1 = d[l + 1];
        let h = g - d[l];
        for (let i = l + 2; i < n; i++) d[i] -= h;
        f += h;
        p = d[m];
        let c = 1, c2 = 1, c3 = 1;
        const el1 = e[l + 1];
        let s = 0, s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i];
          h = c * p;
          r = hypot2(p, e[i]);
          e[i + 1] = s * r;
          s = e[i] / r;
          c = p / r;
          p = c * d[i] - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]);
        }
        p = (-s * s2 * c3 * el1 * e[l]) / dl1;
        e[l] = s * p;
        d[l] = c * p;
      } while (Math.abs(e[l]) > EPS * tst1);
    }
    d[l] = d[l] + f;
    e[l] = 0;
  }
  return true;
}

// ------------------------------------------------------------ general blocks

/**
 * Householder reduction to upper Hessenberg form (in place), with the same result and storage as
 * the classical one-reflection-at-a-time reduction: the Householder vectors stay below the
 * subdiagonal of h (column m−1, rows > m) with their leading element in ort[m]; applied[m] marks
 * the reflections actually used. The work is arranged for row-major storage and one pass through
 * the matrix per reflection: reflection m is applied from the right and its left update is only
 * accumulated (f = uᵀH/hh) while each row is in cache; that left update is then applied, in the
 * next reflection's pass, to each row just before that row gets the next right update. The column
 * the next reflection needs is brought up to date on its own first.
 */
function orthes(h: Float64Array, n: number, ort: Float64Array, applied: Uint8Array): void {
  const high = n - 1;
  let uPrev = new Float64Array(n);
  let uCur = new Float64Array(n);
  let fPrev = new Float64Array(n);
  let fCur = new Float64Array(n);
  let mPrev = -1; // reflection whose left update is pending (−1: none)
  for (let m = 1; m <= high - 1; m++) {
    // column m−1, rows m..high, with the pending left update
    let below = 0;
    const fp = mPrev >= 0 ? fPrev[m - 1] : 0;
    for (let i = m; i <= high; i++) {
      const x = mPrev >= 0 ? h[i * n + m - 1] - uPrev[i] * fp : h[i * n + m - 1];
      uCur[i] = x;
      if (i > m) below += Math.abs(x);
    }
    let hh = 0, g = 0, scale = 0;
    const use = below !== 0;
    if (use) {
      applied[m] = 1;
      scale = below + Math.abs(uCur[m]);
      for (let i = high; i >= m; i--) {
        uCur[i] /= scale;
        hh += uCur[i] * uCur[i];
      }
      g = Math.sqrt(hh);
      if (uCur[m] > 0) g = -g;
      hh -= uCur[m] * g;
      uCur[m] -= g;
      for (let j = m; j < n; j++) fCur[j] = 0;
    }
    // the pass: pending left update of mPrev, right update of m, accumulate m's left update
    const lo = mPrev >= 0 ? mPrev : n;
    for (let i = 0; i <= high; i++) {
      const row = i * n;
      let s = 0;
      const a = i >= lo ? uPrev[i] : 0;
      if (a !== 0) {
        h[row + lo] -= a * fPrev[lo];
        for (let j = lo + 1; j < m; j++) h[row + j] -= a * fPrev[j];
        if (use) {
          for (let j = m; j <= high; j++) {
            const v = h[row + j] - a * fPrev[j];
            h[row + j] = v;
            s += uCur[j] * v;
          }
        } else {
          for (let j = m; j <= high; j++) h[row + j] -= a * fPrev[j];
        }
      } else if (use) {
        for (let j = m; j <= high; j++) s += uCur[j] * h[row + j];
      }
      if (!use) continue;
      s /= hh;
      const b = i >= m ? uCur[i] : 0;
      if (b !== 0) {
        for (let j = m; j <= high; j++) {
          const v = h[row + j] - s * uCur[j];
          h[row + j] = v;
          fCur[j] += b * v;
        }
      } else if (s !== 0) {
        for (let j = m; j <= high; j++) h[row + j] -= s * uCur[j];
      }
    }
    if (use) {
      for (let j = m; j < n; j++) fCur[j] /= hh;
      ort[m] = scale * uCur[m];
      h[m * n + m - 1] = scale * g;
      [uPrev, uCur] = [uCur, uPrev];
      [fPrev, fCur] = [fCur, fPrev];
      mPrev = m;
    } else {
      mPrev = -1;
    }
  }
  if (mPrev >= 0) {
    for (let i = mPrev; i <= high; i++) {
      const a = uPrev[i];
      if (a === 0) continue;
      const row = i * n;
      for (let j = mPrev; j < n; j++) h[row + j] -= a * fPrev[j];
    }
  }
}

/** Accumulates the reflections of orthes into an orthogonal matrix (row-major). */
function ortran(h: Float64Array, n: number, ort: Float64Array, applied: Uint8Array): Float64Array {
  const v = new Float64Array(n * n);
  for (let i = 0; i < n; i++) v[i * n + i] = 1;
  const high = n - 1;
  const g = new Float64Array(n);
  for (let m = high - 1; m >= 1; m--) {
    if (!applied[m]) continue;
    const hm = h[m * n + m - 1];
    if (hm === 0) continue;
    for (let i = m + 1; i <= high; i++) ort[i] = h[i * n + m - 1];
    for (let j = m; j <= high; j++) g[j] = 0;
    for (let i = m; i <= high; i++) {
      const oi = ort[i];
      if (oi === 0) continue;
      const row = i * n;
      for (let j = m; j <= high; j++) g[j] += oi * v[row + j];
    }
    for (let j = m; j <= high; j++) g[j] = g[j] / ort[m] / hm;
    for (let i = m; i <= high; i++) {
      const oi = ort[i];
      if (oi === 0) continue;
      const row = i * n;
      for (let j = m; j <= high; j++) v[row + j] += g[j] * oi;
    }
  }
  return v;
}

function zeroBelowSubdiagonal(h: Float64Array, n: number): void {
  for (let i = 2; i < n; i++) {
    const row = i * n;
    for (let j = 0; j < i - 1; j++) h[row + j] = 0;
  }
}

/**
 * Eigenvalues of the upper Hessenberg matrix h (n×n, destroyed) by the
 * Francis double-shift QR iteration; only the active window is updated.
 * Results go to wr/wi at offset off. Returns false if some eigenvalue did not
 * converge (those entries are set to NaN).
 */
function hqr(h: Float64Array, nn: number, wr: Float64Array, wi: Float64Array, off: number): boolean {
  let norm = 0;
  for (let i = 0; i < nn; i++) {
    for (let j = Math.max(i - 1, 0); j < nn; j++) norm += Math.abs(h[i * nn + j]);
  }
  let en = nn - 1;
  let iter = 0;
  let exshift = 0;
  let p = 0, q = 0, r = 0, s = 0, z = 0, w = 0, x = 0, y = 0;
  while (en >= 0) {
    // look for a single small subdiagonal element
    let l = en;
    while (l > 0) {
      s = Math.abs(h[(l - 1) * nn + l - 1]) + Math.abs(h[l * nn + l]);
      if (s === 0) s = norm;
      if (Math.abs(h[l * nn + l - 1]) <= EPS * s) break;
      l--;
    }
    if (l === en) {
      // one root
      wr[off + en] = h[en * nn + en] + exshift;
      wi[off + en] = 0;
      en--;
      iter = 0;
    } else if (l === en - 1) {
      // two roots
      w = h[en * nn + en - 1] * h[(en - 1) * nn + en];
      p = (h[(en - 1) * nn + en - 1] - h[en * nn + en]) / 2;
      q = p * p + w;
      z = Math.sqrt(Math.abs(q));
      x = h[en * nn + en] + exshift;
      if (q >= 0) {
        z = p >= 0 ? p + z : p - z;
        wr[off + en - 1] = x + z;
        wr[off + en] = z !== 0 ? x - w / z : x + z;
        wi[off + en - 1] = 0;
        wi[off + en] = 0;
      } else {
        wr[off + en - 1] = x + p;
        wr[off + en] = x + p;
        wi[off + en - 1] = z;
        wi[off + en] = -z;
      }
      en -= 2;
      iter = 0;
    } else {
      // form shift
      x = h[en * nn + en];
      y = h[(en - 1) * nn + en - 1];
      w = h[en * nn + en - 1] * h[(en - 1) * nn + en];
      if (iter > 0 && iter % 10 === 0) {
        if (iter % 30 !== 0) {
          // Wilkinson's ad hoc exceptional shift
          exshift += x;
          for (let i = 0; i <= en; i++) h[i * nn + i] -= x;
          s = Math.abs(h[en * nn + en - 1]) + Math.abs(h[(en - 1) * nn + en - 2]);
          x = y = 0.75 * s;
          w = -0.4375 * s * s;
        } else {
          // a second kind of exceptional shift (root of the trailing 2×2 nearest x)
          s = (y - x) / 2;
          s = s * s + w;
          if (s > 0) {
            s = Math.sqrt(s);
            if (y < x) s = -s;
            s = x - w / ((y - x) / 2 + s);
            for (let i = 0; i <= en; i++) h[i * nn + i] -= s;
            exshift += s;
            x = y = w = 0.964;
          }
        }
      }
      iter++;
      if (iter > MAX_ITER) {
        for (let i = 0; i <= en; i++) {
          wr[off + i] = NaN;
          wi[off + i] = NaN;
        }
        return false;
      }
      // look for two consecutive small subdiagonal elements
      let m = en - 2;
      while (m >= l) {
        z = h[m * nn + m];
        r = x - z;
        s = y - z;
        p = (r * s - w) / h[(m + 1) * nn + m] + h[m * nn + m + 1];
        q = h[(m + 1) * nn + m + 1] - z - r - s;
        r = h[(m + 2) * nn + m + 1];
        s = Math.abs(p) + Math.abs(q) + Math.abs(r);
        p /= s;
        q /= s;
        r /= s;
        if (m === l) break;
        if (
          Math.abs(h[m * nn + m - 1]) * (Math.abs(q) + Math.abs(r)) <
          EPS * (Math.abs(p) * (Math.abs(h[(m - 1) * nn + m - 1]) + Math.abs(z) + Math.abs(h[(m + 1) * nn + m + 1])))
        ) {
          break;
        }
        m--;
      }
      for (let i = m + 2; i <= en; i++) {
        h[i * nn + i - 2] = 0;
        if (i > m + 2) h[i * nn + i - 3] = 0;
      }
      // double QR step on rows l..en and columns m..en
      for (let k = m; k <= en - 1; k++) {
        const notlast = k !== en - 1;
        if (k !== m) {
          p = h[k * nn + k - 1];
          q = h[(k + 1) * nn + k - 1];
          r = notlast ? h[(k + 2) * nn + k - 1] : 0;
          x = Math.abs(p) + Math.abs(q) + Math.abs(r);
          if (x === 0) continue;
          p /= x;
          q /= x;
          r /= x;
        }
        s = Math.sqrt(p * p + q * q + r * r);
        if (p < 0) s = -s;
        if (s === 0) continue;
        if (k !== m) h[k * nn + k - 1] = -s * x;
        else if (l !== m) h[k * nn + k - 1] = -h[k * nn + k - 1];
        p += s;
        x = p / s;
        y = q / s;
        z = r / s;
        q /= p;
        r /= p;
        const r0 = k * nn, r1 = r0 + nn, r2 = r1 + nn;
        // row modification (columns k..en)
        if (notlast) {
          for (let j = k; j <= en; j++) {
            const t = h[r0 + j] + q * h[r1 + j] + r * h[r2 + j];
            h[r0 + j] -= t * x;
            h[r1 + j] -= t * y;
            h[r2 + j] -= t * z;
          }
        } else {
          for (let j = k; j <= en; j++) {
            const t = h[r0 + j] + q * h[r1 + j];
            h[r0 + j] -= t * x;
            h[r1 + j] -= t * y;
          }
        }
        // column modification (rows l..min(en, k+3))
        const iend = Math.min(en, k + 3);
        if (notlast) {
          for (let i = l, o = l * nn + k; i <= iend; i++, o += nn) {
            const t = x * h[o] + y * h[o + 1] + z * h[o + 2];
            h[o] -= t;
            h[o + 1] -= t * q;
            h[o + 2] -= t * r;
          }
        } else {
          for (let i = l, o = l * nn + k; i <= iend; i++, o += nn) {
            const t = x * h[o] + y * h[o + 1];
            h[o] -= t;
            h[o + 1] -= t * q;
          }
        }
      }
    }
  }
  return true;
}

// ------------------------------------------- aggressive early deflation (large blocks)

/** Below this size a Hessenberg window goes to the classical double-shift QR (hqr). */
const AED_NMIN = 75;
const SMALL = 2.2250738585072014e-308;

/** Scratch space of swapBlocks (allocated once per deflation window). */
interface SwapWork {
  d: Float64Array;
  M: Float64Array;
  rhs: Float64Array;
  sol: Float64Array;
  xs: Float64Array;
  Z: Float64Array;
  Qs: Float64Array;
  v: Float64Array;
  tmp: Float64Array;
  dd: Float64Array;
  col: Float64Array;
  perm: Int32Array;
}

function swapWork(): SwapWork {
  const f16 = (): Float64Array => new Float64Array(16);
  const f4 = (): Float64Array => new Float64Array(4);
  return { d: f16(), M: f16(), rhs: f4(), sol: f4(), xs: f4(), Z: f16(), Qs: f16(), v: f4(), tmp: f16(), dd: f16(), col: f4(), perm: new Int32Array(4) };
}

/**
 * Swaps the adjacent diagonal blocks of sizes p and q (1 or 2) that start at row j of the
 * quasi-triangular t (m×m), accumulating the orthogonal transformation into the columns of z (m×m):
 * the invariant subspace [X; I] of the lower block, with A·X − X·B = −C solved as a Kronecker system
 * (complete pivoting), is brought to the front by a Householder QR, as in Bai & Demmel, "On swapping
 * diagonal blocks in real Schur form", Linear Algebra Appl. 186 (1993). Returns false, with t and z
 * unchanged, when the swapped matrix would not be block triangular to working accuracy.
 */
function swapBlocks(t: Float64Array, m: number, z: Float64Array, j: number, p: number, q: number, work: SwapWork = swapWork()): boolean {
  const k = p + q;
  const { d, M, rhs, sol, xs, Z, Qs, v, tmp, dd, col, perm } = work;
  M.fill(0);
  Z.fill(0);
  Qs.fill(0);
  sol.fill(0);
  xs.fill(0);
  for (let a = 0; a < 4; a++) perm[a] = a;
  let dnorm = 0;
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) {
    const v = t[(j + a) * m + j + b];
    d[a * 4 + b] = v;
    dnorm = Math.max(dnorm, Math.abs(v));
  }
  // Kronecker system for X (p×q, x[a·q + b]): Σ_c A[a][c]·X[c][b] − Σ_e X[a][e]·B[e][b] = −C[a][b]
  const nu = p * q;
  for (let a = 0; a < p; a++) for (let b = 0; b < q; b++) {
    const row = a * q + b;
    for (let c = 0; c < p; c++) M[row * 4 + c * q + b] += d[a * 4 + c];
    for (let e = 0; e < q; e++) M[row * 4 + a * q + e] -= d[(p + e) * 4 + p + b];
    rhs[row] = -d[a * 4 + p + b];
  }
  const smin = Math.max(EPS * dnorm, SMALL);
  for (let c = 0; c < nu; c++) {
    let bi = c, bj = c, best = -1;
    for (let a = c; a < nu; a++) for (let b = c; b < nu; b++) {
      const v = Math.abs(M[a * 4 + b]);
      if (v > best) (best = v), (bi = a), (bj = b);
    }
    if (bi !== c) {
      for (let b = 0; b < nu; b++) {
        const x = M[c * 4 + b];
        M[c * 4 + b] = M[bi * 4 + b];
        M[bi * 4 + b] = x;
      }
      const x = rhs[c];
      rhs[c] = rhs[bi];
      rhs[bi] = x;
    }
    if (bj !== c) {
      for (let a = 0; a < nu; a++) {
        const x = M[a * 4 + c];
        M[a * 4 + c] = M[a * 4 + bj];
        M[a * 4 + bj] = x;
      }
      const pc = perm[c];
      perm[c] = perm[bj];
      perm[bj] = pc;
    }
    if (Math.abs(M[c * 4 + c]) < smin) M[c * 4 + c] = smin;
    for (let a = c + 1; a < nu; a++) {
      const f = M[a * 4 + c] / M[c * 4 + c];
      if (f === 0) continue;
      for (let b = c; b < nu; b++) M[a * 4 + b] -= f * M[c * 4 + b];
      rhs[a] -= f * rhs[c];
    }
  }
  for (let c = nu - 1; c >= 0; c--) {
    let s = rhs[c];
    for (let b = c + 1; b < nu; b++) s -= M[c * 4 + b] * sol[b];
    sol[c] = s / M[c * 4 + c];
  }
  for (let c = 0; c < nu; c++) xs[perm[c]] = sol[c];
  if (!allFinite(xs)) return false;
  // Z = [X; I] (k×q), Householder QR, orthogonal Qs (k×k) accumulated
  for (let a = 0; a < p; a++) for (let b = 0; b < q; b++) Z[a * 4 + b] = xs[a * q + b];
  for (let b = 0; b < q; b++) Z[(p + b) * 4 + b] = 1;
  for (let a = 0; a < k; a++) Qs[a * 4 + a] = 1;
  for (let c = 0; c < q; c++) {
    let nrm = 0;
    for (let a = c; a < k; a++) nrm += Z[a * 4 + c] * Z[a * 4 + c];
    nrm = Math.sqrt(nrm);
    if (nrm === 0) continue;
    const alpha = Z[c * 4 + c] > 0 ? -nrm : nrm;
    let vv = 0;
    for (let a = 0; a < k; a++) v[a] = a < c ? 0 : Z[a * 4 + c];
    v[c] -= alpha;
    for (let a = c; a < k; a++) vv += v[a] * v[a];
    if (vv === 0) continue;
    for (let b = c; b < q; b++) {
      let s = 0;
      for (let a = c; a < k; a++) s += v[a] * Z[a * 4 + b];
      s = (2 * s) / vv;
      for (let a = c; a < k; a++) Z[a * 4 + b] -= s * v[a];
    }
    for (let a = 0; a < k; a++) {
      let s = 0;
      for (let b = c; b < k; b++) s += Qs[a * 4 + b] * v[b];
      s = (2 * s) / vv;
      for (let b = c; b < k; b++) Qs[a * 4 + b] -= s * v[b];
    }
  }
  // test on the small block: Qsᵀ·D·Qs must have a negligible lower-left (p×q) part
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) {
    let s = 0;
    for (let c = 0; c < k; c++) s += d[a * 4 + c] * Qs[c * 4 + b];
    tmp[a * 4 + b] = s;
  }
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) {
    let s = 0;
    for (let c = 0; c < k; c++) s += Qs[c * 4 + a] * tmp[c * 4 + b];
    dd[a * 4 + b] = s;
  }
  const thresh = Math.max(10 * EPS * dnorm, SMALL / EPS);
  for (let a = q; a < k; a++) for (let b = 0; b < q; b++) if (!(Math.abs(dd[a * 4 + b]) <= thresh)) return false;
  // apply: rows j..j+k−1 (columns j..m−1), columns j..j+k−1 (rows 0..j+k−1), and z's columns
  for (let c = j; c < m; c++) {
    for (let a = 0; a < k; a++) col[a] = t[(j + a) * m + c];
    for (let a = 0; a < k; a++) {
      let s = 0;
      for (let b = 0; b < k; b++) s += Qs[b * 4 + a] * col[b];
      t[(j + a) * m + c] = s;
    }
  }
  const rowT = (mat: Float64Array, rows: number): void => {
    for (let i = 0; i < rows; i++) {
      const o = i * m + j;
      for (let a = 0; a < k; a++) col[a] = mat[o + a];
      for (let b = 0; b < k; b++) {
        let s = 0;
        for (let a = 0; a < k; a++) s += col[a] * Qs[a * 4 + b];
        mat[o + b] = s;
      }
    }
  };
  rowT(t, j + k);
  rowT(z, m);
  for (let a = q; a < k; a++) for (let b = 0; b < q; b++) t[(j + a) * m + j + b] = 0;
  return true;
}

/** Householder vector v (v[0] = 1) with (I − τ·v·vᵀ)·x = β·e₁ for x = x[0..len−1]; returns τ and β. */
function householder(x: Float64Array, len: number, v: Float64Array): { tau: number; beta: number } {
  let sig = 0;
  for (let i = 1; i < len; i++) sig += x[i] * x[i];
  const x0 = x[0];
  v[0] = 1;
  if (sig === 0) {
    for (let i = 1; i < len; i++) v[i] = 0;
    return { tau: 0, beta: x0 };
  }
  const nrm = Math.sqrt(x0 * x0 + sig);
  const beta = x0 > 0 ? -nrm : nrm;
  const v0 = x0 - beta;
  for (let i = 1; i < len; i++) v[i] = x[i] / v0;
  return { tau: (beta - x0) / beta, beta };
}

interface AedResult {
  /** eigenvalues deflated (written at off + hi − ndefl + 1 … off + hi) */
  ndefl: number;
  /** undeflated eigenvalues of the window, candidate shifts */
  sr: number[];
  si: number[];
}

/**
 * Aggressive early deflation (Braman, Byers & Mathias, "The multishift QR algorithm. Part II: Aggressive
 * early deflation", SIAM J. Matrix Anal. Appl. 23, 2002) on the trailing nw×nw window of the active part
 * ilo..hi of h, eigenvalue-only: the window's real Schur form T = Vᵀ·W·V, the spike s·V(0, :) that
 * couples it to the rest, trailing blocks whose spike entries are negligible deflated, the others moved
 * to the top (swapBlocks); the rest is brought back to Hessenberg form and the rows above updated.
 */
function aed(h: Float64Array, nn: number, ilo: number, hi: number, nw: number, wr: Float64Array, wi: Float64Array, off: number): AedResult | undefined {
  const kwtop = hi - nw + 1;
  const sub = h[kwtop * nn + kwtop - 1];
  const t = new Float64Array(nw * nw);
  for (let i = 0; i < nw; i++) {
    const from = Math.max(0, i - 1);
    for (let j = from; j < nw; j++) t[i * nw + j] = h[(kwtop + i) * nn + kwtop + j];
  }
  const z = new Float64Array(nw * nw);
  for (let i = 0; i < nw; i++) z[i * nw + i] = 1;
  const tr = new Float64Array(nw), ti = new Float64Array(nw);
  if (!hqr2(t, nw, z, tr, ti, true)) return undefined;
  // zero what lies below the 1×1 and 2×2 blocks
  for (let i = 2; i < nw; i++) for (let j = 0; j < i - 1; j++) t[i * nw + j] = 0;
  for (let i = 0; i + 1 < nw; i++) {
    if (ti[i] !== 0 && ti[i] === -ti[i + 1]) {
      i++;
      if (i + 1 < nw) t[(i + 1) * nw + i] = 0;
      continue;
    }
    t[(i + 1) * nw + i] = 0;
  }
  const smlnum = SMALL * (nn / EPS);
  const work = swapWork();
  // Blocks from the bottom up: [0, top) not yet looked at, [top, ns) kept, [ns, nw) deflated. A block
  // whose spike entries are negligible is moved down past the kept ones (swapBlocks) and deflated if
  // its spike is still negligible there; kept blocks are never moved (fewer swaps than moving each kept
  // block to the top, and the same blocks are deflated when the spike does not change in the moves).
  const deflatable = (j: number, bs: number): boolean => {
    let foo: number, spike: number;
    if (bs === 1) {
      foo = Math.abs(t[j * nw + j]);
      spike = Math.abs(sub * z[j]);
    } else {
      foo = Math.abs(t[(j + 1) * nw + j + 1]) + Math.sqrt(Math.abs(t[(j + 1) * nw + j])) * Math.sqrt(Math.abs(t[j * nw + j + 1]));
      spike = Math.max(Math.abs(sub * z[j]), Math.abs(sub * z[j + 1]));
    }
    if (foo === 0) foo = Math.abs(sub);
    return spike <= Math.max(smlnum, EPS * foo);
  };
  let ns = nw;
  let top = nw;
  while (top > 0) {
    const bs = top >= 2 && t[(top - 1) * nw + top - 2] !== 0 ? 2 : 1;
    let pos = top - bs;
    top -= bs;
    if (!deflatable(pos, bs)) continue;
    while (pos + bs < ns) {
      const below = pos + bs + 1 < ns && t[(pos + bs + 1) * nw + pos + bs] !== 0 ? 2 : 1;
      if (!swapBlocks(t, nw, z, pos, bs, below, work)) break;
      pos += below;
    }
    if (pos + bs === ns && deflatable(pos, bs)) ns -= bs;
  }
  // eigenvalues of the blocks: the deflated ones are results, the others candidate shifts
  const sr: number[] = [], si: number[] = [];
  const er = new Float64Array(2), ei = new Float64Array(2);
  for (let i = 0; i < nw; ) {
    const bs = i + 1 < nw && t[(i + 1) * nw + i] !== 0 ? 2 : 1;
    if (bs === 1) {
      er[0] = t[i * nw + i];
      ei[0] = 0;
    } else {
      twoByTwo(t[i * nw + i], t[i * nw + i + 1], t[(i + 1) * nw + i], t[(i + 1) * nw + i + 1], er, ei, 0);
    }
    for (let b = 0; b < bs; b++) {
      if (i + b < ns) {
        sr.push(er[b]);
        si.push(ei[b]);
      } else {
        wr[off + kwtop + i + b] = er[b];
        wi[off + kwtop + i + b] = ei[b];
      }
    }
    i += bs;
  }
  const ndefl = nw - ns;
  if (ndefl === 0) return { ndefl, sr, si };
  // the spike over the undeflated part, reflected to β·e₁; then T11 back to Hessenberg form
  let beta = 0;
  if (ns > 0) {
    const sp = new Float64Array(ns);
    for (let j = 0; j < ns; j++) sp[j] = sub * z[j];
    const u = new Float64Array(ns);
    let tau = 0;
    if (ns > 1) {
      const hh = householder(sp, ns, u);
      tau = hh.tau;
      beta = hh.beta;
    } else {
      beta = sp[0];
    }
    if (tau !== 0) {
      // T11 ← P·T11·P with P = I − τ·u·uᵀ; z(:, 0..ns−1) ← z·P
      const w = new Float64Array(nw);
      for (let j = 0; j < ns; j++) w[j] = 0;
      for (let i = 0; i < ns; i++) {
        const ui = u[i];
        if (ui === 0) continue;
        for (let j = 0; j < ns; j++) w[j] += ui * t[i * nw + j];
      }
      for (let i = 0; i < ns; i++) {
        const f = tau * u[i];
        for (let j = 0; j < ns; j++) t[i * nw + j] -= f * w[j];
      }
      const rowP = (mat: Float64Array, rows: number): void => {
        for (let i = 0; i < rows; i++) {
          const o = i * nw;
          let s = 0;
          for (let j = 0; j < ns; j++) s += mat[o + j] * u[j];
          s *= tau;
          for (let j = 0; j < ns; j++) mat[o + j] -= s * u[j];
        }
      };
      rowP(t, ns);
      rowP(z, nw);
    }
    if (ns > 2) {
      const t11 = new Float64Array(ns * ns);
      for (let i = 0; i < ns; i++) for (let j = 0; j < ns; j++) t11[i * ns + j] = t[i * nw + j];
      const ort = new Float64Array(ns);
      const applied = new Uint8Array(ns);
      orthes(t11, ns, ort, applied);
      const q11 = ortran(t11, ns, ort, applied);
      zeroBelowSubdiagonal(t11, ns);
      for (let i = 0; i < ns; i++) for (let j = 0; j < ns; j++) t[i * nw + j] = t11[i * ns + j];
      // z(:, 0..ns−1) ← z(:, 0..ns−1)·q11
      timesRight(z, nw, 0, nw, 0, q11, ns, ns);
    }
  }
  // write back the window
  for (let i = 0; i < ns; i++) {
    const o = (kwtop + i) * nn + kwtop;
    for (let j = 0; j < ns; j++) h[o + j] = j >= i - 1 ? t[i * nw + j] : 0;
  }
  h[kwtop * nn + kwtop - 1] = ns > 0 ? beta : 0;
  if (kwtop + ns <= hi) h[(kwtop + ns) * nn + kwtop + ns - 1] = 0;
  // rows ilo..kwtop−1 of the active part: H(:, kwtop..hi) ← H(:, kwtop..hi)·V(:, 0..ns−1)
  if (ns > 0) timesRight(h, nn, ilo, kwtop, kwtop, z, ns, nw);
  return { ndefl, sr, si };
}

/**
 * Rows r0..r1−1 of m (row length ld), columns c0..c0+kk−1 (kk = rows of q): the first ns of them become
 * that row segment times q's first ns columns (q row-major with row length qld). A function of its own so
 * that V8's on-stack-replacement code for this loop does not run into unvisited code and deoptimize on
 * every call of the caller.
 */
function timesRight(m: Float64Array, ld: number, r0: number, r1: number, c0: number, q: Float64Array, ns: number, qld: number, kk = qld): void {
  const row = new Float64Array(ns);
  const k4 = kk & ~3;
  for (let r = r0; r < r1; r++) {
    const o = r * ld + c0;
    row.fill(0);
    for (let i = k4; i < kk; i++) {
      const hv = m[o + i];
      if (hv === 0) continue;
      const qo = i * qld;
      for (let j = 0; j < ns; j++) row[j] += hv * q[qo + j];
    }
    for (let i = 0; i < k4; i += 4) {
      const h0 = m[o + i], h1 = m[o + i + 1], h2 = m[o + i + 2], h3 = m[o + i + 3];
      if (h0 === 0 && h1 === 0 && h2 === 0 && h3 === 0) continue;
      const q0 = i * qld, q1 = q0 + qld, q2 = q1 + qld, q3 = q2 + qld;
      for (let j = 0; j < ns; j++) row[j] += h0 * q[q0 + j] + h1 * q[q1 + j] + h2 * q[q2 + j] + h3 * q[q3 + j];
    }
    for (let j = 0; j < ns; j++) m[o + j] = row[j];
  }
}

/**
 * Shifts per sweep for an active window of w rows; the deflation window is 1.5 times as large. LAPACK's
 * choice (iparmq) grows to 64 shifts at 590 rows; measured here, with the window's Schur form by hqr2, 32
 * shifts (window 48) are as fast or faster at 500–1,000 rows, both with sweeps applied one double shift at a
 * time and with the bulge chain (48 and 64 shifts tried at 590 rows and more).
 */
function shiftCount(w: number): number {
  return w < 150 ? 10 : 32;
}

/**
 * Eigenvalues of the upper Hessenberg h (nn×nn, destroyed) written at off: windows below AED_NMIN
 * rows go to hqr; larger ones alternate aggressive early deflation (aed) with sweeps that use the
 * window's undeflated eigenvalues as shifts, chased as a chain of double-shift bulges (bulgeChain.ts);
 * eigenvalue-only, so a window that splits at a negligible subdiagonal entry becomes two independent
 * windows and nothing outside the active window is updated.
 */
function hqrAed(h: Float64Array, nn: number, wr: Float64Array, wi: Float64Array, off: number): boolean {
  const stack: number[] = [0, nn - 1];
  let ok = true;
  while (stack.length > 0) {
    let hi = stack.pop()!;
    const ilo = stack.pop()!;
    let its = 0;
    let sinceDefl = 0;
    const maxIts = 30 * Math.max(10, hi - ilo + 1);
    while (hi >= ilo) {
      const w = hi - ilo + 1;
      if (w < AED_NMIN) {
        const b = new Float64Array(w * w);
        for (let i = 0; i < w; i++) {
          const from = Math.max(0, i - 1);
          for (let j = from; j < w; j++) b[i * w + j] = h[(ilo + i) * nn + ilo + j];
        }
        if (!hqr(b, w, wr, wi, off + ilo)) ok = false;
        break;
      }
      // split at a negligible subdiagonal entry
      let split = -1;
      for (let k = hi; k > ilo; k--) {
        const sub = Math.abs(h[k * nn + k - 1]);
        let s = Math.abs(h[(k - 1) * nn + k - 1]) + Math.abs(h[k * nn + k]);
        if (s === 0) s = Math.abs(h[(k - 1) * nn + k]);
        if (sub <= EPS * s || sub < SMALL) {
          split = k;
          break;
        }
      }
      if (split > 0) {
        h[split * nn + split - 1] = 0;
        stack.push(split, hi);
        hi = split - 1;
        continue;
      }
      if (++its > maxIts) {
        for (let i = ilo; i <= hi; i++) wr[off + i] = wi[off + i] = NaN;
        ok = false;
        break;
      }
      const nsMax = Math.min(shiftCount(w), w - 2) & ~1;
      const nw = Math.min(Math.floor((3 * nsMax) / 2), w - 1);
      const res = aed(h, nn, ilo, hi, nw, wr, wi, off);
      let sr: number[] = [], si: number[] = [];
      if (res) {
        hi -= res.ndefl;
        sr = res.sr;
        si = res.si;
        if (res.ndefl > 0) sinceDefl = 0;
        else sinceDefl++;
        // many deflations: look again before sweeping (LAPACK's "nibble" crossover, 14 %)
        if (res.ndefl > 0 && 100 * res.ndefl > 14 * nw) continue;
      } else {
        sinceDefl++;
      }
      if (hi - ilo + 1 < AED_NMIN) continue;
      const lo = ilo;
      let pairs: [number, number][] = [];
      if (sinceDefl > 0 && sinceDefl % 6 === 0) {
        // exceptional shifts (Wilkinson's ad hoc pattern, as in hqr)
        const er = new Float64Array(2), ei = new Float64Array(2);
        for (let i = hi; i >= Math.max(lo + 2, hi - nsMax + 2); i -= 2) {
          const ss = Math.abs(h[i * nn + i - 1]) + Math.abs(h[(i - 1) * nn + i - 2]);
          const aa = 0.75 * ss + h[i * nn + i];
          twoByTwo(aa, ss, -0.4375 * ss, aa, er, ei, 0);
          pairs.push(ei[0] !== 0 ? [2 * er[0], er[0] * er[0] + ei[0] * ei[0]] : [er[0] + er[1], er[0] * er[1]]);
        }
      } else {
        if (sr.length < 2) {
          // too few candidates: eigenvalues of the trailing block
          const m = Math.min(nsMax, hi - lo + 1);
          const b = new Float64Array(m * m);
          const base = hi - m + 1;
          for (let i = 0; i < m; i++) for (let j = Math.max(0, i - 1); j < m; j++) b[i * m + j] = h[(base + i) * nn + base + j];
          const br = new Float64Array(m), bi = new Float64Array(m);
          hqr(b, m, br, bi, 0);
          sr = Array.from(br);
          si = Array.from(bi);
        }
        // the last nsMax candidates (smallest in magnitude last), real ones paired
        const idx = sr.map((_, i) => i).filter((i) => Number.isFinite(sr[i]) && Number.isFinite(si[i]));
        idx.sort((a, b) => Math.hypot(sr[b], si[b]) - Math.hypot(sr[a], si[a]));
        const chosen = idx.slice(Math.max(0, idx.length - nsMax));
        const reals: number[] = [];
        for (const i of chosen) {
          if (si[i] > 0) pairs.push([2 * sr[i], sr[i] * sr[i] + si[i] * si[i]]);
          else if (si[i] === 0) reals.push(sr[i]);
        }
        for (let i = 0; i + 1 < reals.length; i += 2) pairs.push([reals[i] + reals[i + 1], reals[i] * reals[i + 1]]);
        if (reals.length % 2 === 1 && pairs.length === 0) pairs.push([2 * reals[0], reals[0] * reals[0]]);
        // smallest shifts first
        pairs = pairs.reverse();
      }
      bulgeChainSweep(h, nn, lo, hi, pairs);
    }
  }
  return ok;
}

/** Blocks from this size are reduced to Hessenberg form by panels (LAPACK's crossover nx = 128). */
const BLOCKED_HESSENBERG_MIN = 128;

/** Eigenvalues of a general m×m block (destroyed), written at offset off. */
function generalBlock(b: Float64Array, m: number, wr: Float64Array, wi: Float64Array, off: number): boolean {
  balance(b, m);
  if (m >= BLOCKED_HESSENBERG_MIN) {
    hessenbergBlocked(b, m);
  } else {
    const ort = new Float64Array(m);
    const applied = new Uint8Array(m);
    orthes(b, m, ort, applied);
    zeroBelowSubdiagonal(b, m);
  }
  return m >= AED_NMIN ? hqrAed(b, m, wr, wi, off) : hqr(b, m, wr, wi, off);
}

/**
 * Eigenvalues of the 2×2 block [[a, b], [c, d]] written at off, off+1: the closed form of the
 * double-shift QR's two-root step (a negligible c splits it into two 1×1 blocks first).
 */
function twoByTwo(a: number, b: number, c: number, d: number, wr: Float64Array, wi: Float64Array, off: number): void {
  if (Math.abs(c) <= EPS * (Math.abs(a) + Math.abs(d))) {
    wr[off] = a;
    wr[off + 1] = d;
    wi[off] = wi[off + 1] = 0;
    return;
  }
  const w = c * b;
  const p = (a - d) / 2;
  const q = p * p + w;
  let z = Math.sqrt(Math.abs(q));
  if (q >= 0) {
    z = p >= 0 ? p + z : p - z;
    wr[off] = d + z;
    wr[off + 1] = z !== 0 ? d - w / z : d + z;
    wi[off] = wi[off + 1] = 0;
  } else {
    wr[off] = wr[off + 1] = d + p;
    wi[off] = z;
    wi[off + 1] = -z;
  }
}

export interface SparseEigenOptions {
  /**
   * Largest diagonal block (after the splitting) given to the dense QR method; a larger block that is
   * not tridiagonal gets NaN eigenvalues and converged = false instead of an m² allocation.
   * Default 4000.
   */
  maxDenseBlock?: number;
}

/** Sizes of the diagonal blocks found by the last splitting; for the bench and tests. */
export interface BlockStats {
  blocks: number;
  largest: number;
}

/**
 * Eigenvalues of a square CSR matrix by its structure: the block triangular form from the strongly
 * connected components of the sparsity graph (stronglyConnectedCsr), then per diagonal block
 * 1×1 — the diagonal entry; 2×2 — closed form; tridiagonal with positive products b_k·c_k of its
 * off-diagonal pairs (two-way chains) — similar by a diagonal scaling to a symmetric tridiagonal
 * matrix, implicit QL in O(m²) without forming the block; otherwise the block is formed dense
 * (a tridiagonal block with some negative products first scaled so that each off-diagonal pair has
 * equal magnitudes) and goes to balancing, Hessenberg reduction and Francis QR. The dense
 * eigenvalues() is this function on the non-zeros of its argument, so both give identical results.
 * Complex pairs are adjacent, positive imaginary part first.
 */
export function eigenvaluesSparse(c: CsrMatrix, options: SparseEigenOptions = {}, stats?: BlockStats): EigenResult {
  if (c.rows !== c.cols) throw new RangeError(`eigenvaluesSparse: matrix must be square, got ${c.rows}x${c.cols}`);
  if (c.rowPtr.length !== c.rows + 1) throw new RangeError('eigenvaluesSparse: rowPtr length does not match the size');
  const n = c.rows;
  const maxDense = options.maxDenseBlock ?? 4000;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  if (stats) {
    stats.blocks = 0;
    stats.largest = 0;
  }
  if (n === 0) return { re, im, converged: true };
  if (!allFinite(c.values)) {
    re.fill(NaN);
    im.fill(NaN);
    return { re, im, converged: false };
  }
  const { members, start, count } = stronglyConnectedCsr(c);
  const { rowPtr, colIdx, values } = c;
  const local = new Int32Array(n).fill(-1);
  let pos = 0;
  let converged = true;
  for (let k = 0; k < count; k++) {
    const comp = members.subarray(start[k], start[k + 1]);
    const m = comp.length;
    if (stats) {
      stats.blocks++;
      if (m > stats.largest) stats.largest = m;
    }
    if (m === 1) {
      const i = comp[0];
      let v = 0;
      for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) if (colIdx[p] === i) v += values[p];
      re[pos] = v;
      im[pos] = 0;
      pos++;
      continue;
    }
    for (let r = 0; r < m; r++) local[comp[r]] = r;
    const tri = tridiagonalParts(c, comp, local);
    let done = false;
    if (tri && tri.symmetric) {
      // two-way chain: symmetric tridiagonal QL on a copy
      // (root-free QL with four sweeps in flight; the classical QL as a fallback)
      let d = Float64Array.from(tri.d);
      let ok = symTridiagEigenvalues(d, tri.e, m);
      if (!ok) {
        d = Float64Array.from(tri.d);
        ok = tql1(d, Float64Array.from(tri.e), m);
      }
      if (ok) {
        re.set(d, pos);
        done = true;
      }
    }
    if (!done && tri && m === 2) {
      // equal magnitudes as for larger tridiagonal blocks below, then the closed form
      twoByTwo(tri.d[0], tri.up[0] * tri.e[0], tri.lo[0] * tri.e[0], tri.d[1], re, im, pos);
      done = true;
    }
    if (!done && m > maxDense) {
      for (let t = 0; t < m; t++) re[pos + t] = im[pos + t] = NaN;
      converged = false;
      done = true;
    }
    if (!done) {
      const b = new Float64Array(m * m);
      if (tri) {
        // equalise the magnitudes of each off-diagonal pair (exact diagonal similarity):
        // removes the non-normality that a chain with unequal couplings carries
        for (let t = 0; t < m; t++) {
          b[t * m + t] = tri.d[t];
          if (t + 1 < m) {
            b[t * m + t + 1] = tri.up[t] * tri.e[t];
            b[(t + 1) * m + t] = tri.lo[t] * tri.e[t];
          }
        }
      } else {
        for (let r = 0; r < m; r++) {
          const i = comp[r];
          for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
            const q = local[colIdx[p]];
            if (q >= 0) b[r * m + q] += values[p];
          }
        }
      }
      if (!generalBlock(b, m, re, im, pos)) converged = false;
    }
    for (let r = 0; r < m; r++) local[comp[r]] = -1;
    pos += m;
  }
  return { re, im, converged };
}

/**
 * Eigenvalues of the square matrix a (not modified). Complex pairs are adjacent, positive imaginary
 * part first. The non-zeros go through eigenvaluesSparse (block triangular splitting first).
 */
export function eigenvalues(a: DenseMatrix): EigenResult {
  checkSquare(a, 'eigenvalues');
  return eigenvaluesSparse(csrFromDense(a), { maxDenseBlock: Infinity });
}

// ---------------------------------------------------------------- vectors

/**
 * Real Schur form of the Hessenberg matrix h (full updates) with the
 * transformations accumulated into v, then eigenvectors by back substitution;
 * on return v holds the real eigenvector storage (complex pair: columns k and
 * k+1 hold the real and imaginary parts of the vector of wr[k] + i·wi[k],
 * wi[k] > 0). Returns false if the iteration did not converge.
 */
function hqr2(h: Float64Array, nn: number, v: Float64Array, d: Float64Array, e: Float64Array, schurOnly = false): boolean {
  let norm = 0;
  for (let i = 0; i < nn; i++) {
    for (let j = Math.max(i - 1, 0); j < nn; j++) norm += Math.abs(h[i * nn + j]);
  }
  let n = nn - 1;
  let iter = 0;
  let exshift = 0;
  let p = 0, q = 0, r = 0, s = 0, z = 0, t = 0, w = 0, x = 0, y = 0;
  const H = (i: number, j: number): number => h[i * nn + j];
  while (n >= 0) {
    let l = n;
    while (l > 0) {
      s = Math.abs(H(l - 1, l - 1)) + Math.abs(H(l, l));
      if (s === 0) s = norm;
      if (Math.abs(H(l, l - 1)) <= EPS * s) break;
      l--;
    }
    if (l === n) {
      h[n * nn + n] += exshift;
      d[n] = h[n * nn + n];
      e[n] = 0;
      n--;
      iter = 0;
    } else if (l === n - 1) {
      w = H(n, n - 1) * H(n - 1, n);
      p = (H(n - 1, n - 1) - H(n, n)) / 2;
      q = p * p + w;
      z = Math.sqrt(Math.abs(q));
      h[n * nn + n] += exshift;
      h[(n - 1) * nn + n - 1] += exshift;
      x = H(n, n);
      if (q >= 0) {
        z = p >= 0 ? p + z : p - z;
        d[n - 1] = x + z;
        d[n] = d[n - 1];
        if (z !== 0) d[n] = x - w / z;
        e[n - 1] = 0;
        e[n] = 0;
        x = H(n, n - 1);
        s = Math.abs(x) + Math.abs(z);
        p = x / s;
        q = z / s;
        r = Math.sqrt(p * p + q * q);
        p /= r;
        q /= r;
        // row modification
        const a0 = (n - 1) * nn, a1 = n * nn;
        for (let j = n - 1; j < nn; j++) {
          z = h[a0 + j];
          h[a0 + j] = q * z + p * h[a1 + j];
          h[a1 + j] = q * h[a1 + j] - p * z;
        }
        // column modification
        for (let i = 0; i <= n; i++) {
          const o = i * nn;
          z = h[o + n - 1];
          h[o + n - 1] = q * z + p * h[o + n];
          h[o + n] = q * h[o + n] - p * z;
        }
        // accumulate
        for (let i = 0; i < nn; i++) {
          const o = i * nn;
          z = v[o + n - 1];
          v[o + n - 1] = q * z + p * v[o + n];
          v[o + n] = q * v[o + n] - p * z;
        }
      } else {
        d[n - 1] = x + p;
        d[n] = x + p;
        e[n - 1] = z;
        e[n] = -z;
      }
      n -= 2;
      iter = 0;
    } else {
      x = H(n, n);
      y = H(n - 1, n - 1);
      w = H(n, n - 1) * H(n - 1, n);
      if (iter > 0 && iter % 10 === 0) {
        if (iter % 30 !== 0) {
          exshift += x;
          for (let i = 0; i <= n; i++) h[i * nn + i] -= x;
          s = Math.abs(H(n, n - 1)) + Math.abs(H(n - 1, n - 2));
          x = y = 0.75 * s;
          w = -0.4375 * s * s;
        } else {
          s = (y - x) / 2;
          s = s * s + w;
          if (s > 0) {
            s = Math.sqrt(s);
            if (y < x) s = -s;
            s = x - w / ((y - x) / 2 + s);
            for (let i = 0; i <= n; i++) h[i * nn + i] -= s;
            exshift += s;
            x = y = w = 0.964;
          }
        }
      }
      iter++;
      if (iter > MAX_ITER) return false;
      let m = n - 2;
      while (m >= l) {
        z = H(m, m);
        r = x - z;
        s = y - z;
        p = (r * s - w) / H(m + 1, m) + H(m, m + 1);
        q = H(m + 1, m + 1) - z - r - s;
        r = H(m + 2, m + 1);
        s = Math.abs(p) + Math.abs(q) + Math.abs(r);
        p /= s;
        q /= s;
        r /= s;
        if (m === l) break;
        if (
          Math.abs(H(m, m - 1)) * (Math.abs(q) + Math.abs(r)) <
          EPS * (Math.abs(p) * (Math.abs(H(m - 1, m - 1)) + Math.abs(z) + Math.abs(H(m + 1, m + 1))))
        ) {
          break;
        }
        m--;
      }
      for (let i = m + 2; i <= n; i++) {
        h[i * nn + i - 2] = 0;
        if (i > m + 2) h[i * nn + i - 3] = 0;
      }
      for (let k = m; k <= n - 1; k++) {
        const notlast = k !== n - 1;
        if (k !== m) {
          p = H(k, k - 1);
          q = H(k + 1, k - 1);
          r = notlast ? H(k + 2, k - 1) : 0;
          x = Math.abs(p) + Math.abs(q) + Math.abs(r);
          if (x === 0) continue;
          p /= x;
          q /= x;
          r /= x;
        }
        s = Math.sqrt(p * p + q * q + r * r);
        if (p < 0) s = -s;
        if (s === 0) continue;
        if (k !== m) h[k * nn + k - 1] = -s * x;
        else if (l !== m) h[k * nn + k - 1] = -H(k, k - 1);
        p += s;
        x = p / s;
        y = q / s;
        z = r / s;
        q /= p;
        r /= p;
        const r0 = k * nn, r1 = r0 + nn, r2 = r1 + nn;
        for (let j = k; j < nn; j++) {
          let tt = h[r0 + j] + q * h[r1 + j];
          if (notlast) {
            tt += r * h[r2 + j];
            h[r2 + j] -= tt * z;
          }
          h[r0 + j] -= tt * x;
          h[r1 + j] -= tt * y;
        }
        const iend = Math.min(n, k + 3);
        for (let i = 0, o = k; i <= iend; i++, o += nn) {
          let tt = x * h[o] + y * h[o + 1];
          if (notlast) {
            tt += z * h[o + 2];
            h[o + 2] -= tt * r;
          }
          h[o] -= tt;
          h[o + 1] -= tt * q;
        }
        for (let i = 0, o = k; i < nn; i++, o += nn) {
          let tt = x * v[o] + y * v[o + 1];
          if (notlast) {
            tt += z * v[o + 2];
            v[o + 2] -= tt * r;
          }
          v[o] -= tt;
          v[o + 1] -= tt * q;
        }
      }
    }
  }

  if (schurOnly) return true;
  // back substitution: eigenvectors of the quasi-triangular form
  if (norm === 0) return true;
  let cdivr = 0, cdivi = 0;
  const cdiv = (xr: number, xi: number, yr: number, yi: number): void => {
    let rr: number, dd: number;
    if (Math.abs(yr) > Math.abs(yi)) {
      rr = yi / yr;
      dd = yr + rr * yi;
      cdivr = (xr + rr * xi) / dd;
      cdivi = (xi - rr * xr) / dd;
    } else {
      rr = yr / yi;
      dd = yi + rr * yr;
      cdivr = (rr * xr + xi) / dd;
      cdivi = (rr * xi - xr) / dd;
    }
  };
  for (n = nn - 1; n >= 0; n--) {
    p = d[n];
    q = e[n];
    if (q === 0) {
      // real vector
      let l = n;
      h[n * nn + n] = 1;
      for (let i = n - 1; i >= 0; i--) {
        w = H(i, i) - p;
        r = 0;
        for (let j = l; j <= n; j++) r += H(i, j) * H(j, n);
        if (e[i] < 0) {
          z = w;
          s = r;
        } else {
          l = i;
          if (e[i] === 0) {
            h[i * nn + n] = w !== 0 ? -r / w : -r / (EPS * norm);
          } else {
            x = H(i, i + 1);
            y = H(i + 1, i);
            q = (d[i] - p) * (d[i] - p) + e[i] * e[i];
            t = (x * s - z * r) / q;
            h[i * nn + n] = t;
            h[(i + 1) * nn + n] = Math.abs(x) > Math.abs(z) ? (-r - w * t) / x : (-s - y * t) / z;
          }
          t = Math.abs(H(i, n));
          if (EPS * t * t > 1) {
            for (let j = i; j <= n; j++) h[j * nn + n] /= t;
          }
        }
      }
    } else if (q < 0) {
      // complex vector (columns n-1: real part, n: imaginary part)
      let l = n - 1;
      if (Math.abs(H(n, n - 1)) > Math.abs(H(n - 1, n))) {
        h[(n - 1) * nn + n - 1] = q / H(n, n - 1);
        h[(n - 1) * nn + n] = -(H(n, n) - p) / H(n, n - 1);
      } else {
        cdiv(0, -H(n - 1, n), H(n - 1, n - 1) - p, q);
        h[(n - 1) * nn + n - 1] = cdivr;
        h[(n - 1) * nn + n] = cdivi;
      }
      h[n * nn + n - 1] = 0;
      h[n * nn + n] = 1;
      for (let i = n - 2; i >= 0; i--) {
        let ra = 0, sa = 0;
        for (let j = l; j <= n; j++) {
          ra += H(i, j) * H(j, n - 1);
          sa += H(i, j) * H(j, n);
        }
        w = H(i, i) - p;
        if (e[i] < 0) {
          z = w;
          r = ra;
          s = sa;
        } else {
          l = i;
          if (e[i] === 0) {
            cdiv(-ra, -sa, w, q);
            h[i * nn + n - 1] = cdivr;
            h[i * nn + n] = cdivi;
          } else {
            x = H(i, i + 1);
            y = H(i + 1, i);
            let vr = (d[i] - p) * (d[i] - p) + e[i] * e[i] - q * q;
            const vi = (d[i] - p) * 2 * q;
            if (vr === 0 && vi === 0) {
              vr = EPS * norm * (Math.abs(w) + Math.abs(q) + Math.abs(x) + Math.abs(y) + Math.abs(z));
            }
            cdiv(x * r - z * ra + q * sa, x * s - z * sa - q * ra, vr, vi);
            h[i * nn + n - 1] = cdivr;
            h[i * nn + n] = cdivi;
            if (Math.abs(x) > Math.abs(z) + Math.abs(q)) {
              h[(i + 1) * nn + n - 1] = (-ra - w * H(i, n - 1) + q * H(i, n)) / x;
              h[(i + 1) * nn + n] = (-sa - w * H(i, n) - q * H(i, n - 1)) / x;
            } else {
              cdiv(-r - y * H(i, n - 1), -s - y * H(i, n), z, q);
              h[(i + 1) * nn + n - 1] = cdivr;
              h[(i + 1) * nn + n] = cdivi;
            }
          }
          t = Math.max(Math.abs(H(i, n - 1)), Math.abs(H(i, n)));
          if (EPS * t * t > 1) {
            for (let j = i; j <= n; j++) {
              h[j * nn + n - 1] /= t;
              h[j * nn + n] /= t;
            }
          }
        }
      }
    }
  }
  // back transformation: v := v · (upper triangle of h)
  const tmp = new Float64Array(nn);
  for (let i = 0; i < nn; i++) {
    const vo = i * nn;
    tmp.fill(0);
    for (let k = 0; k < nn; k++) {
      const vik = v[vo + k];
      if (vik === 0) continue;
      const ho = k * nn;
      for (let j = k; j < nn; j++) tmp[j] += vik * h[ho + j];
    }
    v.set(tmp, vo);
  }
  return true;
}

/** Eigenvalues with right and left eigenvectors of the square matrix a (not modified). */
export function eigenvectors(a: DenseMatrix): EigenVectorsResult {
  checkSquare(a, 'eigenvectors');
  const n = a.rows;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  const mk = (): DenseMatrix => ({ rows: n, cols: n, data: new Float64Array(n * n) });
  const vrRe = mk(), vrIm = mk(), vlRe = mk(), vlIm = mk();
  const fail = (): EigenVectorsResult => {
    re.fill(NaN);
    im.fill(NaN);
    vrRe.data.fill(NaN);
    vrIm.data.fill(NaN);
    vlRe.data.fill(NaN);
    vlIm.data.fill(NaN);
    return { re, im, converged: false, vrRe, vrIm, vlRe, vlIm };
  };
  if (n === 0) return { re, im, converged: true, vrRe, vrIm, vlRe, vlIm };
  if (!allFinite(a.data)) return fail();
  const h = new Float64Array(a.data);
  const scale = balance(h, n);
  const ort = new Float64Array(n);
  const applied = new Uint8Array(n);
  orthes(h, n, ort, applied);
  const v = ortran(h, n, ort, applied);
  zeroBelowSubdiagonal(h, n);
  if (!hqr2(h, n, v, re, im)) return fail();
  // undo balancing: eigenvectors of A are D · (eigenvectors of D⁻¹AD)
  for (let i = 0; i < n; i++) {
    const si = scale[i];
    if (si === 1) continue;
    for (let j = 0; j < n; j++) v[i * n + j] *= si;
  }
  // complex right eigenvectors, column k for eigenvalue k
  const R = vrRe.data, I = vrIm.data;
  for (let k = 0; k < n; k++) {
    if (im[k] === 0) {
      for (let i = 0; i < n; i++) R[i * n + k] = v[i * n + k];
    } else if (im[k] > 0 && k + 1 < n) {
      for (let i = 0; i < n; i++) {
        const xr = v[i * n + k], xi = v[i * n + k + 1];
        R[i * n + k] = xr;
        I[i * n + k] = xi;
        R[i * n + k + 1] = xr;
        I[i * n + k + 1] = -xi;
      }
      k++;
    }
  }
  // normalise: unit 2-norm, largest component real positive
  for (let k = 0; k < n; k++) {
    let nrm2 = 0, best = -1, bi = 0;
    for (let i = 0; i < n; i++) {
      const xr = R[i * n + k], xi = I[i * n + k];
      const m2 = xr * xr + xi * xi;
      nrm2 += m2;
      if (m2 > best * (1 + 1e-12)) {
        best = m2;
        bi = i;
      }
    }
    const nrm = Math.sqrt(nrm2);
    if (!(nrm > 0)) continue;
    const pr = R[bi * n + k], pi = I[bi * n + k];
    const pm = Math.hypot(pr, pi);
    // multiply by conj(p)/(|p|·nrm)
    const cr = pr / (pm * nrm), ci = -pi / (pm * nrm);
    for (let i = 0; i < n; i++) {
      const xr = R[i * n + k], xi = I[i * n + k];
      R[i * n + k] = xr * cr - xi * ci;
      I[i * n + k] = xr * ci + xi * cr;
    }
    I[bi * n + k] = 0;
  }
  // left eigenvectors from V⁻¹
  const eye: DenseMatrix = mk();
  for (let i = 0; i < n; i++) eye.data[i * n + i] = 1;
  try {
    const inv = complexSolve(vrRe, vrIm, eye, mk());
    for (let k = 0; k < n; k++) {
      for (let i = 0; i < n; i++) {
        vlRe.data[i * n + k] = inv.re.data[k * n + i];
        vlIm.data[i * n + k] = -inv.im.data[k * n + i];
      }
    }
  } catch {
    vlRe.data.fill(NaN);
    vlIm.data.fill(NaN);
  }
  return { re, im, converged: true, vrRe, vrIm, vlRe, vlIm };
}

/** Eigenvalues as {re, im} pairs sorted by real part, then imaginary part, ascending. */
export function sortEigen(re: Float64Array, im: Float64Array): { re: number; im: number }[] {
  const out: { re: number; im: number }[] = [];
  for (let i = 0; i < re.length; i++) out.push({ re: re[i], im: im[i] });
  out.sort((p, q) => (p.re !== q.re ? p.re - q.re : p.im - q.im));
  return out;
}

/**
 * Real Schur form A = Q·T·Qᵀ of the square matrix a (not modified; no balancing, so Q is orthogonal):
 * T is upper quasi-triangular with 1×1 blocks for real eigenvalues and 2×2 blocks for complex pairs
 * (entries below the blocks are exactly zero), Q orthogonal, both row-major n×n. Householder reduction to
 * Hessenberg form, then Francis' double-shift QR with full updates (the first half of {@link eigenvectors}).
 * Returns undefined when the iteration does not converge or an entry is not finite.
 */
export function realSchur(a: DenseMatrix): { t: Float64Array; q: Float64Array; re: Float64Array; im: Float64Array } | undefined {
  checkSquare(a, 'realSchur');
  const n = a.rows;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  if (!allFinite(a.data)) return undefined;
  const h = new Float64Array(a.data);
  const ort = new Float64Array(n);
  const applied = new Uint8Array(n);
  orthes(h, n, ort, applied);
  const q = ortran(h, n, ort, applied);
  zeroBelowSubdiagonal(h, n);
  if (n > 0 && !hqr2(h, n, q, re, im, true)) return undefined;
  // Subdiagonal entries that are not inside a complex 2×2 block are negligible after deflation: zero them.
  for (let i = 0; i + 1 < n; i++) {
    const inPair = im[i] !== 0 && im[i + 1] !== 0 && im[i] === -im[i + 1];
    if (inPair) {
      i++;
      if (i + 1 < n) h[(i + 1) * n + i] = 0;
      continue;
    }
    h[(i + 1) * n + i] = 0;
  }
  return { t: h, q, re, im };
}

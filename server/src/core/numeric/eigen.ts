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
 *  3. Any other block is balanced (power-of-two diagonal similarity), reduced
 *     to upper Hessenberg form by Householder reflections, and its
 *     eigenvalues found by Francis' implicit double-shift QR iteration with
 *     deflation on small subdiagonals and exceptional shifts (the classical
 *     hqr algorithm; only the active window is updated).
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

/** Balances h in place (D⁻¹ h D with power-of-two D); returns D's diagonal. Scaling only, no permutations. */
export function balance(h: Float64Array, n: number): Float64Array {
  const scale = new Float64Array(n).fill(1);
  const RADIX = 2;
  const SQRDX = RADIX * RADIX;
  let noconv = true;
  let sweeps = 0;
  while (noconv && sweeps++ < 200) {
    noconv = false;
    for (let i = 0; i < n; i++) {
      let c = 0, r = 0;
      const row = i * n;
      for (let j = 0; j < n; j++) {
        if (j === i) continue;
        c += Math.abs(h[j * n + i]);
        r += Math.abs(h[row + j]);
      }
      if (c !== 0 && r !== 0) {
        let g = r / RADIX;
        let f = 1;
        const s = c + r;
        let guard = 0;
        while (c < g && guard++ < 2100) {
          f *= RADIX;
          c *= SQRDX;
        }
        g = r * RADIX;
        guard = 0;
        while (c > g && guard++ < 2100) {
          f /= RADIX;
          c /= SQRDX;
        }
        if ((c + r) / f < 0.95 * s) {
          noconv = true;
          g = 1 / f;
          scale[i] *= f;
          for (let j = 0; j < n; j++) h[row + j] *= g;
          for (let j = 0; j < n; j++) h[j * n + i] *= f;
        }
      }
    }
  }
  return scale;
}

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
export function orthes(h: Float64Array, n: number, ort: Float64Array, applied: Uint8Array): void {
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

export function zeroBelowSubdiagonal(h: Float64Array, n: number): void {
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
export function hqr(h: Float64Array, nn: number, wr: Float64Array, wi: Float64Array, off: number): boolean {
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

/** Eigenvalues of a general m×m block (destroyed), written at offset off. */
function generalBlock(b: Float64Array, m: number, wr: Float64Array, wi: Float64Array, off: number): boolean {
  balance(b, m);
  const ort = new Float64Array(m);
  const applied = new Uint8Array(m);
  orthes(b, m, ort, applied);
  zeroBelowSubdiagonal(b, m);
  return hqr(b, m, wr, wi, off);
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

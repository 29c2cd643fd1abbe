/**
 * Model reduction by balanced truncation, square-root method.
 *
 * B. C. Moore, "Principal component analysis in linear systems: controllability, observability, and model
 * reduction", IEEE Trans. Automatic Control 26(1), 1981; the square-root form of A. J. Laub, M. T. Heath,
 * C. C. Paige & R. C. Ward, "Computation of system balancing transformations and other applications of
 * simultaneous diagonalization algorithms", IEEE Trans. Automatic Control 32(2), 1987.
 *
 * 1. The unstable part (eigenvalues with real part ≥ −α, α tiny) is split off first and kept exactly: the
 *    matrix sign function of A + αI (Newton iteration with determinant scaling; J. D. Roberts, "Linear model
 *    reduction and solution of the algebraic Riccati equation by use of the sign function", Int. J.
 *    Control 32(4), 1980) gives the spectral projector onto the stable invariant subspace, whose range and
 *    that of its complement make a basis in which A is block diagonal.
 * 2. The Gramians of the stable part solve A·P + P·Aᵀ + B·Bᵀ = 0 and Aᵀ·Q + Q·A + Cᵀ·C = 0
 *    (Bartels–Stewart, numeric/lyapunov.ts).
 * 3. Factors P = Lc·Lcᵀ, Q = Lo·Loᵀ (from symmetric eigendecompositions, which tolerate the numerically
 *    semidefinite Gramians of fast-decaying systems), the SVD Loᵀ·Lc = U·Σ·Vᵀ gives the Hankel singular
 *    values σ_i; keeping r of them, T = Lc·V_r·Σ_r^(−1/2) and W = Lo·U_r·Σ_r^(−1/2) give the reduced model
 *    (Wᵀ·A·T, Wᵀ·B, C·T, D).
 * 4. Error bound (Glover 1984; Enns 1984): ‖G − G_r‖∞ ≤ 2·Σ_{i>r} σ_i.
 */
import { mulRowMajor, transposeRowMajor } from './dense';
import { EigenvalueDecomposition, Matrix, SingularValueDecomposition } from 'ml-matrix';
import type { StateSpace } from './discretize';
import { eigenvalues } from './eigen';
import { luFactorInPlace, luSolveMatrixInPlace } from './flatlu';
import { solveLyapunov } from './lyapunov';
import { lyapunovFactor } from './lyapunovFactor';

export interface BalancedTruncation {
  /** Hankel singular values of the stable part, descending. */
  hankel: number[];
  /** Number of unstable (or marginal) modes kept exactly. */
  unstable: number;
  /** Stable states kept. */
  kept: number;
  /** A-priori bound 2·Σ(discarded σ) on the H∞ norm of the error. */
  bound: number;
  /** Reduced model: the kept balanced states first, then the unstable part. */
  reduced: StateSpace;
  /** Relative residuals of the two Lyapunov equations (should be near machine precision). */
  residual: { controllability: number; observability: number };
}



function toMatrix(a: Float64Array, r: number, c: number): Matrix {
  const m = new Matrix(r, c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) m.set(i, j, a[i * c + j]);
  return m;
}

function fromMatrix(m: Matrix): Float64Array {
  const out = new Float64Array(m.rows * m.columns);
  for (let i = 0; i < m.rows; i++) for (let j = 0; j < m.columns; j++) out[i * m.columns + j] = m.get(i, j);
  return out;
}

function inverse(a: Float64Array, n: number): Float64Array | undefined {
  const lu = a.slice();
  const piv = new Int32Array(n);
  if (!luFactorInPlace(lu, n, piv)) return undefined;
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) inv[i * n + i] = 1;
  luSolveMatrixInPlace(lu, n, piv, inv, n);
  return inv;
}

/** sign(Z) by the scaled Newton iteration; undefined when Z has eigenvalues on (or too near) the imaginary axis. */
export function matrixSign(z0: Float64Array, n: number): Float64Array | undefined {
  let z = z0.slice();
  for (let it = 0; it < 100; it++) {
    const lu = z.slice();
    const piv = new Int32Array(n);
    if (!luFactorInPlace(lu, n, piv)) return undefined;
    let logDet = 0;
    for (let i = 0; i < n; i++) logDet += Math.log(Math.abs(lu[i * n + i]));
    const inv = new Float64Array(n * n);
    for (let i = 0; i < n; i++) inv[i * n + i] = 1;
    luSolveMatrixInPlace(lu, n, piv, inv, n);
    const c = it < 8 ? Math.exp(-logDet / n) : 1;
    let diff = 0, norm = 0;
    const next = new Float64Array(n * n);
    for (let k = 0; k < n * n; k++) {
      next[k] = (c * z[k] + inv[k] / c) / 2;
      diff += Math.abs(next[k] - z[k]);
      norm += Math.abs(next[k]);
    }
    z = next;
    if (!Number.isFinite(norm)) return undefined;
    if (diff <= 1e-13 * norm && it >= 1) return z;
  }
  return undefined;
}

/** Orthonormal basis of the range of a projector (columns), from its SVD (singular values ≥ 1 or ≈ 0). */
function projectorRange(pr: Float64Array, n: number): { basis: Float64Array; k: number } {
  const svd = new SingularValueDecomposition(toMatrix(pr, n, n), { autoTranspose: true });
  const u = svd.leftSingularVectors;
  const s = svd.diagonal;
  const cols: number[] = [];
  for (let j = 0; j < s.length; j++) if (s[j] > 0.5) cols.push(j);
  const basis = new Float64Array(n * cols.length);
  for (let i = 0; i < n; i++) cols.forEach((j, c) => (basis[i * cols.length + c] = u.get(i, j)));
  return { basis, k: cols.length };
}

/** Symmetric square-root factor L with P ≈ L·Lᵀ (negative round-off eigenvalues clipped to zero). */
function symmetricFactor(p: Float64Array, n: number): Float64Array {
  const e = new EigenvalueDecomposition(toMatrix(p, n, n), { assumeSymmetric: true });
  const w = e.eigenvectorMatrix;
  const lam = e.realEigenvalues;
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const s = Math.sqrt(Math.max(lam[j], 0));
    for (let i = 0; i < n; i++) l[i * n + j] = w.get(i, j) * s;
  }
  return l;
}

/** Splits sys into a stable part (first ns states) and the rest by a block-diagonalizing change of basis. */
function splitStable(sys: StateSpace, alpha: number): { stable: StateSpace; rest: StateSpace } | undefined {
  const { n, m, p } = sys;
  const shifted = sys.A.slice();
  for (let i = 0; i < n; i++) shifted[i * n + i] += alpha;
  const s = matrixSign(shifted, n);
  if (!s) return undefined;
  const ps = new Float64Array(n * n);
  const pu = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const id = i === j ? 1 : 0;
      ps[i * n + j] = (id - s[i * n + j]) / 2;
      pu[i * n + j] = (id + s[i * n + j]) / 2;
    }
  }
  const vs = projectorRange(ps, n);
  const vu = projectorRange(pu, n);
  if (vs.k + vu.k !== n) return undefined;
  const t = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < vs.k; j++) t[i * n + j] = vs.basis[i * vs.k + j];
    for (let j = 0; j < vu.k; j++) t[i * n + vs.k + j] = vu.basis[i * vu.k + j];
  }
  const ti = inverse(t, n);
  if (!ti) return undefined;
  const at = mulRowMajor(mulRowMajor(ti, sys.A, n, n, n), t, n, n, n);
  const bt = mulRowMajor(ti, sys.B, n, n, m);
  const ct = mulRowMajor(sys.C, t, p, n, n);
  const ks = vs.k, ku = vu.k;
  const block = (r0: number, r: number, c0: number, c: number, src: Float64Array, cols: number): Float64Array => {
    const out = new Float64Array(r * c);
    for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) out[i * c + j] = src[(r0 + i) * cols + c0 + j];
    return out;
  };
  return {
    stable: { n: ks, m, p, A: block(0, ks, 0, ks, at, n), B: block(0, ks, 0, m, bt, m), C: block(0, p, 0, ks, ct, n), D: sys.D.slice() },
    rest: { n: ku, m, p, A: block(ks, ku, ks, ku, at, n), B: block(ks, ku, 0, m, bt, m), C: block(0, p, ks, ku, ct, n), D: new Float64Array(p * m) },
  };
}

/** Hankel singular values and balancing factors of a stable system. */
function balance(sys: StateSpace): { hankel: number[]; lc: Float64Array; lo: Float64Array; u: Matrix; v: Matrix; resC: number; resO: number } | undefined {
  const { n, m, p } = sys;
  const bbt = mulRowMajor(sys.B, transposeRowMajor(sys.B, n, m), n, m, n);
  const ctc = mulRowMajor(transposeRowMajor(sys.C, p, n), sys.C, n, p, n);
  const at = transposeRowMajor(sys.A, n, n);
  // Cholesky factors computed directly (Hammarling 1982, numeric/lyapunovFactor.ts): accurate Hankel values
  // far below √ε·σ₁; the eigendecomposition of the Bartels–Stewart Gramians is the fallback
  let lc = lyapunovFactor(sys.A, sys.B, n, m);
  let lo = lyapunovFactor(at, transposeRowMajor(sys.C, p, n), n, p);
  if (!lc || !lo) {
    const P = solveLyapunov({ rows: n, cols: n, data: sys.A }, { rows: n, cols: n, data: bbt });
    const Q = solveLyapunov({ rows: n, cols: n, data: at }, { rows: n, cols: n, data: ctc });
    if (!P || !Q) return undefined;
    lc = symmetricFactor(P.data, n);
    lo = symmetricFactor(Q.data, n);
  }
  const gram = (l: Float64Array) => mulRowMajor(l, transposeRowMajor(l, n, n), n, n, n);
  const mtx = mulRowMajor(transposeRowMajor(lo, n, n), lc, n, n, n);
  const svd = new SingularValueDecomposition(toMatrix(mtx, n, n));
  const hankel = Array.from(svd.diagonal, (x) => Math.abs(x));
  return { hankel, lc, lo, u: svd.leftSingularVectors, v: svd.rightSingularVectors, resC: lyapRes(sys.A, gram(lc), bbt, n), resO: lyapRes(at, gram(lo), ctc, n) };
}

function lyapRes(a: Float64Array, x: Float64Array, q: Float64Array, n: number): number {
  const ax = mulRowMajor(a, x, n, n, n);
  let r = 0, na = 0, nx = 0, nq = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const v = ax[i * n + j] + ax[j * n + i] + q[i * n + j];
      r += v * v;
      na += a[i * n + j] ** 2;
      nx += x[i * n + j] ** 2;
      nq += q[i * n + j] ** 2;
    }
  }
  const den = 2 * Math.sqrt(na * nx) + Math.sqrt(nq);
  return den === 0 ? 0 : Math.sqrt(r) / den;
}

export interface TruncationOptions {
  /** Stable states to keep; when absent, the smallest order whose bound is within `tolerance`. */
  order?: number;
  /** Bound on the H∞ error relative to the largest Hankel singular value (default 1e-3). */
  tolerance?: number;
}

/** The smallest r with 2·Σ_{i>r} σ_i ≤ tol·σ₁ (σ descending). */
export function suggestOrder(hankel: number[], tolerance: number): number {
  if (hankel.length === 0) return 0;
  let tail = 0;
  for (let r = hankel.length; r > 0; r--) {
    if (2 * (tail + hankel[r - 1]) > tolerance * hankel[0]) return r;
    tail += hankel[r - 1];
  }
  return 0;
}

/**
 * Balanced truncation of sys. Returns undefined when the stable/unstable split or a Lyapunov equation
 * fails (eigenvalues on the imaginary axis inside the stable part, non-convergence).
 */
export function balancedTruncation(sys: StateSpace, opts: TruncationOptions = {}): BalancedTruncation | undefined {
  const { n, m, p } = sys;
  let normA = 0;
  for (let k = 0; k < n * n; k++) normA = Math.max(normA, Math.abs(sys.A[k]));
  const alpha = 1e-9 * Math.max(normA, 1e-300);
  const eig = eigenvalues({ rows: n, cols: n, data: sys.A });
  let hasUnstable = !eig.converged;
  for (let i = 0; i < n; i++) if (eig.re[i] >= -alpha) hasUnstable = true;
  const parts = hasUnstable ? splitStable(sys, alpha) : undefined;
  if (hasUnstable && !parts) return undefined;
  const stable = parts ? parts.stable : sys;
  const rest: StateSpace = parts ? parts.rest : { n: 0, m, p, A: new Float64Array(0), B: new Float64Array(0), C: new Float64Array(0), D: new Float64Array(p * m) };
  const bal = stable.n > 0 ? balance(stable) : { hankel: [], lc: new Float64Array(0), lo: new Float64Array(0), u: new Matrix(0, 0), v: new Matrix(0, 0), resC: 0, resO: 0 };
  if (!bal) return undefined;
  const ns = stable.n;
  let r = opts.order ?? suggestOrder(bal.hankel, opts.tolerance ?? 1e-3);
  r = Math.max(0, Math.min(r, ns));
  while (r > 0 && !(bal.hankel[r - 1] > 0)) r--; // a zero Hankel value cannot be kept (uncontrollable/unobservable)
  const bound = 2 * bal.hankel.slice(r).reduce((s, x) => s + x, 0);
  // T = Lc·V_r·Σ^(−1/2), W = Lo·U_r·Σ^(−1/2)
  const t = new Float64Array(ns * r);
  const w = new Float64Array(ns * r);
  for (let i = 0; i < ns; i++) {
    for (let j = 0; j < r; j++) {
      let tv = 0, wv = 0;
      for (let k = 0; k < ns; k++) {
        tv += bal.lc[i * ns + k] * bal.v.get(k, j);
        wv += bal.lo[i * ns + k] * bal.u.get(k, j);
      }
      const sc = 1 / Math.sqrt(bal.hankel[j]);
      t[i * r + j] = tv * sc;
      w[i * r + j] = wv * sc;
    }
  }
  const wt = transposeRowMajor(w, ns, r);
  const ar = mulRowMajor(mulRowMajor(wt, stable.A, r, ns, ns), t, r, ns, r);
  const br = mulRowMajor(wt, stable.B, r, ns, m);
  const cr = mulRowMajor(stable.C, t, p, ns, r);
  const k = r + rest.n;
  const A = new Float64Array(k * k);
  const B = new Float64Array(k * m);
  const C = new Float64Array(p * k);
  for (let i = 0; i < r; i++) {
    for (let j = 0; j < r; j++) A[i * k + j] = ar[i * r + j];
    for (let j = 0; j < m; j++) B[i * m + j] = br[i * m + j];
  }
  for (let i = 0; i < rest.n; i++) {
    for (let j = 0; j < rest.n; j++) A[(r + i) * k + r + j] = rest.A[i * rest.n + j];
    for (let j = 0; j < m; j++) B[(r + i) * m + j] = rest.B[i * m + j];
  }
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < r; j++) C[i * k + j] = cr[i * r + j];
    for (let j = 0; j < rest.n; j++) C[i * k + r + j] = rest.C[i * rest.n + j];
  }
  return {
    hankel: bal.hankel,
    unstable: rest.n,
    kept: r,
    bound,
    reduced: { n: k, m, p, A, B, C, D: sys.D.slice() },
    residual: { controllability: bal.resC, observability: bal.resO },
  };
}

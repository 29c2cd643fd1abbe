/**
 * Transfer functions of every input → output pair: minimal realisation by orthogonal staircases, poles,
 * transmission zeros, gain, and the evaluation of G(s) in factored form or by a direct solve.
 */
import { complexSolve, type DenseMatrix } from '../../numeric/dense';
import { eigenvalues } from '../../numeric/eigen';
import { AXIS_TOL, type Complex, type LinearSystem, type TransferFunction } from './types';
import type { Balanced } from './balance';
import { householder, reflectCols, reflectRows } from './reflectors';
import { frob, perUnit, transpose } from './system';

/**
 * Orthogonal (Householder) reduction of (A, b, c) to controllability Hessenberg form: b → β·e₁, A upper
 * Hessenberg; stops at the first negligible subdiagonal, whose position is the order of the controllable
 * part. Works on copies; returns the controllable part (A r×r, b, c).
 */
function controllablePart(A0: Float64Array, b0: Float64Array, c0: Float64Array, n: number, tolA: number): { A: Float64Array; b: Float64Array; c: Float64Array; r: number } {
  const A = Float64Array.from(A0);
  const b = Float64Array.from(b0);
  const c = Float64Array.from(c0);
  const v = new Float64Array(n);
  let nb = 0;
  for (let i = 0; i < n; i++) nb += b[i] * b[i];
  nb = Math.sqrt(nb);
  if (nb === 0) return { A: new Float64Array(0), b: new Float64Array(0), c: new Float64Array(0), r: 0 };
  // reflector on rows/cols off..n−1 taking x (length n−off) to ±‖x‖e₁
  const reflect = (x: Float64Array, off: number): number => {
    const L = n - off;
    const { alpha, f } = householder(x, L, v);
    if (f === 0) return alpha;
    reflectRows(A, n, v, L, off, f); // A ← H A
    reflectCols(A, n, n, v, L, off, f); // A ← A H
    reflectCols(c, 1, n, v, L, off, f); // c ← c H
    return alpha;
  };
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = b[i];
  const beta = n > 1 ? reflect(x, 0) : b[0];
  b.fill(0);
  b[0] = beta;
  let r = n;
  for (let k = 0; k + 1 < n; k++) {
    const L = n - k - 1;
    let s = 0;
    for (let i = 0; i < L; i++) {
      x[i] = A[(k + 1 + i) * n + k];
      s += x[i] * x[i];
    }
    if (Math.sqrt(s) <= tolA) {
      r = k + 1;
      break;
    }
    if (L > 1) {
      reflect(x, k + 1);
      for (let i = 2; i <= L; i++) A[(k + i) * n + k] = 0;
    }
  }
  const Ar = new Float64Array(r * r);
  for (let i = 0; i < r; i++) for (let j = 0; j < r; j++) Ar[i * r + j] = A[i * n + j];
  return { A: Ar, b: b.slice(0, r), c: c.slice(0, r), r };
}

export interface MinimalPair {
  /** Lower Hessenberg A (r×r), b, c = γ·e₁ᵀ, d. */
  A: Float64Array;
  b: Float64Array;
  gamma: number;
  d: number;
  r: number;
}

/** Controllable and observable part of the SISO system (A, b, c, d): controllable staircase, then the dual one. */
export function minimalPair(A: Float64Array, b: Float64Array, c: Float64Array, d: number, n: number, tolA: number): MinimalPair {
  const cp = controllablePart(A, b, c, n, tolA);
  if (cp.r === 0) return { A: new Float64Array(0), b: new Float64Array(0), gamma: 0, d, r: 0 };
  const r1 = cp.r;
  const op = controllablePart(transpose(cp.A, r1, r1), cp.c, cp.b, r1, tolA);
  if (op.r === 0) return { A: new Float64Array(0), b: new Float64Array(0), gamma: 0, d, r: 0 };
  // dual form: Aᵀ upper Hessenberg with cᵀ → γe₁, so A lower Hessenberg, c = γe₁ᵀ, b = op.c
  return { A: transpose(op.A, op.r, op.r), b: op.c, gamma: op.b[0], d, r: op.r };
}

/**
 * Transmission zeros of a minimal SISO system in the observability Hessenberg form of minimalPair.
 * d ≠ 0: eigenvalues of A − b·c/d. d = 0: with q the first index where b is not negligible (relative
 * degree q+1), the output and its first q derivatives vanish only if x₀…x_q = 0 and
 * u = −a_{q,q+1}·x_{q+1}/b_q; the remaining coordinates then follow
 * x' = (A₂₂ − (a_{q,q+1}/b_q)·b₂·e₁ᵀ)x, whose eigenvalues are the zeros.
 */
function pairZeros(mp: MinimalPair, tolRel: number): { zeros: Complex[]; relativeDegree: number; norm: number; dim: number } {
  const { A, b, gamma, d, r } = mp;
  let nb = 0;
  for (let i = 0; i < r; i++) nb += b[i] * b[i];
  nb = Math.sqrt(nb);
  const na = frob(A);
  const dRelevant = d !== 0 && Math.abs(d) * Math.max(na, 1e-300) > 1e-13 * Math.abs(gamma) * nb;
  if (dRelevant) {
    const Z = Float64Array.from(A);
    for (let i = 0; i < r; i++) Z[i * r] -= (b[i] * gamma) / d;
    return { zeros: eigList(Z, r), relativeDegree: 0, norm: frob(Z), dim: r };
  }
  let q = 0;
  while (q < r && Math.abs(b[q]) <= tolRel * nb) q++;
  if (q >= r - 1) return { zeros: [], relativeDegree: r, norm: 0, dim: 0 };
  const k = r - q - 1;
  const Z = new Float64Array(k * k);
  const f = A[q * r + q + 1] / b[q];
  for (let i = 0; i < k; i++) {
    for (let j = 0; j < k; j++) Z[i * k + j] = A[(q + 1 + i) * r + (q + 1 + j)];
    Z[i * k] -= f * b[q + 1 + i];
  }
  return { zeros: eigList(Z, k), relativeDegree: q + 1, norm: Math.max(frob(Z), na), dim: k };
}

/** Roots within tol of the origin are the origin (integrators, differentiators): exactly 0. */
export function snapRoots(r: Complex[], tol: number): Complex[] {
  return sortRoots(r.map((x) => (Math.hypot(x.re, x.im) <= tol ? { re: 0, im: 0 } : x)));
}

const EPS = 2.220446049250313e-16;

/**
 * Roots at the origin, with their multiplicity decided by the conditioning of the eigenvalue problem they
 * came from (a matrix of order `dim` and norm `norm`). A k-fold eigenvalue perturbed by rounding of size
 * ε·‖M‖ splits into k roots about (ε·‖M‖^k)^(1/k)·c away, while their centroid moves only O(ε·‖M‖)
 * (T. Kato, Perturbation Theory for Linear Operators, 1966, ch. II; the usual argument for clusters). So
 * the k roots nearest the origin are a k-fold root at 0 when each lies within ‖M‖·(c·ε)^(1/k), their
 * centroid within ‖M‖·c·ε, and the next root is clearly farther. Such roots are set to exactly 0.
 */
export function snapOriginCluster(roots: Complex[], norm: number, dim: number): Complex[] {
  if (!roots.length || !(norm > 0)) return roots;
  const c = 64 * Math.max(dim, 1);
  const byMag = roots.map((z, i) => ({ z, i, a: Math.hypot(z.re, z.im) })).sort((x, y) => x.a - y.a);
  let best = 0;
  let sre = 0, sim = 0;
  for (let k = 1; k <= byMag.length; k++) {
    sre += byMag[k - 1].z.re;
    sim += byMag[k - 1].z.im;
    const spread = norm * Math.pow(c * EPS, 1 / k);
    if (byMag[k - 1].a > spread) continue;
    const centroid = Math.hypot(sre, sim) / k;
    const next = k < byMag.length ? byMag[k].a : Infinity;
    if (centroid <= norm * c * EPS && next > 10 * spread) best = k;
  }
  if (!best) return roots;
  const out = roots.slice();
  for (let k = 0; k < best; k++) out[byMag[k].i] = { re: 0, im: 0 };
  return sortRoots(out);
}

const rootSnap = AXIS_TOL;

export function eigList(a: Float64Array, n: number): Complex[] {
  if (n === 0) return [];
  const e = eigenvalues({ rows: n, cols: n, data: a });
  const out: Complex[] = [];
  for (let i = 0; i < n; i++) out.push({ re: e.re[i], im: e.im[i] });
  return sortRoots(out);
}

/** Dominant first; conjugates adjacent (+i first). */
export function sortRoots(r: Complex[]): Complex[] {
  return r.sort((a, b) => b.re - a.re || b.im - a.im);
}

/** Real polynomial coefficients (descending powers) with the given roots, times k. */
export function polyFromRoots(roots: Complex[], k = 1): number[] {
  let re = [1];
  let im = [0];
  for (const z of roots) {
    const nr = new Array<number>(re.length + 1).fill(0);
    const ni = new Array<number>(re.length + 1).fill(0);
    for (let i = 0; i < re.length; i++) {
      nr[i] += re[i];
      ni[i] += im[i];
      // − z · coefficient
      nr[i + 1] -= z.re * re[i] - z.im * im[i];
      ni[i + 1] -= z.re * im[i] + z.im * re[i];
    }
    re = nr;
    im = ni;
  }
  return re.map((c) => c * k + 0); // + 0 turns −0 into 0
}

/** Evaluates a polynomial (descending coefficients) at a complex point (Horner). */
export function polyEval(c: number[], s: Complex): Complex {
  let re = 0;
  let im = 0;
  for (const a of c) {
    const t = re * s.re - im * s.im + a;
    im = re * s.im + im * s.re;
    re = t;
  }
  return { re, im };
}

/** K·Π(s − z)/Π(s − p) of a transfer function at s. */
export function evaluateFactored(tf: Pick<TransferFunction, 'gain' | 'poles' | 'zeros'>, s: Complex): Complex {
  let re = tf.gain;
  let im = 0;
  const n = Math.max(tf.poles.length, tf.zeros.length);
  for (let i = 0; i < n; i++) {
    if (i < tf.zeros.length) {
      const z = tf.zeros[i];
      const ar = s.re - z.re;
      const ai = s.im - z.im;
      const t = re * ar - im * ai;
      im = re * ai + im * ar;
      re = t;
    }
    if (i < tf.poles.length) {
      const p = tf.poles[i];
      const ar = s.re - p.re;
      const ai = s.im - p.im;
      const d = ar * ar + ai * ai;
      const t = (re * ar + im * ai) / d;
      im = (im * ar - re * ai) / d;
      re = t;
    }
  }
  return { re, im };
}

/**
 * G(s) = C (sI − A)⁻¹ B + D at a complex point, by one complex LU solve: returns p×m real and imaginary
 * parts (row-major). Throws when s is an eigenvalue of A.
 */
export function evaluateTransfer(sys: Pick<LinearSystem, 'n' | 'm' | 'p' | 'A' | 'B' | 'C' | 'D'>, s: Complex): { re: Float64Array; im: Float64Array } {
  return evaluateTransferWithScale(sys, s).G;
}

/**
 * G(s) as {@link evaluateTransfer}, with the scale of every entry: |C_i|·|x_j| where x_j = (sI − A)⁻¹·b_j.
 * An entry far below its scale is a cancellation to rounding: no path from that input to that output.
 */
export function evaluateTransferWithScale(sys: Pick<LinearSystem, 'n' | 'm' | 'p' | 'A' | 'B' | 'C' | 'D'>, s: Complex): { G: { re: Float64Array; im: Float64Array }; scale: Float64Array } {
  const { n, m, p } = sys;
  const re = Float64Array.from(sys.D);
  const im = new Float64Array(p * m);
  const scale = new Float64Array(p * m);
  if (n === 0) return { G: { re, im }, scale };
  const are: DenseMatrix = { rows: n, cols: n, data: new Float64Array(n * n) };
  const aim: DenseMatrix = { rows: n, cols: n, data: new Float64Array(n * n) };
  for (let k = 0; k < n * n; k++) are.data[k] = -sys.A[k];
  for (let i = 0; i < n; i++) {
    are.data[i * n + i] += s.re;
    aim.data[i * n + i] = s.im;
  }
  const X = complexSolve(are, aim, { rows: n, cols: m, data: Float64Array.from(sys.B) }, { rows: n, cols: m, data: new Float64Array(n * m) });
  const xNorm = new Float64Array(m);
  for (let k = 0; k < n; k++) for (let j = 0; j < m; j++) xNorm[j] += X.re.data[k * m + j] ** 2 + X.im.data[k * m + j] ** 2;
  for (let i = 0; i < p; i++) {
    let cNorm = 0;
    for (let k = 0; k < n; k++) {
      const c = sys.C[i * n + k];
      if (c === 0) continue;
      cNorm += c * c;
      for (let j = 0; j < m; j++) {
        re[i * m + j] += c * X.re.data[k * m + j];
        im[i * m + j] += c * X.im.data[k * m + j];
      }
    }
    for (let j = 0; j < m; j++) scale[i * m + j] = Math.sqrt(cNorm * xNorm[j]);
  }
  return { G: { re, im }, scale };
}

/** Below this fraction of its scale |C_i|·|x_j| an entry of G(s) is rounding, not a path. */
const NO_PATH = 1e-12;

export function transferFunctions(sys: LinearSystem, bal: Balanced, rtol: number, rho: number, axisTol: number): TransferFunction[] {
  const { n, m, p } = sys;
  const out: TransferFunction[] = [];
  if (m === 0 || p === 0) return out;
  const tolA = rtol * Math.max(frob(bal.A), 1e-300);
  const pairs: { j: number; i: number; mp: MinimalPair; poles: Complex[]; zeros: Complex[]; rd: number }[] = [];
  const b = new Float64Array(n);
  const c = new Float64Array(n);
  let scaleSum = 0;
  let scaleCount = 0;
  for (let j = 0; j < m; j++) {
    for (let i = 0; i < p; i++) {
      for (let k = 0; k < n; k++) {
        b[k] = bal.B[k * m + j];
        c[k] = bal.C[i * n + k];
      }
      const mp = minimalPair(bal.A, b, c, sys.D[i * m + j] * bal.inScale[j] * bal.outScale[i], n, tolA);
      const snap = rootSnap * Math.max(rho, 1e-300);
      const poles = mp.r ? snapOriginCluster(snapRoots(eigList(mp.A, mp.r), snap), frob(mp.A), mp.r) : [];
      const z = mp.r ? pairZeros(mp, rtol) : { zeros: [], relativeDegree: 0, norm: 0, dim: 0 };
      z.zeros = snapOriginCluster(snapRoots(z.zeros, snap), z.norm, z.dim);
      for (const x of [...poles, ...z.zeros]) {
        const a = Math.hypot(x.re, x.im);
        if (a > axisTol && Number.isFinite(a)) {
          scaleSum += Math.log(a);
          scaleCount++;
        }
      }
      pairs.push({ j, i, mp, poles, zeros: z.zeros, rd: z.relativeDegree });
    }
  }
  // test points for the gains: at the typical frequency, away from every pole and zero
  const w0 = scaleCount ? Math.exp(scaleSum / scaleCount) : rho > 0 ? rho : 1;
  const all = pairs.flatMap((q) => [...q.poles, ...q.zeros]);
  const evals: { s: Complex; G: { re: Float64Array; im: Float64Array }; scale: Float64Array }[] = [];
  for (let t = 0; t < 16 && evals.length < 2; t++) {
    const ang = 0.93 + 0.41 * t;
    const rad = w0 * (1 + 0.17 * t);
    const s: Complex = { re: rad * Math.cos(ang), im: rad * Math.abs(Math.sin(ang)) + 1e-3 * rad };
    if (all.some((x) => Math.hypot(x.re - s.re, x.im - s.im) < 1e-3 * rad)) continue;
    try {
      const r = evaluateTransferWithScale(sys, s);
      evals.push({ s, G: r.G, scale: r.scale });
    } catch {
      // s is (numerically) an eigenvalue: try the next point
    }
  }
  for (const q of pairs) {
    const { i, j, mp } = q;
    const d = sys.D[i * m + j];
    const unit = perUnit(sys.outputUnits[i], sys.inputUnits[j]);
    const base = { input: sys.inputs[j], output: sys.outputs[i], inputIndex: j, outputIndex: i, unit };
    // no path from input j to output i (to rounding): every test point shows only cancellation
    const noPath = d === 0 && evals.length > 0 && evals.every((e) => Math.hypot(e.G.re[i * m + j], e.G.im[i * m + j]) <= NO_PATH * e.scale[i * m + j]);
    if (mp.r === 0 || noPath) {
      out.push({
        ...base, num: d === 0 ? [0] : [d], den: [1], poles: [], zeros: [], gain: d, order: 0, relativeDegree: d === 0 ? null : 0,
        cancelled: n, identicallyZero: d === 0, dcGain: d, checkError: 0,
      });
      continue;
    }
    let K = d;
    let checkError = NaN;
    if (evals.length) {
      const { s, G } = evals[0];
      const g = { re: G.re[i * m + j], im: G.im[i * m + j] };
      const f = evaluateFactored({ gain: 1, poles: q.poles, zeros: q.zeros }, s);
      K = (g.re * f.re + g.im * f.im) / (f.re * f.re + f.im * f.im); // real part of g/f (the imaginary part is round-off)
    }
    if (evals.length > 1) {
      const { s, G } = evals[1];
      const g = { re: G.re[i * m + j], im: G.im[i * m + j] };
      const f = evaluateFactored({ gain: K, poles: q.poles, zeros: q.zeros }, s);
      checkError = Math.hypot(g.re - f.re, g.im - f.im) / Math.max(Math.hypot(g.re, g.im), 1e-300);
    }
    const integrators = q.poles.filter((x) => Math.hypot(x.re, x.im) <= axisTol).length;
    let dc: number | null = null;
    if (!integrators) {
      const v = evaluateFactored({ gain: K, poles: q.poles, zeros: q.zeros }, { re: 0, im: 0 });
      dc = v.re;
    }
    out.push({
      ...base, num: polyFromRoots(q.zeros, K), den: polyFromRoots(q.poles), poles: q.poles, zeros: q.zeros, gain: K, order: mp.r,
      relativeDegree: q.poles.length - q.zeros.length, cancelled: n - mp.r, identicallyZero: false, dcGain: dc, checkError,
    });
  }
  return out;
}

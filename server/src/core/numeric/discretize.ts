/**
 * Discrete-time equivalents of a continuous linear model x' = A x + B u, y = C x + D u for a sample
 * time T (all matrices row-major).
 *
 * - Zero-order hold: one exponential of the block matrix [[A, B], [0, 0]]·T = [[Φ, Γ], [0, I]]
 *   (C. F. Van Loan, "Computing integrals involving the matrix exponential", IEEE Trans. Automatic
 *   Control 23(3), 1978); exact at the sample instants for an input held between them, valid for
 *   singular A (integrators).
 * - First-order hold (triangle hold, the input interpolated linearly between samples): one exponential
 *   of [[A·T, B·T, 0], [0, 0, I], [0, 0, 0]] = [[Φ, Γ₁, Γ₂], …]; then Ad = Φ, Bd = Γ₁ + (Φ − I)·Γ₂,
 *   Cd = C, Dd = D + C·Γ₂ (G. F. Franklin, J. D. Powell & M. L. Workman, Digital Control of Dynamic
 *   Systems, 3rd ed., 1998, section 6.3.2, written with one exponential as Van Loan does).
 * - Bilinear (Tustin) map s = (2/T)(z − 1)/(z + 1): Ad = (I − A·T/2)⁻¹(I + A·T/2), Bd = (I − A·T/2)⁻¹·B·T,
 *   Cd = C·(I − A·T/2)⁻¹, Dd = D + C·Bd/2 (the state-space form of the substitution).
 * - Zero-order hold with an input delay τ = f·T, 0 < f < 1 (Franklin, Powell & Workman, section 4.3.4):
 *   x[k+1] = Φ x[k] + Γ₁ u[k−1] + Γ₀ u[k] with Γ₀ = ∫₀^{T−τ} e^{Aη} dη·B and Γ₁ = e^{A(T−τ)}∫₀^{τ} e^{Aη} dη·B;
 *   the previous input becomes m extra states: [[Φ, Γ₁], [0, 0]], [[Γ₀], [I]], [C, 0], D.
 */
import { mulRowMajor } from './dense';
import { expm } from './expm';
import { luFactorInPlace, luSolveInPlace } from './flatlu';

export type HoldMethod = 'zoh' | 'foh' | 'tustin';

export interface StateSpace {
  n: number;
  m: number;
  p: number;
  A: Float64Array;
  B: Float64Array;
  C: Float64Array;
  D: Float64Array;
}

/** exp of [[A, B], [0, 0]]·t: returns Φ = e^{At} (n×n) and Γ = ∫₀^t e^{Aη}dη·B (n×m). */
function holdIntegrals(a: Float64Array, b: Float64Array, n: number, m: number, t: number): { phi: Float64Array; gamma: Float64Array } {
  const k = n + m;
  const big = new Float64Array(k * k);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) big[i * k + j] = a[i * n + j] * t;
    for (let j = 0; j < m; j++) big[i * k + n + j] = b[i * m + j] * t;
  }
  const e = expm(big, k);
  const phi = new Float64Array(n * n);
  const gamma = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) phi[i * n + j] = e[i * k + j];
    for (let j = 0; j < m; j++) gamma[i * m + j] = e[i * k + n + j];
  }
  return { phi, gamma };
}


/** Zero-order hold. */
export function zeroOrderHold(sys: StateSpace, t: number): StateSpace {
  const { phi, gamma } = holdIntegrals(sys.A, sys.B, sys.n, sys.m, t);
  return { n: sys.n, m: sys.m, p: sys.p, A: phi, B: gamma, C: sys.C.slice(), D: sys.D.slice() };
}

/** First-order (triangle) hold. */
export function firstOrderHold(sys: StateSpace, t: number): StateSpace {
  const { n, m, p } = sys;
  const k = n + 2 * m;
  const big = new Float64Array(k * k);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) big[i * k + j] = sys.A[i * n + j] * t;
    for (let j = 0; j < m; j++) big[i * k + n + j] = sys.B[i * m + j] * t;
  }
  for (let j = 0; j < m; j++) big[(n + j) * k + n + m + j] = 1;
  const e = expm(big, k);
  const phi = new Float64Array(n * n);
  const g1 = new Float64Array(n * m);
  const g2 = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) phi[i * n + j] = e[i * k + j];
    for (let j = 0; j < m; j++) {
      g1[i * m + j] = e[i * k + n + j];
      g2[i * m + j] = e[i * k + n + m + j];
    }
  }
  const bd = mulRowMajor(phi, g2, n, n, m);
  for (let q = 0; q < n * m; q++) bd[q] += g1[q] - g2[q];
  const cg = mulRowMajor(sys.C, g2, p, n, m);
  const dd = sys.D.slice();
  for (let q = 0; q < p * m; q++) dd[q] += cg[q];
  return { n, m, p, A: phi, B: bd, C: sys.C.slice(), D: dd };
}

/** Bilinear (Tustin) map. Returns undefined when I − A·T/2 is singular (an eigenvalue at 2/T). */
export function tustin(sys: StateSpace, t: number): StateSpace | undefined {
  const { n, m, p } = sys;
  const lu = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) lu[i * n + j] = (i === j ? 1 : 0) - (sys.A[i * n + j] * t) / 2;
  const piv = new Int32Array(n);
  if (!luFactorInPlace(lu, n, piv)) return undefined;
  const solveCols = (rhs: Float64Array, cols: number): Float64Array => {
    const out = new Float64Array(n * cols);
    const col = new Float64Array(n);
    for (let j = 0; j < cols; j++) {
      for (let i = 0; i < n; i++) col[i] = rhs[i * cols + j];
      luSolveInPlace(lu, n, piv, col);
      for (let i = 0; i < n; i++) out[i * cols + j] = col[i];
    }
    return out;
  };
  const ipa = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) ipa[i * n + j] = (i === j ? 1 : 0) + (sys.A[i * n + j] * t) / 2;
  const ad = solveCols(ipa, n);
  const bt = sys.B.map((v) => v * t);
  const bd = solveCols(bt, m);
  // Cd = C·M⁻¹ with M = I − A·T/2: Cd = C + C·M⁻¹·A·T/2 = C·(I + M⁻¹·A·T/2) since M⁻¹ = I + M⁻¹·A·T/2.
  const at2 = sys.A.map((v) => (v * t) / 2);
  const minvAt2 = solveCols(at2, n);
  for (let i = 0; i < n; i++) minvAt2[i * n + i] += 1;
  const cd = mulRowMajor(sys.C, minvAt2, p, n, n);
  const cbd = mulRowMajor(sys.C, bd, p, n, m);
  const dd = sys.D.slice();
  for (let q = 0; q < p * m; q++) dd[q] += cbd[q] / 2;
  return { n, m, p, A: ad, B: bd, C: cd, D: dd };
}

/**
 * Zero-order hold with the input delayed by f·T (0 ≤ f < 1). For f = 0 this is {@link zeroOrderHold};
 * otherwise the state gains the m previous inputs (after the n states of the model).
 */
export function zeroOrderHoldDelayed(sys: StateSpace, t: number, f: number): StateSpace {
  if (!(f >= 0 && f < 1)) throw new RangeError(`input delay must be a fraction of a sample in [0, 1), got ${f}`);
  if (f === 0) return zeroOrderHold(sys, t);
  const { n, m, p } = sys;
  const tau = f * t;
  const early = holdIntegrals(sys.A, sys.B, n, m, t - tau); // e^{A(T−τ)}, Γ₀
  const late = holdIntegrals(sys.A, sys.B, n, m, tau); // ∫₀^τ e^{Aη}dη·B
  const g1 = mulRowMajor(early.phi, late.gamma, n, n, m);
  const phi = mulRowMajor(early.phi, late.phi, n, n, n);
  const k = n + m;
  const A = new Float64Array(k * k);
  const B = new Float64Array(k * m);
  const C = new Float64Array(p * k);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) A[i * k + j] = phi[i * n + j];
    for (let j = 0; j < m; j++) {
      A[i * k + n + j] = g1[i * m + j];
      B[i * m + j] = early.gamma[i * m + j];
    }
  }
  for (let j = 0; j < m; j++) B[(n + j) * m + j] = 1;
  for (let i = 0; i < p; i++) for (let j = 0; j < n; j++) C[i * k + j] = sys.C[i * n + j];
  return { n: k, m, p, A, B, C, D: sys.D.slice() };
}

/** The discrete model for a hold method, sample time t and input-delay fraction f (zoh only). */
export function discretize(sys: StateSpace, t: number, method: HoldMethod, delayFraction = 0): StateSpace | undefined {
  if (!(t > 0) || !Number.isFinite(t)) throw new RangeError(`sample time must be positive, got ${t}`);
  if (delayFraction !== 0 && method !== 'zoh') throw new RangeError('an input delay is supported with the zero-order hold only');
  if (method === 'zoh') return zeroOrderHoldDelayed(sys, t, delayFraction);
  if (method === 'foh') return firstOrderHold(sys, t);
  return tustin(sys, t);
}

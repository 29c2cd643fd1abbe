/**
 * Time integration of x' = f(t, x) for step responses of (nonlinear) process
 * models.
 *
 *  - integrateStiff: Rodas4, the 6-stage, order 4(3), L-stable and stiffly
 *    accurate Rosenbrock method with its embedded error estimate and order-3
 *    continuous output (coefficients as published by Hairer & Wanner,
 *    "Solving Ordinary Differential Equations II", 2nd ed., Springer 1996,
 *    Sect. IV.7, method "RODAS", used in the transformed form that avoids
 *    matrix–vector products with the Jacobian). Step control: the usual
 *    err^(1/4) controller with Gustafsson's predictive variant (ibid., IV.8).
 *  - integrateNonstiff: Dormand–Prince 5(4) with the order-4 continuous
 *    extension of Shampine / Hairer (Hairer, Nørsett & Wanner, "Solving ODEs I",
 *    Sect. II.5 and II.6) and a PI step size controller (ibid., II.4).
 *
 * Both integrators treat `f` (or `jac`) returning false — or producing values
 * that are not finite — as "the state is outside the model's domain": the step
 * is rejected and retried with a much smaller step. When no step of positive
 * representable length can proceed, the integration ends with status
 * 'domain' and a message; these functions never throw for model failures.
 * They throw RangeError only for malformed options (wrong lengths, unordered
 * output times, ...).
 */

import { stiffMatrix, type SparseJacobian, type StiffMatrix } from './stiffMatrix';

export { stiffMatrix, type SparseJacobian, type StiffMatrix } from './stiffMatrix';

export interface OdeProblem {
  n: number;
  /** Writes dx = f(t, x). Returns false when x is outside the model's domain. */
  f(t: number, x: Float64Array, dx: Float64Array): boolean;
  /** Dense row-major n×n ∂f/∂x. If absent, finite differences are used. */
  jac?(t: number, x: Float64Array, J: Float64Array): boolean;
  /**
   * ∂f/∂x as a sparse pattern and its values (used in place of `jac` by the stiff integrator; when J is
   * sparse enough the iteration matrix is factorised sparse, its pivot order kept from step to step).
   */
  sparseJac?: SparseJacobian;
  /**
   * The iteration matrix's storage from `stiffMatrix(n, sparseJac)`, kept by the caller to integrate the
   * same problem again without choosing a pivot order afresh (made here when absent).
   */
  matrix?: StiffMatrix;
  /** f does not depend on t: ∂f/∂t is zero and is not estimated (saves one evaluation of f per Jacobian). */
  autonomous?: boolean;
}

export interface OdeOptions {
  t0: number;
  t1: number;
  x0: Float64Array;
  /** Relative tolerance (default 1e-6). */
  rtol?: number;
  /** Absolute tolerance, scalar or per state (default 1e-9). */
  atol?: number | Float64Array;
  /** Maximum number of step attempts, accepted plus rejected (default 100000). */
  maxSteps?: number;
  /** First step size to try (default: estimated from f(t0, x0)). */
  initialStep?: number;
  /** Nondecreasing times in [t0, t1]; when given, the solution is reported at exactly these times. */
  outputTimes?: Float64Array;
}

export interface OdeStats {
  steps: number;
  rejected: number;
  fEvals: number;
  jEvals: number;
  luDecomps: number;
}

export interface OdeSolution {
  status: 'ok' | 'domain' | 'maxSteps' | 'stepTooSmall';
  message?: string;
  /** Accepted step times (t0 first), or the output times reached. */
  t: Float64Array;
  /** State at each time in `t`. */
  x: Float64Array[];
  stats: OdeStats;
}

type Status = OdeSolution['status'];

const EPS = Number.EPSILON;
const SQRT_EPS = Math.sqrt(EPS);
const DEFAULT_RTOL = 1e-6;
const DEFAULT_ATOL = 1e-9;
const DEFAULT_MAX_STEPS = 100000;
/** Factor applied to the step after a domain failure. */
const DOMAIN_SHRINK = 0.25;

// ---------------------------------------------------------------------------
// shared plumbing
// ---------------------------------------------------------------------------

interface Setup {
  n: number;
  t0: number;
  t1: number;
  span: number;
  rtol: number;
  atol: Float64Array;
  maxSteps: number;
  outputTimes?: Float64Array;
}

function setup(p: OdeProblem, o: OdeOptions): Setup {
  const n = p.n;
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`ODE problem size must be a positive integer, got ${n}`);
  if (o.x0.length !== n) throw new RangeError(`initial state has length ${o.x0.length}, expected ${n}`);
  if (!Number.isFinite(o.t0) || !Number.isFinite(o.t1)) throw new RangeError('t0 and t1 must be finite');
  if (o.t1 < o.t0) throw new RangeError(`end time ${o.t1} is before start time ${o.t0}`);
  const rtol = o.rtol ?? DEFAULT_RTOL;
  if (!(rtol >= 0) || !Number.isFinite(rtol)) throw new RangeError(`rtol must be a finite non-negative number, got ${rtol}`);
  const atol = new Float64Array(n);
  const a = o.atol ?? DEFAULT_ATOL;
  if (typeof a === 'number') {
    atol.fill(a);
  } else {
    if (a.length !== n) throw new RangeError(`atol has length ${a.length}, expected ${n}`);
    atol.set(a);
  }
  for (let i = 0; i < n; i++) {
    if (!(atol[i] >= 0) || !Number.isFinite(atol[i])) throw new RangeError(`atol[${i}] must be finite and non-negative`);
    if (rtol === 0 && atol[i] === 0) throw new RangeError(`rtol and atol[${i}] are both zero`);
  }
  const maxSteps = o.maxSteps ?? DEFAULT_MAX_STEPS;
  if (!(maxSteps >= 1)) throw new RangeError(`maxSteps must be at least 1, got ${maxSteps}`);
  if (o.initialStep !== undefined && !(o.initialStep > 0 && Number.isFinite(o.initialStep))) {
    throw new RangeError(`initialStep must be positive, got ${o.initialStep}`);
  }
  const ot = o.outputTimes;
  if (ot) {
    for (let k = 0; k < ot.length; k++) {
      const tk = ot[k];
      if (!Number.isFinite(tk) || tk < o.t0 || tk > o.t1) {
        throw new RangeError(`output time ${tk} is outside [${o.t0}, ${o.t1}]`);
      }
      if (k > 0 && tk < ot[k - 1]) throw new RangeError('output times must be nondecreasing');
    }
  }
  return { n, t0: o.t0, t1: o.t1, span: o.t1 - o.t0, rtol, atol, maxSteps, outputTimes: ot };
}

function fmt(v: number): string {
  return String(Number(v.toPrecision(6)));
}

function allFinite(v: Float64Array, len: number): boolean {
  for (let i = 0; i < len; i++) if (!Number.isFinite(v[i])) return false;
  return true;
}

/** The continuous output of the last step: the state at the fraction s ∈ [0, 1] of it. */
interface Interpolant {
  at(s: number, out: Float64Array): void;
}

/** Collects either every accepted step or the requested output times. */
class Recorder {
  private readonly ts: number[] = [];
  private readonly xs: Float64Array[] = [];
  private k = 0;

  constructor(
    private readonly n: number,
    private readonly times: Float64Array | undefined,
    t0: number,
    x0: Float64Array,
  ) {
    if (times) {
      while (this.k < times.length && times[this.k] <= t0) {
        this.ts.push(times[this.k]);
        this.xs.push(Float64Array.from(x0));
        this.k++;
      }
    } else {
      this.ts.push(t0);
      this.xs.push(Float64Array.from(x0));
    }
  }

  /** Record the step [tOld, tOld + h] that ended at tNew with state yNew. */
  accept(tOld: number, h: number, tNew: number, yNew: Float64Array, interp: Interpolant): void {
    const times = this.times;
    if (!times) {
      this.ts.push(tNew);
      this.xs.push(Float64Array.from(yNew));
      return;
    }
    while (this.k < times.length && times[this.k] <= tNew) {
      const tk = times[this.k];
      let xk: Float64Array;
      if (tk === tNew) {
        xk = Float64Array.from(yNew);
      } else {
        xk = new Float64Array(this.n);
        interp.at((tk - tOld) / h, xk);
      }
      this.ts.push(tk);
      this.xs.push(xk);
      this.k++;
    }
  }

  result(): { t: Float64Array; x: Float64Array[] } {
    return { t: Float64Array.from(this.ts), x: this.xs };
  }
}

/** Weighted RMS norm of err with weights atol + rtol·max(|y0|, |y1|). */
function errorNorm(
  err: Float64Array,
  y0: Float64Array,
  y1: Float64Array,
  rtol: number,
  atol: Float64Array,
  n: number,
): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const sk = atol[i] + rtol * Math.max(Math.abs(y0[i]), Math.abs(y1[i]));
    const r = err[i] / sk;
    s += r * r;
  }
  return Math.sqrt(s / n);
}

/** Step too small to make progress in floating point (or to be meaningful). */
function tooSmall(h: number, t: number, span: number): boolean {
  return !(h > 10 * EPS * Math.max(Math.abs(t), 1e-6 * span));
}

/** Initial step guess from the scaled sizes of x0 and f(t0, x0) (Hairer–Nørsett–Wanner I, II.4). */
function firstGuess(
  y0: Float64Array,
  f0: Float64Array,
  rtol: number,
  atol: Float64Array,
  n: number,
): { h: number; dny: number; dnf: number } {
  let dnf = 0;
  let dny = 0;
  for (let i = 0; i < n; i++) {
    const sk = atol[i] + rtol * Math.abs(y0[i]);
    dnf += (f0[i] / sk) ** 2;
    dny += (y0[i] / sk) ** 2;
  }
  const h = dnf <= 1e-10 || dny <= 1e-10 ? 1e-6 : Math.sqrt(dny / dnf) * 0.01;
  return { h, dny, dnf };
}

function makeStats(): OdeStats {
  return { steps: 0, rejected: 0, fEvals: 0, jEvals: 0, luDecomps: 0 };
}

/** One run of either integrator: the checked set-up, the statistics, the recorder and the counted right-hand side. */
/**
 * One run (a class, so that its methods are the same functions in every run: the engine's optimised
 * integrators are not thrown away when the next run brings new closures).
 */
class Run {
  readonly s: Setup;
  readonly stats: OdeStats;
  readonly rec: Recorder;

  constructor(private readonly p: OdeProblem, o: OdeOptions) {
    this.s = setup(p, o);
    this.stats = makeStats();
    this.rec = new Recorder(this.s.n, this.s.outputTimes, this.s.t0, o.x0);
  }

  /** f(tt, xx) into out; false when xx or the result is not finite or the model refuses the state. */
  F(tt: number, xx: Float64Array, out: Float64Array): boolean {
    const n = this.s.n;
    this.stats.fEvals++;
    if (!allFinite(xx, n)) return false;
    return this.p.f(tt, xx, out) === true && allFinite(out, n);
  }

  /** The solution recorded so far, with this status. */
  finish(status: Status, message?: string): OdeSolution {
    const r = this.rec.result();
    return { status, message, t: r.t, x: r.x, stats: this.stats };
  }
}

function startRun(p: OdeProblem, o: OdeOptions): Run {
  return new Run(p, o);
}

/**
 * Before the first step: f(t0, x0) into f0. Returns the finished solution when x0 is outside the domain
 * or the span is empty, else undefined.
 */
function firstCall(run: Run, y: Float64Array, f0: Float64Array): OdeSolution | undefined {
  const t = run.s.t0;
  if (!run.F(t, y, f0)) {
    return run.finish('domain', `the initial state is outside the model's domain (t = ${fmt(t)})`);
  }
  if (run.s.span === 0) return run.finish('ok');
  return undefined;
}

/**
 * Before each step attempt: stops on the step budget, and on a step too small to make progress (reported
 * as leaving the domain when the last rejection was a domain failure). `hint` ends the other messages.
 */
function stepLimit(run: Run, t: number, h: number, lastWasDomain: boolean, hint: string): OdeSolution | undefined {
  const { s, stats } = run;
  if (stats.steps + stats.rejected >= s.maxSteps) {
    return run.finish('maxSteps', `stopped after ${s.maxSteps} step attempts at t = ${fmt(t)} (t1 = ${fmt(s.t1)})${hint}`);
  }
  if (tooSmall(h, t, s.span)) {
    if (lastWasDomain) return run.finish('domain', `the state left the model's domain at t = ${fmt(t)}`);
    return run.finish('stepTooSmall', `the step size fell to ${h.toExponential(2)} at t = ${fmt(t)}${hint}`);
  }
  return undefined;
}

/** The step after an accepted step h: hnew, but no longer than the span, nor than h right after a rejection. */
function nextStep(hnew: number, h: number, span: number, afterReject: boolean): number {
  const hs = Math.min(hnew, span);
  return afterReject ? Math.min(hs, h) : hs;
}

// ---------------------------------------------------------------------------
// Rodas4 (Hairer & Wanner II, Sect. IV.7; coefficient set 1 of their code)
// ---------------------------------------------------------------------------

const R_C2 = 0.386;
const R_C3 = 0.21;
const R_C4 = 0.63;
const R_D1 = 0.25;
const R_D2 = -0.1043;
const R_D3 = 0.1035;
const R_D4 = -0.03620000000000023;
const R_A21 = 1.544;
const R_A31 = 0.9466785280815826;
const R_A32 = 0.2557011698983284;
const R_A41 = 3.314825187068521;
const R_A42 = 2.896124015972201;
const R_A43 = 0.9986419139977817;
const R_A51 = 1.221224509226641;
const R_A52 = 6.019134481288629;
const R_A53 = 12.53708332932087;
const R_A54 = -0.687886036105895;
const R_C21 = -5.6688;
const R_C31 = -2.430093356833875;
const R_C32 = -0.2063599157091915;
const R_C41 = -0.1073529058151375;
const R_C42 = -9.594562251023355;
const R_C43 = -20.47028614809616;
const R_C51 = 7.496443313967647;
const R_C52 = -10.24680431464352;
const R_C53 = -33.99990352819905;
const R_C54 = 11.7089089320616;
const R_C61 = 8.083246795921522;
const R_C62 = -7.981132988064893;
const R_C63 = -31.52159432874371;
const R_C64 = 16.31930543123136;
const R_C65 = -6.058818238834054;
const R_GAMMA = 0.25;
// continuous output
const R_D21 = 10.12623508344586;
const R_D22 = -7.487995877610167;
const R_D23 = -34.80091861555747;
const R_D24 = -7.992771707568823;
const R_D25 = 1.025137723295662;
const R_D31 = -0.6762803392801253;
const R_D32 = 6.087714651680015;
const R_D33 = 16.43084320892478;
const R_D34 = 24.76722511418386;
const R_D35 = -6.594389125716872;

// step size controller limits: 0.2 <= hnew/h <= 6, safety 0.9
const R_FAC_MIN = 0.2;
const R_FAC_MAX = 6;
const R_SAFE = 0.9;

/**
 * A Rosenbrock method in the transformed form of Hairer & Wanner (II, Sect. IV.7, (7.25)), which needs no
 * product with the Jacobian: stage i solves E·k_i = f(t + α_i h, y + Σ_j a_ij k_j) + Σ_j (c_ij/h) k_j
 * + h d_i f_t with E = I/(hγ) − J; the solution is y + Σ_j m_j k_j, the error estimate k of stage `err`.
 */
interface Rosenbrock {
  stages: number;
  gamma: number;
  /** Rows of a and c below the diagonal (row i has i entries). */
  a: readonly (readonly number[])[];
  c: readonly (readonly number[])[];
  alpha: readonly number[];
  d: readonly number[];
  m: readonly number[];
  err: number;
}

/** Rodas4: stage 6 starts from stage 5's point plus k5, the solution is stage 6's point plus k6 (stiffly accurate), k6 the error. */
const RODAS4: Rosenbrock = {
  stages: 6,
  gamma: R_GAMMA,
  a: [[], [R_A21], [R_A31, R_A32], [R_A41, R_A42, R_A43], [R_A51, R_A52, R_A53, R_A54], [R_A51, R_A52, R_A53, R_A54, 1]],
  c: [[], [R_C21], [R_C31, R_C32], [R_C41, R_C42, R_C43], [R_C51, R_C52, R_C53, R_C54], [R_C61, R_C62, R_C63, R_C64, R_C65]],
  alpha: [0, R_C2, R_C3, R_C4, 1, 1],
  d: [R_D1, R_D2, R_D3, R_D4, 0, 0],
  m: [R_A51, R_A52, R_A53, R_A54, 1, 1],
  err: 5,
};

/**
 * out = y + Σ_j a[j]·K[j], summed left to right (zero coefficients skipped). Small kernels like this one
 * keep the step function itself small, so the engine optimises it quickly.
 */
function combine(out: Float64Array, y: Float64Array, K: Float64Array[], a: readonly number[], n: number): void {
  for (let i = 0; i < n; i++) out[i] = y[i];
  for (let j = 0; j < a.length; j++) {
    const c = a[j];
    if (c === 0) continue;
    const kj = K[j];
    for (let i = 0; i < n; i++) out[i] += c * kj[i];
  }
}

/** k = f + hd·f_t + Σ_j (c[j]/h)·K[j], summed left to right. */
function stageRhs(k: Float64Array, f: Float64Array, ft: Float64Array, hd: number, K: Float64Array[], c: readonly number[], h: number, n: number): void {
  if (hd !== 0) for (let i = 0; i < n; i++) k[i] = f[i] + hd * ft[i];
  else for (let i = 0; i < n; i++) k[i] = f[i];
  for (let j = 0; j < c.length; j++) {
    if (c[j] === 0) continue;
    const hc = c[j] / h;
    const kj = K[j];
    for (let i = 0; i < n; i++) k[i] += hc * kj[i];
  }
}

/** Rodas4's order-3 continuous output at s ∈ [0, 1] of the step from y to ynew (read before y moves on). */
class RodasDense implements Interpolant {
  constructor(private readonly y: Float64Array, private readonly ynew: Float64Array, private readonly K: Float64Array[], private readonly n: number) {}

  at(sv: number, out: Float64Array): void {
    const { y, ynew, K, n } = this;
    const k1 = K[0], k2 = K[1], k3 = K[2], k4 = K[3], k5 = K[4];
    const s1 = 1 - sv;
    for (let i = 0; i < n; i++) {
      const c2 = R_D21 * k1[i] + R_D22 * k2[i] + R_D23 * k3[i] + R_D24 * k4[i] + R_D25 * k5[i];
      const c3 = R_D31 * k1[i] + R_D32 * k2[i] + R_D33 * k3[i] + R_D34 * k4[i] + R_D35 * k5[i];
      out[i] = y[i] * s1 + sv * (ynew[i] + s1 * (c2 + sv * c3));
    }
  }
}

/**
 * The Jacobian (and ∂f/∂t) at (t, y) for the stiff integrator: from `p.sparseJac`, `p.jac`, or forward
 * differences (f(t, y) in dy1); ∂f/∂t zero for an autonomous problem, else one forward difference in t.
 */
function evalJacobian(p: OdeProblem, run: Run, W: StiffMatrix, t: number, y: Float64Array, dy1: Float64Array, h: number, fx: Float64Array, tmp: Float64Array): boolean {
  const { n, rtol, atol } = run.s;
  const J = W.J;
  run.stats.jEvals++;
  if (p.sparseJac) {
    if (!W.evaluate(t, y) || !allFinite(J, J.length)) return false;
  } else if (p.jac) {
    if (p.jac(t, y, J) !== true || !allFinite(J, n * n)) return false;
  } else {
    // difference-quotient increments as in the CVODE documentation
    // (Hindmarsh et al., "SUNDIALS", ACM TOMS 31(3), 2005):
    // δ_j = max(√ε·|y_j|, minInc·w_j), w_j = rtol·|y_j| + atol_j,
    // minInc = 1000·|h|·ε·n·‖f‖ (weighted RMS), so that small states are
    // perturbed on their own scale rather than on a fixed absolute one.
    let fnorm = 0;
    for (let i = 0; i < n; i++) {
      const r = dy1[i] / (rtol * Math.abs(y[i]) + atol[i]);
      fnorm += r * r;
    }
    fnorm = Math.sqrt(fnorm / n);
    const minInc = fnorm > 0 ? 1000 * Math.abs(h) * EPS * n * fnorm : 1;
    for (let j = 0; j < n; j++) {
      const ysafe = y[j];
      let delt = Math.max(SQRT_EPS * Math.abs(ysafe), minInc * (rtol * Math.abs(ysafe) + atol[j]));
      y[j] = ysafe + delt;
      delt = y[j] - ysafe;
      let ok = run.F(t, y, tmp);
      if (!ok) {
        // the forward perturbation left the domain: try the other side
        y[j] = ysafe - delt;
        delt = y[j] - ysafe;
        ok = run.F(t, y, tmp);
      }
      y[j] = ysafe;
      if (!ok) return false;
      for (let i = 0; i < n; i++) J[i * n + j] = (tmp[i] - dy1[i]) / delt;
    }
  }
  if (p.autonomous) {
    fx.fill(0);
    return true;
  }
  let delt = Math.sqrt(EPS * Math.max(1e-5, Math.abs(t)));
  let tt = t + delt;
  delt = tt - t;
  let ok = run.F(tt, y, tmp);
  if (!ok) {
    tt = t - delt;
    delt = tt - t;
    ok = run.F(tt, y, tmp);
  }
  if (!ok) return false;
  for (let i = 0; i < n; i++) fx[i] = (tmp[i] - dy1[i]) / delt;
  return true;
}

/**
 * Stiff integration with Rodas4. Suitable for models whose time constants
 * span many decades. Uses `p.sparseJac` or `p.jac` when present, otherwise a
 * forward difference Jacobian (n extra f evaluations per step). ∂f/∂t is
 * formed by one forward difference in t unless the problem is autonomous.
 */
export function integrateStiff(p: OdeProblem, o: OdeOptions): OdeSolution {
  const run = startRun(p, o);
  const { s, stats, rec } = run;
  const { n, t1, span, rtol, atol } = s;
  const M = RODAS4;

  const y = Float64Array.from(o.x0);
  const dy1 = new Float64Array(n); // f(t, y) at the start of the step
  const dy = new Float64Array(n);
  const fx = new Float64Array(n); // ∂f/∂t
  const W = p.matrix ?? stiffMatrix(n, p.sparseJac);
  const K = Array.from({ length: M.stages }, () => new Float64Array(n));
  const ynew = new Float64Array(n);
  const dynew = new Float64Array(n);
  const tmp = new Float64Array(n);
  const interp = new RodasDense(y, ynew, K, n);

  let t = s.t0;
  const early = firstCall(run, y, dy1);
  if (early) return early;

  let h = o.initialStep ?? firstGuess(y, dy1, rtol, atol, n).h;
  h = Math.min(h, span);
  let reject = false;
  let lastWasDomain = false;
  let needJac = true;
  let nsing = 0;
  let hacc = 0;
  let erracc = 0;
  let haveAcc = false;

  for (;;) {
    const stop = stepLimit(run, t, h, lastWasDomain, '');
    if (stop) return stop;
    let last = false;
    if (t + 1.0001 * h >= t1) {
      h = t1 - t;
      last = true;
    }

    if (needJac) {
      if (!evalJacobian(p, run, W, t, y, dy1, h, fx, tmp)) return run.finish('domain', `the state left the model's domain at t = ${fmt(t)}`);
      needJac = false;
    }

    // iteration matrix E = I/(h·γ) − J
    if (!W.factor(1 / (h * M.gamma))) {
      nsing++;
      if (nsing >= 5) {
        return run.finish('stepTooSmall', `the iteration matrix is repeatedly singular at t = ${fmt(t)}`);
      }
      h *= 0.5;
      reject = true;
      continue;
    }
    stats.luDecomps++;

    let stagesOk = true;
    for (let st = 0; st < M.stages && stagesOk; st++) {
      if (st > 0) {
        combine(ynew, y, K, M.a[st], n);
        if (!run.F(t + M.alpha[st] * h, ynew, dy)) {
          stagesOk = false;
          break;
        }
      }
      const k = K[st];
      stageRhs(k, st > 0 ? dy : dy1, fx, h * M.d[st], K, M.c[st], h, n);
      W.solve(k);
    }
    if (!stagesOk) {
      stats.rejected++;
      lastWasDomain = true;
      reject = true;
      h *= DOMAIN_SHRINK;
      continue;
    }
    combine(ynew, y, K, M.m, n);

    const err = errorNorm(K[M.err], y, ynew, rtol, atol, n);
    if (!Number.isFinite(err)) {
      stats.rejected++;
      lastWasDomain = false;
      reject = true;
      h *= DOMAIN_SHRINK;
      continue;
    }
    let facc = Math.max(1 / R_FAC_MAX, Math.min(1 / R_FAC_MIN, Math.pow(err, 0.25) / R_SAFE));
    let hnew = h / facc;

    const tNew = last ? t1 : t + h;
    if (err <= 1 && !run.F(tNew, ynew, dynew)) {
      // the new state itself is outside the domain
      stats.rejected++;
      lastWasDomain = true;
      reject = true;
      h *= DOMAIN_SHRINK;
      continue;
    }

    if (err <= 1) {
      stats.steps++;
      if (haveAcc) {
        // predictive controller of Gustafsson
        let facgus = ((hacc / h) * Math.pow((err * err) / erracc, 0.25)) / R_SAFE;
        facgus = Math.max(1 / R_FAC_MAX, Math.min(1 / R_FAC_MIN, facgus));
        facc = Math.max(facc, facgus);
        hnew = h / facc;
      }
      haveAcc = true;
      hacc = h;
      erracc = Math.max(1e-2, err);

      rec.accept(t, h, tNew, ynew, interp);
      y.set(ynew);
      dy1.set(dynew);
      t = tNew;
      needJac = true;
      nsing = 0;
      lastWasDomain = false;
      if (last) return run.finish('ok');
      h = nextStep(hnew, h, span, reject);
      reject = false;
    } else {
      stats.rejected++;
      lastWasDomain = false;
      reject = true;
      h = hnew;
    }
  }
}

// ---------------------------------------------------------------------------
// Dormand–Prince 5(4) (Hairer, Nørsett & Wanner I, Table II.5.2; dense output II.6)
// ---------------------------------------------------------------------------

const DP_C2 = 1 / 5;
const DP_C3 = 3 / 10;
const DP_C4 = 4 / 5;
const DP_C5 = 8 / 9;
const DP_A21 = 1 / 5;
const DP_A31 = 3 / 40;
const DP_A32 = 9 / 40;
const DP_A41 = 44 / 45;
const DP_A42 = -56 / 15;
const DP_A43 = 32 / 9;
const DP_A51 = 19372 / 6561;
const DP_A52 = -25360 / 2187;
const DP_A53 = 64448 / 6561;
const DP_A54 = -212 / 729;
const DP_A61 = 9017 / 3168;
const DP_A62 = -355 / 33;
const DP_A63 = 46732 / 5247;
const DP_A64 = 49 / 176;
const DP_A65 = -5103 / 18656;
const DP_A71 = 35 / 384;
const DP_A73 = 500 / 1113;
const DP_A74 = 125 / 192;
const DP_A75 = -2187 / 6784;
const DP_A76 = 11 / 84;
const DP_E1 = 71 / 57600;
const DP_E3 = -71 / 16695;
const DP_E4 = 71 / 1920;
const DP_E5 = -17253 / 339200;
const DP_E6 = 22 / 525;
const DP_E7 = -1 / 40;
const DP_D1 = -12715105075 / 11282082432;
const DP_D3 = 87487479700 / 32700410799;
const DP_D4 = -10690763975 / 1880347072;
const DP_D5 = 701980252875 / 199316789632;
const DP_D6 = -1453857185 / 822651844;
const DP_D7 = 69997945 / 29380423;

const DP_BETA = 0.04;
const DP_EXPO1 = 0.2 - DP_BETA * 0.75;
const DP_SAFE = 0.9;
const DP_FAC_MIN = 0.2; // hnew/h >= 0.2
const DP_FAC_MAX = 10; // hnew/h <= 10

/** Explicit integration with Dormand–Prince 5(4); for non-stiff models. */
export function integrateNonstiff(p: OdeProblem, o: OdeOptions): OdeSolution {
  const run = startRun(p, o);
  const { s, stats, rec } = run;
  const { n, t1, span, rtol, atol } = s;

  const y = Float64Array.from(o.x0);
  const k1 = new Float64Array(n);
  const k2 = new Float64Array(n);
  const k3 = new Float64Array(n);
  const k4 = new Float64Array(n);
  const k5 = new Float64Array(n);
  const k6 = new Float64Array(n);
  const k7 = new Float64Array(n);
  const y1 = new Float64Array(n);
  const ystage = new Float64Array(n);
  const errv = new Float64Array(n);

  let t = s.t0;
  const early = firstCall(run, y, k1);
  if (early) return early;

  let h: number;
  if (o.initialStep !== undefined) {
    h = o.initialStep;
  } else {
    // Hairer's starting step: explicit Euler probe for the second derivative
    const g = firstGuess(y, k1, rtol, atol, n);
    let h0 = Math.min(g.h, span);
    for (let i = 0; i < n; i++) ystage[i] = y[i] + h0 * k1[i];
    if (run.F(t + h0, ystage, k2)) {
      let der2 = 0;
      for (let i = 0; i < n; i++) {
        const sk = atol[i] + rtol * Math.abs(y[i]);
        der2 += ((k2[i] - k1[i]) / sk) ** 2;
      }
      der2 = Math.sqrt(der2) / h0;
      const der12 = Math.max(Math.abs(der2), Math.sqrt(g.dnf));
      const h1 = der12 <= 1e-15 ? Math.max(1e-6, h0 * 1e-3) : Math.pow(0.01 / der12, 1 / 5);
      h0 = Math.min(100 * h0, h1);
    }
    h = h0;
  }
  h = Math.min(h, span);

  let reject = false;
  let lastWasDomain = false;
  let facold = 1e-4;

  for (;;) {
    const stop = stepLimit(run, t, h, lastWasDomain, '; the model may be stiff (use the stiff integrator)');
    if (stop) return stop;
    let last = false;
    if (t + 1.0001 * h >= t1) {
      h = t1 - t;
      last = true;
    }
    const tNew = last ? t1 : t + h;

    let ok = true;
    for (let i = 0; i < n; i++) ystage[i] = y[i] + h * DP_A21 * k1[i];
    ok = run.F(t + DP_C2 * h, ystage, k2);
    if (ok) {
      for (let i = 0; i < n; i++) ystage[i] = y[i] + h * (DP_A31 * k1[i] + DP_A32 * k2[i]);
      ok = run.F(t + DP_C3 * h, ystage, k3);
    }
    if (ok) {
      for (let i = 0; i < n; i++) ystage[i] = y[i] + h * (DP_A41 * k1[i] + DP_A42 * k2[i] + DP_A43 * k3[i]);
      ok = run.F(t + DP_C4 * h, ystage, k4);
    }
    if (ok) {
      for (let i = 0; i < n; i++) {
        ystage[i] = y[i] + h * (DP_A51 * k1[i] + DP_A52 * k2[i] + DP_A53 * k3[i] + DP_A54 * k4[i]);
      }
      ok = run.F(t + DP_C5 * h, ystage, k5);
    }
    if (ok) {
      for (let i = 0; i < n; i++) {
        ystage[i] = y[i] + h * (DP_A61 * k1[i] + DP_A62 * k2[i] + DP_A63 * k3[i] + DP_A64 * k4[i] + DP_A65 * k5[i]);
      }
      ok = run.F(tNew, ystage, k6);
    }
    if (ok) {
      for (let i = 0; i < n; i++) {
        y1[i] = y[i] + h * (DP_A71 * k1[i] + DP_A73 * k3[i] + DP_A74 * k4[i] + DP_A75 * k5[i] + DP_A76 * k6[i]);
      }
      ok = run.F(tNew, y1, k7);
    }
    if (!ok) {
      stats.rejected++;
      lastWasDomain = true;
      reject = true;
      h *= DOMAIN_SHRINK;
      continue;
    }
    for (let i = 0; i < n; i++) {
      errv[i] = h * (DP_E1 * k1[i] + DP_E3 * k3[i] + DP_E4 * k4[i] + DP_E5 * k5[i] + DP_E6 * k6[i] + DP_E7 * k7[i]);
    }
    const err = errorNorm(errv, y, y1, rtol, atol, n);
    if (!Number.isFinite(err)) {
      stats.rejected++;
      lastWasDomain = false;
      reject = true;
      h *= DOMAIN_SHRINK;
      continue;
    }
    // PI controller (Hairer–Nørsett–Wanner I, II.4)
    const fac11 = Math.pow(err, DP_EXPO1);
    if (err <= 1) {
      let fac = fac11 / Math.pow(facold, DP_BETA);
      fac = Math.max(1 / DP_FAC_MAX, Math.min(1 / DP_FAC_MIN, fac / DP_SAFE));
      const hnew = h / fac;
      facold = Math.max(err, 1e-4);
      stats.steps++;
      const tOld = t;
      const hStep = h;
      rec.accept(tOld, hStep, tNew, y1, { at: (th: number, out: Float64Array): void => {
        const th1 = 1 - th;
        for (let i = 0; i < n; i++) {
          const ydiff = y1[i] - y[i];
          const bspl = hStep * k1[i] - ydiff;
          const r4 = ydiff - hStep * k7[i] - bspl;
          const r5 =
            hStep *
            (DP_D1 * k1[i] + DP_D3 * k3[i] + DP_D4 * k4[i] + DP_D5 * k5[i] + DP_D6 * k6[i] + DP_D7 * k7[i]);
          out[i] = y[i] + th * (ydiff + th1 * (bspl + th * (r4 + th1 * r5)));
        }
      } });
      y.set(y1);
      k1.set(k7);
      t = tNew;
      lastWasDomain = false;
      if (last) return run.finish('ok');
      h = nextStep(hnew, h, span, reject);
      reject = false;
    } else {
      stats.rejected++;
      lastWasDomain = false;
      reject = true;
      h = h / Math.min(1 / DP_FAC_MIN, fac11 / DP_SAFE);
    }
  }
}

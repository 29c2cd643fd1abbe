/**
 * Dynamics of a linear model at an operating point, as plain data: eigenvalues and modes (time
 * constants, natural frequencies, damping, integrators, participation factors), the stability verdict,
 * the steady-state (DC) gain, the transfer function of every input → output pair with its poles and
 * transmission zeros, controllability and observability (PBH test with SVD ranks), and the frequency
 * response evaluated by complex linear solves. Pure: no I/O. The methods are described in docs/dynamics.md.
 *
 * Units: everything is in the declared units of the linear model (A, B, C, D as the linearizer returns
 * them), time in the model's time unit; eigenvalues, poles and zeros in 1/time unit, frequencies in
 * rad per time unit.
 */
import type { LinearModel } from '../solve/linearizer';
import { complexSolve, luFactor, svdValues, type DenseMatrix } from '../numeric/dense';
import { eigenvalues, eigenvectors } from '../numeric/eigen';

export interface Complex {
  re: number;
  im: number;
}

/** A linear system y = C x + D u, x' = A x + B u in declared units (row-major matrices). */
export interface LinearSystem {
  n: number;
  m: number;
  p: number;
  A: Float64Array;
  B: Float64Array;
  C: Float64Array;
  D: Float64Array;
  states: string[];
  inputs: string[];
  outputs: string[];
  stateUnits: string[];
  inputUnits: string[];
  outputUnits: string[];
  timeUnit: string;
  /** True when the model declares no outputs and the state components stand in for them. */
  outputsAreStates: boolean;
}

export type ModeKind = 'real' | 'oscillatory' | 'integrator' | 'undamped';
export type StabilityClass = 'stable' | 'marginal' | 'unstable';

export interface Mode {
  /** 1-based number used in tables and messages ("mode 2"). */
  number: number;
  kind: ModeKind;
  /** The eigenvalue (for a complex pair the one with positive imaginary part; its conjugate is implied). */
  re: number;
  im: number;
  /** Number of eigenvalues this mode stands for: 1, or 2 for a complex pair. */
  multiplicity: 1 | 2;
  stability: StabilityClass;
  /** 1/|Re λ| in the time unit (decay time; for an unstable mode the e-folding growth time); null on the imaginary axis. */
  timeConstant: number | null;
  /** |λ| in rad per time unit, complex pairs only. */
  naturalFrequency: number | null;
  /** −Re λ/|λ|, complex pairs only. */
  dampingRatio: number | null;
  /** |Im λ| in rad per time unit and the period 2π/|Im λ|, complex pairs only. */
  dampedFrequency: number | null;
  period: number | null;
  /** Participation factor of every state component, normalised to sum 1, largest first. */
  participation: { state: string; factor: number }[];
  /** States with participation ≥ 0.1 (at least the largest one). */
  dominant: string[];
  /** How the participation was found: left and right eigenvectors, or right vectors only (defective A). */
  participationMethod: 'left-right' | 'right-only';
  controllable: boolean;
  observable: boolean;
  /** Short description, e.g. "integrator" or "oscillation, ζ = 0.12". */
  description: string;
}

export interface StabilityVerdict {
  verdict: StabilityClass;
  /** Largest |λ| (1/time unit). */
  spectralRadius: number;
  /** |Re λ| at or below this counts as on the imaginary axis. */
  tolerance: number;
  /** Largest real part. */
  maxRealPart: number;
  /** One-sentence explanation. */
  reason: string;
}

export interface IntegratingPair {
  input: string;
  output: string;
  /** Number of poles at the origin in the pair's transfer function. */
  order: number;
  /** For a single integrator: the output's rate of change per unit input step (output-unit per input-unit per time unit). */
  rate: number | null;
  rateUnit: string;
}

export interface DcGain {
  /** p×m, output-unit per input-unit; null where the pair integrates. */
  gain: (number | null)[][];
  units: string[][];
  integrating: IntegratingPair[];
  /** 'solve': −C·A⁻¹·B + D by LU; 'per-pair': A is singular, each pair from its minimal realisation. */
  method: 'solve' | 'per-pair';
}

export interface TransferFunction {
  input: string;
  output: string;
  inputIndex: number;
  outputIndex: number;
  /** Numerator and denominator coefficients in descending powers of s (denominator monic). */
  num: number[];
  den: number[];
  poles: Complex[];
  zeros: Complex[];
  /** K in G(s) = K·Π(s − z)/Π(s − p). */
  gain: number;
  /** Order of the minimal realisation (number of poles). */
  order: number;
  /** Poles minus zeros (null when identically zero). */
  relativeDegree: number | null;
  /** Modes of A that do not appear: uncontrollable from this input or unobservable in this output. */
  cancelled: number;
  identicallyZero: boolean;
  /** G(0) (null when the pair integrates or is unstable-free of meaning is not judged here). */
  dcGain: number | null;
  /** Relative mismatch of the factored form against a direct (sI − A) solve at a test point. */
  checkError: number;
  /** Unit of G: output unit per input unit. */
  unit: string;
}

export interface RankTest {
  /** Dimension of the controllable (observable) subspace by the PBH test. */
  rank: number;
  n: number;
  full: boolean;
  /** Modes that fail the test (by number), with the rank deficiency at their eigenvalue. */
  failing: { mode: number; re: number; im: number; deficiency: number }[];
}

export interface Horizon {
  /** Length of the step responses in the time unit. */
  value: number;
  reason: string;
}

export interface Dynamics {
  system: LinearSystem;
  /** Eigenvalues, dominant first (largest real part first; a complex pair +i then −i). */
  eigenvalues: Complex[];
  modes: Mode[];
  stability: StabilityVerdict;
  dcGain: DcGain;
  /** One per pair, by input, then output. */
  transfer: TransferFunction[];
  controllability: RankTest;
  observability: RankTest;
  horizon: Horizon;
}

/** Relative tolerance of the rank decisions (Hessenberg subdiagonals, PBH singular values). */
const RANK_TOL = 1e-9;
/** |Re λ| ≤ AXIS_TOL·ρ(A) counts as on the imaginary axis. */
export const AXIS_TOL = 1e-9;

// ------------------------------------------------------------------------------------- system

/** The linear model as a system; a model without outputs uses its state components as outputs (C = I). */
export function linearSystem(lin: LinearModel): LinearSystem {
  const { n, m } = lin;
  if (lin.p > 0) {
    return {
      n, m, p: lin.p, A: lin.A, B: lin.B, C: lin.C, D: lin.D, states: lin.states, inputs: lin.inputs, outputs: lin.outputs,
      stateUnits: lin.stateUnits.map(u1), inputUnits: lin.inputUnits.map(u1), outputUnits: lin.outputUnits.map(u1), timeUnit: lin.timeUnit, outputsAreStates: false,
    };
  }
  const C = new Float64Array(n * n);
  for (let i = 0; i < n; i++) C[i * n + i] = 1;
  return {
    n, m, p: n, A: lin.A, B: lin.B, C, D: new Float64Array(n * m), states: lin.states, inputs: lin.inputs, outputs: lin.states.slice(),
    stateUnits: lin.stateUnits.map(u1), inputUnits: lin.inputUnits.map(u1), outputUnits: lin.stateUnits.map(u1), timeUnit: lin.timeUnit, outputsAreStates: true,
  };
}

const u1 = (u: string) => (u === '1' ? '' : u);

/** "cm/(L/s)", "1/min", … : unit of output per unit of input. */
export function perUnit(out: string, inp: string): string {
  const o = out || '1';
  if (!inp) return out;
  const i = /[*/ ]/.test(inp) ? `(${inp})` : inp;
  return `${o}/${i}`;
}

function frob(a: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * a[i];
  return Math.sqrt(s);
}

// ------------------------------------------------------------------------------------- analysis

export interface DynamicsOptions {
  /** Relative tolerance of the rank decisions (default 1e-9). */
  rankTolerance?: number;
}

export function analyzeDynamics(linOrSys: LinearModel | LinearSystem, opts: DynamicsOptions = {}): Dynamics {
  const sys = 'outputsAreStates' in linOrSys ? linOrSys : linearSystem(linOrSys);
  const { n } = sys;
  const rtol = opts.rankTolerance ?? RANK_TOL;
  const bal = balanceSystem(sys);

  // eigenvalues (accurate: block triangularisation first) and vectors (for participation)
  const ev = eigenvalues({ rows: n, cols: n, data: sys.A });
  const eig: Complex[] = [];
  for (let i = 0; i < n; i++) eig.push({ re: ev.re[i], im: ev.im[i] });
  let rho = 0;
  for (const e of eig) rho = Math.max(rho, Math.hypot(e.re, e.im));
  const axisTol = AXIS_TOL * rho;

  // modes: one per real eigenvalue, one per complex pair; dominant (largest real part) first
  const raw: Complex[] = [];
  for (let i = 0; i < n; i++) {
    if (eig[i].im > 0 || (eig[i].im === 0)) raw.push(eig[i]);
  }
  raw.sort((a, b) => b.re - a.re || b.im - a.im);
  const eigSorted: Complex[] = [];
  for (const e of raw) {
    eigSorted.push(e);
    if (e.im > 0) eigSorted.push({ re: e.re, im: -e.im });
  }

  const vec = n > 0 ? eigenvectors({ rows: n, cols: n, data: sys.A }) : undefined;
  const used = new Uint8Array(n);
  const participationOf = (e: Complex): { p: Float64Array; method: Mode['participationMethod'] } => {
    const p = new Float64Array(n);
    if (!vec || !vec.converged) return { p, method: 'right-only' };
    let best = -1;
    let bd = Infinity;
    for (let k = 0; k < n; k++) {
      if (used[k]) continue;
      const d = Math.hypot(vec.re[k] - e.re, vec.im[k] - e.im);
      if (d < bd) {
        bd = d;
        best = k;
      }
    }
    if (best < 0) return { p, method: 'right-only' };
    used[best] = 1;
    let leftOk = true;
    for (let i = 0; i < n; i++) {
      const v = Math.hypot(vec.vrRe.data[i * n + best], vec.vrIm.data[i * n + best]);
      const w = Math.hypot(vec.vlRe.data[i * n + best], vec.vlIm.data[i * n + best]);
      if (!Number.isFinite(w)) leftOk = false;
      p[i] = v * w;
    }
    if (!leftOk) for (let i = 0; i < n; i++) p[i] = Math.hypot(vec.vrRe.data[i * n + best], vec.vrIm.data[i * n + best]) ** 2;
    let s = 0;
    for (let i = 0; i < n; i++) s += p[i];
    if (s > 0) for (let i = 0; i < n; i++) p[i] /= s;
    return { p, method: leftOk ? 'left-right' : 'right-only' };
  };

  // PBH tests per distinct eigenvalue
  const ctrlDef = pbhDeficiencies(bal.A, bal.B, n, bal.m, raw, rtol, axisTol);
  const obsDef = pbhDeficiencies(transpose(bal.A, n, n), transpose(bal.C, bal.p, n), n, bal.p, raw, rtol, axisTol);

  const modes: Mode[] = raw.map((e, k) => {
    const pair = e.im > 0;
    const onAxis = Math.abs(e.re) <= axisTol;
    const mag = Math.hypot(e.re, e.im);
    const stability: StabilityClass = onAxis ? 'marginal' : e.re > 0 ? 'unstable' : 'stable';
    const kind: ModeKind = pair ? (onAxis ? 'undamped' : 'oscillatory') : onAxis ? 'integrator' : 'real';
    const { p, method } = participationOf(e);
    if (pair) participationOf({ re: e.re, im: -e.im }); // consume the conjugate
    const part = sys.states.map((s, i) => ({ state: s, factor: p[i] })).sort((a, b) => b.factor - a.factor);
    const dominant = part.filter((x, i) => i === 0 || x.factor >= 0.1).slice(0, 4).map((x) => x.state);
    const zeta = pair && mag > 0 ? -e.re / mag : null;
    let description: string;
    switch (kind) {
      case 'integrator': description = 'integrator (λ = 0)'; break;
      case 'undamped': description = 'undamped oscillation'; break;
      case 'oscillatory': description = `${e.re > 0 ? 'growing' : 'damped'} oscillation, ζ = ${zeta!.toPrecision(3)}`; break;
      default: description = e.re > 0 ? 'growing exponential' : 'decaying exponential';
    }
    return {
      number: k + 1, kind, re: e.re, im: pair ? e.im : 0, multiplicity: pair ? 2 : 1, stability,
      timeConstant: onAxis ? null : 1 / Math.abs(e.re),
      naturalFrequency: pair ? mag : null, dampingRatio: zeta, dampedFrequency: pair ? e.im : null, period: pair ? (2 * Math.PI) / e.im : null,
      participation: part, dominant, participationMethod: method,
      controllable: ctrlDef[k] === 0, observable: obsDef[k] === 0, description,
    };
  });

  const stability = verdict(sys, modes, rho, axisTol, raw);
  const controllability = rankTest(modes, ctrlDef, n);
  const observability = rankTest(modes, obsDef, n);
  const transfer = transferFunctions(sys, bal, rtol, rho, axisTol);
  const dcGain = dcGains(sys, transfer, modes);
  return { system: sys, eigenvalues: eigSorted, modes, stability, dcGain, transfer, controllability, observability, horizon: stepHorizon(modes, rho) };
}

function rankTest(modes: Mode[], def: number[], n: number): RankTest {
  const failing: RankTest['failing'] = [];
  let lost = 0;
  modes.forEach((md, k) => {
    if (def[k] > 0) {
      failing.push({ mode: md.number, re: md.re, im: md.im, deficiency: def[k] });
      lost += def[k] * md.multiplicity;
    }
  });
  const rank = Math.max(0, n - lost);
  return { rank, n, full: rank === n, failing };
}

function verdict(sys: LinearSystem, modes: Mode[], rho: number, tol: number, raw: Complex[]): StabilityVerdict {
  const n = sys.n;
  let maxRe = -Infinity;
  for (const md of modes) maxRe = Math.max(maxRe, md.re);
  if (n === 0) return { verdict: 'stable', spectralRadius: 0, tolerance: 0, maxRealPart: 0, reason: 'The model has no states: it responds instantly (static).' };
  const t = sys.timeUnit;
  const unstable = modes.filter((m) => m.stability === 'unstable');
  if (unstable.length) {
    const u = unstable[0];
    return {
      verdict: 'unstable', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
      reason: `${unstable.length === 1 ? 'Mode' : `${unstable.length} modes grow; the fastest, mode`} ${u.number} grows with e-folding time ${fmt(u.timeConstant!)} ${t}${u.kind === 'oscillatory' ? ' while oscillating' : ''} (largest real part ${fmt(maxRe)} 1/${t}).`,
    };
  }
  const marginal = modes.filter((m) => m.stability === 'marginal');
  if (marginal.length) {
    // repeated eigenvalues on the axis grow like t^k unless A is diagonalisable there
    for (const md of marginal) {
      const same = raw.filter((e) => Math.hypot(e.re - md.re, e.im - md.im) <= Math.max(tol, 1e-9 * rho));
      if (same.length > 1) {
        const geo = n - complexRank(sys.A, n, { re: md.re, im: md.im }, RANK_TOL * Math.max(rho, 1e-300) * 10);
        if (geo < same.length) {
          return {
            verdict: 'unstable', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
            reason: `λ = ${fmtC(md)} is repeated ${same.length} times on the imaginary axis without enough eigenvectors, so deviations grow like a power of time (e.g. a double integrator).`,
          };
        }
      }
    }
    const names = marginal.map((m) => `${m.number} (${m.kind === 'integrator' ? 'integrator' : 'undamped oscillation'})`).join(', ');
    return {
      verdict: 'marginal', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
      reason: `Mode${marginal.length > 1 ? 's' : ''} ${names} ${marginal.length > 1 ? 'lie' : 'lies'} on the imaginary axis; deviations neither die out nor grow there, the other modes decay.`,
    };
  }
  const slow = modes.reduce((a, b) => (b.re > a.re ? b : a));
  return {
    verdict: 'stable', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
    reason: `Every eigenvalue has a negative real part; the slowest mode (${slow.number}) decays with time constant ${fmt(slow.timeConstant!)} ${t}.`,
  };
}

const fmt = (v: number) => (v === 0 ? '0' : Math.abs(v) >= 1e-3 && Math.abs(v) < 1e6 ? String(Number(v.toPrecision(4))) : v.toExponential(3));
const fmtC = (c: Complex) => (c.im === 0 ? fmt(c.re) : `${fmt(c.re)} ${c.im < 0 ? '−' : '+'} ${fmt(Math.abs(c.im))}i`);

/** Length of the step responses: a few slowest time constants, bounded for unstable and oscillating models. */
function stepHorizon(modes: Mode[], rho: number): Horizon {
  if (!modes.length) return { value: 1, reason: 'static model: a fixed horizon of 1 time unit' };
  const stable = modes.filter((m) => m.stability === 'stable');
  const unstable = modes.filter((m) => m.stability === 'unstable');
  const undamped = modes.filter((m) => m.kind === 'undamped');
  let tauMax = 0;
  let slowest: Mode | undefined;
  for (const m of stable) if (m.timeConstant! > tauMax) {
    tauMax = m.timeConstant!;
    slowest = m;
  }
  if (unstable.length) {
    let growth = Infinity;
    let fastest: Mode | undefined;
    for (const m of unstable) if (m.timeConstant! < growth) {
      growth = m.timeConstant!;
      fastest = m;
    }
    let T = 3 * growth;
    if (fastest && fastest.period && T > 20 * fastest.period) T = 20 * fastest.period;
    return { value: T, reason: `unstable: 3 e-folding times of the fastest-growing mode${T < 3 * growth ? ' (limited to 20 of its periods)' : ''}` };
  }
  if (slowest) {
    let T = 5 * tauMax;
    let reason = `5 × the slowest time constant (${fmt(tauMax)})`;
    if (slowest.period && T > 20 * slowest.period) {
      let tauReal = 0;
      for (const m of stable) if (m.kind === 'real') tauReal = Math.max(tauReal, m.timeConstant!);
      T = Math.max(20 * slowest.period, 5 * tauReal);
      reason = `lightly damped oscillation (ζ = ${slowest.dampingRatio!.toPrecision(2)}): 20 of its periods${tauReal ? ' or 5 × the slowest real time constant' : ''}`;
    }
    if (undamped.length || modes.some((m) => m.kind === 'integrator')) reason += '; modes on the imaginary axis never settle';
    return { value: T, reason };
  }
  if (undamped.length) {
    let per = 0;
    for (const m of undamped) per = Math.max(per, m.period!);
    return { value: 3 * per, reason: 'undamped oscillation: 3 periods of the slowest one' };
  }
  return { value: rho > 0 ? 10 / rho : 10, reason: 'integrators only: a fixed horizon' };
}

// ------------------------------------------------------------------------------------- balancing

interface Balanced {
  A: Float64Array;
  B: Float64Array;
  C: Float64Array;
  /** Factors applied to the columns of B and the rows of C (so D scales by inScale[j]·outScale[i]). */
  inScale: Float64Array;
  outScale: Float64Array;
  n: number;
  m: number;
  p: number;
}

/**
 * Diagonal state scaling T (powers of two) of the system matrix, with the columns of B and the rows of C
 * first normalised to the size of A: Ã = T⁻¹AT, B̃ = T⁻¹B, C̃ = CT. Similarity keeps eigenvalues, poles
 * and zeros; the scaling only improves the rank decisions. The method is the diagonal power-of-two balancing
 * of Parlett & Reinsch (Numer. Math. 13, 1969), applied to [A B; C 0] with B and C normalised first.
 */
function balanceSystem(sys: LinearSystem): Balanced {
  const { n, m, p } = sys;
  const A = Float64Array.from(sys.A);
  const B = Float64Array.from(sys.B);
  const C = Float64Array.from(sys.C);
  const na = frob(A) || 1;
  const inScale = new Float64Array(m);
  const outScale = new Float64Array(p);
  for (let j = 0; j < m; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += B[i * m + j] ** 2;
    const f = s > 0 ? pow2(na / Math.sqrt(s)) : 1;
    inScale[j] = f;
    for (let i = 0; i < n; i++) B[i * m + j] *= f;
  }
  for (let i = 0; i < p; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += C[i * n + j] ** 2;
    const f = s > 0 ? pow2(na / Math.sqrt(s)) : 1;
    outScale[i] = f;
    for (let j = 0; j < n; j++) C[i * n + j] *= f;
  }
  for (let sweep = 0; sweep < 40; sweep++) {
    let changed = false;
    for (let i = 0; i < n; i++) {
      let c = 0;
      let r = 0;
      for (let j = 0; j < n; j++) {
        if (j === i) continue;
        c += Math.abs(A[j * n + i]);
        r += Math.abs(A[i * n + j]);
      }
      for (let k = 0; k < p; k++) c += Math.abs(C[k * n + i]);
      for (let k = 0; k < m; k++) r += Math.abs(B[i * m + k]);
      if (c === 0 || r === 0) continue;
      const f = pow2(Math.sqrt(r / c));
      if (f === 1 || (c * f + r / f) >= 0.95 * (c + r)) continue;
      changed = true;
      // t_i *= f: row i of A and B divided by f, column i of A and C multiplied by f
      for (let j = 0; j < n; j++) {
        A[i * n + j] /= f;
        A[j * n + i] *= f;
      }
      for (let k = 0; k < m; k++) B[i * m + k] /= f;
      for (let k = 0; k < p; k++) C[k * n + i] *= f;
    }
    if (!changed) break;
  }
  return { A, B, C, inScale, outScale, n, m, p };
}

function pow2(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  return Math.pow(2, Math.round(Math.log2(x)));
}

function transpose(a: Float64Array, r: number, c: number): Float64Array {
  const t = new Float64Array(r * c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) t[j * r + i] = a[i * c + j];
  return t;
}

// ------------------------------------------------------------------------------------- PBH

/** Rank of λI − A (complex λ) by SVD of its real embedding. */
function complexRank(A: Float64Array, n: number, lam: Complex, tol: number): number {
  return embeddedRank(A, n, new Float64Array(0), 0, lam, tol);
}

/** Rank of [λI − A, B] (n × (n+m), complex λ) from the singular values of its real form. */
function embeddedRank(A: Float64Array, n: number, B: Float64Array, m: number, lam: Complex, tol: number): number {
  const w = n + m;
  if (lam.im === 0) {
    const M = new Float64Array(n * w);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) M[i * w + j] = -A[i * n + j];
      M[i * w + i] += lam.re;
      for (let k = 0; k < m; k++) M[i * w + n + k] = B[i * m + k];
    }
    const s = svdValues({ rows: n, cols: w, data: M });
    let r = 0;
    for (let i = 0; i < s.length; i++) if (s[i] > tol) r++;
    return r;
  }
  // [[Re, −Im], [Im, Re]] has every singular value of the complex matrix twice
  const R = 2 * n;
  const Cc = 2 * w;
  const M = new Float64Array(R * Cc);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < w; j++) {
      let re: number;
      let im = 0;
      if (j < n) {
        re = -A[i * n + j];
        if (i === j) {
          re += lam.re;
          im = lam.im;
        }
      } else re = B[i * m + (j - n)];
      M[i * Cc + j] = re;
      M[i * Cc + w + j] = -im;
      M[(n + i) * Cc + j] = im;
      M[(n + i) * Cc + w + j] = re;
    }
  }
  const s = svdValues({ rows: R, cols: Cc, data: M });
  let r = 0;
  for (let i = 0; i < s.length; i++) if (s[i] > tol) r++;
  return Math.round(r / 2);
}

/**
 * True when σ_min([λI − A, B]) > τ for certain: the Hermitian matrix
 * G = [λI − A, B]·[λI − A, B]ᴴ − τ²I = S + (|λ|² − τ²)I − Re λ·(A + Aᵀ) + i·Im λ·(A − Aᵀ), with S = AAᵀ + BBᵀ,
 * has a Cholesky factorisation exactly when its smallest eigenvalue σ_min² − τ² is positive. Rounding in
 * forming G is about n·ε·‖[A, B]‖², far below τ² (τ is 10⁻⁴ of the size), so success is a safe certificate;
 * failure proves nothing and the caller falls back on the SVD.
 */
function clearlyFullRank(S: Float64Array, A: Float64Array, n: number, lam: Complex, tau: number, w: { re: Float64Array; im: Float64Array }): boolean {
  const Lr = w.re;
  const Li = w.im;
  const shift = lam.re * lam.re + lam.im * lam.im - tau * tau;
  for (let j = 0; j < n; j++) {
    // diagonal: G_jj − Σ|L_jk|²
    let d = S[j * n + j] + shift - 2 * lam.re * A[j * n + j];
    for (let k = 0; k < j; k++) d -= Lr[j * n + k] * Lr[j * n + k] + Li[j * n + k] * Li[j * n + k];
    if (!(d > 0)) return false;
    const ljj = Math.sqrt(d);
    Lr[j * n + j] = ljj;
    Li[j * n + j] = 0;
    for (let i = j + 1; i < n; i++) {
      // G_ij = S_ij − Re λ·(A_ij + A_ji) + i·Im λ·(A_ij − A_ji)
      let gr = S[i * n + j] - lam.re * (A[i * n + j] + A[j * n + i]);
      let gi = lam.im * (A[i * n + j] - A[j * n + i]);
      // − Σ_k L_ik·conj(L_jk)
      for (let k = 0; k < j; k++) {
        const ar = Lr[i * n + k];
        const ai = Li[i * n + k];
        const br = Lr[j * n + k];
        const bi = Li[j * n + k];
        gr -= ar * br + ai * bi;
        gi -= ai * br - ar * bi;
      }
      Lr[i * n + j] = gr / ljj;
      Li[i * n + j] = gi / ljj;
    }
  }
  return true;
}

/**
 * PBH test: for each mode (one eigenvalue per real mode or complex pair), the rank deficiency n − rank[λI − A, B].
 * Eigenvalues that coincide (within the tolerance) share the deficiency: it is given to the first of them
 * and, when larger than 1, spread over the others.
 */
function pbhDeficiencies(A: Float64Array, B: Float64Array, n: number, m: number, modes: Complex[], rtol: number, axisTol: number): number[] {
  const out = new Array<number>(modes.length).fill(0);
  if (n === 0) return out;
  const na = frob(A);
  let sb = 0;
  for (let i = 0; i < B.length; i++) sb += B[i] * B[i];
  const scale = Math.max(na, Math.sqrt(sb), 1e-300);
  const tol = rtol * scale;
  // S = A·Aᵀ + B·Bᵀ, shared by the Cholesky certificates
  const S = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let v = 0;
      for (let k = 0; k < n; k++) v += A[i * n + k] * A[j * n + k];
      for (let k = 0; k < m; k++) v += B[i * m + k] * B[j * m + k];
      S[i * n + j] = v;
      S[j * n + i] = v;
    }
  }
  const work = { re: new Float64Array(n * n), im: new Float64Array(n * n) };
  const done = new Uint8Array(modes.length);
  for (let k = 0; k < modes.length; k++) {
    if (done[k]) continue;
    const e = modes[k];
    const group = [k];
    for (let j = k + 1; j < modes.length; j++) {
      if (!done[j] && Math.hypot(modes[j].re - e.re, modes[j].im - e.im) <= Math.max(axisTol, 1e-8 * scale)) group.push(j);
    }
    for (const g of group) done[g] = 1;
    // σ_min([λI − A, B]) > τ, far above the rank tolerance, is proved by a Cholesky factorisation; only the
    // eigenvalues without that certificate need the SVD
    const tau = 1e-4 * (na + Math.sqrt(sb) + Math.hypot(e.re, e.im));
    if (group.length === 1 && clearlyFullRank(S, A, n, e, tau, work)) continue;
    const def = n - embeddedRank(A, n, B, m, e, tol);
    let left = Math.max(0, def);
    for (const g of group) {
      const d = Math.min(left, 1);
      out[g] = d;
      left -= d;
    }
    if (left > 0) out[group[0]] += left;
  }
  return out;
}

// ------------------------------------------------------------------------------------- transfer functions

/**
 * Householder reflector I − f·v·vᵀ taking x (length L) to alpha·e₁, alpha = −sign(x₀)·‖x‖ (common practice;
 * Golub & Van Loan, Matrix Computations, §5.1): v (length L) is written, f = 2/(vᵀv), 0 when x = 0.
 */
function householder(x: Float64Array, L: number, v: Float64Array): { alpha: number; f: number } {
  let s = 0;
  for (let i = 0; i < L; i++) s += x[i] * x[i];
  const nx = Math.sqrt(s);
  const alpha = x[0] > 0 ? -nx : nx;
  for (let i = 0; i < L; i++) v[i] = x[i];
  v[0] -= alpha;
  let beta = 0;
  for (let i = 0; i < L; i++) beta += v[i] * v[i];
  return { alpha, f: beta === 0 ? 0 : 2 / beta };
}

/** M ← (I − f·v·vᵀ)·M on the rows off..off+L−1 of M (row-major, `cols` columns). */
function reflectRows(M: Float64Array, cols: number, v: Float64Array, L: number, off: number, f: number): void {
  for (let j = 0; j < cols; j++) {
    let t = 0;
    for (let i = 0; i < L; i++) t += v[i] * M[(off + i) * cols + j];
    if (t === 0) continue;
    t *= f;
    for (let i = 0; i < L; i++) M[(off + i) * cols + j] -= t * v[i];
  }
}

/** M ← M·(I − f·v·vᵀ) on the columns off..off+L−1 of M (row-major, `rows` rows of length `stride`). */
function reflectCols(M: Float64Array, rows: number, stride: number, v: Float64Array, L: number, off: number, f: number): void {
  for (let i = 0; i < rows; i++) {
    let t = 0;
    const ro = i * stride + off;
    for (let j = 0; j < L; j++) t += M[ro + j] * v[j];
    if (t === 0) continue;
    t *= f;
    for (let j = 0; j < L; j++) M[ro + j] -= t * v[j];
  }
}

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

interface MinimalPair {
  /** Lower Hessenberg A (r×r), b, c = γ·e₁ᵀ, d. */
  A: Float64Array;
  b: Float64Array;
  gamma: number;
  d: number;
  r: number;
}

/** Controllable and observable part of the SISO system (A, b, c, d): controllable staircase, then the dual one. */
function minimalPair(A: Float64Array, b: Float64Array, c: Float64Array, d: number, n: number, tolA: number): MinimalPair {
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
function pairZeros(mp: MinimalPair, tolRel: number): { zeros: Complex[]; relativeDegree: number } {
  const { A, b, gamma, d, r } = mp;
  let nb = 0;
  for (let i = 0; i < r; i++) nb += b[i] * b[i];
  nb = Math.sqrt(nb);
  const na = frob(A);
  const dRelevant = d !== 0 && Math.abs(d) * Math.max(na, 1e-300) > 1e-13 * Math.abs(gamma) * nb;
  if (dRelevant) {
    const Z = Float64Array.from(A);
    for (let i = 0; i < r; i++) Z[i * r] -= (b[i] * gamma) / d;
    return { zeros: eigList(Z, r), relativeDegree: 0 };
  }
  let q = 0;
  while (q < r && Math.abs(b[q]) <= tolRel * nb) q++;
  if (q >= r - 1) return { zeros: [], relativeDegree: r };
  const k = r - q - 1;
  const Z = new Float64Array(k * k);
  const f = A[q * r + q + 1] / b[q];
  for (let i = 0; i < k; i++) {
    for (let j = 0; j < k; j++) Z[i * k + j] = A[(q + 1 + i) * r + (q + 1 + j)];
    Z[i * k] -= f * b[q + 1 + i];
  }
  return { zeros: eigList(Z, k), relativeDegree: q + 1 };
}

/** Roots within tol of the origin are the origin (integrators, differentiators): exactly 0. */
function snapRoots(r: Complex[], tol: number): Complex[] {
  return sortRoots(r.map((x) => (Math.hypot(x.re, x.im) <= tol ? { re: 0, im: 0 } : x)));
}

const rootSnap = AXIS_TOL;

function eigList(a: Float64Array, n: number): Complex[] {
  if (n === 0) return [];
  const e = eigenvalues({ rows: n, cols: n, data: a });
  const out: Complex[] = [];
  for (let i = 0; i < n; i++) out.push({ re: e.re[i], im: e.im[i] });
  return sortRoots(out);
}

/** Dominant first; conjugates adjacent (+i first). */
function sortRoots(r: Complex[]): Complex[] {
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
  const { n, m, p } = sys;
  const re = Float64Array.from(sys.D);
  const im = new Float64Array(p * m);
  if (n === 0) return { re, im };
  const are: DenseMatrix = { rows: n, cols: n, data: new Float64Array(n * n) };
  const aim: DenseMatrix = { rows: n, cols: n, data: new Float64Array(n * n) };
  for (let k = 0; k < n * n; k++) are.data[k] = -sys.A[k];
  for (let i = 0; i < n; i++) {
    are.data[i * n + i] += s.re;
    aim.data[i * n + i] = s.im;
  }
  const X = complexSolve(are, aim, { rows: n, cols: m, data: Float64Array.from(sys.B) }, { rows: n, cols: m, data: new Float64Array(n * m) });
  for (let i = 0; i < p; i++) {
    for (let k = 0; k < n; k++) {
      const c = sys.C[i * n + k];
      if (c === 0) continue;
      for (let j = 0; j < m; j++) {
        re[i * m + j] += c * X.re.data[k * m + j];
        im[i * m + j] += c * X.im.data[k * m + j];
      }
    }
  }
  return { re, im };
}

function transferFunctions(sys: LinearSystem, bal: Balanced, rtol: number, rho: number, axisTol: number): TransferFunction[] {
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
      const poles = mp.r ? snapRoots(eigList(mp.A, mp.r), snap) : [];
      const z = mp.r ? pairZeros(mp, rtol) : { zeros: [], relativeDegree: 0 };
      z.zeros = snapRoots(z.zeros, snap);
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
  const evals: { s: Complex; G: { re: Float64Array; im: Float64Array } }[] = [];
  for (let t = 0; t < 16 && evals.length < 2; t++) {
    const ang = 0.93 + 0.41 * t;
    const rad = w0 * (1 + 0.17 * t);
    const s: Complex = { re: rad * Math.cos(ang), im: rad * Math.abs(Math.sin(ang)) + 1e-3 * rad };
    if (all.some((x) => Math.hypot(x.re - s.re, x.im - s.im) < 1e-3 * rad)) continue;
    try {
      evals.push({ s, G: evaluateTransfer(sys, s) });
    } catch {
      // s is (numerically) an eigenvalue: try the next point
    }
  }
  for (const q of pairs) {
    const { i, j, mp } = q;
    const d = sys.D[i * m + j];
    const unit = perUnit(sys.outputUnits[i], sys.inputUnits[j]);
    const base = { input: sys.inputs[j], output: sys.outputs[i], inputIndex: j, outputIndex: i, unit };
    if (mp.r === 0) {
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

function dcGains(sys: LinearSystem, tfs: TransferFunction[], modes: Mode[]): DcGain {
  const { n, m, p } = sys;
  const units: string[][] = [];
  for (let i = 0; i < p; i++) units.push(sys.inputUnits.map((u) => perUnit(sys.outputUnits[i], u)));
  const gain: (number | null)[][] = Array.from({ length: p }, () => new Array<number | null>(m).fill(null));
  const hasIntegrator = modes.some((md) => md.kind === 'integrator');
  if (!hasIntegrator) {
    const lu = n ? luFactor({ rows: n, cols: n, data: sys.A }) : undefined;
    if (!lu || lu.ok) {
      for (let j = 0; j < m; j++) {
        const bj = new Float64Array(n);
        for (let k = 0; k < n; k++) bj[k] = sys.B[k * m + j];
        const x = lu ? lu.solve(bj) : bj;
        for (let i = 0; i < p; i++) {
          let g = sys.D[i * m + j];
          for (let k = 0; k < n; k++) g -= sys.C[i * n + k] * x[k];
          gain[i][j] = g;
        }
      }
      return { gain, units, integrating: [], method: 'solve' };
    }
  }
  const integrating: IntegratingPair[] = [];
  const rho = modes.reduce((a, md) => Math.max(a, Math.hypot(md.re, md.im)), 0);
  for (const tf of tfs) {
    const i = tf.outputIndex;
    const j = tf.inputIndex;
    const zeroPoles = tf.poles.filter((x) => Math.hypot(x.re, x.im) <= AXIS_TOL * rho);
    if (!zeroPoles.length) {
      gain[i][j] = tf.identicallyZero ? 0 : tf.dcGain;
      continue;
    }
    let rate: number | null = null;
    if (zeroPoles.length === 1) {
      const rest = tf.poles.filter((x) => !zeroPoles.includes(x));
      rate = evaluateFactored({ gain: tf.gain, poles: rest, zeros: tf.zeros }, { re: 0, im: 0 }).re;
    }
    integrating.push({
      input: tf.input, output: tf.output, order: zeroPoles.length, rate,
      rateUnit: `${perUnit(sys.outputUnits[i], sys.inputUnits[j])}/${sys.timeUnit}`,
    });
  }
  return { gain, units, integrating, method: 'per-pair' };
}

// ------------------------------------------------------------------------------------- frequency response

export interface FrequencyPair {
  input: string;
  output: string;
  inputIndex: number;
  outputIndex: number;
  /** 20·log10|G(jω)|; null where G is zero, not finite (ω on a pole) or below the round-off level of the solve. */
  magnitudeDb: (number | null)[];
  /** Unwrapped phase in degrees. */
  phaseDeg: (number | null)[];
}

export interface FrequencyResponse {
  /** rad per time unit, ascending. */
  omega: number[];
  unit: string;
  pairs: FrequencyPair[];
}

/**
 * Log-spaced frequencies two decades beyond the smallest and largest non-zero pole and zero magnitude
 * (1e-2 … 1e2 rad per time unit when there are none).
 */
export function frequencyGrid(dyn: Dynamics, count = 200): number[] {
  let lo = Infinity;
  let hi = 0;
  const tol = dyn.stability.tolerance;
  const add = (z: Complex) => {
    const a = Math.hypot(z.re, z.im);
    if (!(a > tol) || !Number.isFinite(a)) return;
    lo = Math.min(lo, a);
    hi = Math.max(hi, a);
  };
  dyn.eigenvalues.forEach(add);
  for (const tf of dyn.transfer) tf.zeros.forEach(add);
  if (!(hi > 0)) {
    lo = 1;
    hi = 1;
  }
  let l0 = Math.floor(Math.log10(lo) - 2 + 1e-9);
  let l1 = Math.ceil(Math.log10(hi) + 2 - 1e-9);
  if (l1 - l0 > 14) {
    // keep a sane span around the poles (zeros far out are listed but not plotted)
    let plo = Infinity;
    let phi = 0;
    for (const e of dyn.eigenvalues) {
      const a = Math.hypot(e.re, e.im);
      if (a > tol) {
        plo = Math.min(plo, a);
        phi = Math.max(phi, a);
      }
    }
    if (phi > 0) {
      l0 = Math.floor(Math.log10(plo) - 2);
      l1 = Math.max(l0 + 4, Math.ceil(Math.log10(phi) + 2));
    }
    if (l1 - l0 > 14) l1 = l0 + 14;
  }
  const N = Math.max(2, Math.floor(count));
  const out: number[] = [];
  for (let k = 0; k < N; k++) out.push(Math.pow(10, l0 + ((l1 - l0) * k) / (N - 1)));
  return out;
}

/**
 * G(jω) of every pair by solving (jωI − A)X = B at each frequency (after an orthogonal reduction of A to
 * Hessenberg form, so each frequency costs O(n²) per input); magnitude in dB, phase unwrapped along the
 * frequency axis and placed on the branch given by the poles and zeros at the lowest frequency.
 */
export function frequencyResponse(dyn: Dynamics, omega: number[]): FrequencyResponse {
  const sys = dyn.system;
  const { n, m, p } = sys;
  const W = omega.length;
  const Gre = new Float64Array(W * p * m);
  const Gim = new Float64Array(W * p * m);
  /** Round-off level of each entry: 1e-13·(Σ_k |C_ik|·max_q |X_qj| + |D_ij|) (the solve's normwise accuracy, with margin). */
  const Gnoise = new Float64Array(W * p * m);
  const bad = new Uint8Array(W);
  const hs = hessenbergSystem(sys);
  const xr = new Float64Array(n * m);
  const xi = new Float64Array(n * m);
  const xmax = new Float64Array(m);
  for (let k = 0; k < W; k++) {
    const ok = n === 0 || hs.solve(omega[k], xr, xi);
    if (!ok) {
      bad[k] = 1;
      continue;
    }
    // the solve is backward stable: its error is small against the largest entry of each column of X
    for (let j = 0; j < m; j++) {
      let mx = 0;
      for (let q = 0; q < n; q++) mx = Math.max(mx, Math.abs(xr[q * m + j]) + Math.abs(xi[q * m + j]));
      xmax[j] = mx;
    }
    for (let i = 0; i < p; i++) {
      const co = i * n;
      for (let j = 0; j < m; j++) {
        let sr = sys.D[i * m + j];
        let si = 0;
        let size = Math.abs(sr);
        for (let q = 0; q < n; q++) {
          const c = hs.C[co + q];
          if (c === 0) continue;
          sr += c * xr[q * m + j];
          si += c * xi[q * m + j];
          size += Math.abs(c) * xmax[j];
        }
        Gre[(k * p + i) * m + j] = sr;
        Gim[(k * p + i) * m + j] = si;
        Gnoise[(k * p + i) * m + j] = 1e-13 * size;
      }
    }
  }
  const pairs: FrequencyPair[] = [];
  for (const tf of dyn.transfer) {
    const i = tf.outputIndex;
    const j = tf.inputIndex;
    const mag: (number | null)[] = [];
    const ph: (number | null)[] = [];
    let prev: number | null = null;
    let offset = 0;
    let first = true;
    for (let k = 0; k < W; k++) {
      const re = Gre[(k * p + i) * m + j];
      const im = Gim[(k * p + i) * m + j];
      const a = Math.hypot(re, im);
      // below the round-off level of the solve the numbers mean nothing: leave them out
      if (bad[k] || tf.identicallyZero || !(a > Gnoise[(k * p + i) * m + j]) || !Number.isFinite(a)) {
        mag.push(null);
        ph.push(null);
        continue;
      }
      mag.push(20 * Math.log10(a));
      let phi = (Math.atan2(im, re) * 180) / Math.PI;
      if (first) {
        // branch: sum of the factor angles (each within ±180°) at this frequency
        const s = { re: 0, im: omega[k] };
        let expect = tf.gain < 0 ? -180 : 0;
        for (const z of tf.zeros) expect += (Math.atan2(s.im - z.im, s.re - z.re) * 180) / Math.PI;
        for (const q of tf.poles) expect -= (Math.atan2(s.im - q.im, s.re - q.re) * 180) / Math.PI;
        offset = 360 * Math.round((expect - phi) / 360);
        first = false;
      } else if (prev !== null) {
        const d = phi + offset - prev;
        offset -= 360 * Math.round(d / 360);
      }
      phi += offset;
      ph.push(phi);
      prev = phi;
    }
    pairs.push({ input: tf.input, output: tf.output, inputIndex: j, outputIndex: i, magnitudeDb: mag, phaseDeg: ph });
  }
  return { omega: omega.slice(), unit: `rad/${sys.timeUnit}`, pairs };
}

/**
 * A = Q H Qᵀ with H upper Hessenberg (Householder); B̂ = QᵀB, Ĉ = CQ. (jωI − H) y = b̂ is then solved by
 * Gaussian elimination with partial pivoting between adjacent rows (the subdiagonal is the only entry
 * below the diagonal), O(n²) per right-hand side.
 */
function hessenbergSystem(sys: LinearSystem) {
  const { n, m, p } = sys;
  const H = Float64Array.from(sys.A);
  const Bh = Float64Array.from(sys.B);
  const Ch = Float64Array.from(sys.C);
  const x = new Float64Array(n);
  const v = new Float64Array(n);
  for (let k = 0; k + 2 < n; k++) {
    const L = n - k - 1;
    for (let i = 0; i < L; i++) x[i] = H[(k + 1 + i) * n + k];
    const { f } = householder(x, L, v);
    if (f === 0) continue;
    const off = k + 1;
    reflectRows(H, n, v, L, off, f); // H ← Qₖ H Qₖ
    reflectCols(H, n, n, v, L, off, f);
    reflectRows(Bh, m, v, L, off, f); // B̂ ← Qₖ B̂
    reflectCols(Ch, p, n, v, L, off, f); // Ĉ ← Ĉ Qₖ
    for (let i = 2; i <= L; i++) H[(k + i) * n + k] = 0;
  }
  const Mr = new Float64Array(n * n);
  const Mi = new Float64Array(n * n);
  /** Solves (jωI − H) X = B̂ for all inputs (X n×m, row-major); false when singular. */
  const solve = (w: number, xr: Float64Array, xi: Float64Array): boolean => {
    for (let k = 0; k < n * n; k++) {
      Mr[k] = -H[k];
      Mi[k] = 0;
    }
    for (let i = 0; i < n; i++) Mi[i * n + i] = w;
    xr.set(Bh);
    xi.fill(0);
    for (let k = 0; k < n; k++) {
      // pivot between rows k and k+1 (the only candidates in a Hessenberg matrix)
      if (k + 1 < n) {
        const a = Math.abs(Mr[k * n + k]) + Math.abs(Mi[k * n + k]);
        const b = Math.abs(Mr[(k + 1) * n + k]) + Math.abs(Mi[(k + 1) * n + k]);
        if (b > a) {
          for (let c = k; c < n; c++) {
            let t = Mr[k * n + c];
            Mr[k * n + c] = Mr[(k + 1) * n + c];
            Mr[(k + 1) * n + c] = t;
            t = Mi[k * n + c];
            Mi[k * n + c] = Mi[(k + 1) * n + c];
            Mi[(k + 1) * n + c] = t;
          }
          for (let j = 0; j < m; j++) {
            let t = xr[k * m + j];
            xr[k * m + j] = xr[(k + 1) * m + j];
            xr[(k + 1) * m + j] = t;
            t = xi[k * m + j];
            xi[k * m + j] = xi[(k + 1) * m + j];
            xi[(k + 1) * m + j] = t;
          }
        }
      }
      const pr = Mr[k * n + k];
      const pi = Mi[k * n + k];
      const pm = pr * pr + pi * pi;
      if (!(pm > 0) || !Number.isFinite(pm)) return false;
      if (k + 1 < n) {
        const r = (k + 1) * n;
        const lr0 = Mr[r + k];
        const li0 = Mi[r + k];
        if (lr0 !== 0 || li0 !== 0) {
          const lr = (lr0 * pr + li0 * pi) / pm;
          const li = (li0 * pr - lr0 * pi) / pm;
          for (let c = k; c < n; c++) {
            const ur = Mr[k * n + c];
            const ui = Mi[k * n + c];
            Mr[r + c] -= lr * ur - li * ui;
            Mi[r + c] -= lr * ui + li * ur;
          }
          for (let j = 0; j < m; j++) {
            const yr = xr[k * m + j];
            const yi = xi[k * m + j];
            xr[(k + 1) * m + j] -= lr * yr - li * yi;
            xi[(k + 1) * m + j] -= lr * yi + li * yr;
          }
        }
      }
    }
    for (let k = n - 1; k >= 0; k--) {
      const ro = k * n;
      const pr = Mr[ro + k];
      const pi = Mi[ro + k];
      const pm = pr * pr + pi * pi;
      for (let j = 0; j < m; j++) {
        let sr = xr[k * m + j];
        let si = xi[k * m + j];
        for (let c = k + 1; c < n; c++) {
          const ur = Mr[ro + c];
          const ui = Mi[ro + c];
          if (ur === 0 && ui === 0) continue;
          const vr = xr[c * m + j];
          const vi = xi[c * m + j];
          sr -= ur * vr - ui * vi;
          si -= ur * vi + ui * vr;
        }
        const qr = (sr * pr + si * pi) / pm;
        const qi = (si * pr - sr * pi) / pm;
        if (!Number.isFinite(qr) || !Number.isFinite(qi)) return false;
        xr[k * m + j] = qr;
        xi[k * m + j] = qi;
      }
    }
    return true;
  };
  return { solve, C: Ch };
}

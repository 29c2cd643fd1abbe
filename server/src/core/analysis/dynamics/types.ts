/**
 * The plain data of the dynamics of a linear model (docs/dynamics.md): the system, its modes, the stability
 * verdict, DC gains, transfer functions, rank tests and the step-response horizon, with the tolerances
 * shared by every method of this folder.
 *
 * Units: everything is in the declared units of the linear model (A, B, C, D as the linearizer returns
 * them), time in the model's time unit; eigenvalues, poles and zeros in 1/time unit, frequencies in
 * rad per time unit.
 */
import type { LinearSignals, StateSpace } from '../../solve/linearizer';

export interface Complex {
  re: number;
  im: number;
}

/** A linear system y = C x + D u, x' = A x + B u in declared units (row-major matrices). */
export interface LinearSystem extends LinearSignals, StateSpace {
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
  /** Number of eigenvalues this mode stands for: its algebraic multiplicity, twice that for a complex pair. */
  multiplicity: number;
  /** How many times the eigenvalue (for a pair, its +i member) repeats in the spectrum (within REPEAT_TOL·ρ). */
  algebraicMultiplicity: number;
  /** n − rank(λI − A): independent eigenvectors of the eigenvalue (less than the algebraic one: a Jordan chain). */
  geometricMultiplicity: number;
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
  failing: { mode: number; re: number; im: number; deficiency: number; directions: StateDirection[] }[];
}

/**
 * A direction in state space as a combination of states (unit length in declared units, first term
 * positive, terms below 10⁻³ left out): for a mode that fails the controllability test, a left null vector w
 * of [λI − A, B] (wᵀx is untouched by every input); for observability, a right null vector v of
 * [λI − A; C] (a state deviation along v is invisible at every output). Real eigenvalues only.
 */
export type StateDirection = { state: string; weight: number }[];

export interface Horizon {
  /** Length of the step responses in the time unit. */
  value: number;
  /** The time unit of `value`. */
  unit: string;
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
export const RANK_TOL = 1e-9;
/** Eigenvalues closer than this fraction of the spectral radius are one repeated eigenvalue. */
export const REPEAT_TOL = 1e-6;
/** |Re λ| ≤ AXIS_TOL·ρ(A) counts as on the imaginary axis. */
export const AXIS_TOL = 1e-9;

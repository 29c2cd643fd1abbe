/**
 * The sampled-data (discrete-time) model of a linear model, as plain data: the discrete matrices for a
 * sample time T in the model's time unit, the discrete poles with the continuous eigenvalue each comes
 * from, and the stability verdict inside the unit circle. Methods in numeric/discretize.ts and
 * docs/dynamics.md ("Sampled-data models").
 */
import { discretize, type HoldMethod } from '../../numeric/discretize';
import { eigenvalues, sortEigen } from '../../numeric/eigen';
import type { Complex, LinearSystem, StabilityClass } from '../dynamics';
import type { LinearSignals, StateSpace } from '../../solve/linearizer';
import { dimsEqual, parseUnit } from '../../semantics/units';

export interface SampledPole {
  /** Discrete pole z. */
  z: Complex;
  /** |z|. */
  magnitude: number;
  /** The continuous eigenvalue it maps from (null for the poles of the delayed-input states, at z = 0). */
  s: Complex | null;
}

/** The discrete model x[k+1] = A·x[k] + B·u[k], y[k] = C·x[k] + D·u[k] with its names and units. */
export interface SampledModel extends LinearSignals, StateSpace {
  hold: HoldMethod;
  /** Sample time in the model's time unit. */
  sampleTime: number;
  timeUnit: string;
  /** Input delay as a fraction of a sample (0 when none). */
  delayFraction: number;
  poles: SampledPole[];
  verdict: StabilityClass;
  /** Largest |z|. */
  spectralRadius: number;
}

/** The name of the state that holds the previous sample of an input. */
export function heldInputName(input: string): string {
  return `${input}@prev`;
}

/** z of a continuous eigenvalue under the hold method. */
export function mapPole(s: Complex, t: number, hold: HoldMethod): Complex {
  if (hold === 'tustin') {
    // z = (1 + sT/2)/(1 − sT/2)
    const ar = 1 + (s.re * t) / 2, ai = (s.im * t) / 2;
    const br = 1 - (s.re * t) / 2, bi = -(s.im * t) / 2;
    const d = br * br + bi * bi;
    return { re: (ar * br + ai * bi) / d, im: (ai * br - ar * bi) / d };
  }
  const r = Math.exp(s.re * t);
  return { re: r * Math.cos(s.im * t), im: r * Math.sin(s.im * t) };
}

/** |z| within this of 1 counts as on the unit circle (integrators map to z = 1 exactly in exact arithmetic). */
const CIRCLE_TOL = 1e-9;

/**
 * The discrete model of sys for sample time t (model time unit), hold method and input-delay fraction.
 * Returns undefined when the Tustin map is singular (an eigenvalue at s = 2/T).
 */
export function sampledModel(sys: LinearSystem, t: number, hold: HoldMethod, delayFraction = 0): SampledModel | undefined {
  const d = discretize(sys, t, hold, delayFraction);
  if (!d) return undefined;
  const held = d.n - sys.n;
  const ce = eigenvalues({ rows: sys.n, cols: sys.n, data: sys.A });
  const cont = sortEigen(ce.re, ce.im);
  const poles: SampledPole[] = cont.map((s) => {
    const z = mapPole(s, t, hold);
    return { z, magnitude: Math.hypot(z.re, z.im), s };
  });
  for (let k = 0; k < held; k++) poles.push({ z: { re: 0, im: 0 }, magnitude: 0, s: null });
  let rho = 0;
  for (const p of poles) rho = Math.max(rho, p.magnitude);
  const verdict: StabilityClass = rho > 1 + CIRCLE_TOL ? 'unstable' : rho >= 1 - CIRCLE_TOL ? 'marginal' : 'stable';
  return {
    hold, sampleTime: t, timeUnit: sys.timeUnit, delayFraction,
    n: d.n, m: d.m, p: d.p, A: d.A, B: d.B, C: d.C, D: d.D,
    states: held ? [...sys.states, ...sys.inputs.map(heldInputName)] : sys.states.slice(),
    stateUnits: held ? [...sys.stateUnits, ...sys.inputUnits] : sys.stateUnits.slice(),
    inputs: sys.inputs, inputUnits: sys.inputUnits, outputs: sys.outputs, outputUnits: sys.outputUnits,
    poles, verdict, spectralRadius: rho,
  };
}

/**
 * A sample time written by a user: a number in the model's time unit, or with a time unit of its own in
 * brackets ("30[s]", "0.5 [min]"). Returns the value in the model's time unit, or a one-line message.
 */
export function parseSampleTime(text: string, timeUnit: string): number | string {
  const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?:\[([^\]]*)\])?\s*$/.exec(text);
  if (!m) return `"${text.trim()}" is not a number (optionally with a time unit in brackets, e.g. 30[s])`;
  const value = Number(m[1]);
  if (!(value > 0) || !Number.isFinite(value)) return `the sample time must be positive, not "${text.trim()}"`;
  if (m[2] === undefined) return value;
  const given = parseUnit(m[2]);
  const model = parseUnit(timeUnit);
  if (typeof given === 'string') return `unknown unit "${m[2]}": ${given}`;
  if (typeof model === 'string' || !dimsEqual(given.dims, model.dims)) return `[${m[2]}] is not a time unit`;
  return (value * given.scale) / model.scale;
}

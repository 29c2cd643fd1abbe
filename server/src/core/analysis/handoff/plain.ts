/**
 * The hand-off models as plain JSON-ready data (matrices as arrays of rows): what the report carries and
 * what the JSON exports write (present/handoffExports.ts adds the schema tag, the point and the caution).
 */
import type { HoldMethod } from '../../numeric/discretize';
import type { Complex, StabilityClass } from '../dynamics';
import type { ReducedModel } from './reduced';
import type { SampledModel } from './sampled';

export const HOLD_NAMES: Record<HoldMethod, string> = { zoh: 'zero-order hold', foh: 'first-order (triangle) hold', tustin: 'bilinear (Tustin) map' };

/** A linear model's names, units and matrices as rows: the one JSON field list (the linear export extends it too). */
export interface PlainSignals {
  states: string[];
  inputs: string[];
  outputs: string[];
  units: { states: string[]; inputs: string[]; outputs: string[]; time: string };
  A: number[][];
  B: number[][];
  C: number[][];
  D: number[][];
}

export interface SampledPlain extends PlainSignals {
  hold: HoldMethod;
  method: string;
  sampleTime: { value: number; unit: string };
  delayFraction: number;
  poles: { z: Complex; magnitude: number; s: Complex | null }[];
  verdict: StabilityClass;
  spectralRadius: number;
}

export interface ReducedPlain extends PlainSignals {
  method: string;
  fullOrder: number;
  order: number;
  kept: number;
  unstable: number;
  hankel: number[];
  bound: number;
  tolerance: number;
  suggested: number;
  residual: { controllability: number; observability: number };
}

type Num = (v: number) => number;
const rowsOf = (a: Float64Array, r: number, c: number, n: Num) => Array.from({ length: r }, (_, i) => Array.from(a.subarray(i * c, (i + 1) * c), n));

function signals(s: SampledModel | ReducedModel, n: Num): PlainSignals {
  return {
    states: s.states, inputs: s.inputs, outputs: s.outputs,
    units: { states: s.stateUnits, inputs: s.inputUnits, outputs: s.outputUnits, time: s.timeUnit },
    A: rowsOf(s.A, s.n, s.n, n), B: rowsOf(s.B, s.n, s.m, n), C: rowsOf(s.C, s.p, s.n, n), D: rowsOf(s.D, s.p, s.m, n),
  };
}

const exact: Num = (v) => v;

/** A sampled model as plain data; `n` rounds every number (exact by default). */
export function sampledPlain(s: SampledModel, n: Num = exact): SampledPlain {
  const c = (z: Complex) => ({ re: n(z.re), im: n(z.im) });
  return {
    hold: s.hold, method: HOLD_NAMES[s.hold], sampleTime: { value: s.sampleTime, unit: s.timeUnit }, delayFraction: s.delayFraction,
    ...signals(s, n),
    poles: s.poles.map((p) => ({ z: c(p.z), magnitude: n(p.magnitude), s: p.s ? c(p.s) : null })),
    verdict: s.verdict, spectralRadius: n(s.spectralRadius),
  };
}

/** A reduced model as plain data; `n` rounds every number (exact by default). */
export function reducedPlain(r: ReducedModel, n: Num = exact): ReducedPlain {
  return {
    method: 'balanced truncation (square-root)', fullOrder: r.fullOrder, order: r.order, kept: r.kept, unstable: r.unstable,
    hankel: r.hankel.map(n), bound: n(r.bound), tolerance: r.tolerance, suggested: r.suggested, residual: r.residual,
    ...signals(r, n),
  };
}

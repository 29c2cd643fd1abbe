/**
 * A smaller model by balanced truncation, as plain data: the Hankel singular values, the a-priori error
 * bound, the suggested order for a tolerance, and the reduced matrices with their state names. Method in
 * numeric/balancedTruncation.ts and docs/dynamics.md ("Smaller models").
 */
import { balancedTruncation, suggestOrder } from '../../numeric/balancedTruncation';
import type { LinearSystem } from '../dynamics';
import type { LinearSignals, StateSpace } from '../../solve/linearizer';

/** The reduced model (balanced states first, then the unstable part) with its names; states have no unit. */
export interface ReducedModel extends LinearSignals, StateSpace {
  /** Order of the full model and of the reduced one. */
  fullOrder: number;
  order: number;
  /** Hankel singular values of the stable part, descending (in output-per-input units). */
  hankel: number[];
  /** Stable balanced states kept, and unstable (or marginal) modes kept exactly. */
  kept: number;
  unstable: number;
  /** 2·Σ(discarded σ): ‖G − G_r‖∞ is at most this. */
  bound: number;
  /** The tolerance used to suggest the order (relative to the largest Hankel singular value). */
  tolerance: number;
  /** The order the tolerance suggests (stable part), whether or not it was used. */
  suggested: number;
  timeUnit: string;
  residual: { controllability: number; observability: number };
}

/** Names of the reduced states: balanced coordinates, then the unstable part kept exactly. */
export function reducedStateNames(kept: number, unstable: number): string[] {
  return [...Array.from({ length: kept }, (_, i) => `bal${i + 1}`), ...Array.from({ length: unstable }, (_, i) => `kept${i + 1}`)];
}

export interface ReduceOptions {
  /** Stable states to keep (default: the order the tolerance suggests). */
  order?: number;
  /** Error bound relative to the largest Hankel singular value (default 1e-3). */
  tolerance?: number;
}

/** Balanced truncation of sys; undefined when a Lyapunov equation or the stable/unstable split fails. */
export function reducedModel(sys: LinearSystem, opts: ReduceOptions = {}): ReducedModel | undefined {
  const tolerance = opts.tolerance ?? 1e-3;
  const bt = balancedTruncation(sys, { order: opts.order, tolerance });
  if (!bt) return undefined;
  return {
    fullOrder: sys.n,
    order: bt.reduced.n,
    hankel: bt.hankel,
    kept: bt.kept,
    unstable: bt.unstable,
    bound: bt.bound,
    tolerance,
    suggested: suggestOrder(bt.hankel, tolerance),
    n: bt.reduced.n, m: bt.reduced.m, p: bt.reduced.p,
    A: bt.reduced.A, B: bt.reduced.B, C: bt.reduced.C, D: bt.reduced.D,
    states: reducedStateNames(bt.kept, bt.unstable),
    stateUnits: new Array<string>(bt.reduced.n).fill(''),
    inputs: sys.inputs, inputUnits: sys.inputUnits, outputs: sys.outputs, outputUnits: sys.outputUnits,
    timeUnit: sys.timeUnit,
    residual: bt.residual,
  };
}

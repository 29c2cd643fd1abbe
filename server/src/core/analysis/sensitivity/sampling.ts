/**
 * Tolerance bands by sampling: Latin hypercube samples of the constants with a tolerance (McKay, Beckman &
 * Conover 1979: each constant's band cut into N equal strata, one sample per stratum, the strata paired at
 * random across constants), each sample a re-solved point (Newton from the nominal point) and its linear
 * model: eigenvalues, the stability verdict and the steady-state gains. The core gives the plan and a pure
 * function that evaluates a chunk of samples; the shells run the chunks in worker threads.
 */
import type { Analysis } from '../../pipeline/analysis';
import { solvePoint } from '../../solve/pointSolver';
import { linearize } from '../../solve/linearizer';
import { linearSystem } from '../dynamics/system';
import { spectrum, stabilityOf } from '../dynamics/modes';
import { steadyStateGain } from '../dynamics/dcGain';
import type { Complex, StabilityClass } from '../dynamics/types';

/** One constant that varies: its slot, the nominal value at the point and the half-width of its band (SI). */
export interface PlanConstant {
  name: string;
  slot: number;
  centerSI: number;
  halfWidthSI: number;
  /** The band as written (± 5 %). */
  text: string;
}

export interface SamplePlan {
  point: string;
  seed: number;
  count: number;
  constants: PlanConstant[];
  /** count × constants.length positions in [0, 1), row-major (sample i, constant k). */
  unit: number[];
}

export interface SampleResult {
  /** Whether the point solved and linearized. */
  ok: boolean;
  /** Values of the varied constants (declared order of the plan, SI). */
  values: number[];
  /** Every eigenvalue (both members of a pair), dominant first. */
  eigenvalues: Complex[];
  stability: StabilityClass | 'failed';
  /** Steady-state gains row by row (p × m), null when A is singular or the sample failed. */
  gains: number[] | null;
}

/** A small deterministic generator (SplitMix32-style integer hashing of a counter): the same seed gives the same samples everywhere. */
export function randomStream(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x9e3779b9) >>> 0;
    let z = s;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
    z = (z ^ (z >>> 16)) >>> 0;
    return z / 4294967296;
  };
}

/** Latin hypercube: `count` points in [0, 1)^dims, one per stratum in every dimension (row-major). */
export function latinHypercube(dims: number, count: number, seed: number): number[] {
  const rnd = randomStream(seed);
  const out = new Array<number>(dims * count).fill(0);
  for (let k = 0; k < dims; k++) {
    const perm = Array.from({ length: count }, (_, i) => i);
    for (let i = count - 1; i > 0; i--) {
      const j = Math.floor(rnd() * (i + 1));
      [perm[i], perm[j]] = [perm[j], perm[i]];
    }
    for (let i = 0; i < count; i++) out[i * dims + k] = (perm[i] + rnd()) / count;
  }
  return out;
}

/** The constants with a tolerance that the point uses (a constant the point gives again varies around that value). */
export function sampleConstants(a: Analysis, pointName?: string): PlanConstant[] {
  const sol = a.point(pointName);
  if (!sol || !sol.ok) return [];
  const out: PlanConstant[] = [];
  for (const t of a.tolerances.tolerances) {
    const id = a.lowered.slotOf(t.symbol);
    if (id < 0) continue;
    out.push({ name: t.name, slot: id, centerSI: sol.values[id], halfWidthSI: t.halfWidthSI, text: t.text });
  }
  return out;
}

export function samplePlan(a: Analysis, pointName: string | undefined, count: number, seed: number): SamplePlan {
  const constants = sampleConstants(a, pointName);
  const point = a.point(pointName)?.name ?? pointName ?? '';
  return { point, seed, count, constants, unit: latinHypercube(constants.length, count, seed) };
}

/** The constants' SI values of sample i: uniform over each band. */
export function sampleValues(plan: SamplePlan, i: number): number[] {
  const k = plan.constants.length;
  return plan.constants.map((c, j) => c.centerSI + c.halfWidthSI * (2 * plan.unit[i * k + j] - 1));
}

/** Re-solves the point with the given constants (SI, by slot) and describes its linear model. */
export function evaluateAt(a: Analysis, pointName: string, overrides: Map<number, number>): Omit<SampleResult, 'values'> {
  const fail: Omit<SampleResult, 'values'> = { ok: false, eigenvalues: [], stability: 'failed', gains: null };
  const nominal = a.point(pointName);
  const block = a.pointBlock(pointName);
  if (!nominal || !nominal.ok || !block) return fail;
  try {
    const sol = solvePoint(a.bound, a.lowered, block, { overrides, start: nominal.values });
    if (!sol.ok) return fail;
    // a constrained model: its reduction at the sample, the nominal point's states kept while they can be
    const dm = a.indexPlan ? a.dynamicsAt(sol.values, a.dynamicsAt(nominal.values).selection?.dummies) : undefined;
    if (dm && !dm.selection) return fail;
    const lin = dm ? linearize(dm.model, dm.unknowns, dm.values, sol.name, block.name.span) : linearize(a.lowered, a.structure.unknowns, sol.values, sol.name, block.name.span);
    if (!lin.ok) return fail;
    const sys = linearSystem(lin);
    const sp = spectrum(sys);
    let maxRe = -Infinity;
    for (const e of sp.eigenvalues) maxRe = Math.max(maxRe, e.re);
    const stability = sys.n ? stabilityOf(maxRe, sp.axisTol) : 'stable';
    const g = steadyStateGain(sys);
    return { ok: true, eigenvalues: sp.eigenvalues, stability, gains: g ? g.flat() : null };
  } catch {
    return fail;
  }
}

/** Samples from … to−1 of the plan (what one worker does). */
export function evaluateChunk(a: Analysis, plan: SamplePlan, from: number, to: number): SampleResult[] {
  const out: SampleResult[] = [];
  for (let i = from; i < Math.min(to, plan.count); i++) {
    const values = sampleValues(plan, i);
    const ov = new Map<number, number>();
    plan.constants.forEach((c, j) => ov.set(c.slot, values[j]));
    out.push({ values, ...evaluateAt(a, plan.point, ov) });
  }
  return out;
}

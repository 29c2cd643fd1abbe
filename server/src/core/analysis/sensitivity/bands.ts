/**
 * Bands of the poles, the gains and the stability verdict from the constants' tolerances, two ways:
 * first order (each quantity moves by Σ |∂q/∂p|·(half-width of p): the worst case of the linearized
 * effects, from sensitivity.ts) and sampled (the spread of re-solved Latin hypercube samples, sampling.ts),
 * with the share of samples that are unstable and its 95 % Wilson score interval.
 */
import type { Analysis } from '../../pipeline/analysis';
import type { Complex } from '../dynamics/types';
import { stabilityOf } from '../dynamics/modes';
import { rankedEffects, sensitivities, type RankedEffect, type Sensitivities } from './sensitivity';
import type { PlanConstant, SamplePlan, SampleResult } from './sampling';
import { sampleConstants } from './sampling';

export interface ToleranceConstant {
  name: string;
  /** The band as written, e.g. "± 5 %". */
  text: string;
  value: number;
  unit: string;
  low: number;
  high: number;
}

export interface ModeBand {
  number: number;
  eigenvalue: Complex;
  /** [low, high] of Re λ and Im λ. */
  re: [number, number];
  im: [number, number];
  /** Whether the band of Re λ reaches the imaginary axis (or beyond) while λ itself is in the left half-plane. */
  crossesAxis: boolean;
}

export interface GainBand {
  output: string;
  input: string;
  unit: string;
  value: number;
  low: number;
  high: number;
}

export interface SampledBands {
  count: number;
  seed: number;
  /** Samples whose point did not solve or linearize. */
  failed: number;
  unstable: number;
  marginal: number;
  /** unstable / (count − failed), and its 95 % Wilson score interval. */
  probabilityUnstable: number;
  interval: [number, number];
  modes: ModeBand[];
  gains: GainBand[];
  /** Every eigenvalue of every sample (for the pole cloud); the nominal ones are in `modes`. */
  cloud: Complex[];
}

export interface SensitivityReport {
  ok: boolean;
  problem?: string;
  point: string;
  timeUnit: string;
  sensitivities: Sensitivities;
  /** For each mode (dominant first), the constants ranked by their effect of a 1 % larger value. */
  ranked: { number: number; eigenvalue: Complex; condition: number; effects: RankedEffect[] }[];
  /** Ranked effects on the gains: for each gain, its % change for a 1 % larger constant, largest first. */
  rankedGains: { output: string; input: string; unit: string; value: number; effects: { parameter: string; percent: number }[] }[];
  tolerances: ToleranceConstant[];
  firstOrder?: { modes: ModeBand[]; gains: GainBand[]; verdict: string };
  sampled?: SampledBands;
}

/** The sensitivity table and the first-order bands (no sampling: that is `withSamples`). */
export function sensitivityReport(a: Analysis, pointName?: string, top = 5): SensitivityReport {
  const s = sensitivities(a, pointName);
  const base: SensitivityReport = { ok: s.ok, problem: s.problem, point: s.point, timeUnit: s.timeUnit, sensitivities: s, ranked: [], rankedGains: [], tolerances: [] };
  if (!s.ok) return base;
  base.ranked = s.modes.map((m) => ({ number: m.number, eigenvalue: m.eigenvalue, condition: m.condition, effects: rankedEffects(s, m, top) }));
  base.rankedGains = s.gains.map((g) => ({
    output: g.output, input: g.input, unit: g.unit, value: g.value,
    effects: s.parameters
      .map((par, k) => ({ parameter: par.name, percent: g.value !== 0 ? ((g.d[k] * 0.01 * par.value) / g.value) * 100 : 0 }))
      .filter((e) => e.percent !== 0)
      .sort((x, y) => Math.abs(y.percent) - Math.abs(x.percent))
      .slice(0, top),
  }));
  const consts = sampleConstants(a, s.point);
  if (!consts.length) return base;
  const idx = new Map(s.parameters.map((p, k) => [p.slot, k]));
  base.tolerances = consts.map((c) => {
    const par = s.parameters[idx.get(c.slot) ?? -1];
    const scale = par?.scale ?? 1;
    const value = par ? par.value : c.centerSI;
    return { name: c.name, text: c.text, value, unit: par?.unit ?? '', low: value - c.halfWidthSI / scale, high: value + c.halfWidthSI / scale };
  });
  base.firstOrder = firstOrderBands(s, consts, idx);
  return base;
}

function firstOrderBands(s: Sensitivities, consts: PlanConstant[], idx: Map<number, number>): NonNullable<SensitivityReport['firstOrder']> {
  const half = consts.map((c) => {
    const k = idx.get(c.slot);
    return k === undefined ? undefined : { k, h: c.halfWidthSI / s.parameters[k].scale };
  });
  const modes = s.modes.map((m): ModeBand => {
    let dr = 0, di = 0;
    for (const x of half) {
      if (!x) continue;
      dr += Math.abs(m.d[x.k].re) * x.h;
      di += Math.abs(m.d[x.k].im) * x.h;
    }
    const lam = m.eigenvalue;
    return { number: m.number, eigenvalue: lam, re: [lam.re - dr, lam.re + dr], im: [lam.im - di, lam.im + di], crossesAxis: lam.re < -s.axisTol && lam.re + dr >= -s.axisTol };
  });
  const gains = s.gains.map((g): GainBand => {
    let dg = 0;
    for (const x of half) if (x) dg += Math.abs(g.d[x.k]) * x.h;
    return { output: g.output, input: g.input, unit: g.unit, value: g.value, low: g.value - dg, high: g.value + dg };
  });
  const worst = modes.reduce((w, m) => Math.max(w, m.re[1]), -Infinity);
  const nominal = modes.reduce((w, m) => Math.max(w, m.eigenvalue.re), -Infinity);
  const cls = stabilityOf(nominal, s.axisTol);
  const verdict = !modes.length ? 'no modes'
    : cls !== 'stable' ? `${cls} at the nominal values`
    : stabilityOf(worst, s.axisTol) === 'stable' ? 'stable over the whole first-order band'
    : 'the first-order band of a mode reaches the imaginary axis: the model may lose stability within the tolerances';
  return { modes, gains, verdict };
}

/** Adds the sampled bands to a report: `results` are the evaluated samples of `plan`, in order. */
export function withSamples(r: SensitivityReport, plan: SamplePlan, results: SampleResult[]): SensitivityReport {
  const ok = results.filter((x) => x.ok);
  const failed = results.length - ok.length;
  const unstable = ok.filter((x) => x.stability === 'unstable').length;
  const marginal = ok.filter((x) => x.stability === 'marginal').length;
  const nOk = ok.length;
  const pHat = nOk ? unstable / nOk : NaN;
  const cloud: Complex[] = [];
  for (const x of ok) for (const e of x.eigenvalues) cloud.push(e);
  // each nominal mode gets the nearest unused eigenvalue (upper half-plane member) of every sample
  const modes: ModeBand[] = r.sensitivities.modes.map((m) => ({ number: m.number, eigenvalue: m.eigenvalue, re: [Infinity, -Infinity], im: [Infinity, -Infinity], crossesAxis: false }));
  for (const x of ok) {
    const upper = x.eigenvalues.filter((e) => e.im >= 0);
    const used = new Uint8Array(upper.length);
    for (const band of modes) {
      let best = -1, bestD = Infinity;
      upper.forEach((e, j) => {
        if (used[j]) return;
        const d = Math.hypot(e.re - band.eigenvalue.re, e.im - band.eigenvalue.im);
        if (d < bestD) { bestD = d; best = j; }
      });
      if (best < 0) continue;
      used[best] = 1;
      const e = upper[best];
      band.re = [Math.min(band.re[0], e.re), Math.max(band.re[1], e.re)];
      band.im = [Math.min(band.im[0], e.im), Math.max(band.im[1], e.im)];
    }
  }
  const axisTol = r.sensitivities.axisTol;
  for (const b of modes) b.crossesAxis = b.eigenvalue.re < -axisTol && b.re[1] >= -axisTol;
  const gains: GainBand[] = r.sensitivities.gains.map((g, k) => {
    let lo = Infinity, hi = -Infinity;
    for (const x of ok) {
      if (!x.gains) continue;
      lo = Math.min(lo, x.gains[k]);
      hi = Math.max(hi, x.gains[k]);
    }
    return { output: g.output, input: g.input, unit: g.unit, value: g.value, low: lo, high: hi };
  });
  return { ...r, sampled: { count: results.length, seed: plan.seed, failed, unstable, marginal, probabilityUnstable: pHat, interval: wilson(unstable, nOk), modes, gains, cloud } };
}

/** 95 % Wilson score interval of a binomial proportion k/n. */
export function wilson(k: number, n: number): [number, number] {
  if (!n) return [0, 1];
  const z = 1.959963984540054;
  const p = k / n;
  const den = 1 + (z * z) / n;
  const mid = (p + (z * z) / (2 * n)) / den;
  const half = (z * Math.sqrt((p * (1 - p)) / n + (z * z) / (4 * n * n))) / den;
  return [k === 0 ? 0 : Math.max(0, mid - half), k === n ? 1 : Math.min(1, mid + half)];
}

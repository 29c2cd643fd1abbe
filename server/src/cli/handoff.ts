/**
 * `poise sample FILE --every T [--hold zoh|foh|tustin] [--delay F]` and
 * `poise reduce FILE [--order N | --within REL]`: the hand-off models of the linear model at the point
 * (the discrete-time model for a sample time; a smaller model by balanced truncation), as text or in an
 * export format (docs/exports.md). Methods in docs/dynamics.md.
 */
import type { Analysis } from '../core/pipeline/analysis';
import { linearSystem, type LinearSystem } from '../core/analysis/dynamics';
import { parseSampleTime, sampledModel } from '../core/analysis/handoff/sampled';
import { reducedModel } from '../core/analysis/handoff/reduced';
import { formatReducedText, formatSampledText } from '../core/present/handoffText';
import { exportReduced, exportSampled } from '../core/present/handoffExports';
import type { ExportFormat } from '../core/present/exports';
import type { HoldMethod } from '../core/numeric/discretize';
import type { Parsed } from './options';
import type { CliHelpers, Io } from './shared';

/** A sample time in the model's time unit (analysis/handoff/sampled.ts). */
export const sampleTimeIn = parseSampleTime;

/** A fraction in [0, 1): "0.35" or "35%". */
export function fractionOf(text: string): number | undefined {
  const t = text.trim();
  const v = t.endsWith('%') ? Number(t.slice(0, -1)) / 100 : Number(t);
  return t !== '' && Number.isFinite(v) && v >= 0 && v < 1 ? v : undefined;
}

/** --hold and --delay, checked. */
export function holdOptions(p: Parsed, h: CliHelpers): { hold: HoldMethod; delay: number } {
  const hold = (h.opt(p, '--hold') ?? 'zoh') as HoldMethod;
  const delayText = h.opt(p, '--delay');
  let delay = 0;
  if (delayText !== undefined) {
    const f = fractionOf(delayText);
    if (f === undefined) throw new h.UsageError(`--delay takes a fraction of a sample from 0 up to (not including) 1, or a percentage below 100%, not "${delayText}"`);
    if (f > 0 && hold !== 'zoh') throw new h.UsageError(`--delay works with --hold zoh only (the input delay is exact for a held input), not with --hold ${hold}`);
    delay = f;
  }
  return { hold, delay };
}

/** --order and --within, checked. */
export function reduceOptions(p: Parsed, h: CliHelpers): { order?: number; tolerance?: number } {
  const orderText = h.opt(p, '--order');
  const withinText = h.opt(p, '--within');
  if (orderText !== undefined && withinText !== undefined) throw new h.UsageError('give --order or --within, not both');
  let tolerance: number | undefined;
  if (withinText !== undefined) {
    const t = withinText.trim();
    tolerance = t.endsWith('%') ? Number(t.slice(0, -1)) / 100 : Number(t);
    if (!(tolerance > 0) || !Number.isFinite(tolerance)) throw new h.UsageError(`--within takes a positive bound relative to the largest Hankel singular value (1e-3, or 0.1%), not "${withinText}"`);
  }
  return { order: orderText === undefined ? undefined : Number(orderText), tolerance };
}

/** The linear system at the chosen point, or undefined after printing why not. */
function systemAt(file: string, p: Parsed, io: Io, h: CliHelpers): { a: Analysis; point: string; sys: LinearSystem } | undefined {
  const r = h.prepare(file, h.opt(p, '--point'), io);
  if (!r) return undefined;
  const lin = r.a.linear(r.point);
  if (!lin || !lin.ok) {
    for (const d of lin?.diagnostics ?? []) io.err(`${file}: ${d.message}`);
    if (!lin?.diagnostics.length) io.err(`${file}: the model cannot be linearized at point "${r.point}"`);
    return undefined;
  }
  if (lin.n === 0) {
    io.err(`${file}: the model has no states at point "${r.point}": there is no dynamics to ${p.cmd}`);
    return undefined;
  }
  return { a: r.a, point: r.point, sys: linearSystem(lin) };
}

export async function sampleCommand(p: Parsed, io: Io, h: CliHelpers): Promise<number> {
  const file = h.oneFile(p);
  const format = h.opt(p, '--format') ?? 'text';
  const every = h.opt(p, '--every');
  if (every === undefined) throw new h.UsageError('"poise sample" needs the sample time: --every T (in the model\'s time unit, or with a unit: --every 30[s])');
  const { hold, delay } = holdOptions(p, h);
  const digits = h.digitsOf(p, 5);
  const r = systemAt(file, p, io, h);
  if (!r) return 1;
  const T = sampleTimeIn(every, r.sys.timeUnit);
  if (typeof T === 'string') throw new h.UsageError(`--every: ${T}`);
  const s = sampledModel(r.sys, T, hold, delay);
  if (!s) {
    io.err(`${file}: the bilinear map is singular for T = ${T} ${r.sys.timeUnit}: the model has an eigenvalue at s = 2/T; choose another sample time`);
    return 1;
  }
  if (format === 'text') io.out(formatSampledText(s, digits));
  else io.out(exportSampled(s, format as ExportFormat, { point: r.point, digits: h.opt(p, '--digits') === undefined ? undefined : digits }));
  return 0;
}

export async function reduceCommand(p: Parsed, io: Io, h: CliHelpers): Promise<number> {
  const file = h.oneFile(p);
  const format = h.opt(p, '--format') ?? 'text';
  const opts = reduceOptions(p, h);
  const digits = h.digitsOf(p, 5);
  const r = systemAt(file, p, io, h);
  if (!r) return 1;
  const red = reducedModel(r.sys, opts);
  if (!red) {
    io.err(`${file}: balanced truncation failed at point "${r.point}": an eigenvalue too close to the imaginary axis to split the stable part off, or a Lyapunov equation without a solution`);
    return 1;
  }
  if (format === 'text') io.out(formatReducedText(red, digits));
  else io.out(exportReduced(red, format as ExportFormat, { point: r.point, digits: h.opt(p, '--digits') === undefined ? undefined : digits }));
  return 0;
}

/**
 * `poise report FILE [--point NAME] [--html OUT.html] [--step INPUT=SIZE]... [--format text|json] [--tolerance PCT] [--quick]
 *   [--every T [--hold H] [--delay F]] [--reduce [--order N | --within REL]]`
 *
 * Prints the dynamics at the point (text summary or JSON) and, with --html, writes the standalone page.
 * SIZE is in the input's declared unit, a number with a unit in brackets (0.5[L/s]), or a percentage of
 * its operating value with a trailing "%". The options are validated by the table in options.ts.
 */
import * as fs from 'fs';
import * as path from 'path';
import { buildReport } from '../core/analysis/report';
import { renderReportHtml } from '../core/present/reportHtml';
import { formatReportText } from '../core/present/reportText';
import type { Parsed } from './options';
import type { CliHelpers, Io } from './shared';
import { sizeInDeclaredUnit } from './quantity';
import { holdOptions, reduceOptions, sampleTimeIn } from './handoff';

/** Integrator step attempts a quick report may spend on its nonlinear step responses. */
export const QUICK_WORK = 2000;
import { reportSensitivity } from './sensitivity';

export async function reportCommand(p: Parsed, io: Io, h: CliHelpers): Promise<number> {
  const file = h.oneFile(p);
  const format = h.opt(p, '--format') ?? 'text';
  const tolText = h.opt(p, '--tolerance');
  let tolerance: number | undefined;
  if (tolText !== undefined) {
    const v = Number(tolText.replace(/%$/, ''));
    if (!Number.isFinite(v) || v <= 0 || v >= 100) throw new h.UsageError(`--tolerance takes a percentage between 0 and 100, not "${tolText}"`);
    tolerance = v / 100;
  }
  const stepSpecs = h.all(p, '--step');
  const htmlOut = h.opt(p, '--html');
  // the hand-off sections (docs/dynamics.md): --every T [--hold] [--delay]; --reduce [--order N | --within REL]
  const every = h.opt(p, '--every');
  const { hold, delay } = holdOptions(p, h);
  if (every === undefined && (p.opts.has('--hold') || p.opts.has('--delay'))) throw new h.UsageError('--hold and --delay go with --every T (the sample time)');
  const reduce = p.opts.has('--reduce') ? reduceOptions(p, h) : undefined;
  if (!reduce && (p.opts.has('--order') || p.opts.has('--within'))) throw new h.UsageError('--order and --within go with --reduce');
  const r = h.prepare(file, h.opt(p, '--point'), io);
  if (!r) return 1;
  const lin = r.a.linear(r.point);
  if (!lin || !lin.ok) {
    for (const d of lin?.diagnostics ?? []) io.err(h.formatDiagnostic(r.a, file, d));
    if (!lin?.diagnostics.length) io.err(`${file}: the model cannot be linearized at point "${r.point}"`);
    return 1;
  }
  const sol = r.a.point(r.point)!;
  const values = new Map(r.a.values(sol).map((v) => [v.name, v]));
  const steps: Record<string, number> = Object.create(null) as Record<string, number>; // input names are the keys
  for (const spec of stepSpecs) {
    const eq = spec.indexOf('=');
    if (eq <= 0) throw new h.UsageError(`--step takes INPUT=SIZE, not "${spec}"`);
    const name = spec.slice(0, eq).trim();
    const sizeText = spec.slice(eq + 1).trim();
    if (!lin.inputs.includes(name)) {
      throw new h.UsageError(`--step: "${name}" is not an input of the model${lin.inputs.length ? ` (inputs: ${lin.inputs.join(', ')})` : ''}`);
    }
    let size: number;
    if (sizeText.endsWith('%')) {
      const pct = Number(sizeText.slice(0, -1));
      const op = values.get(name)?.value ?? 0;
      size = (pct / 100) * (op !== 0 ? Math.abs(op) : 1);
    } else {
      const v = sizeInDeclaredUnit(r.a, name, sizeText);
      if (typeof v === 'string') throw new h.UsageError(`--step ${name}: ${v}`);
      size = v;
    }
    if (!Number.isFinite(size) || size === 0) throw new h.UsageError(`--step ${name}: "${sizeText}" is not a non-zero number (a value in the input's unit, a value with a unit like 0.5[L/s], or a percentage like 5%)`);
    steps[name] = size;
  }
  // --quick: no validity search, and each report's nonlinear simulations within QUICK_WORK integrator steps
  const quick = p.opts.has('--quick');
  let sample: { every: number; hold: typeof hold; delay: number } | undefined;
  if (every !== undefined) {
    const T = sampleTimeIn(every, lin.timeUnit);
    if (typeof T === 'string') throw new h.UsageError(`--every: ${T}`);
    sample = { every: T, hold, delay };
  }
  const data = buildReport(r.a, r.point, { steps, tolerance, title: path.basename(file), sample, reduce, ...(quick ? { quick: true, workBudget: QUICK_WORK } : {}) });
  if (!data.ok) {
    // problems of the point's dynamics: located at the point's header
    const at = r.a.lines.position(r.a.pointBlock(r.point)!.name.span.start);
    for (const m of data.problems) io.err(`${file}:${at.line + 1}:${at.character + 1}: error: ${m}`);
    return 1;
  }
  if (htmlOut) {
    try {
      fs.mkdirSync(path.dirname(path.resolve(htmlOut)), { recursive: true });
      fs.writeFileSync(htmlOut, renderReportHtml(data, { sensitivity: await reportSensitivity(file, r.a, r.point) }), 'utf8');
    } catch (e) {
      io.err(`poise: cannot write ${htmlOut}: ${(e as Error).message}`);
      return 1;
    }
  }
  if (format === 'json') io.out(JSON.stringify(data));
  else {
    io.out(formatReportText(data));
    if (htmlOut) io.out(`\nWrote ${htmlOut}`);
  }
  return 0;
}

/**
 * `poise sensitivity FILE [--point NAME] [--top N] [--samples N] [--seed N] [--workers N] [--format text|json] [--html OUT.html]`
 *
 * The ranked sensitivities of the modes and gains to every constant at the point, and, when the model
 * writes tolerances on constants, their bands: first order at once, and sampled (Latin hypercube) in
 * worker threads (sampleWorkers.ts).
 */
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { samplePlan, sensitivityReport, withSamples, type SensitivityReport } from '../core/analysis/sensitivity';
import type { Analysis } from '../core/pipeline/analysis';
import { formatSensitivityText } from '../core/present/sensitivityText';
import { sensitivityPage } from '../core/present/sensitivityHtml';
import type { Parsed } from './options';
import type { CliHelpers, Io } from './shared';
import { runSamples } from './sampleWorkers';

export async function sensitivityCommand(p: Parsed, io: Io, h: CliHelpers): Promise<number> {
  const file = h.oneFile(p);
  const format = h.opt(p, '--format') ?? 'text';
  const top = Number(h.opt(p, '--top') ?? 5);
  const samples = Number(h.opt(p, '--samples') ?? 1000);
  const seed = Number(h.opt(p, '--seed') ?? 1);
  const workers = Number(h.opt(p, '--workers') ?? Math.min(8, Math.max(1, os.cpus().length)));
  const htmlOut = h.opt(p, '--html');
  const r = h.prepare(file, h.opt(p, '--point'), io);
  if (!r) return 1;
  let report = sensitivityReport(r.a, r.point, top);
  if (!report.ok) {
    io.err(`${file}: no sensitivities at point "${r.point}": ${report.problem}`);
    return 1;
  }
  if (report.tolerances.length && samples > 0) {
    const plan = samplePlan(r.a, r.point, samples, seed);
    const results = await runSamples(file, r.a.text, plan, workers);
    report = withSamples(report, plan, results);
  }
  if (htmlOut) {
    try {
      fs.mkdirSync(path.dirname(path.resolve(htmlOut)), { recursive: true });
      fs.writeFileSync(htmlOut, sensitivityPage(report, path.basename(file)), 'utf8');
    } catch (e) {
      io.err(`poise: cannot write ${htmlOut}: ${(e as Error).message}`);
      return 1;
    }
  }
  if (format === 'json') io.out(JSON.stringify({ schema: 'poise-sensitivity/1', ...report }));
  else {
    io.out(formatSensitivityText(report));
    if (htmlOut) io.out(`\nWrote ${htmlOut}`);
  }
  return 0;
}

/** The page's sensitivity section: the table, and the bands with 500 samples when the model has tolerances. */
export async function reportSensitivity(file: string, a: Analysis, point: string): Promise<SensitivityReport | undefined> {
  const r = sensitivityReport(a, point);
  if (!r.ok) return undefined;
  if (!r.tolerances.length) return r;
  const plan = samplePlan(a, point, 500, 1);
  return withSamples(r, plan, await runSamples(file, a.text, plan, Math.min(8, Math.max(1, os.cpus().length))));
}

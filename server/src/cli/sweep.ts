/**
 * `poise sweep`: linear models across a range of operating points.
 *
 *   poise sweep FILE --point NAME --vary "NAME = FROM to TO steps N [log]" [--format text|json|csv] [--html OUT.html] [--digits N]
 *   poise sweep FILE --sweep NAME [...]        run a `sweep` block declared in the file
 *   poise sweep FILE                           run the file's only declared sweep
 *
 * The --vary text is a `vary` line of the model language (read by its parser, see vary.ts): FROM and TO
 * are in the declared unit of the varied name, or carry a unit (50 [mm/s]); N is the number of steps
 * (N + 1 values, both ends included).
 */
import * as fs from 'fs';
import * as path from 'path';
import { analyzeDocuments, type Analysis } from '../core/pipeline/analysis';
import { cliSources } from './sourceHost';
import type { Diagnostic } from '../core/diagnostics';
import { sweepHtml } from '../core/present/sweepHtml';
import { declaredSweeps, runSweep, type SweepSpec } from '../core/analysis/sweep';
import { formatSweepText } from '../core/present/sweepText';
import { sweepCsv } from '../core/present/sweepCsv';
import { sweepJson } from '../core/present/sweepJson';
import { varyRequest } from './vary';
import type { Parsed } from './options';
import type { CliHelpers, Io } from './shared';

function where(a: Analysis, file: string, d: Diagnostic): string {
  const w = a.where(d.span);
  return `${w.uri === a.uri ? file : w.uri}:${w.start.line + 1}:${w.start.character + 1}: ${d.severity} ${d.code}: ${d.message}`;
}

export async function sweepCommand(p: Parsed, io: Io, h: CliHelpers): Promise<number> {
  const file = h.oneFile(p);
  const format = h.opt(p, '--format') ?? 'text';
  const digits = h.digitsOf(p, 5);
  const html = h.opt(p, '--html');
  const vary = h.opt(p, '--vary');
  const sweepName = h.opt(p, '--sweep');
  if (vary !== undefined && sweepName !== undefined) throw new h.UsageError('give either --vary or --sweep, not both');

  // the declared sweep to run, if any: needs the model text first
  let point = h.opt(p, '--point');
  let declaredSpec: SweepSpec | undefined;
  if (vary === undefined) {
    const a0 = analyzeDocuments(cliSources(file, h.readModel(file)), file)!;
    const all = declaredSweeps(a0).filter((d) => d.block.name.name);
    let chosen = all[0];
    if (sweepName !== undefined) {
      chosen = all.find((d) => d.block.name.name === sweepName)!;
      if (!chosen) {
        io.err(`${file}: no sweep named "${sweepName}"${all.length ? `; the file declares ${all.map((d) => `"${d.block.name.name}"`).join(', ')}` : ''}`);
        return 1;
      }
    } else if (all.length !== 1) {
      throw new h.UsageError(all.length ? `${file} declares ${all.length} sweeps (${all.map((d) => d.block.name.name).join(', ')}); choose one with --sweep NAME` : '"poise sweep" needs --vary "NAME = FROM to TO steps N" (or a sweep declared in the file)');
    }
    const errors = a0.diagnostics.filter((d) => d.severity === 'error');
    if (errors.length) {
      for (const d of errors) io.err(where(a0, file, d));
      return 1;
    }
    if (chosen.diagnostics.length || !chosen.spec) {
      for (const d of chosen.diagnostics) io.err(where(a0, file, d));
      if (!chosen.diagnostics.length) io.err(`${file}: sweep "${chosen.block.name.name}" is incomplete: it needs "from POINT" and a "vary" line`);
      return 1;
    }
    declaredSpec = chosen.spec;
    if (point !== undefined && point !== chosen.spec.point) throw new h.UsageError(`sweep "${chosen.spec.name}" starts from point "${chosen.spec.point}", not "${point}"`);
    point = chosen.spec.point;
  }

  const r = h.prepare(file, point, io);
  if (!r) return 1;
  let spec = declaredSpec;
  if (!spec) {
    const req = varyRequest(r.a, r.point, vary!);
    if (!req.spec) throw new h.UsageError(req.error ?? 'cannot sweep');
    spec = req.spec;
  }
  const result = runSweep(r.a, spec);
  if (format === 'json') io.out(JSON.stringify(sweepJson(result), null, 1));
  else if (format === 'csv') io.out(sweepCsv(result));
  else io.out(formatSweepText(result, digits));
  if (result.stop) io.err(`${file}: sweep stopped: ${result.stop.message}`);
  if (html !== undefined) {
    try {
      fs.writeFileSync(html, sweepHtml(result, { title: path.basename(file), digits }));
    } catch (e) {
      io.err(`poise: cannot write ${html}: ${(e as Error).message}`);
      return 1;
    }
    io.err(`wrote ${html}`);
  }
  return result.points.length ? 0 : 1;
}

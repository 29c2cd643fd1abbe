/**
 * The work the language server asks of the pure core, as plain-data jobs: each takes an `Analysis` and
 * returns plain (structured-cloneable) data. The server runs a job on its own thread when it is quick (a
 * small model) and in a worker thread when it may take long (server/src/lsp/offload.ts): the same
 * function either way, so both paths give the same answers.
 *
 * A job that cannot do what was asked throws a `JobFailure` whose message says why (a catalogue entry);
 * the request is then answered with that message.
 */
import { pushAll } from '../core/arrays';
import { buildReport } from '../core/analysis/report';
import { parseSampleTime } from '../core/analysis/handoff/sampled';
import { timeUnitLabel } from '../core/semantics/units';
import { renderReportHtml } from '../core/present/reportHtml';
import { sensitivityReport, withSamples, type SamplePlan, type SampleResult } from '../core/analysis/sensitivity';
import { sampledBandsMarkdown } from '../core/present/sampledBandsMarkdown';
import { declaredSweeps, runSweep, sweepCandidates, sweepDiagnostics, variedProblem, type SweepSpec } from '../core/analysis/sweep';
import { catalogueText, type Diagnostic } from '../core/diagnostics';
import type { Analysis } from '../core/pipeline/analysis';
import { EXPORT_FORMATS, exportLinear, type ExportFormat } from '../core/present/exports';
import { sweepHtml } from '../core/present/sweepHtml';
import type { TextEdit } from '../core/services/edits';
import { hover, type HoverResult } from '../core/services/hover';
import { pointLenses, type PointLens } from '../core/services/lenses';
import { linearizeEdit, staleBlockDiagnostics } from '../core/services/linearBlock';
import { solveEdits } from '../core/services/solve';
import type { ExportParams, PageResult, SweepCandidate, SweepParams } from './requests';

/** A deliberate refusal (unknown point, a model with errors, …): answered with its message. */
export class JobFailure extends Error {}

export interface JobSettings {
  digits: number;
  activePoint: string;
  /** The report's hand-off sections (settings.ts); absent means none. */
  reportSampleTime?: string;
  reportReduce?: boolean;
  reportHold?: 'zoh' | 'foh' | 'tustin';
  /** Fraction of a sample, zero-order hold only (ignored with the other holds). */
  reportDelay?: number;
}

export type Job =
  | { kind: 'diagnostics' }
  | { kind: 'pointDiagnostics' }
  | { kind: 'lenses'; digits: number }
  | { kind: 'hover'; offset: number; digits: number; activePoint: string }
  | { kind: 'pointEdit'; action: 'solve' | 'linearize'; point: string; digits: number }
  | { kind: 'report'; file: string; point?: string; settings: JobSettings; samples?: { plan: SamplePlan; results: SampleResult[] } }
  | { kind: 'sampledBands'; point: string; plan: SamplePlan; results: SampleResult[]; digits: number }
  | { kind: 'sweep'; file: string; params: SweepParams; settings: JobSettings }
  | { kind: 'sweepCandidates'; file: string; point?: string; settings: JobSettings }
  | { kind: 'export'; file: string; params: ExportParams; settings: JobSettings };

export type PointEdit = { ok: true; label: string; edits: TextEdit[] } | { ok: false; message: string };

export interface JobResults {
  diagnostics: Diagnostic[];
  pointDiagnostics: Diagnostic[];
  lenses: PointLens[];
  hover: HoverResult | null;
  pointEdit: PointEdit;
  report: PageResult;
  sampledBands: string | undefined;
  sweep: PageResult;
  sweepCandidates: SweepCandidate[];
  export: { text: string };
}

export type JobResult<J extends Job> = JobResults[J['kind']];

/** The file name of a document URI, for messages. */
export function fileName(uri: string): string {
  const last = uri.replace(/[?#].*$/, '').split('/').pop() ?? uri;
  try {
    return decodeURIComponent(last);
  } catch {
    return last;
  }
}

/**
 * The point a request names; an empty or missing point means the `activePoint` setting when it names a
 * point of the file, else the first point.
 */
export function resolvePoint(a: Analysis, file: string, asked: string | undefined, activePoint: string): string {
  const names = a.pointNames;
  const want = (asked ?? '').trim();
  const point = want || (activePoint && names.includes(activePoint) ? activePoint : names[0]);
  if (!point) throw new JobFailure(catalogueText('P802', { file }));
  if (!names.includes(point)) throw new JobFailure(catalogueText('P803', { file, point, names: names.map((n) => `"${n}"`).join(', ') }));
  return point;
}

/**
 * Solve (write the solved values into the point's "~" lines) or Linearize (write the generated linear
 * block): the one definition used by the lenses' command, the source actions and the palette.
 */
export function pointEdit(a: Analysis, action: 'solve' | 'linearize', point: string, digits: number): PointEdit {
  if (action === 'solve') {
    const r = solveEdits(a, point, digits);
    if (!r.ok) return { ok: false, message: catalogueText('P804', { point, detail: r.message }) };
    return { ok: true, label: catalogueText('P706', { point }), edits: r.edits };
  }
  const r = linearizeEdit(a, point, digits);
  if (!r.ok) return { ok: false, message: catalogueText('P805', { point, detail: r.message }) };
  const same = r.edits.length === 1 && a.text.slice(r.edit.span.start, r.edit.span.end) === r.edit.newText;
  return { ok: true, label: catalogueText('P707', { point }), edits: same ? [] : r.edits };
}

/** Every diagnostic of the document, points solved (sorted by position, then code). */
export function allDiagnostics(a: Analysis): Diagnostic[] {
  return [...a.allDiagnostics()].sort((x, y) => x.span.start - y.span.start || x.code.localeCompare(y.code));
}

/**
 * The diagnostics of the document with its points solved but no linear model built: everything
 * `allDiagnostics` gives except what only linearizing finds (a non-finite or singular Jacobian at a point).
 */
export function pointDiagnostics(a: Analysis): Diagnostic[] {
  const out = [...a.diagnostics];
  if (a.canSolve) {
    for (const name of new Set(a.pointNames)) pushAll(out, a.point(name)?.diagnostics ?? []);
    pushAll(out, sweepDiagnostics(a));
  }
  pushAll(out, staleBlockDiagnostics(a));
  return out.sort((x, y) => x.span.start - y.span.start || x.code.localeCompare(y.code));
}

function report(a: Analysis, job: Extract<Job, { kind: 'report' }>): PageResult {
  const point = resolvePoint(a, job.file, job.point, job.settings.activePoint);
  // the editor refreshes the page while the model is edited: keep the validity search short there
  // the hand-off sections when the settings ask for them (poise.reportSampleTime, poise.reportHold,
  // poise.reportDelay, poise.reportReduce); a sample time that is not a positive time leaves the section out
  const T = job.settings.reportSampleTime ? parseSampleTime(job.settings.reportSampleTime, timeUnitLabel(a.lowered.timeUnit)) : undefined;
  const hold = job.settings.reportHold ?? 'zoh';
  // the input delay is exact for a held input only: with the other holds it is left out (docs/editor.md)
  const sample = typeof T === 'number' ? { every: T, hold, delay: hold === 'zoh' ? job.settings.reportDelay ?? 0 : 0 } : undefined;
  const data = buildReport(a, point, { title: job.file, validityBudgetMs: 1500, sample, reduce: job.settings.reportReduce ? {} : undefined });
  // the sensitivity table and first-order bands; the sampled bands and the pole cloud when the server's
  // sampling threads have the samples of this point (lsp/tolerances.ts)
  let sensitivity = data.ok && data.states.length <= 200 ? sensitivityReport(a, point) : undefined;
  if (sensitivity?.ok && job.samples && job.samples.plan.point === point) sensitivity = withSamples(sensitivity, job.samples.plan, job.samples.results);
  return { html: renderReportHtml(data, { sensitivity: sensitivity?.ok ? sensitivity : undefined }), title: `Report: ${data.point}` };
}

function sweep(a: Analysis, job: Extract<Job, { kind: 'sweep' }>): PageResult {
  const p = job.params;
  const asked = resolvePoint(a, job.file, p.point, job.settings.activePoint);
  let spec: SweepSpec | undefined;
  if (p.sweep) {
    const declared = declaredSweeps(a).find((d) => d.block.name.name === p.sweep);
    if (declared) {
      if (declared.diagnostics.length) throw new JobFailure(declared.diagnostics[0].message);
      if (!declared.spec) throw new JobFailure(catalogueText('P811', { name: p.sweep }));
      spec = declared.spec;
    }
  }
  if (!spec) {
    const { vary, from, to, steps } = p;
    if (typeof vary !== 'string' || !vary.trim()) throw new JobFailure('poise/sweep needs the name to vary ("vary")');
    if (from === undefined || to === undefined) throw new JobFailure('poise/sweep needs "from" and "to" as finite numbers (in the declared unit of the varied name)');
    if (steps === undefined) throw new JobFailure('poise/sweep needs "steps", a whole number of steps');
    const problem = variedProblem(a, asked, vary.trim());
    if (problem) throw new JobFailure(problem);
    spec = { point: asked, vary: vary.trim(), from, to, steps, log: p.log === true };
  }
  if (!a.canSolve) throw new JobFailure(catalogueText('P806', { file: job.file, action: 'sweeping' }));
  const result = runSweep(a, spec);
  if (result.stop?.kind === 'start' && !result.points.length) throw new JobFailure(catalogueText('P812', { detail: result.stop.message }));
  const html = sweepHtml(result, { title: job.file, digits: job.settings.digits });
  const title = spec.name ? `Sweep ${spec.name}: ${spec.vary} (${spec.point})` : `Sweep: ${spec.vary} (${spec.point})`;
  return { html, title };
}

function exportText(a: Analysis, job: Extract<Job, { kind: 'export' }>): { text: string } {
  const format = job.params.format;
  if (!(EXPORT_FORMATS as readonly string[]).includes(format)) {
    throw new JobFailure(catalogueText('P810', { format, formats: EXPORT_FORMATS.join(', ') }));
  }
  const point = resolvePoint(a, job.file, job.params.point, job.settings.activePoint);
  if (!a.canSolve) throw new JobFailure(catalogueText('P806', { file: job.file, action: 'exporting' }));
  // exportLinear throws an Error saying why when the point does not solve or cannot be linearized
  try {
    return { text: exportLinear(a, point, format as ExportFormat, { digits: job.params.digits }) };
  } catch (e) {
    throw new JobFailure(e instanceof Error ? e.message : String(e));
  }
}

/** Runs one job on an analysis of the document's current text. */
export function runJob<J extends Job>(a: Analysis, job: J): JobResult<J> {
  return runAny(a, job) as JobResult<J>;
}

function runAny(a: Analysis, job: Job): JobResults[keyof JobResults] {
  switch (job.kind) {
    case 'diagnostics':
      return allDiagnostics(a);
    case 'pointDiagnostics':
      return pointDiagnostics(a);
    case 'lenses':
      return pointLenses(a, job.digits);
    case 'hover':
      return hover(a, job.offset, { digits: job.digits, activePoint: job.activePoint }) ?? null;
    case 'pointEdit':
      return pointEdit(a, job.action, job.point, job.digits);
    case 'report':
      return report(a, job);
    case 'sweep':
      return sweep(a, job);
    case 'sampledBands': {
      // the hover's section on the sampled bands: the first-order report of the point with the samples
      const r = sensitivityReport(a, job.point);
      return r.ok ? sampledBandsMarkdown(withSamples(r, job.plan, job.results), job.digits) || undefined : undefined;
    }
    case 'sweepCandidates':
      return sweepCandidates(a, resolvePoint(a, job.file, job.point, job.settings.activePoint));
    case 'export':
      return exportText(a, job);
  }
}

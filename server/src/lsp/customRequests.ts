/**
 * Poise's own requests (typed in requests.ts, shared with the client): pages, sweeps and exports run in a
 * worker thread (Analyses.pages), so that a long report or sweep never holds up a hover and a cancelled one
 * stops at once; `poise/pointAt` answers from the static analysis.
 */
import type { CancellationToken, Connection } from 'vscode-languageserver/node';
import { catalogueText } from '../core/diagnostics';
import { pointAt } from '../core/services/locate';
import type { Analyses, OpenDocument } from './analyses';
import { guard, type LogError } from './guard';
import { fileName, JobFailure, resolvePoint, type Job, type JobResult } from './jobs';
import type { Samples, ToleranceSamples } from './tolerances';
import * as P from './params';
import { expandedModelText } from '../core/present/modelText';
import { ExpandedRequest, ExportRequest, PointAtRequest, ReportRequest, SweepCandidatesRequest, SweepRequest, type PointParams } from './requests';

export function registerCustomRequests(connection: Connection, analyses: Analyses, log: (m: string) => void, logError: LogError, samples?: ToleranceSamples): void {
  /** The open document (settings pulled) a request names, or a refusal saying it is not open. */
  const document = async (uri: string): Promise<OpenDocument> => {
    if (!analyses.documents.get(uri)) throw new JobFailure(catalogueText('P801', { file: fileName(uri) }));
    await analyses.settings.for(uri);
    const d = analyses.open(uri);
    if (!d) throw new JobFailure(catalogueText('P801', { file: fileName(uri) }));
    return d;
  };
  /** Runs a page job in the worker, logging its time. */
  const page = async <J extends Job>(method: string, p: PointParams, make: (d: OpenDocument) => J, token: CancellationToken): Promise<JobResult<J>> => {
    const d = await document(p.uri);
    const started = Date.now();
    const r = await analyses.pages.run(analyses.snapshot(d), make(d), token);
    log(`${method} ${p.point ?? ''}: ${Date.now() - started} ms`);
    return r;
  };
  const settings = (d: OpenDocument) => ({
    digits: d.s.digits, activePoint: d.s.activePoint, reportSampleTime: d.s.reportSampleTime, reportReduce: d.s.reportReduce, reportHold: d.s.reportHold, reportDelay: d.s.reportDelay,
  });
  /** The tolerance samples of the report's point (sampling threads, lsp/tolerances.ts), when the model has tolerances. */
  const reportSamples = async (p: PointParams, token: CancellationToken): Promise<Samples | undefined> => {
    const d = await document(p.uri);
    if (!samples?.applies(d)) return undefined;
    let point: string;
    try {
      point = resolvePoint(d.a, fileName(p.uri), p.point, d.s.activePoint);
    } catch {
      return undefined; // the page job says what is wrong
    }
    return samples.wait(d, point, token);
  };

  connection.onRequest(ReportRequest, guard(ReportRequest.method, P.pointParams, async (p, token) => {
    const s = await reportSamples(p, token);
    return page(ReportRequest.method, p, (d) => ({ kind: 'report', file: fileName(p.uri), point: p.point, settings: settings(d), samples: s }), token);
  }, logError));

  connection.onRequest(SweepRequest, guard(SweepRequest.method, P.sweepParams, (p, token) =>
    page(SweepRequest.method, p, (d) => ({ kind: 'sweep', file: fileName(p.uri), params: p, settings: settings(d) }), token), logError));

  connection.onRequest(SweepCandidatesRequest, guard(SweepCandidatesRequest.method, P.pointParams, (p, token) =>
    page(SweepCandidatesRequest.method, p, (d) => ({ kind: 'sweepCandidates', file: fileName(p.uri), point: p.point, settings: settings(d) }), token), logError));

  connection.onRequest(ExportRequest, guard(ExportRequest.method, P.exportParams, (p, token) =>
    page(ExportRequest.method, p, (d) => ({ kind: 'export', file: fileName(p.uri), params: p, settings: settings(d) }), token), logError));

  connection.onRequest(ExpandedRequest, guard(ExpandedRequest.method, P.expandedParams, async (p) => {
    const d = await document(p.uri);
    const head = `# ${fileName(p.uri)} expanded by Poise (read-only): every family written element by element, every part under its instance's name`;
    return { text: `${head}\n${expandedModelText(d.a).trimEnd()}\n` };
  }, logError));

  connection.onRequest(PointAtRequest, guard(PointAtRequest.method, P.pointAtParams, (p) => {
    const d = analyses.open(p.uri);
    return { point: d ? pointAt(d.a, d.a.lines.offset(p.position)) : null };
  }, logError));
}

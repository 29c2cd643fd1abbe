/**
 * The open documents' analyses and where their work runs. The static stages (parse … structure) run on
 * the server's thread, cached per URI and version: every editor feature needs them at once. Solving
 * points and building linear models is done lazily, only for what is shown (a lens, a hover, the
 * diagnostics of the points): inline for a small model, and in a worker thread (offload.ts) for a model
 * whose points take long, so that the event loop stays free for the next keystroke and the next request.
 */
import type { CancellationToken, TextDocuments } from 'vscode-languageserver/node';
import type { TextDocument } from 'vscode-languageserver-textdocument';
import { analyzeDocuments, type Analysis } from '../core/pipeline/analysis';
import { memoryHost, type SourceHost } from '../core/sources';
import { valueSensitiveConstants } from '../core/services/valueEdit';
import { serverSources } from './sourceHost';
import { runJob, type Job, type JobResult } from './jobs';
import { Offload } from './offload';
import type { PoiseSettings, SettingsStore } from './settings';
import type { DocumentSnapshot } from './worker';

/** Point passes that took longer than this (ms) move to the worker. */
export const SLOW_MS = 60;
/** Models this large go to the worker before their first point pass was timed. */
export const LARGE_MODEL_EQUATIONS = 300;

export interface OpenDocument {
  doc: TextDocument;
  a: Analysis;
  s: PoiseSettings;
}

export class Analyses {
  private readonly cache = new Map<string, { version: number; warnUnused: boolean; analysis: Analysis }>();
  /** Open documents first, then the disk: where the files that models bring in are read. */
  readonly sources: SourceHost;
  /** Time of the last point pass of each document (ms). */
  private readonly pointMs = new Map<string, number>();
  /** Points, lenses, hovers and edits of slow models. */
  readonly models: Offload;
  /** Reports, sweeps and exports: always in a worker, so that they never hold up the editor. */
  readonly pages: Offload;

  constructor(readonly documents: TextDocuments<TextDocument>, readonly settings: SettingsStore, log: (m: string) => void) {
    this.sources = serverSources(documents);
    this.models = new Offload('points', log);
    this.pages = new Offload('pages', log);
  }

  /** The analysis of the document's current version with the given settings (cached). */
  analysisOf(doc: TextDocument, s: PoiseSettings): Analysis {
    const hit = this.cache.get(doc.uri);
    if (hit && hit.version === doc.version && hit.warnUnused === s.warnUnused && this.current(hit.analysis)) return hit.analysis;
    const text = doc.getText();
    const analysis = analyzeDocuments(layered(doc.uri, text, this.sources), doc.uri, { warnUnused: s.warnUnused })!;
    this.cache.set(doc.uri, { version: doc.version, warnUnused: s.warnUnused, analysis });
    // ready for the next edit's quick diagnostics (quickDiagnostics.ts), once what asked for it is answered
    if (analysis.lowered.equations.length > LARGE_MODEL_EQUATIONS) setTimeout(() => valueSensitiveConstants(analysis), 0).unref();
    return analysis;
  }

  /**
   * The last analysis made of the document, of any version, when the files it brought in still read the
   * same and it was made with these settings; what an edit's quick diagnostics start from.
   */
  previous(uri: string, s: PoiseSettings): { version: number; analysis: Analysis } | undefined {
    const hit = this.cache.get(uri);
    return hit && hit.warnUnused === s.warnUnused && this.current(hit.analysis) ? hit : undefined;
  }

  /** Whether the files an analysis brought in still read the same (an edit of a part's file makes it stale). */
  private current(a: Analysis): boolean {
    for (const d of a.documents.list.slice(1)) if (this.sources.read(d.uri) !== d.text) return false;
    // a file that was missing may have appeared
    for (const d of a.diagnostics) if (d.code === 'P255') return false;
    return true;
  }

  /** The open models whose analysis reads `uri` (a parts file they bring in). */
  usersOf(uri: string): string[] {
    const out: string[] = [];
    for (const [u, hit] of this.cache) if (u !== uri && hit.analysis.documents.list.some((d) => d.uri === uri)) out.push(u);
    return out;
  }

  /** The open document, its analysis and settings; undefined when it is not open. */
  open(uri: string): OpenDocument | undefined {
    const doc = this.documents.get(uri);
    if (!doc) return undefined;
    const s = this.settings.now(uri);
    return { doc, a: this.analysisOf(doc, s), s };
  }

  snapshot(d: OpenDocument): DocumentSnapshot {
    const files: Record<string, string> = {};
    for (const x of d.a.documents.list.slice(1)) files[x.uri] = x.text;
    return { uri: d.doc.uri, version: d.doc.version, text: d.doc.getText(), warnUnused: d.s.warnUnused, files };
  }

  /** Whether the document's point work belongs in the worker. */
  slow(d: OpenDocument): boolean {
    const measured = this.pointMs.get(d.doc.uri);
    if (measured !== undefined) return measured > SLOW_MS;
    return d.a.lowered.equations.length > LARGE_MODEL_EQUATIONS;
  }

  notePointTime(uri: string, ms: number): void {
    this.pointMs.set(uri, ms);
  }

  /** Runs a job that needs the points: inline for a quick model, else in the worker (cancellable). */
  async compute<J extends Job>(d: OpenDocument, job: J, token?: CancellationToken, tag?: string): Promise<JobResult<J>> {
    if (!this.slow(d)) return runJob(d.a, job);
    return this.models.run(this.snapshot(d), job, token, tag);
  }

  forget(uri: string): void {
    this.cache.delete(uri);
    this.pointMs.delete(uri);
    this.models.cancelTag(diagnosticsTag(uri));
  }

  dispose(): void {
    this.models.dispose();
    this.pages.dispose();
  }
}

export const diagnosticsTag = (uri: string) => `diagnostics ${uri}`;

/** The document's current text before the other sources (the editor's text is the one analysed). */
function layered(uri: string, text: string, rest: SourceHost): SourceHost {
  const own = memoryHost({ [uri]: text });
  return { read: (u) => (u === uri ? own.read(u) : rest.read(u)) };
}

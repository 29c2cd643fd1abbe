/**
 * Tolerance bands by sampling in the language server: Latin hypercube samples of the constants written
 * with a tolerance (`± 8 %`), each a re-solved point and its linear model, evaluated in worker threads
 * (server/src/shell/sampleWorkers.ts, the same runner as the command's), never on the server's thread.
 *
 * - A run belongs to one version of a document and one point; the next edit of the document (or of a file
 *   it brings in) cancels it at once (its threads are terminated), and closing the document too.
 * - Finished samples are kept for that version: the hover of a toleranced constant or of a point name shows
 *   the sampled bands (the first hover starts the run and says so), and the report page (`poise/report`)
 *   waits for them and shows the sampled bands and the pole cloud beside the first-order ones.
 * - `poise.toleranceSamples` (settings.ts) gives the number of samples; 0 leaves sampling out.
 */
import * as os from 'os';
import type { CancellationToken, TextDocuments } from 'vscode-languageserver/node';
import type { TextDocument } from 'vscode-languageserver-textdocument';
import type { SamplePlan, SampleResult } from '../core/analysis/sensitivity';
import { targetAt } from '../core/services/locate';
import { filesOf, runSampleChunks, SamplingCancelled, type SampleRun } from '../shell/sampleWorkers';
import type { Analyses, OpenDocument } from './analyses';
import { Cancelled } from './offload';

/** The seed of the editor's samples (the command's default too, so both give the same bands). */
export const EDITOR_SEED = 1;

export interface Samples {
  plan: SamplePlan;
  results: SampleResult[];
}

interface Run {
  key: string;
  point: string;
  /** The addresses whose edit cancels the run (the document and the files it brings in). */
  files: string[];
  run: SampleRun;
  result?: Samples;
  failed?: string;
}

/** Threads for one run: the cores but one, so that the editor's own thread keeps one (at least one thread). */
export function samplingThreads(): number {
  return Math.max(1, Math.min(4, os.cpus().length - 1));
}

export class ToleranceSamples {
  private readonly runs = new Map<string, Run>();

  constructor(documents: TextDocuments<TextDocument>, private readonly log: (m: string) => void) {
    documents.onDidChangeContent((e) => this.edited(e.document.uri));
    documents.onDidClose((e) => this.edited(e.document.uri));
  }

  /** An edit (or close) of `uri`: every run that reads it is cancelled and forgotten. */
  edited(uri: string): void {
    for (const [k, r] of this.runs) {
      if (!r.files.includes(uri)) continue;
      r.run.cancel();
      this.runs.delete(k);
      if (!r.result && r.failed === undefined) this.log(`tolerance samples ${r.point}: cancelled by an edit`);
    }
  }

  /** Whether sampling applies: the setting allows it and the model writes tolerances. */
  applies(d: OpenDocument): boolean {
    return d.s.toleranceSamples > 0 && d.a.tolerances.tolerances.length > 0 && d.a.canSolve;
  }

  private keyOf(d: OpenDocument, point: string): string {
    return JSON.stringify([d.doc.version, point, d.s.toleranceSamples, d.s.warnUnused, filesOf(d.a)]);
  }

  /** The run of this version and point, started if there is none. */
  private start(d: OpenDocument, point: string): Run {
    const id = `${d.doc.uri}#${point}`;
    const key = this.keyOf(d, point);
    const old = this.runs.get(id);
    if (old && old.key === key) return old;
    old?.run.cancel();
    const files = filesOf(d.a);
    const count = d.s.toleranceSamples;
    const started = Date.now();
    const run = runSampleChunks({ root: d.doc.uri, files, disk: 'fileUri', warnUnused: d.s.warnUnused }, { point, count, seed: EDITOR_SEED }, count, samplingThreads());
    const r: Run = { key, point, files: Object.keys(files), run };
    run.done.then((s) => {
      r.result = s;
      this.log(`tolerance samples ${point}: ${count} in ${Date.now() - started} ms`);
    }, (e: unknown) => {
      if (e instanceof SamplingCancelled) return;
      r.failed = e instanceof Error ? e.message : String(e);
      this.log(`tolerance samples ${point}: ${r.failed}`);
    });
    this.runs.set(id, r);
    return r;
  }

  /** The finished samples of the point, or whether they are being computed (started now if they were not). */
  peek(d: OpenDocument, point: string): Samples | 'running' | 'failed' {
    const r = this.start(d, point);
    return r.result ?? (r.failed !== undefined ? 'failed' : 'running');
  }

  /**
   * The samples of the point, waiting for them; undefined when they failed or were superseded by an edit.
   * Rejects with Cancelled when the request is cancelled (the run goes on for the next request).
   */
  async wait(d: OpenDocument, point: string, token?: CancellationToken): Promise<Samples | undefined> {
    const r = this.start(d, point);
    if (r.result) return r.result;
    return new Promise<Samples | undefined>((resolve, reject) => {
      const sub = token?.onCancellationRequested(() => {
        sub?.dispose();
        reject(new Cancelled());
      });
      r.run.done.then((s) => {
        sub?.dispose();
        resolve(s);
      }, () => {
        sub?.dispose();
        resolve(undefined);
      });
    });
  }

  dispose(): void {
    for (const r of this.runs.values()) r.run.cancel();
    this.runs.clear();
  }
}

/** The point whose sampled bands a hover at `offset` shows: a toleranced constant (the first point) or a point's name. */
export function sampledHoverPoint(d: OpenDocument, offset: number): string | undefined {
  const t = targetAt(d.a, offset);
  if (!t) return undefined;
  if (t.kind === 'point') return d.a.pointNames.includes(t.name) ? t.name : undefined;
  if (t.kind === 'symbol' && !t.delta && d.a.tolerances.tolerances.some((x) => x.symbol === t.symbol)) return d.a.pointNames[0];
  return undefined;
}

/** The lines a hover adds about the sampled bands (the bands themselves come from the `sampledBands` job). */
export async function sampledHoverSection(
  samples: ToleranceSamples, analyses: Analyses, d: OpenDocument, offset: number, token?: CancellationToken,
): Promise<string | undefined> {
  if (!samples.applies(d)) return undefined;
  const point = sampledHoverPoint(d, offset);
  if (!point) return undefined;
  const s = samples.peek(d, point);
  if (s === 'running') return `_Sampling the tolerances: ${d.s.toleranceSamples} Latin hypercube samples at point \`${point}\` are being solved in the background; hover again for the sampled bands._`;
  if (s === 'failed') return undefined;
  return analyses.compute(d, { kind: 'sampledBands', point, plan: s.plan, results: s.results, digits: d.s.digits }, token);
}

/**
 * Diagnostics of the open documents: debounced after each edit (a newer edit cancels the older run,
 * including point work running in the worker). The static diagnostics (syntax, names, units, structure,
 * stale generated blocks) come from the analysis on the server's thread; the points' diagnostics come from
 * solving them — inline for a quick model (one publication with everything), in the worker for a slow one
 * (the static diagnostics are published first, the full list when the points are done).
 */
import type { Connection } from 'vscode-languageserver/node';
import type { Diagnostic } from '../core/diagnostics';
import type { Analysis } from '../core/pipeline/analysis';
import { staticDiagnostics } from '../core/services/linearBlock';
import { diagnosticsTag, type Analyses } from './analyses';
import { toDiagnostic } from './convert';
import { allDiagnostics } from './jobs';
import { Cancelled } from './offload';

/** Pause between the static diagnostics of a slow model and starting its points in the worker (ms). */
const POINT_DELAY_MS = 150;

export interface DiagnosticsOptions {
  /** Delay between the last edit and the run (ms). */
  debounceMs: number;
  /** Log the time of each run. */
  timing: boolean;
}

export class DiagnosticsRun {
  private readonly timers = new Map<string, NodeJS.Timeout>();
  private readonly generation = new Map<string, number>();

  constructor(
    private readonly connection: Connection,
    private readonly analyses: Analyses,
    private readonly options: DiagnosticsOptions,
    private readonly log: (m: string) => void,
    private readonly logError: (where: string, e: unknown) => void,
  ) {}

  /** An edit (or a settings change): run after the debounce; the first run of a document at once. */
  changed(uri: string, now = false): void {
    const first = !this.generation.has(uri);
    const gen = (this.generation.get(uri) ?? 0) + 1;
    this.generation.set(uri, gen);
    const old = this.timers.get(uri);
    if (old) clearTimeout(old);
    this.analyses.models.cancelTag(diagnosticsTag(uri)); // the next edit cancels point work of the last one
    this.timers.set(uri, setTimeout(() => {
      this.timers.delete(uri);
      this.run(uri, gen).catch((e) => this.logError('diagnostics', e));
    }, first || now ? 0 : this.options.debounceMs));
  }

  all(): void {
    for (const d of this.analyses.documents.all()) this.changed(d.uri, true);
  }

  closed(uri: string): void {
    const t = this.timers.get(uri);
    if (t) clearTimeout(t);
    this.timers.delete(uri);
    this.generation.delete(uri);
    this.lastPublished.delete(uri);
    void this.connection.sendDiagnostics({ uri, diagnostics: [] });
  }

  dispose(): void {
    for (const t of this.timers.values()) clearTimeout(t);
    this.timers.clear();
  }

  private readonly lastPublished = new Map<string, readonly Diagnostic[]>();

  private publish(uri: string, version: number, a: Analysis, ds: readonly Diagnostic[]): void {
    this.lastPublished.set(uri, ds);
    const sorted = [...ds].sort((x, y) => x.span.start - y.span.start || x.code.localeCompare(y.code));
    void this.connection.sendDiagnostics({ uri, version, diagnostics: sorted.map((d) => toDiagnostic(a, uri, d)) });
  }

  private async run(uri: string, gen: number): Promise<void> {
    const current = () => this.generation.get(uri) === gen;
    const s = await this.analyses.settings.for(uri);
    const doc = this.analyses.documents.get(uri);
    if (!current() || !doc) return;
    const version = doc.version;
    const t0 = performance.now();
    const a = this.analyses.analysisOf(doc, s);
    const t1 = performance.now();
    const d = { doc, a, s };
    const points = a.canSolve && a.pointNames.length > 0;
    const slow = points && this.analyses.slow(d);
    let ds: readonly Diagnostic[];
    if (slow) {
      // static diagnostics at once; then the points' (solved in the worker); then what the linear models
      // add, built last, in the background: a hover or a lens asked meanwhile goes first
      this.publish(uri, version, a, staticDiagnostics(a));
      // while typing goes on, the worker is not started for every keystroke
      await new Promise<void>((r) => setTimeout(r, POINT_DELAY_MS));
      if (!current()) return;
      const snapshot = this.analyses.snapshot(d);
      try {
        const points = await this.analyses.models.run(snapshot, { kind: 'pointDiagnostics' }, undefined, diagnosticsTag(uri));
        if (!current()) return;
        this.publish(uri, version, a, points);
        ds = await this.analyses.models.run(snapshot, { kind: 'diagnostics' }, undefined, diagnosticsTag(uri));
      } catch (e) {
        if (e instanceof Cancelled) return;
        throw e;
      }
    } else {
      ds = allDiagnostics(a);
    }
    const t2 = performance.now();
    if (points) this.analyses.notePointTime(uri, t2 - t1);
    if (!current() || this.analyses.documents.get(uri)?.version !== version) return;
    if (!slow || !sameDiagnostics(ds, this.lastPublished.get(uri))) this.publish(uri, version, a, ds);
    if (this.options.timing) {
      this.log(`diagnostics ${uri} v${version}: analyze ${(t1 - t0).toFixed(1)} ms, points ${(t2 - t1).toFixed(1)} ms${slow ? ' (worker; static diagnostics first)' : ''}, total ${(performance.now() - t0).toFixed(1)} ms`);
    }
  }
}


function sameDiagnostics(x: readonly Diagnostic[], y: readonly Diagnostic[] | undefined): boolean {
  if (!y || x.length !== y.length) return false;
  return x.every((d, i) => d.code === y[i].code && d.span.start === y[i].span.start && d.span.end === y[i].span.end && d.message === y[i].message);
}

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
import { inPartFile, toDiagnostic, type Placing } from './convert';
import { allDiagnostics } from './jobs';
import { Cancelled } from './offload';
import { Publisher, type Lent } from './publisher';
import { quickDiagnostics, quickSnapshot } from './quickDiagnostics';

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
  private readonly publisher: Publisher;

  constructor(
    private readonly connection: Connection,
    private readonly analyses: Analyses,
    private readonly options: DiagnosticsOptions,
    private readonly log: (m: string) => void,
    private readonly logError: (where: string, e: unknown) => void,
  ) {
    this.publisher = new Publisher(connection, (u) => analyses.sources.read(u));
  }

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
    this.publisher.closed(uri);
  }

  dispose(): void {
    for (const t of this.timers.values()) clearTimeout(t);
    this.timers.clear();
  }

  private readonly lastPublished = new Map<string, readonly Diagnostic[]>();

  /**
   * Publishes the document's diagnostics; those inside a parts file it brings in also in that file, at
   * their place (`texts`: the parts files' texts as this analysis read them).
   */
  private publish(uri: string, version: number, a: Placing, ds: readonly Diagnostic[], texts: ReadonlyMap<string, string>): void {
    this.lastPublished.set(uri, ds);
    const sorted = [...ds].sort((x, y) => x.span.start - y.span.start || x.code.localeCompare(y.code));
    const lent = new Map<string, Lent>();
    for (const d of sorted) {
      const p = inPartFile(a, uri, d);
      if (!p) continue;
      const l = lent.get(p.uri) ?? { text: texts.get(p.uri), diagnostics: [] };
      l.diagnostics.push(p.diagnostic);
      lent.set(p.uri, l);
    }
    this.publisher.publish(uri, version, sorted.map((d) => toDiagnostic(a, uri, d)), lent);
  }

  private async run(uri: string, gen: number): Promise<void> {
    const current = () => this.generation.get(uri) === gen;
    const s = await this.analyses.settings.for(uri);
    const doc = this.analyses.documents.get(uri);
    if (!current() || !doc) return;
    const version = doc.version;
    const t0 = performance.now();
    // an edit of a large model that changes only values, comments or spaces: the static diagnostics of the
    // last analysis, moved (quickDiagnostics.ts); else the analysis of this version
    const prev = this.analyses.previous(uri, s);
    const quick = prev && prev.version !== version && this.analyses.slow({ doc, a: prev.analysis, s }) ? quickDiagnostics(doc, prev.analysis) : undefined;
    const a = quick?.from ?? this.analyses.analysisOf(doc, s);
    const place: Placing = quick?.placing ?? a;
    const texts = quick?.files ?? partTexts(a);
    const t1 = performance.now();
    const d = { doc, a, s };
    const points = a.canSolve && a.pointNames.length > 0;
    const slow = points && this.analyses.slow(d);
    let ds: readonly Diagnostic[];
    if (slow) {
      // static diagnostics at once; then the points' (solved in the worker); then what the linear models
      // add, built last, in the background: a hover or a lens asked meanwhile goes first
      this.publish(uri, version, place, quick?.edit.diagnostics ?? staticDiagnostics(a), texts);
      // while typing goes on, the worker is not started for every keystroke
      await new Promise<void>((r) => setTimeout(r, POINT_DELAY_MS));
      if (!current()) return;
      const snapshot = quick ? quickSnapshot(doc, quick, s.warnUnused) : this.analyses.snapshot(d);
      try {
        const points = await this.analyses.models.run(snapshot, { kind: 'pointDiagnostics' }, undefined, diagnosticsTag(uri));
        if (!current()) return;
        this.publish(uri, version, place, points, texts);
        ds = await this.analyses.models.run(snapshot, { kind: 'diagnostics' }, undefined, diagnosticsTag(uri));
      } catch (e) {
        if (e instanceof Cancelled) return;
        throw e;
      }
    } else if (quick) {
      // (not reached: quick diagnostics are only made for a slow model, whose earlier analysis had points)
      ds = quick.edit.diagnostics;
    } else {
      ds = allDiagnostics(a);
    }
    const t2 = performance.now();
    if (points) this.analyses.notePointTime(uri, t2 - t1);
    if (!current() || this.analyses.documents.get(uri)?.version !== version) return;
    if (!slow || !sameDiagnostics(ds, this.lastPublished.get(uri))) this.publish(uri, version, place, ds, texts);
    if (this.options.timing) {
      const how = quick ? ' (value edit: the last analysis\'s, moved)' : '';
      this.log(`diagnostics ${uri} v${version}: analyze ${(t1 - t0).toFixed(1)} ms, points ${(t2 - t1).toFixed(1)} ms${slow ? ' (worker; static diagnostics first)' : ''}, total ${(performance.now() - t0).toFixed(1)} ms${how}`);
    }
  }
}

/** The texts of the parts files an analysis read, by address. */
function partTexts(a: Analysis): Map<string, string> {
  return new Map(a.documents.list.slice(1).map((x) => [x.uri, x.text] as const));
}

function sameDiagnostics(x: readonly Diagnostic[], y: readonly Diagnostic[] | undefined): boolean {
  if (!y || x.length !== y.length) return false;
  return x.every((d, i) => d.code === y[i].code && d.span.start === y[i].span.start && d.span.end === y[i].span.end && d.message === y[i].message);
}

/**
 * What is published for each address: a document's own diagnostics, and the problems the open models
 * find inside the parts files they bring in, lent to those files (shown at their place there as well as on
 * the model's `parts` line). `publishDiagnostics` replaces the whole list of an address, so the list of a
 * parts file is its own diagnostics (when it is open) and every model's lent ones, without repeats.
 *
 * A lent problem counts only while the parts file reads as the model saw it: after an edit of the file it
 * is left out until the model has been analysed again, so a stale range is never shown. A model's lent
 * problems go when the model no longer finds them or is closed.
 */
import type { Connection, Diagnostic as LspDiagnostic } from 'vscode-languageserver/node';

/** Diagnostics a model lends to one parts file: the file's text as the model read it, and the problems. */
export interface Lent {
  text: string | undefined;
  diagnostics: LspDiagnostic[];
}

const key = (d: LspDiagnostic) =>
  `${d.code}\u0000${d.range.start.line}:${d.range.start.character}-${d.range.end.line}:${d.range.end.character}\u0000${d.message}`;

export class Publisher {
  private readonly own = new Map<string, { version?: number; diagnostics: LspDiagnostic[] }>();
  /** Parts file → model → what the model lends it. */
  private readonly lent = new Map<string, Map<string, Lent>>();

  constructor(
    private readonly connection: Pick<Connection, 'sendDiagnostics'>,
    /** The text a document reads now (open documents, then the disk). */
    private readonly textOf: (uri: string) => string | undefined,
  ) {}

  /** A document's own diagnostics and what it lends to the parts files it brings in (by their address). */
  publish(uri: string, version: number | undefined, own: LspDiagnostic[], lent: ReadonlyMap<string, Lent> = new Map()): void {
    this.own.set(uri, { version, diagnostics: own });
    this.send(uri);
    for (const target of this.relend(uri, lent)) if (target !== uri) this.send(target);
  }

  /** A document was closed: its own list is cleared (what open models lend it stays), its loans end. */
  closed(uri: string): void {
    this.own.delete(uri);
    for (const target of this.relend(uri, new Map())) if (target !== uri) this.send(target);
    this.send(uri);
  }

  /** Replaces the loans of `model`; returns the parts files whose lists change. */
  private relend(model: string, lent: ReadonlyMap<string, Lent>): Set<string> {
    const touched = new Set<string>();
    for (const [target, byModel] of this.lent) {
      if (byModel.has(model) && !lent.has(target)) {
        byModel.delete(model);
        if (!byModel.size) this.lent.delete(target);
        touched.add(target);
      }
    }
    for (const [target, l] of lent) {
      const byModel = this.lent.get(target) ?? new Map<string, Lent>();
      const before = byModel.get(model);
      byModel.set(model, l);
      this.lent.set(target, byModel);
      if (!before || before.text !== l.text || before.diagnostics.length !== l.diagnostics.length || before.diagnostics.some((d, i) => key(d) !== key(l.diagnostics[i]))) touched.add(target);
    }
    return touched;
  }

  private send(uri: string): void {
    const own = this.own.get(uri);
    const list = [...(own?.diagnostics ?? [])];
    const byModel = this.lent.get(uri);
    if (byModel?.size) {
      const seen = new Set(list.map(key));
      const now = this.textOf(uri);
      for (const l of byModel.values()) {
        if (l.text !== now) continue; // read before the file's last edit: the model's next run says it again
        for (const d of l.diagnostics) {
          const k = key(d);
          if (seen.has(k)) continue;
          seen.add(k);
          list.push(d);
        }
      }
    }
    void this.connection.sendDiagnostics(own?.version === undefined ? { uri, diagnostics: list } : { uri, version: own.version, diagnostics: list });
  }
}

/**
 * An edit's first diagnostics on a large model without analysing it again: when the edit changes only
 * comments, spaces or the values of constants and point lines that no static stage reads
 * (core/services/valueEdit.ts), the static diagnostics are those of the last analysis, moved. The points'
 * diagnostics follow from the worker, which analyses the new text itself; the server's own analysis of the
 * new text is made when a request needs it.
 */
import type { TextDocument } from 'vscode-languageserver-textdocument';
import type { Analysis } from '../core/pipeline/analysis';
import { valueEdit, type ValueEdit } from '../core/services/valueEdit';
import type { Span } from '../core/text';
import type { Placing } from './convert';
import type { DocumentSnapshot } from './worker';

export interface QuickDiagnostics {
  /** The analysis of the earlier version it starts from (its counts, points and structure still hold). */
  from: Analysis;
  edit: ValueEdit;
  /** Where the spans of the edited text lie (the root in `doc`, the parts files as `from` read them). */
  placing: Placing;
  /** The texts of the parts files the model brings in, by address. */
  files: Map<string, string>;
}

/** The quick diagnostics of `doc` from `from` (an analysis of an earlier version), or undefined. */
export function quickDiagnostics(doc: TextDocument, from: Analysis): QuickDiagnostics | undefined {
  const text = doc.getText();
  const edit = valueEdit(from, text);
  if (!edit) return undefined;
  const delta = text.length - from.text.length;
  const foreign = (sp: Span) => from.documents.list.length > 1 && sp.start > text.length;
  const placing: Placing = {
    lines: { position: (o) => doc.positionAt(o) },
    documents: { foreign },
    where: (sp) => foreign(sp)
      ? from.where({ start: sp.start - delta, end: sp.end - delta })
      : { uri: doc.uri, start: doc.positionAt(sp.start), end: doc.positionAt(Math.max(sp.start, sp.end)) },
    broughtBy: new Map([...from.broughtBy].map(([u, sp]) => [u, { start: edit.map(sp.start), end: edit.map(sp.end) }])),
  };
  const files = new Map(from.documents.list.slice(1).map((d) => [d.uri, d.text] as const));
  return { from, edit, placing, files };
}

/** The worker's copy of the edited document (the parts files as the earlier analysis read them: unchanged). */
export function quickSnapshot(doc: TextDocument, q: QuickDiagnostics, warnUnused: boolean): DocumentSnapshot {
  return { uri: doc.uri, version: doc.version, text: doc.getText(), warnUnused, files: Object.fromEntries(q.files) };
}

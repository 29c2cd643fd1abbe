/**
 * Core data ↔ protocol data. The core speaks UTF-16 offsets, exactly what LSP positions count, so a
 * position is the core's LineMap position. Nothing here analyses anything.
 */
import {
  CompletionItemKind, DiagnosticSeverity, DiagnosticTag, InsertTextFormat, SymbolKind,
  type CompletionItem, type Diagnostic as LspDiagnostic, type DiagnosticRelatedInformation, type Location, type DocumentSymbol, type Range, type TextEdit as LspTextEdit,
} from 'vscode-languageserver/node';
import type { Analysis } from '../core/pipeline/analysis';
import type { Diagnostic } from '../core/diagnostics';
import type { CompletionCandidate } from '../core/services/completion';
import type { TextEdit } from '../core/services/edits';
import type { OutlineItem } from '../core/services/symbols';
import type { Position, Span } from '../core/text';

/**
 * What placing a span needs of an analysis: positions in the root document, which document a span lies
 * in, and the parts lines that brought the other documents in. An `Analysis` is one; so is the view of an
 * edit's quick diagnostics (quickDiagnostics.ts), whose offsets are those of the new text.
 */
export interface Placing {
  lines: { position(offset: number): Position };
  documents: { foreign(span: Span): boolean };
  where(span: Span): { uri: string; start: Position; end: Position };
  broughtBy: ReadonlyMap<string, Span>;
}

export function toRange(a: Pick<Placing, 'lines'>, span: Span): Range {
  return { start: a.lines.position(span.start), end: a.lines.position(span.end) };
}

export function toSpan(a: Analysis, range: Range): Span {
  return { start: a.lines.offset(range.start), end: a.lines.offset(range.end) };
}

const SEVERITY = { error: DiagnosticSeverity.Error, warning: DiagnosticSeverity.Warning, info: DiagnosticSeverity.Information } as const;

/** Data kept on a published diagnostic so code actions get the core's facts back. */
export interface DiagnosticData {
  core?: Record<string, unknown>;
}

/** The document and range of a span: the model itself or a file it brings in. */
export function toLocation(a: Pick<Placing, 'where'>, span: Span): Location {
  const w = a.where(span);
  return { uri: w.uri, range: { start: w.start, end: w.end } };
}

const baseName = (uri: string) => decodeURIComponent(uri.slice(uri.lastIndexOf('/') + 1));

/**
 * A diagnostic of the model. One that lies in a parts file the model brings in is shown on the model's
 * `parts from` line that brought the file in, naming the file and line, with the exact place as related
 * information (the editor opens it from there).
 */
export function toDiagnostic(a: Placing, uri: string, d: Diagnostic): LspDiagnostic {
  let range = toRange(a, d.span);
  let message = d.message;
  const related: DiagnosticRelatedInformation[] = [];
  if (a.documents.foreign(d.span)) {
    const at = toLocation(a, d.span);
    range = toRange(a, a.broughtBy.get(at.uri) ?? { start: 0, end: 0 });
    message = `${baseName(at.uri)}:${at.range.start.line + 1}: ${d.message}`;
    related.push({ location: at, message: d.message });
  }
  const out: LspDiagnostic = {
    range,
    severity: SEVERITY[d.severity],
    code: d.code,
    source: 'poise',
    message,
  };
  for (const r of d.related ?? []) related.push({ location: toLocation(a, r.span), message: r.message });
  if (related.length) out.relatedInformation = related;
  void uri;
  if (d.code === 'P203') out.tags = [DiagnosticTag.Unnecessary];
  if (d.data) out.data = { core: d.data } satisfies DiagnosticData;
  return out;
}

/**
 * A diagnostic of the model that lies in a parts file it brings in, as it is shown in that file (its own
 * address and exact range), with the model's `parts` line that brought the file in as related information;
 * undefined for a diagnostic of the model's own text.
 */
export function inPartFile(a: Placing, uri: string, d: Diagnostic): { uri: string; diagnostic: LspDiagnostic } | undefined {
  if (!a.documents.foreign(d.span)) return undefined;
  const at = toLocation(a, d.span);
  const related: DiagnosticRelatedInformation[] = [
    { location: { uri, range: toRange(a, a.broughtBy.get(at.uri) ?? { start: 0, end: 0 }) }, message: `brought in by ${baseName(uri)}` },
  ];
  for (const r of d.related ?? []) related.push({ location: toLocation(a, r.span), message: r.message });
  const out: LspDiagnostic = { range: at.range, severity: SEVERITY[d.severity], code: d.code, source: 'poise', message: d.message, relatedInformation: related };
  if (d.code === 'P203') out.tags = [DiagnosticTag.Unnecessary];
  return { uri: at.uri, diagnostic: out };
}

export function toTextEdit(a: Analysis, e: TextEdit): LspTextEdit {
  return { range: toRange(a, e.span), newText: e.newText };
}

const COMPLETION_KIND: Record<CompletionCandidate['kind'], CompletionItemKind> = {
  const: CompletionItemKind.Constant,
  input: CompletionItemKind.Field,
  state: CompletionItemKind.Variable,
  var: CompletionItemKind.Variable,
  output: CompletionItemKind.Property,
  function: CompletionItemKind.Function,
  constant: CompletionItemKind.Constant,
  keyword: CompletionItemKind.Keyword,
  unit: CompletionItemKind.Unit,
  point: CompletionItemKind.Module,
};

export function toCompletionItem(a: Analysis, c: CompletionCandidate, snippets: boolean): CompletionItem {
  const item: CompletionItem = { label: c.label, kind: COMPLETION_KIND[c.kind], sortText: c.sortText };
  if (c.detail) item.detail = c.detail;
  if (c.documentation) item.documentation = { kind: 'markdown', value: c.documentation };
  const insert = c.snippet && !snippets ? c.label : c.insertText ?? c.label;
  item.textEdit = { range: toRange(a, c.replace), newText: insert };
  if (c.snippet && snippets) item.insertTextFormat = InsertTextFormat.Snippet;
  return item;
}

const SYMBOL_KIND: Record<OutlineItem['kind'], SymbolKind> = {
  group: SymbolKind.Namespace,
  const: SymbolKind.Constant,
  input: SymbolKind.Property,
  state: SymbolKind.Variable,
  var: SymbolKind.Variable,
  output: SymbolKind.Field,
  equation: SymbolKind.Operator,
  point: SymbolKind.Object,
  pointLine: SymbolKind.Field,
  linear: SymbolKind.Module,
  sweep: SymbolKind.Event,
  part: SymbolKind.Class,
  instance: SymbolKind.Object,
};

export function toDocumentSymbol(a: Analysis, o: OutlineItem): DocumentSymbol {
  const range = toRange(a, o.span);
  let selectionRange = toRange(a, o.selection);
  // the selection must lie inside the range
  if (o.selection.start < o.span.start || o.selection.end > o.span.end) selectionRange = { start: range.start, end: range.start };
  const s: DocumentSymbol = { name: o.name || '(unnamed)', kind: SYMBOL_KIND[o.kind], range, selectionRange };
  if (o.detail) s.detail = o.detail;
  if (o.children) s.children = o.children.map((c) => toDocumentSymbol(a, c));
  return s;
}

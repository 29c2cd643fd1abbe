/**
 * The static diagnostics of an edited text, worked out from the analysis of the text before the edit
 * without analysing the whole model again, when the edit cannot change what the static stages find: it
 * changes only comments, spaces inside lines, and numbers that are the whole value of a constant or of a
 * point line (`const area = 1.5 [m^2]` → `1.6`, `qin = 0.01 [m^3/s]` → `0.02`), of constants whose value
 * no static stage reads. What the static stages read of a constant's value: a family's size, range or index,
 * an exponent (the unit of x^n), another constant's value (which may turn infinite, P510), a tolerance band
 * (P650–P653); a constant used in any of those is left to the full analysis. Everything else the static
 * stages find (syntax, names, units, structure) depends on the tokens, not on the values of the numbers.
 *
 * The diagnostics are the analysed ones with their spans moved, and the stale-block checks (P601) done
 * again on the edited text (its digest: `Analysis.digest` with the edit). Any other edit gives undefined:
 * the caller analyses the text in full. The language server publishes these at once after an edit of a
 * large model (docs/editor.md); the full analysis follows when a request needs it.
 */
import { diag, type Diagnostic } from '../diagnostics';
import type { Analysis, EditedText } from '../pipeline/analysis';
import type { ModelSymbol } from '../semantics/binder';
import type * as A from '../syntax/ast';
import { lex, type Token } from '../syntax/lexer';
import { forEachExpr } from '../syntax/walk';
import type { Span } from '../text';

/** Edits spanning more than this many characters (whole lines) are analysed in full. */
const MAX_REGION = 8000;

export interface ValueEdit extends EditedText {
  /** The static diagnostics of the edited text (syntax, names, units, structure, stale generated blocks). */
  diagnostics: Diagnostic[];
}

const sensitiveOf = new WeakMap<Analysis, Set<ModelSymbol>>();

/**
 * The constants whose value a static stage reads (see above), computed once per analysis; the language
 * server asks for it when an analysis is made, so that the first edit after it finds it ready.
 */
export function valueSensitiveConstants(a: Analysis): Set<ModelSymbol> {
  let out = sensitiveOf.get(a);
  if (out) return out;
  out = new Set<ModelSymbol>();
  const exponents: Span[] = [];
  const scan = (e: A.Expr) =>
    forEachExpr(e, (x) => {
      if (x.kind === 'binary' && x.op === '^') exponents.push(x.right.span);
    });
  for (const st of a.parsed.file.statements) {
    if (st.kind === 'equation') {
      scan(st.lhs);
      scan(st.rhs);
    } else if (st.kind === 'output') {
      scan(st.value);
    } else if (st.kind === 'point') {
      for (const l of st.lines) scan(l.value);
    }
  }
  exponents.sort((x, y) => x.start - y.start);
  const inExponent = (sp: Span) => {
    // the last exponent starting at or before the span; exponents nest, so look back while they could cover it
    let lo = 0;
    let hi = exponents.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (exponents[mid].start <= sp.start) lo = mid + 1;
      else hi = mid;
    }
    for (let i = lo - 1; i >= 0 && i >= lo - 64; i--) if (exponents[i].end >= sp.end) return true;
    return false;
  };
  for (const r of a.bound.references) {
    if (r.symbol.kind !== 'const') continue;
    if ((r.where !== 'equation' && r.where !== 'output' && r.where !== 'point') || inExponent(r.span)) out.add(r.symbol);
  }
  for (const s of a.bound.consts) if ((s.decl as A.ConstDecl).tolerance) out.add(s);
  sensitiveOf.set(a, out);
  return out;
}

/** A number written alone as a value (`1.5`, `-2 [m]`), or undefined. */
function literal(e: A.Expr): A.Expr | undefined {
  if (e.kind === 'number') return e;
  if (e.kind === 'unary' && (e.op === '-' || e.op === '+') && e.arg.kind === 'number') return e;
  return undefined;
}

const inside = (sp: Span, o: number) => o >= sp.start && o < sp.end;

/** Whether the number at `offset` (of the analysed text) is a value no static stage reads. */
function freeValue(a: Analysis, offset: number): boolean {
  const sts = a.source.file.statements;
  let lo = 0;
  let hi = sts.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sts[mid].span.start <= offset) lo = mid + 1;
    else hi = mid;
  }
  const st = sts[lo - 1];
  if (!st || !inside(st.span, offset)) return false;
  if (st.kind === 'const') {
    const lit = literal(st.value);
    if (!lit || !inside(lit.span, offset) || st.tolerance) return false;
    const sym = a.bound.symbols.get(st.name.name);
    return !!sym && sym.kind === 'const' && sym.span.start === st.name.span.start && !valueSensitiveConstants(a).has(sym);
  }
  if (st.kind === 'point') {
    const line = st.lines.find((l) => inside(l.span, offset));
    if (!line || (line.index && inside(line.index.span, offset))) return false;
    const v = line.value;
    if (literal(v)) return inside(v.span, offset);
    return v.kind === 'list' && v.items.some((x) => literal(x) && inside(x.span, offset));
  }
  return false;
}

const lineStart = (t: string, o: number) => {
  let i = o;
  while (i > 0 && t.charCodeAt(i - 1) !== 10 && t.charCodeAt(i - 1) !== 13) i--;
  return i;
};
const lineEnd = (t: string, o: number) => {
  let i = o;
  while (i < t.length && t.charCodeAt(i) !== 10 && t.charCodeAt(i) !== 13) i++;
  return i;
};

/** Tokens of whole lines (a line break put before, so that the first line's indentation is measured). */
function tokens(text: string, start: number, end: number) {
  const r = lex('\n' + text.slice(start, end));
  const at = (sp: Span): Span => ({ start: sp.start - 1 + start, end: sp.end - 1 + start });
  return {
    tokens: r.tokens.filter((t) => t.kind !== 'eof' && !(t.kind === 'newline' && t.span.start === 0)).map((t) => ({ ...t, span: at(t.span) })),
    comments: r.comments.map(at),
    problems: r.diagnostics.map((d) => d.code).join(','),
  };
}

const sameToken = (x: Token, y: Token) => x.kind === y.kind && x.indent === y.indent && !!x.delta === !!y.delta && (x.kind === 'number' || x.text === y.text);

/**
 * The static diagnostics of `text`, an edit of the analysed document `a` (of its root text), when the edit
 * changes only what no static stage reads (see above); undefined otherwise.
 */
export function valueEdit(a: Analysis, text: string): ValueEdit | undefined {
  const old = a.text;
  const n = Math.min(old.length, text.length);
  let p = 0;
  while (p < n && old.charCodeAt(p) === text.charCodeAt(p)) p++;
  let s = 0;
  while (s < n - p && old.charCodeAt(old.length - 1 - s) === text.charCodeAt(text.length - 1 - s)) s++;
  const delta = text.length - old.length;
  // whole lines around the change, in both texts
  const start = lineStart(old, p);
  const oldEnd = lineEnd(old, old.length - s);
  const newEnd = oldEnd + delta;
  if (oldEnd - start > MAX_REGION || newEnd - start > MAX_REGION || newEnd < start) return undefined;
  const was = tokens(old, start, oldEnd);
  const now = tokens(text, start, newEnd);
  if (was.tokens.length !== now.tokens.length || was.problems !== now.problems) return undefined;
  for (let i = 0; i < was.tokens.length; i++) {
    const x = was.tokens[i];
    const y = now.tokens[i];
    if (!sameToken(x, y)) return undefined;
    if (x.kind === 'number' && x.text !== y.text) {
      if (!Number.isFinite(x.value) || !Number.isFinite(y.value) || !freeValue(a, x.span.start)) return undefined;
    }
  }
  // offsets of the analysed text → the edited text: the same tokens, moved
  const map = (o: number): number => {
    if (o < start) return o;
    if (o >= oldEnd) return o + delta;
    let i = -1;
    for (let k = 0; k < was.tokens.length && was.tokens[k].span.start <= o; k++) i = k;
    if (i < 0) return o;
    const x = was.tokens[i].span;
    const y = now.tokens[i].span;
    if (o <= x.end) return y.start + Math.min(o - x.start, y.end - y.start);
    const next = now.tokens[i + 1]?.span.start ?? newEnd;
    return Math.min(y.end + (o - x.end), next);
  };
  const move = (sp: Span): Span => {
    const st = map(sp.start);
    return { start: st, end: Math.max(st, map(sp.end)) };
  };
  const comments = [
    ...a.parsed.file.comments.filter((c) => c.end <= start),
    ...now.comments,
    ...a.parsed.file.comments.filter((c) => c.start >= oldEnd).map((c) => ({ start: c.start + delta, end: c.end + delta })),
  ];
  const edited: EditedText = { text, map, comments };
  const diagnostics: Diagnostic[] = a.diagnostics.map((d) => {
    const moved: Diagnostic = { ...d, span: move(d.span) };
    if (d.related) moved.related = d.related.map((r) => ({ ...r, span: move(r.span) }));
    return moved;
  });
  for (const lb of a.bound.linears) {
    if (!lb.name.name || !a.pointBlock(lb.name.name)) continue;
    if (lb.digest?.text.trim() !== a.digest(lb.name.name, edited)) diagnostics.push(diag('P601', move(lb.headerSpan), { name: lb.name.name }, { data: { point: lb.name.name } }));
  }
  return { ...edited, diagnostics };
}

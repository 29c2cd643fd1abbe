/**
 * What is at an offset of the analysed text: a declared name (its declaration or a use), a point name,
 * a built-in function, a keyword, a unit bracket, or an equation line. Shared by hover, definition,
 * references, rename and the point lookup the editor commands use. Pure.
 */
import { hasName } from '../names';
import type { Analysis } from '../pipeline/analysis';
import type * as A from '../syntax/ast';
import { forEachExpr } from '../syntax/walk';
import type { ModelSymbol, Reference } from '../semantics/binder';
import { BUILTIN_ARITY } from '../algebra/expr';
import { KEYWORDS } from '../syntax/parser';
import type { Span } from '../text';

export type Target =
  | {
      kind: 'symbol';
      symbol: ModelSymbol;
      /** The name itself (no Δ, no primes). */
      span: Span;
      primes: number;
      /** Written with Δ (a deviation variable in a generated linear block). */
      delta: boolean;
      declaration: boolean;
      where?: Reference['where'];
      /** Index into file.statements of the statement holding the use. */
      statement?: number;
    }
  | { kind: 'point'; name: string; span: Span; block?: A.PointBlock }
  | { kind: 'sweep'; block: A.SweepBlock; span: Span }
  | { kind: 'builtin'; name: string; span: Span }
  | { kind: 'constant'; name: 'pi'; span: Span }
  | { kind: 'keyword'; word: string; span: Span }
  | { kind: 'unit'; text: string; span: Span }
  | { kind: 'equation'; statement: A.EquationStmt | A.OutputDecl; equation: number; span: Span };

const within = (s: Span, o: number) => s.start <= o && o <= s.end;
const IDENT = /[\p{L}\p{N}_]/u;

export function inComment(a: Analysis, offset: number, caret = false): boolean {
  // a caret (between characters) right before "#" is not in the comment; a hovered "#" is
  return a.parsed.file.comments.some((c) => (caret ? c.start < offset : c.start <= offset) && offset <= c.end);
}

/** The identifier (letters, digits, `_`) touching an offset. */
export function wordAt(text: string, offset: number): Span | undefined {
  let s = offset;
  let e = offset;
  while (s > 0 && IDENT.test(text[s - 1])) s--;
  while (e < text.length && IDENT.test(text[e])) e++;
  return e > s ? { start: s, end: e } : undefined;
}

/** The unit bracket `[...]` holding an offset (span includes the brackets; the closing one may be missing). */
export function unitBracketAt(text: string, offset: number): Span | undefined {
  let s = offset - 1;
  while (s >= 0 && text[s] !== '[' && text[s] !== ']' && text[s] !== '\n' && text[s] !== '\r' && text[s] !== '#') s--;
  if (s < 0 || text[s] !== '[') return undefined;
  let e = offset;
  while (e < text.length && text[e] !== ']' && text[e] !== '[' && text[e] !== '\n' && text[e] !== '\r' && text[e] !== '#') e++;
  return { start: s, end: text[e] === ']' ? e + 1 : e };
}

/** The statement (index into file.statements) whose lines hold the offset. */
export function statementAt(a: Analysis, offset: number): number {
  const sts = a.parsed.file.statements;
  const line = a.lines.position(offset).line;
  for (let i = 0; i < sts.length; i++) {
    const st = sts[i];
    const l0 = a.lines.position(st.span.start).line;
    const l1 = a.lines.position(st.span.end).line;
    if (line >= l0 && line <= l1) return i;
  }
  return -1;
}

/** Span of a use including its Δ and primes. */
function extended(text: string, r: Reference): Span {
  const start = text[r.span.start - 1] === 'Δ' ? r.span.start - 1 : r.span.start;
  let end = r.span.end;
  while (text[end] === "'") end++;
  return { start, end };
}

export function targetAt(a: Analysis, offset: number): Target | undefined {
  const text = a.text;
  if (inComment(a, offset)) return undefined;
  const m = a.bound;
  for (const s of m.symbols.values()) {
    if (within(s.span, offset)) return { kind: 'symbol', symbol: s, span: s.span, primes: 0, delta: false, declaration: true };
  }
  for (const r of m.references) {
    if (within(extended(text, r), offset)) {
      return { kind: 'symbol', symbol: r.symbol, span: r.span, primes: r.primes, delta: text[r.span.start - 1] === 'Δ', declaration: false, where: r.where, statement: r.statement };
    }
  }
  for (const p of m.points) if (p.name.name && within(p.name.span, offset)) return { kind: 'point', name: p.name.name, span: p.name.span, block: p };
  for (const l of m.linears) if (l.name.name && within(l.name.span, offset)) return { kind: 'point', name: l.name.name, span: l.name.span, block: a.pointBlock(l.name.name) };
  for (const s of m.sweeps) {
    if (s.point && s.point.name && within(s.point.span, offset)) return { kind: 'point', name: s.point.name, span: s.point.span, block: a.pointBlock(s.point.name) };
    if (s.name.name && within(s.name.span, offset)) return { kind: 'sweep', block: s, span: s.name.span };
  }
  const unit = unitBracketAt(text, offset);
  if (unit && offset > unit.start) {
    return { kind: 'unit', text: text.slice(unit.start + 1, text[unit.end - 1] === ']' ? unit.end - 1 : unit.end).trim(), span: unit };
  }
  const w = wordAt(text, offset);
  if (w) {
    const word = text.slice(w.start, w.end);
    let k = w.end;
    while (text[k] === ' ' || text[k] === '\t') k++;
    if (hasName(BUILTIN_ARITY, word) && text[k] === '(') return { kind: 'builtin', name: word, span: w };
    // a table's name (its header or a call): hover shows the table as for a built-in function
    if (!hasName(BUILTIN_ARITY, word) && m.tables.has(word) && !m.symbols.has(word)) return { kind: 'builtin', name: word, span: w };
    if (word === 'pi' && !m.symbols.has('pi')) return { kind: 'constant', name: 'pi', span: w };
    if (KEYWORDS.has(word) && !m.symbols.has(word) && text[w.start - 1] !== 'Δ') return { kind: 'keyword', word, span: w };
  }
  const si = statementAt(a, offset);
  if (si >= 0) {
    const st = a.parsed.file.statements[si];
    if (st.kind === 'equation') {
      const i = m.equations.indexOf(st);
      if (i >= 0) return { kind: 'equation', statement: st, equation: i, span: st.span };
    } else if (st.kind === 'output') {
      const i = m.outputs.findIndex((o) => o.decl === st);
      if (i >= 0) return { kind: 'equation', statement: st, equation: a.lowered.nModelEquations + i, span: st.span };
    }
  }
  return undefined;
}

/**
 * The point an editor command at this offset applies to: the point block holding it, the point a linear
 * block or sweep holding it was made from, or else the nearest point block above; null when there is none.
 */
export function pointAt(a: Analysis, offset: number): string | null {
  const si = statementAt(a, offset);
  const sts = a.parsed.file.statements;
  if (si >= 0) {
    const st = sts[si];
    if (st.kind === 'point' && st.name.name) return st.name.name;
    if (st.kind === 'linear' && st.name.name && a.pointBlock(st.name.name)) return st.name.name;
    if (st.kind === 'sweep' && st.point?.name && a.pointBlock(st.point.name)) return st.point.name;
  }
  let best: string | null = null;
  for (const p of a.bound.points) if (p.name.name && p.span.start <= offset) best = p.name.name;
  return best;
}

/** Calls `f` on every expression node of the file (constants, outputs, equations, points, linear blocks, sweeps). */
export function walkExpressions(file: A.ModelFile, f: (e: A.Expr) => void): void {
  // operators and calls only, as written (an explicit stack: a sum may have 10^5 terms)
  const walk = (e: A.Expr): void =>
    forEachExpr(e, (x) => {
      f(x);
      return x.kind === 'unary' || x.kind === 'binary' || x.kind === 'call';
    });
  for (const st of file.statements) {
    switch (st.kind) {
      case 'const': walk(st.value); break;
      case 'output': walk(st.value); break;
      case 'equation': walk(st.lhs); walk(st.rhs); break;
      case 'point': for (const l of st.lines) walk(l.value); break;
      case 'linear':
        for (const at of st.at) walk(at.value);
        for (const eq of st.equations) { walk(eq.lhs); walk(eq.rhs); }
        break;
      case 'sweep': if (st.vary) { walk(st.vary.from); walk(st.vary.to); } break;
    }
  }
}

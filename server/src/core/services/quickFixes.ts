/**
 * Quick fixes for diagnostics:
 * - P201 unknown name → declare it as var, state, input or const (a line after the last declaration of
 *   that kind), or change it to a declared name / built-in function spelled nearly the same;
 * - P501 unbalanced point → fix the missing values with "=" (turning a "~" line into "=" or adding
 *   `name = 1 [unit]`), or free a fixed value (turning "=" into "~");
 * - P262 a part of a file read but not named on the parts line → add it to that line (or write a parts line);
 * - P601 stale generated block → regenerate it.
 * Pure: returns titles and text edits.
 */
import { hasName, nameTable } from '../names';
import type { Analysis } from '../pipeline/analysis';
import type * as A from '../syntax/ast';
import { BUILTIN_ARITY } from '../algebra/expr';
import type { Span } from '../text';
import { catalogueText } from '../diagnostics';
import { eol, type TextEdit } from './edits';
import { linearizeEdit } from './linearBlock';
import { blockIndent } from './solve';
import { requiredDims, unitTextFor } from './unitInference';
import { dimsMul, dimsPow } from '../semantics/units';
import { unitSuffix } from '../semantics/units';
import { pushAll } from '../arrays';

export interface DiagnosticRef {
  code: string;
  span: Span;
  data?: unknown;
}

export interface QuickFix {
  title: string;
  edits: TextEdit[];
  isPreferred?: boolean;
  diagnostic: DiagnosticRef;
}

type DeclKind = 'const' | 'input' | 'state' | 'var';
const RANK: Readonly<Record<string, number>> = nameTable({ time: 0, const: 1, input: 2, state: 3, var: 4, output: 5 });

export function quickFixes(a: Analysis, diagnostics: readonly DiagnosticRef[], digits = 4): QuickFix[] {
  const out: QuickFix[] = [];
  for (const d of diagnostics) {
    const data = (d.data && typeof d.data === 'object' ? d.data : {}) as Record<string, unknown>;
    switch (d.code) {
      case 'P201': pushAll(out, unknownName(a, d, data)); break;
      case 'P501': pushAll(out, unbalancedPoint(a, d, data)); break;
      case 'P262': pushAll(out, partsLineFix(a, d, data)); break;
      case 'P601': {
        const point = typeof data.point === 'string' ? data.point : undefined;
        const r = point ? linearizeEdit(a, point, digits) : undefined;
        if (r && r.ok) out.push({ title: catalogueText('P701'), edits: r.edits, isPreferred: true, diagnostic: d });
        break;
      }
    }
  }
  return out;
}

/** P262: the parts line with the part's name added, or a new parts line after the last one (in the model's own text). */
function partsLineFix(a: Analysis, d: DiagnosticRef, data: Record<string, unknown>): QuickFix[] {
  const text = typeof data.text === 'string' ? data.text : undefined;
  const part = typeof data.part === 'string' ? data.part : '';
  const span = (x: unknown): Span | undefined => (x && typeof x === 'object' && typeof (x as Span).start === 'number' && typeof (x as Span).end === 'number' && (x as Span).end <= a.text.length ? (x as Span) : undefined);
  const replace = span(data.replace);
  const after = span(data.after);
  if (!text) return [];
  const edit = replace ? { span: replace, newText: text } : after ? { span: { start: after.end, end: after.end }, newText: eol(a.text) + text } : { span: { start: 0, end: 0 }, newText: text + eol(a.text) };
  return [{ title: catalogueText('P730', { name: part, line: text }), edits: [edit], isPreferred: true, diagnostic: d }];
}

function unknownName(a: Analysis, d: DiagnosticRef, data: Record<string, unknown>): QuickFix[] {
  const name = typeof data.name === 'string' ? data.name : a.text.slice(d.span.start, d.span.end);
  if (!name) return [];
  const out: QuickFix[] = [];
  if (data.call) {
    for (const fn of similar(name, Object.keys(BUILTIN_ARITY))) out.push({ title: catalogueText('P702', { name: fn }), edits: [{ span: d.span, newText: fn }], diagnostic: d });
    return out;
  }
  for (const s of similar(name, [...a.bound.symbols.keys()])) out.push({ title: catalogueText('P702', { name: s }), edits: [{ span: d.span, newText: s }], isPreferred: true, diagnostic: d });
  const primes = typeof data.primes === 'number' ? data.primes : 0;
  const kinds: DeclKind[] = primes > 0 ? ['state'] : ['var', 'state', 'input', 'const'];
  // the unit the name needs where it is used (e.g. the unit of the other terms of its sum)
  const need = requiredDims(a, d.span);
  const unit = unitTextFor(a, need && primes ? dimsMul(need, dimsPow(a.units.time.dims, primes)) : need, d.span);
  const bracket = unit ? ` [${unit}]` : '';
  kinds.forEach((k, i) => {
    const line = k === 'const' ? `const ${name} = 1${bracket}  # set its value` : `${k} ${name}${bracket}`;
    out.push({ title: catalogueText('P703', { name, kind: k }), edits: [declarationEdit(a, k, line)], isPreferred: out.length === 0 && i === 0 && primes > 0, diagnostic: d });
  });
  return out;
}

/** Inserts a declaration line after the last declaration of its kind (or where its kind belongs). */
export function declarationEdit(a: Analysis, kind: DeclKind, line: string): TextEdit {
  const nl = eol(a.text);
  const sts = a.parsed.file.statements.filter((s) => hasName(RANK, s.kind));
  const r = RANK[kind];
  const same = sts.filter((s) => RANK[s.kind] === r);
  const earlier = sts.filter((s) => RANK[s.kind] < r);
  const after = same.length ? same[same.length - 1] : earlier.length ? earlier[earlier.length - 1] : undefined;
  if (after) {
    const at = a.lines.lineEnd(a.lines.position(after.span.end).line);
    return { span: { start: at, end: at }, newText: nl + line };
  }
  // before the first declaration or statement; else at the end of the file
  const first = a.parsed.file.statements[0];
  if (first) {
    const at = a.lines.lineStarts[a.lines.position(first.span.start).line];
    return { span: { start: at, end: at }, newText: line + nl };
  }
  const end = a.text.length;
  const sep = end === 0 || a.text.endsWith('\n') ? '' : nl;
  return { span: { start: end, end }, newText: sep + line + nl };
}

function unbalancedPoint(a: Analysis, d: DiagnosticRef, data: Record<string, unknown>): QuickFix[] {
  const point = typeof data.point === 'string' ? data.point : '';
  const block = a.pointBlock(point);
  if (!block) return [];
  const names = (v: unknown) => (Array.isArray(v) ? v.filter((x): x is string => typeof x === 'string') : []);
  const missing = names(data.missing);
  const free = names(data.free);
  const eqs = typeof data.equations === 'number' ? data.equations : 0;
  const unk = typeof data.unknowns === 'number' ? data.unknowns : 0;
  const out: QuickFix[] = [];
  if (missing.length && unk >= eqs) {
    const need = Math.max(1, unk - eqs);
    for (const n of missing.slice(0, 6)) {
      const e = fixEdit(a, block, n);
      if (e) out.push({ title: catalogueText('P704', { names: n, point }), edits: [e], diagnostic: d, isPreferred: need === 1 && out.length === 0 });
    }
    if (need > 1 && missing.length >= need) {
      const chosen = missing.slice(0, need);
      const edits = fixEdits(a, block, chosen);
      if (edits.length) out.unshift({ title: catalogueText('P704', { names: chosen.join(', '), point }), edits, diagnostic: d, isPreferred: true });
    }
  }
  if (free.length && eqs > unk) {
    for (const n of free.slice(0, 6)) {
      const l = block.lines.find((x) => x.name.name === n && x.mode === 'fixed');
      const op = l && opSpan(a, l);
      if (op) out.push({ title: catalogueText('P705', { name: n, point }), edits: [{ span: op, newText: '~' }], diagnostic: d, isPreferred: eqs - unk === 1 && out.length === 0 });
    }
  }
  return out;
}

/** Span of the "=" or "~" of a point line. */
function opSpan(a: Analysis, l: A.PointLine): Span | undefined {
  for (let i = l.name.span.end; i < l.value.span.start; i++) if (a.text[i] === '=' || a.text[i] === '~') return { start: i, end: i + 1 };
  return undefined;
}

function fixEdit(a: Analysis, block: A.PointBlock, name: string): TextEdit | undefined {
  return fixEdits(a, block, [name])[0];
}

/** Turns the names' "~" lines into "=", and adds `name = 1 [unit]` lines for the ones not listed. */
function fixEdits(a: Analysis, block: A.PointBlock, names: string[]): TextEdit[] {
  const edits: TextEdit[] = [];
  const add: string[] = [];
  const indent = blockIndent(a, block);
  for (const n of names) {
    const l = block.lines.find((x) => x.name.name === n);
    if (l) {
      const op = opSpan(a, l);
      if (op && a.text[op.start] === '~') edits.push({ span: op, newText: '=' });
      continue;
    }
    const s = a.bound.symbols.get(n);
    const id = s ? a.lowered.slotOf(s) : -1;
    const unit = id >= 0 ? a.lowered.slots[id].unit.text : '';
    add.push(`${indent}${n} = 1${unitSuffix(unit)}`);
  }
  if (add.length) {
    const nl = eol(a.text);
    const at = a.lines.lineEnd(a.lines.position(block.span.end).line);
    edits.push({ span: { start: at, end: at }, newText: nl + add.join(nl) });
  }
  return edits;
}

/** Candidates within a small edit distance (at most 2, and less than half the name), closest first. */
function similar(name: string, candidates: string[]): string[] {
  const max = Math.min(2, Math.floor(name.length / 2));
  return candidates
    .map((c) => ({ c, d: distance(name, c) }))
    .filter((x) => x.d > 0 && x.d <= max)
    .sort((x, y) => x.d - y.d || x.c.localeCompare(y.c))
    .slice(0, 3)
    .map((x) => x.c);
}

function distance(a: string, b: string): number {
  const dp = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = dp[0];
    dp[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = dp[j];
      dp[j] = Math.min(dp[j] + 1, dp[j - 1] + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = tmp;
    }
  }
  return dp[b.length];
}

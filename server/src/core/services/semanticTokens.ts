/**
 * Semantic tokens: every declared name and use, coloured by what it is. Token types follow the standard
 * LSP names so themes colour them without configuration; modifiers tell the kinds apart exactly:
 *   state → variable+state, input → parameter+input, constant → variable+readonly+constant,
 *   var → property+var, output → property+output, point/sweep names → namespace,
 *   built-in functions → function+defaultLibrary, pi → variable+readonly+defaultLibrary.
 * Uses with primes carry `derivative`, Δ names `deviation`, declarations `declaration`. Pure.
 */
import { hasName } from '../names';
import type { Analysis } from '../pipeline/analysis';
import type { SymbolKind } from '../semantics/binder';
import type { Span } from '../text';
import { BUILTIN_ARITY } from '../algebra/expr';
import { walkExpressions } from './locate';

export const TOKEN_TYPES = ['variable', 'parameter', 'property', 'function', 'namespace'] as const;
export const TOKEN_MODIFIERS = ['declaration', 'readonly', 'defaultLibrary', 'state', 'input', 'constant', 'var', 'output', 'derivative', 'deviation'] as const;

export type TokenType = (typeof TOKEN_TYPES)[number];
export type TokenModifier = (typeof TOKEN_MODIFIERS)[number];

export interface SemanticToken {
  span: Span;
  type: TokenType;
  modifiers: TokenModifier[];
}

const BY_KIND: Record<SymbolKind, { type: TokenType; modifiers: TokenModifier[] }> = {
  state: { type: 'variable', modifiers: ['state'] },
  input: { type: 'parameter', modifiers: ['input'] },
  const: { type: 'variable', modifiers: ['readonly', 'constant'] },
  var: { type: 'property', modifiers: ['var'] },
  output: { type: 'property', modifiers: ['output'] },
};

/** Tokens sorted by position, never overlapping. */
export function semanticTokens(a: Analysis): SemanticToken[] {
  const out: SemanticToken[] = [];
  const text = a.text;
  for (const s of a.bound.symbols.values()) {
    const k = BY_KIND[s.kind];
    out.push({ span: s.span, type: k.type, modifiers: ['declaration', ...k.modifiers] });
  }
  for (const r of a.bound.references) {
    const k = BY_KIND[r.symbol.kind];
    const mods: TokenModifier[] = [...k.modifiers];
    if (r.primes > 0) mods.push('derivative');
    let span = r.span;
    if (text[r.span.start - 1] === 'Δ') {
      mods.push('deviation');
      span = { start: r.span.start - 1, end: r.span.end };
    }
    out.push({ span, type: k.type, modifiers: mods });
  }
  const m = a.bound;
  for (const p of m.points) if (p.name.name) out.push({ span: p.name.span, type: 'namespace', modifiers: ['declaration'] });
  for (const l of m.linears) if (l.name.name) out.push({ span: l.name.span, type: 'namespace', modifiers: [] });
  for (const s of m.sweeps) {
    if (s.name.name) out.push({ span: s.name.span, type: 'namespace', modifiers: ['declaration'] });
    if (s.point?.name) out.push({ span: s.point.span, type: 'namespace', modifiers: [] });
  }
  walkExpressions(a.parsed.file, (e) => {
    if (e.kind === 'call' && hasName(BUILTIN_ARITY, e.fn)) out.push({ span: e.fnSpan, type: 'function', modifiers: ['defaultLibrary'] });
    else if (e.kind === 'call' && m.tables.has(e.fn)) out.push({ span: e.fnSpan, type: 'function', modifiers: [] });
    else if (e.kind === 'name' && e.name === 'pi' && !m.symbols.has('pi')) out.push({ span: e.nameSpan, type: 'variable', modifiers: ['readonly', 'defaultLibrary'] });
  });
  out.sort((x, y) => x.span.start - y.span.start || y.span.end - x.span.end);
  // drop overlaps (keep the first) and empty spans
  const res: SemanticToken[] = [];
  let end = -1;
  for (const t of out) {
    if (t.span.end <= t.span.start || t.span.start < end) continue;
    res.push(t);
    end = t.span.end;
  }
  return res;
}

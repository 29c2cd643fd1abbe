/**
 * Names that stand for many flat names: a family (`h` of `state h[1..n]`, written `h[3]`, `h[i-1]`, `h`
 * in a point line) and an instance of a part placed by the model (`t` of `place tank as t[1..8]`, written
 * `t[2].level`, `t.level` in a point line, `Δt[2].level'` in a generated block). Definition, references and
 * rename of such a name act on the written name itself — never on the whole element or qualified name
 * around it (renaming `h` in `h[2]` must keep `[2]`). Occurrences are found on the model's tokens (the lexer:
 * comments, strings and unit brackets are never touched), in the model's own lines outside part blocks
 * (a part's names are its members: services/partMembers.ts). Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import { lex, type Token } from '../syntax/lexer';
import type { Span } from '../text';

export interface HeadTarget {
  kind: 'family' | 'instance';
  name: string;
  /** The written name under the cursor. */
  span: Span;
}

const within = (s: Span, o: number) => s.start <= o && o <= s.end;

/** The model's name tokens that may hold a head: not after a member dot, outside part blocks and parts lines. */
function headTokens(a: Analysis): { token: Token; head: string; start: number }[] {
  const skip: Span[] = [];
  for (const st of a.source.file.statements) {
    if (st.kind === 'part' || st.kind === 'parts') skip.push(st.span);
    else if (st.kind === 'place') {
      skip.push(st.part.span);
      for (const o of st.overrides) skip.push(o.name.span);
    }
  }
  const tokens = lex(a.text).tokens;
  const out: { token: Token; head: string; start: number }[] = [];
  for (let k = 0; k < tokens.length; k++) {
    const t = tokens[k];
    if (t.kind !== 'name') continue;
    const prev = tokens[k - 1];
    if (prev && prev.kind === 'op' && prev.text === '.') continue; // cell[3].level: `level` is a member
    if (skip.some((s) => t.span.start >= s.start && t.span.end <= s.end)) continue;
    const dot = t.text.indexOf('.');
    out.push({ token: t, head: dot < 0 ? t.text : t.text.slice(0, dot), start: t.span.end - t.text.length });
  }
  return out;
}

function kindOf(a: Analysis, head: string): HeadTarget['kind'] | undefined {
  if (a.families.has(head)) return 'family';
  if (a.instances.has(head) || a.instanceFamilies.has(head)) return 'instance';
  return undefined;
}

/** Whether a flat name (`h[3]`, `t[2].level`) is an element of a family or a name of an instance of the model. */
export function fromHead(a: Analysis, flat: string): boolean {
  const m = /^[^.[]+/.exec(flat);
  return !!m && m[0] !== flat && kindOf(a, m[0]) !== undefined;
}

/** The family or instance name written at `offset` in the model's own lines, if any. */
export function headAt(a: Analysis, offset: number): HeadTarget | undefined {
  if (!a.families.size && !a.instances.size) return undefined;
  for (const x of headTokens(a)) {
    const span = { start: x.start, end: x.start + x.head.length };
    if (!within(span, offset)) continue;
    const kind = kindOf(a, x.head);
    return kind ? { kind, name: x.head, span } : undefined;
  }
  return undefined;
}

/** Every place the head `name` is written in the model (the declaration or place line included). */
export function headOccurrences(a: Analysis, name: string, includeDeclaration = true): Span[] {
  const decl = headDeclaration(a, name);
  const out: Span[] = [];
  for (const x of headTokens(a)) {
    if (x.head !== name) continue;
    const span = { start: x.start, end: x.start + name.length };
    if (!includeDeclaration && decl && span.start === decl.start) continue;
    out.push(span);
  }
  return out;
}

/** Where the head is declared: the family's declaration, or the name on the place line. */
export function headDeclaration(a: Analysis, name: string): Span | undefined {
  const f = a.families.get(name);
  if (f) return { start: f.span.start, end: f.span.start + name.length };
  for (const st of a.source.file.statements) if (st.kind === 'place' && st.name.name === name) return { start: st.name.span.start, end: st.name.span.start + name.length };
  return undefined;
}

/** Why `newName` cannot replace the head (a name the model already has), or undefined. */
export function headClash(a: Analysis, newName: string): string | undefined {
  const heads = new Set<string>();
  for (const s of a.bound.symbols.keys()) heads.add(s.replace(/[.[].*$/, ''));
  for (const k of a.families.keys()) heads.add(k);
  for (const k of a.instanceFamilies.keys()) heads.add(k);
  for (const k of a.instances.keys()) heads.add(k.replace(/[.[].*$/, ''));
  for (const t of a.bound.tables.keys()) heads.add(t);
  return heads.has(newName) ? `"${newName}" is already a name of the model: choose another name.` : undefined;
}

/**
 * Go to definition, find references and rename, for declared names (through the binder's reference list,
 * so comments are never touched) and point names (point headers, linear blocks, sweeps). A rename keeps
 * generated linear blocks consistent: their Δ names and `at` names are references too, and a block that
 * was up to date gets its digest recomputed for the renamed model. Pure.
 */
import { hasName } from '../names';
import type { Analysis } from '../pipeline/analysis';
import { partNames as partNamesOf } from '../semantics/elaborate';
import { BUILTIN_CONSTANTS } from '../semantics/binder';
import { BUILTIN_ARITY } from '../algebra/expr';
import { KEYWORDS, RESERVED } from '../syntax/parser';
import type { Span } from '../text';
import { applyEdits, type TextEdit } from './edits';
import { targetAt, type Target } from './locate';
import { memberAt, memberOccurrences } from './partMembers';
import { fromHead, headAt, headClash, headDeclaration, headOccurrences } from './headNames';

/** Where the name at `offset` is declared (a point: its header name). */
export function definition(a: Analysis, offset: number): Span[] {
  const head = headAt(a, offset);
  if (head) return [headDeclaration(a, head.name) ?? head.span];
  const t = targetAt(a, offset);
  if (!t) return [];
  if (t.kind === 'symbol') return [t.symbol.span];
  if (t.kind === 'point') return t.block ? [t.block.name.span] : [];
  if (t.kind === 'sweep') return [t.block.name.span];
  return [];
}

/** Every occurrence of the name at `offset` (declaration first when asked for). */
export function references(a: Analysis, offset: number, includeDeclaration = true): Span[] {
  // a name of a part: through every instance, in every document
  const member = memberAt(a, offset);
  if (member) return memberOccurrences(a, member, includeDeclaration);
  // a family or an instance of the model: the written name in every element or qualified name
  const head = headAt(a, offset);
  if (head) return headOccurrences(a, head.name, includeDeclaration);
  const t = targetAt(a, offset);
  if (!t) return [];
  return occurrences(a, t, includeDeclaration);
}

function occurrences(a: Analysis, t: Target, includeDeclaration: boolean): Span[] {
  const out: Span[] = [];
  if (t.kind === 'symbol') {
    if (includeDeclaration) out.push(t.symbol.span);
    for (const r of a.bound.references) if (r.symbol === t.symbol) out.push(r.span);
  } else if (t.kind === 'point') {
    const m = a.bound;
    for (const p of m.points) if (p.name.name === t.name && (includeDeclaration || p !== t.block)) out.push(p.name.span);
    for (const l of m.linears) if (l.name.name === t.name) out.push(l.name.span);
    for (const s of m.sweeps) if (s.point?.name === t.name) out.push(s.point.span);
  } else if (t.kind === 'sweep') {
    if (includeDeclaration) out.push(t.block.name.span);
  }
  return out.sort((x, y) => x.start - y.start);
}

export interface RenameTarget {
  span: Span;
  placeholder: string;
}

/** What a rename at `offset` would rename, or undefined when the cursor is not on a renamable name. */
export function prepareRename(a: Analysis, offset: number): RenameTarget | undefined {
  const member = memberAt(a, offset);
  if (member) return { span: member.span, placeholder: member.name };
  const head = headAt(a, offset);
  if (head) return { span: head.span, placeholder: head.name };
  const t = targetAt(a, offset);
  if (!t) return undefined;
  // an element or a qualified name is renamed through its family's or instance's name, or its member's
  if (t.kind === 'symbol' && fromHead(a, t.symbol.name)) return undefined;
  if (t.kind === 'symbol') return { span: t.span, placeholder: t.symbol.name };
  if (t.kind === 'point' && t.block) return { span: t.span, placeholder: t.name };
  if (t.kind === 'sweep') return { span: t.span, placeholder: t.block.name.name };
  return undefined;
}

export type RenameResult = { ok: true; edits: TextEdit[] } | { ok: false; message: string };

const NAME = /^[\p{L}_][\p{L}\p{N}_]*$/u;

/** Why `name` cannot be a name, or undefined when it can. */
export function invalidName(name: string): string | undefined {
  if (!NAME.test(name) || name.includes('Δ')) return `"${name}" is not a name: use letters, digits and "_", starting with a letter or "_" (no "Δ").`;
  if (RESERVED.has(name) || KEYWORDS.has(name)) return `"${name}" is a keyword of the model language.`;
  if (hasName(BUILTIN_ARITY, name) || hasName(BUILTIN_CONSTANTS, name)) return `"${name}" is a built-in name.`;
  return undefined;
}

export function rename(a: Analysis, offset: number, newName: string): RenameResult {
  const member = memberAt(a, offset);
  if (member) {
    // a name of a part: its declaration, its uses in the part and through every instance (any document)
    if (newName === member.name) return { ok: true, edits: [] };
    const bad = invalidName(newName);
    if (bad) return { ok: false, message: bad };
    if (partNamesOf(member.part.block).has(newName)) return { ok: false, message: `"${newName}" is already declared in part ${member.part.block.name.name}: choose another name.` };
    return { ok: true, edits: memberOccurrences(a, member, true).map((span) => ({ span, newText: newName })) };
  }
  const head = headAt(a, offset);
  if (head) {
    if (newName === head.name) return { ok: true, edits: [] };
    const bad = invalidName(newName) ?? headClash(a, newName);
    if (bad) return { ok: false, message: bad };
    return { ok: true, edits: withDigests(a, headOccurrences(a, head.name).map((span) => ({ span, newText: newName }))) };
  }
  const t = targetAt(a, offset);
  const prep = prepareRename(a, offset);
  if (t && !prep && t.kind === 'symbol' && fromHead(a, t.symbol.name)) return { ok: false, message: `Put the cursor on the family's or instance's name, or on the member's name after the dot, to rename it (not on ${t.symbol.name}'s index).` };
  if (!t || !prep) return { ok: false, message: 'Put the cursor on a declared name, a point name or a sweep name to rename it.' };
  if (newName === prep.placeholder) return { ok: true, edits: [] };
  const bad = invalidName(newName);
  if (bad) return { ok: false, message: bad };
  if (t.kind === 'symbol' && a.bound.symbols.has(newName)) return { ok: false, message: `"${newName}" is already declared: choose another name.` };
  if (t.kind === 'point' && a.pointNames.includes(newName)) return { ok: false, message: `There is already a point "${newName}".` };
  if (t.kind === 'sweep' && a.bound.sweeps.some((s) => s.name.name === newName)) return { ok: false, message: `There is already a sweep "${newName}".` };
  const edits: TextEdit[] = occurrences(a, t, true).map((span) => ({ span, newText: newName }));
  return { ok: true, edits: withDigests(a, edits, t.kind === 'point' ? { from: t.name, to: newName } : undefined) };
}

/** The edits plus new digests for the generated blocks that were up to date, so they stay up to date. */
function withDigests(a: Analysis, edits: TextEdit[], point?: { from: string; to: string }): TextEdit[] {
  const fresh = a.bound.linears.filter((lb) => lb.name.name && lb.digest && a.pointBlock(lb.name.name) && lb.digest.text.trim() === a.digest(lb.name.name));
  if (fresh.length) {
    const b = a.withText(applyEdits(a.text, edits));
    for (const lb of fresh) edits.push({ span: lb.digest!.span, newText: b.digest(point && lb.name.name === point.from ? point.to : lb.name.name) });
  }
  return edits;
}

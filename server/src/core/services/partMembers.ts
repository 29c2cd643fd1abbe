/**
 * Names of parts through their instances, for references and rename: the name `level` declared in part
 * `tank` is one name whether it is written `level` in the part, `t1.level`, `cell[i].level` or
 * `cell.level` in the model, or `with level = …` on a place line. Spans may lie in any document of the
 * analysis (the part's file, the model). Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import type * as A from '../syntax/ast';
import { headOf, partNames, type PartDef } from '../semantics/elaborate';
import { forEachExpr } from '../syntax/walk';
import type { Span } from '../text';
import { wordAt } from './locate';

export interface MemberTarget {
  part: PartDef;
  /** The name as the part declares it. */
  name: string;
  /** The text under the cursor that names it. */
  span: Span;
}

const within = (s: Span, o: number) => s.start <= o && o <= s.end;

/** The part whose block (in the root document) holds the offset. */
function partAt(a: Analysis, offset: number): PartDef | undefined {
  for (const p of a.parts.values()) if (within(p.block.span, offset) && !a.documents.foreign(p.block.span)) return p;
  for (const st of a.source.file.statements) if (st.kind === 'part' && within(st.span, offset)) return { block: st, uri: a.uri };
  return undefined;
}

/** Every place line of the analysis (in the model and inside parts, in every document). */
function placeLines(a: Analysis): A.PlaceStmt[] {
  const out: A.PlaceStmt[] = [];
  const walk = (sts: A.Statement[]) => {
    for (const st of sts) {
      if (st.kind === 'place') out.push(st);
      else if (st.kind === 'part') walk(st.body);
    }
  };
  for (const d of a.documents.list) walk(d.parsed.file.statements);
  return out;
}

/** The name of a part's member at an offset: in a part's body, after an instance's dot, or on a `with` line. */
export function memberAt(a: Analysis, offset: number): MemberTarget | undefined {
  if (!a.parts.size && !a.source.file.statements.some((s) => s.kind === 'part')) return undefined;
  const w = wordAt(a.text, offset);
  if (!w) return undefined;
  const word = a.text.slice(w.start, w.end);
  // on a `with NAME = …` of a place line
  for (const pl of placeLines(a)) {
    for (const o of pl.overrides) {
      if (within(o.name.span, offset)) {
        const part = a.parts.get(pl.part.name);
        return part ? { part, name: o.name.name, span: o.name.span } : undefined;
      }
    }
  }
  // inside a part's body: its own names
  const inside = partAt(a, offset);
  if (inside) {
    const before = a.text[w.start - 1];
    if (before !== '.' && before !== ']' && partNames(inside.block).has(word) && !within(inside.block.name.span, offset)) return { part: inside, name: word, span: w };
    return undefined;
  }
  // after an instance's name and a dot: t1.level, cell[i].level, cell.level
  if (a.text[w.start - 1] !== '.') return undefined;
  const written = a.text.slice(writtenStart(a.text, w.start - 1), w.start - 1);
  const inst = instanceOfWritten(a, written);
  if (!inst || !partNames(inst.block).has(word)) return undefined;
  return { part: inst, name: word, span: w };
}

/** Where the instance's name written before the dot at `dot` starts (brackets may hold index arithmetic). */
export function writtenStart(text: string, dot: number): number {
  let s = dot;
  let depth = 0;
  while (s > 0) {
    const c = text[s - 1];
    if (c === ']') depth++;
    else if (c === '[') {
      if (depth === 0) break;
      depth--;
    } else if (depth === 0 && !/[\p{L}\p{N}_.]/u.test(c)) break;
    s--;
  }
  return s;
}

/** The part of the instance written before a dot (`t1`, `cell[i]`, `cell`, `plant.t1`). */
function instanceOfWritten(a: Analysis, written: string): PartDef | undefined {
  const bare = written.replace(/\[[^\]]*\]$/, '');
  const i = a.instances.get(written) ?? a.instances.get(bare);
  if (i) return i.part;
  const f = a.instanceFamilies.get(bare);
  if (f) return f.part;
  // an instance of a family written with an index expression: cell[i] → any of its elements
  for (const [name, x] of a.instances) if (name.replace(/\[[^\]]*\]/g, '') === bare.replace(/\[[^\]]*\]/g, '')) return x.part;
  return undefined;
}

/** Every place `target` is written: its declaration, its uses in the part, qualified uses, `with` lines. */
export function memberOccurrences(a: Analysis, target: { part: PartDef; name: string }, includeDeclaration = true): Span[] {
  const out = new Map<string, Span>();
  const add = (sp: Span) => out.set(`${sp.start}:${sp.end}`, sp);
  const block = target.part.block;
  const name = target.name;
  // the part's own lines (wherever the part's file is)
  const doc = a.documents.list.find((d) => d.parsed.file.statements.includes(block)) ?? a.documents.root;
  const own = doc.parsed.file.statements.find((s): s is A.PartBlock => s.kind === 'part' && s.name.name === block.name.name) ?? block;
  const ident = (id: A.Ident) => {
    if (id.name === name && includeDeclaration) add({ start: id.span.start, end: id.span.start + name.length });
  };
  const expr = (e: A.Expr | undefined, bound: ReadonlySet<string>) => {
    if (!e) return;
    forEachExpr(e, (x) => {
      if (x.kind === 'name' && headOf(x.name) === name && !bound.has(x.name)) add({ start: x.nameSpan.start, end: x.nameSpan.start + name.length });
      if (x.kind === 'reduce') {
        const inner = new Set([...bound, x.index.name]);
        expr(x.body, inner);
        expr(x.range.from, bound);
        expr(x.range.to, bound);
        return false;
      }
      if (x.kind === 'name' && x.index) expr(x.index, bound);
      return true;
    });
  };
  const body = (sts: A.Statement[], bound: ReadonlySet<string>) => {
    for (const st of sts) {
      switch (st.kind) {
        case 'const': ident(st.name); expr(st.value, bound); break;
        case 'input': case 'state': case 'var': for (const id of st.names) ident(id); break;
        case 'output': ident(st.name); expr(st.value, bound); break;
        case 'equation': expr(st.lhs, bound); expr(st.rhs, bound); break;
        case 'place': ident(st.name); for (const o of st.overrides) expr(o.value, bound); break;
        case 'each': {
          const inner = new Set([...bound, ...st.indices.map((i) => i.name.name)]);
          for (const i of st.indices) { expr(i.range.from, bound); expr(i.range.to, bound); }
          body(st.body, inner);
          break;
        }
      }
    }
  };
  body(own.body, new Set());
  // qualified uses: references to an instance's member, outside the part's own body
  const instances = [...a.instances.values()].filter((i) => i.part.block.name.name === block.name.name).map((i) => i.name);
  if (instances.length) {
    const prefixes = new Set(instances);
    for (const r of [...a.bound.references, ...[...a.bound.symbols.values()].map((s) => ({ span: s.span, symbol: s }))]) {
      if (within(own.span, r.span.start)) continue;
      const full = r.symbol.name;
      const hit = [...prefixes].some((p) => full === `${p}.${name}` || full.startsWith(`${p}.${name}[`) || full.startsWith(`${p}.${name}.`));
      if (!hit) continue;
      const text = a.sourceText(r.span);
      const at = findMember(text, name);
      if (at >= 0) add({ start: r.span.start + at, end: r.span.start + at + name.length });
    }
  }
  // `with NAME = …` of the places of this part
  for (const pl of placeLines(a)) {
    if (pl.part.name !== block.name.name) continue;
    for (const o of pl.overrides) if (o.name.name === name) add(o.name.span);
  }
  return [...out.values()].sort((x, y) => x.start - y.start);
}

/** Offset of `name` after a dot in a written qualified name (`cell[i].level` → 8), or −1. */
function findMember(text: string, name: string): number {
  let k = text.indexOf(`.${name}`);
  while (k >= 0) {
    const after = text[k + 1 + name.length];
    if (after === undefined || after === '[' || after === '.' || after === "'" || after === ' ') return k + 1;
    k = text.indexOf(`.${name}`, k + 1);
  }
  return -1;
}

/**
 * Completion candidates at an offset: common units inside `[ ]`, point names after `linear`/`from`,
 * declared names with their kinds, built-in functions and `pi` in expressions, keywords at the start of a
 * line. Nothing inside comments. Pure: plain data the shell maps to protocol items.
 */
import type { Analysis } from '../pipeline/analysis';
import { BUILTIN_ARITY, BUILTIN_DOC } from '../algebra/expr';
import type { Span } from '../text';
import { inComment, statementAt, unitBracketAt } from './locate';
import { KEYWORD_DOC } from './hover';
import type * as A from '../syntax/ast';
import type { PartDef } from '../semantics/elaborate';
import { writtenStart } from './partMembers';

export type CompletionKind = 'const' | 'input' | 'state' | 'var' | 'output' | 'function' | 'constant' | 'keyword' | 'unit' | 'point';

export interface CompletionCandidate {
  label: string;
  kind: CompletionKind;
  detail?: string;
  documentation?: string;
  /** Text to insert when it differs from the label; `$0`-style snippet when `snippet` is set. */
  insertText?: string;
  snippet?: boolean;
  /** Orders candidates: lower first. */
  sortText: string;
  /** The span the candidate replaces (the partial word before the cursor). */
  replace: Span;
}

/** Units engineers write most, with what they are. */
export const COMMON_UNITS: [string, string][] = [
  ['m', 'metre'], ['cm', 'centimetre'], ['mm', 'millimetre'], ['km', 'kilometre'],
  ['m^2', 'square metre'], ['m^3', 'cubic metre'], ['L', 'litre'],
  ['s', 'second'], ['min', 'minute'], ['h', 'hour'], ['d', 'day'],
  ['kg', 'kilogram'], ['g', 'gram'], ['t', 'tonne'],
  ['m/s', 'speed'], ['m/s^2', 'acceleration'], ['rad', 'radian (dimensionless)'], ['deg', 'degree of angle'], ['rad/s', 'angular speed'], ['rpm', 'revolutions per minute'], ['Hz', 'hertz'],
  ['m^3/s', 'volume flow'], ['L/s', 'volume flow'], ['L/min', 'volume flow'], ['m^3/h', 'volume flow'], ['kg/s', 'mass flow'], ['kg/m^3', 'density'],
  ['N', 'newton'], ['kN', 'kilonewton'], ['N*m', 'torque'], ['N*s/m', 'damping'], ['N/m', 'stiffness'],
  ['Pa', 'pascal'], ['kPa', 'kilopascal'], ['bar', 'bar'],
  ['J', 'joule'], ['kJ', 'kilojoule'], ['W', 'watt'], ['kW', 'kilowatt'], ['MW', 'megawatt'], ['W/K', 'thermal conductance'], ['kW/K', 'thermal conductance'], ['J/(kg*K)', 'specific heat'], ['kJ/(kg*K)', 'specific heat'],
  ['K', 'kelvin'], ['degC', 'degree Celsius (values convert with the offset)'],
  ['A', 'ampere'], ['V', 'volt'], ['ohm', 'ohm'], ['F', 'farad'], ['H', 'henry'],
  ['mol', 'mole'], ['mol/m^3', 'concentration'], ['mol/L', 'concentration'],
  ['%', 'percent (dimensionless)'], ['1/s', 'rate'],
];

const IDENT = /[\p{L}\p{N}_]/u;
const KIND_DETAIL: Record<string, string> = { const: 'constant', input: 'input', state: 'state', var: 'var', output: 'output' };

export function completions(a: Analysis, offset: number): CompletionCandidate[] {
  const text = a.text;
  if (inComment(a, offset, true)) return [];
  // inside a unit bracket: units (replace the unit text typed so far, up to the cursor)
  const br = unitBracketAt(text, offset);
  if (br && offset > br.start && (offset < br.end || text[br.end - 1] !== ']')) {
    let s = offset;
    while (s > br.start + 1 && !/[\s[]/.test(text[s - 1])) s--;
    const replace = { start: s, end: offset };
    return COMMON_UNITS.map(([u, what], i) => ({ label: u, kind: 'unit', detail: what, sortText: String(i).padStart(3, '0'), replace }));
  }
  let s = offset;
  while (s > 0 && IDENT.test(text[s - 1])) s--;
  const replace = { start: s, end: offset };
  // after an instance's name and a dot: the names of its part
  if (text[s - 1] === '.') {
    const members = memberCompletions(a, s - 1, replace);
    if (members) return members;
  }
  const lineNo = a.lines.position(offset).line;
  const lineStart = a.lines.lineStarts[lineNo];
  const before = text.slice(lineStart, s);
  const indented = /^[ \t]+/.test(before);
  const firstWord = before.trim() === '';
  // point names after "linear " or "from "
  if (/^\s*linear\s+$/.test(before) || /\bfrom\s+$/.test(before)) return pointNames(a, replace);
  if (/^\s*(point|sweep)\s+$/.test(before)) return []; // a new name
  const out: CompletionCandidate[] = [];
  const inBlock = indented && blockKind(a, lineNo);
  const names = (prefix: string) => {
    for (const sym of a.bound.symbols.values()) {
      const unit = sym.unit ? ` [${sym.unit.text}]` : '';
      out.push({ label: sym.name, kind: sym.kind, detail: `${KIND_DETAIL[sym.kind]}${unit}`, sortText: prefix + sym.name, replace });
    }
  };
  if (inBlock === 'point' && firstWord) {
    // a point line: names not listed yet
    const listed = new Set((a.bound.points.find((p) => a.lines.position(p.span.start).line < lineNo && a.lines.position(p.span.end).line >= lineNo - 1)?.lines ?? []).map((l) => l.name.name));
    for (const sym of a.bound.symbols.values()) {
      if (listed.has(sym.name)) continue;
      const unit = sym.unit ? ` [${sym.unit.text}]` : '';
      out.push({ label: sym.name, kind: sym.kind, detail: `${KIND_DETAIL[sym.kind]}${unit}`, sortText: '0' + sym.name, replace });
    }
    return out;
  }
  if (inBlock === 'sweep' && firstWord) return [kw('vary', replace, '0')];
  if (inBlock === 'linear' && firstWord) return [kw('at', replace, '0')];
  names('1');
  for (const fn of Object.keys(BUILTIN_ARITY)) {
    out.push({
      label: fn, kind: 'function', detail: `built-in, ${(BUILTIN_ARITY as Record<string, number>)[fn]} argument(s)`,
      documentation: (BUILTIN_DOC as Record<string, string>)[fn], insertText: `${fn}($1)$0`, snippet: true, sortText: '2' + fn, replace,
    });
  }
  out.push({ label: 'pi', kind: 'constant', detail: 'built-in constant π', sortText: '2pi', replace });
  if (firstWord && !indented && !continuation(a, lineNo)) {
    for (const k of ['const', 'input', 'state', 'var', 'output', 'point', 'sweep', 'time']) out.push(kw(k, replace, '3'));
  }
  return out;
}

function kw(word: string, replace: Span, prefix: string): CompletionCandidate {
  return { label: word, kind: 'keyword', documentation: KEYWORD_DOC[word], sortText: prefix + word, replace };
}

function pointNames(a: Analysis, replace: Span): CompletionCandidate[] {
  return a.pointNames.map((p) => ({ label: p, kind: 'point', detail: 'point', sortText: '0' + p, replace }));
}

/** The kind of block an indented line belongs to: the nearest header above it. */
function blockKind(a: Analysis, line: number): 'point' | 'linear' | 'sweep' | undefined {
  for (let l = line - 1; l >= 0; l--) {
    const t = a.lines.lineText(l);
    if (!t.trim() || /^\s*#/.test(t)) continue;
    if (/^[ \t]/.test(t)) continue;
    const m = /^(point|linear|sweep)\b/.exec(t);
    return m ? (m[1] as 'point' | 'linear' | 'sweep') : undefined;
  }
  return undefined;
}

/** Whether a line continues the previous statement (an open parenthesis or a trailing operator). */
function continuation(a: Analysis, line: number): boolean {
  if (line === 0) return false;
  const si = statementAt(a, a.lines.lineStarts[line - 1]);
  if (si < 0) return false;
  const st = a.parsed.file.statements[si];
  return a.lines.position(st.span.end).line >= line;
}

/** The names of the part of the instance written before the dot at `dot` (`t1.`, `cell[i].`, `cell.`). */
function memberCompletions(a: Analysis, dot: number, replace: Span): CompletionCandidate[] | undefined {
  const written = a.text.slice(writtenStart(a.text, dot), dot);
  if (!written) return undefined;
  const bare = written.replace(/\[[^\]]*\]/g, '');
  let part: PartDef | undefined = a.instances.get(written)?.part ?? a.instanceFamilies.get(bare)?.part;
  if (!part) for (const [name, i] of a.instances) if (name.replace(/\[[^\]]*\]/g, '') === bare) part = i.part;
  if (!part) return undefined;
  const out: CompletionCandidate[] = [];
  const seen = new Set<string>();
  const add = (name: string, kind: CompletionKind, detail: string) => {
    if (seen.has(name)) return;
    seen.add(name);
    out.push({ label: name, kind, detail: `${detail} of part ${part!.block.name.name}`, sortText: '0' + name, replace });
  };
  const walk = (sts: A.Statement[]) => {
    for (const st of sts) {
      switch (st.kind) {
        case 'const': add(st.name.name, 'const', 'constant'); break;
        case 'input': case 'state': case 'var': for (const id of st.names) add(id.name, st.kind, KIND_DETAIL[st.kind] + (st.unit ? ` [${st.unit.text}]` : '')); break;
        case 'output': add(st.name.name, 'output', 'output' + (st.unit ? ` [${st.unit.text}]` : '')); break;
        case 'place': add(st.name.name, 'var', `instance of ${st.part.name}`); break;
        case 'each': walk(st.body); break;
      }
    }
  };
  walk(part.block.body);
  return out;
}
/**
 * Elaboration: indexed families → the flat scalar model they stand for.
 *
 * Runs between the parser and the binder. A declaration `state h[1..n] [m]` declares the elements h[1] …
 * h[n]; `h[i+1]` in an expression names one element once the index is known; `each i in 2..n:` repeats its
 * equations (and outputs) for every index value; `sum(each i in 1..n: q[i])` and `product(…)` expand to
 * sums and products; a point line may give a whole family one value or a list `{…}`. The result is an
 * ordinary syntax tree whose names are the elements' names in their one fixed form, `h[3]` — so every later
 * stage (names, units, structure, points, linear model, editor features) works on it unchanged. Spans stay
 * those of the text the user wrote: every element made from one template line points at that line.
 *
 * Index ranges and indices are whole-number constant expressions: numbers without units, constants
 * defined that way (`const n = 20`), index names, + − * / ^ and parentheses.
 */
import { pushAll } from '../arrays';
import type * as A from '../syntax/ast';
import { diag, type Diagnostic } from '../diagnostics';
import type { Span } from '../text';
import { BUILTIN_CONSTANTS } from './binder';
import { hasName } from '../names';
import { balanced, evalIndex } from './indexArithmetic';
import { usesFamilies } from './familyUse';

export interface Family {
  name: string;
  kind: 'const' | 'input' | 'state' | 'var' | 'output';
  from: number;
  to: number;
  /** The declaration's name span. */
  span: Span;
}

/** Where place lines look parts up, per document (built by pipeline/documents.ts). */
export interface PartScopes {
  root: string;
  byUri: ReadonlyMap<string, ReadonlyMap<string, PartDef>>;
  /** A part read but not brought in to the document `uri`: its diagnostic (P262), or undefined. */
  hidden(uri: string, name: A.Ident): Diagnostic | undefined;
}

/** A part a model may place: its block and the document it is defined in. */
export interface PartDef {
  block: A.PartBlock;
  uri: string;
}

/** One placed instance (an element of a family of instances is one too): `t1`, `cell[3]`, `plant.t1`. */
export interface Instance {
  name: string;
  part: PartDef;
  /** The place line. */
  place: A.PlaceStmt;
  /** The place line's span in the document that places it (for a nested instance: inside the outer part). */
  span: Span;
}

export interface ElaborationResult {
  file: A.ModelFile;
  diagnostics: Diagnostic[];
  /** Families by name (empty for a flat model). */
  families: Map<string, Family>;
  /** Constants used in sizes, ranges and indices (used, though no equation names them). */
  usedInIndices: Set<string>;
  /** Where those constants are written in sizes, ranges and indices (each place once), for references and rename. */
  indexRefs: { name: string; span: Span }[];
  /** Placed instances by their flat name (empty without parts). */
  instances: Map<string, Instance>;
  /** Families of instances (`place tank as cell[1..8]`) by name. */
  instanceFamilies: Map<string, { from: number; to: number; part: PartDef; place: A.PlaceStmt }>;
}

/** Where names of a part's body are resolved: the instance's prefix and the part's own names. */
interface Scope {
  prefix: string;
  part: PartDef;
  declared: ReadonlySet<string>;
  /** Constants this use gives another value, with the scope and index values their expressions are read in. */
  overrides: ReadonlyMap<string, { value: A.Expr; bind: ReadonlyMap<string, number>; scope: Scope | undefined }>;
  /** Parts being expanded (a part placing itself is an error). */
  stack: readonly string[];
}

/** The name before the first dot: the instance of a qualified name (`t1` in `t1.level`). */
export function headOf(name: string): string {
  const k = name.indexOf('.');
  return k < 0 ? name : name.slice(0, k);
}

/** The names a part declares (constants, inputs, states, vars, outputs, instances). */
export function partNames(block: A.PartBlock): Set<string> {
  const out = new Set<string>();
  const walk = (sts: A.Statement[]): void => {
    for (const st of sts) {
      switch (st.kind) {
        case 'const': case 'output': out.add(st.name.name); break;
        case 'input': case 'state': case 'var': for (const id of st.names) out.add(id.name); break;
        case 'place': out.add(st.name.name); break;
        case 'each': walk(st.body); break;
      }
    }
  };
  walk(block.body);
  return out;
}

/** The flat name of a qualified name in a scope; undefined when the part does not declare it. */
function qualify(name: string, scope: Scope | undefined): string | undefined {
  if (!scope) return name;
  if (!scope.declared.has(headOf(name))) return undefined;
  return scope.prefix ? `${scope.prefix}.${name}` : name;
}

/** The fixed form of an element's name. */
export function elementName(family: string, index: number): string {
  return `${family}[${index}]`;
}

/** Largest number of elements one family or one each block may make (a guard against typing 1e9 by mistake). */
export const MAX_ELEMENTS = 1_000_000;

class ElabError {
  constructor(readonly d: Diagnostic) {}
}

/**
 * Expands the families and the placed parts of a parsed model; a model without any returns the same tree.
 * `parts` are the parts the model may place (its own and those its `parts from` lines bring in).
 */
export function elaborate(file: A.ModelFile, parts: ReadonlyMap<string, PartDef> = new Map(), scopes?: PartScopes): ElaborationResult {
  const families = new Map<string, Family>();
  const usedInIndices = new Set<string>();
  const indexRefs: { name: string; span: Span }[] = [];
  const instances = new Map<string, Instance>();
  const instanceFamilies: ElaborationResult['instanceFamilies'] = new Map();
  if (!usesFamilies(file)) return { file, diagnostics: [], families, usedInIndices, indexRefs, instances, instanceFamilies };
  const declaredOf = new Map<A.PartBlock, Set<string>>();
  const namesOf = (b: A.PartBlock): Set<string> => {
    let d = declaredOf.get(b);
    if (!d) declaredOf.set(b, (d = partNames(b)));
    return d;
  };
  // a part's input is a value from outside: tied by an equation outside the instance it becomes a var of
  // the flat model (that equation determines it); left untied it is an input of the whole model
  const inputOwner = new Map<string, string>();
  const tied = new Set<string>();
  const markTied = (e: A.Expr, prefix: string): void => {
    const stack: A.Expr[] = [e];
    while (stack.length) {
      const x = stack.pop()!;
      switch (x.kind) {
        case 'name': {
          const owner = inputOwner.get(x.name);
          if (owner !== undefined && owner !== prefix) tied.add(x.name);
          break;
        }
        case 'unary': stack.push(x.arg); break;
        case 'binary': stack.push(x.left, x.right); break;
        case 'call': pushAll(stack, x.args); break;
      }
    }
  };
  const note = (d: Diagnostic): void => {
    if (!diagnostics.some((x) => x.code === d.code && x.span.start === d.span.start && x.span.end === d.span.end)) diagnostics.push(d);
  };
  const diagnostics: Diagnostic[] = [];
  const numbers = new Map<string, number>(); // constants usable in index arithmetic
  const out: A.Statement[] = [];

  const intValue = (e: A.Expr, bind: ReadonlyMap<string, number>, what: string, scope?: Scope): number => {
    const v = evalIndex(e, bind, numbers, usedInIndices, 0, scope ? (n) => qualify(n, scope) : undefined, indexRefs);
    if (typeof v === 'string') throw new ElabError(diag('P230', e.span, { what, detail: v }));
    if (!Number.isInteger(v)) throw new ElabError(diag('P230', e.span, { what, detail: `it is ${v}, not a whole number` }));
    return v;
  };
  const rangeOf = (r: A.IndexRange, bind: ReadonlyMap<string, number>, what: string, scope?: Scope): [number, number] => {
    const from = intValue(r.from, bind, what, scope);
    const to = intValue(r.to, bind, what, scope);
    if (to - from + 1 > MAX_ELEMENTS) throw new ElabError(diag('P231', r.span, { what, count: String(to - from + 1), max: String(MAX_ELEMENTS) }));
    return [from, to];
  };
  const element = (name: string, index: A.Expr, span: Span, bind: ReadonlyMap<string, number>, scope?: Scope): string => {
    const k = intValue(index, bind, `the index of ${name}`, scope);
    const f = families.get(name);
    if (!f) throw new ElabError(diag('P232', span, { name }));
    if (k < f.from || k > f.to) throw new ElabError(diag('P233', index.span, { element: elementName(name, k), family: `${name}[${f.from}..${f.to}]` }));
    return elementName(name, k);
  };

  /** Substitutes index values and expands reductions (iteratively over the expression tree). */
  /** `cell[i].level`: the flat name of a member of an element of a family of instances (or of an expanded model's name). */
  const memberName = (head: string, index: A.Expr, member: A.Member, span: Span, bind: ReadonlyMap<string, number>, scope?: Scope): string => {
    const k = intValue(index, bind, `the index of ${head}`, scope);
    const f = instanceFamilies.get(head);
    if (f && (k < f.from || k > f.to)) throw new ElabError(diag('P233', index.span, { element: elementName(head, k), family: `${head}[${f.from}..${f.to}]` }));
    let name = elementName(head, k);
    for (let m: A.Member | undefined = member; m; m = m.member) {
      name = `${name}.${m.name}`;
      if (!m.index) continue;
      if (families.has(name)) {
        name = element(name, m.index, m.span, bind, scope);
        continue;
      }
      const j = intValue(m.index, bind, `the index of ${name}`, scope);
      const g = instanceFamilies.get(name);
      if (g && (j < g.from || j > g.to)) throw new ElabError(diag('P233', m.index.span, { element: elementName(name, j), family: `${name}[${g.from}..${g.to}]` }));
      name = elementName(name, j);
    }
    return name;
  };

  const expand = (root: A.Expr, bind: ReadonlyMap<string, number>, scope?: Scope): A.Expr => {
    const stack: A.Expr[] = [root]; // with `dones`: whether each one's operands are done (no frame objects)
    const dones: boolean[] = [false];
    const results: A.Expr[] = [];
    while (stack.length) {
      const e = stack.pop()!;
      if (!dones.pop()) {
        switch (e.kind) {
          case 'unary': stack.push(e, e.arg); dones.push(true, false); continue;
          case 'binary': stack.push(e, e.right, e.left); dones.push(true, false, false); continue;
          case 'call':
            stack.push(e);
            dones.push(true);
            for (let k = e.args.length - 1; k >= 0; k--) { stack.push(e.args[k]); dones.push(false); }
            continue;
        }
      }
      switch (e.kind) {
        case 'unary': {
          const arg = results.pop()!;
          results.push(arg === e.arg ? e : { ...e, arg });
          break;
        }
        case 'binary': {
          const right = results.pop()!;
          const left = results.pop()!;
          results.push(left === e.left && right === e.right ? e : { ...e, left, right });
          break;
        }
        case 'call': {
          const args = results.splice(results.length - e.args.length, e.args.length);
          results.push(args.every((a, k) => a === e.args[k]) ? e : { ...e, args });
          break;
        }
        case 'name': {
          if (bind.has(e.name) && !e.index && !e.delta && e.primes === 0) {
            const v = bind.get(e.name)!;
            results.push({ kind: 'number', value: v, text: String(v), span: e.span });
            break;
          }
          const q = qualify(e.name, scope);
          if (q === undefined) {
            if (hasName(BUILTIN_CONSTANTS, e.name) && !e.index) {
              results.push(e);
              break;
            }
            note(diag('P250', e.nameSpan, { name: e.name, part: scope!.part.block.name.name }, { related: [{ span: scope!.part.block.name.span, message: `part ${scope!.part.block.name.name}` }] }));
            results.push({ kind: 'error', span: e.span });
            break;
          }
          if (e.index && e.member) {
            results.push({ kind: 'name', name: memberName(q, e.index, e.member, e.nameSpan, bind, scope), primes: e.primes, delta: e.delta, span: e.span, nameSpan: e.nameSpan });
          } else if (e.index) {
            results.push({ kind: 'name', name: element(q, e.index, e.nameSpan, bind, scope), primes: e.primes, delta: e.delta, span: e.span, nameSpan: e.nameSpan });
          } else {
            if (families.has(q)) throw new ElabError(diag('P234', e.nameSpan, { name: e.name }));
            const inst = instances.get(q) ?? instanceFamilies.get(q);
            if (inst) throw new ElabError(diag('P261', e.nameSpan, { name: e.name, part: inst.part.block.name.name, example: [...namesOf(inst.part.block)][0] ?? 'x' }));
            results.push(q === e.name ? e : { ...e, name: q });
          }
          break;
        }
        case 'reduce': {
          const [from, to] = rangeOf(e.range, bind, `the range of ${e.op}`, scope);
          const terms: A.Expr[] = [];
          const inner = new Map(bind);
          for (let k = from; k <= to; k++) {
            inner.set(e.index.name, k);
            terms.push(expand(e.body, inner, scope));
          }
          results.push(balanced(terms, e.op === 'sum' ? '+' : '*', e.span));
          break;
        }
        case 'list':
          throw new ElabError(diag('P235', e.span));
        default:
          results.push(e);
      }
    }
    return results[0];
  };

  const tryIt = (f: () => void): void => {
    try {
      f();
    } catch (err) {
      if (err instanceof ElabError) {
        // one template line repeated by an each block reports its problem once
        const d = err.d;
        if (!diagnostics.some((x) => x.code === d.code && x.span.start === d.span.start && x.span.end === d.span.end)) diagnostics.push(d);
      }
      else throw err;
    }
  };

  /** Declares a family (or a single element written `h[3]`); returns the element idents. */
  const declare = (id0: A.Ident, kind: Family['kind'], scope?: Scope): A.Ident[] => {
    const id: A.Ident = scope && scope.prefix ? { ...id0, name: `${scope.prefix}.${id0.name}` } : id0;
    if (id.member && id.index) {
      // an expanded model's member of an element of a family of instances: `state cell[3].level`
      return [{ name: memberName(id.name, id.index, id.member, id.span, new Map(), scope), span: id.span }];
    }
    if (id.range) {
      const [from, to] = rangeOf(id.range, new Map(), `the size of ${id.name}`, scope);
      if (to < from) throw new ElabError(diag('P236', id.range.span, { name: id.name, from: String(from), to: String(to) }));
      if (families.has(id.name)) throw new ElabError(diag('P202', id.span, { name: id.name, kind: families.get(id.name)!.kind }));
      families.set(id.name, { name: id.name, kind, from, to, span: id.span });
      const ids: A.Ident[] = [];
      for (let k = from; k <= to; k++) ids.push({ name: elementName(id.name, k), span: id.span });
      return ids;
    }
    if (id.index) {
      const k = intValue(id.index, new Map(), `the index of ${id.name}`, scope);
      const f = families.get(id.name) ?? { name: id.name, kind, from: k, to: k, span: id.span };
      f.from = Math.min(f.from, k);
      f.to = Math.max(f.to, k);
      families.set(id.name, f);
      return [{ name: elementName(id.name, k), span: id.span }];
    }
    return [id === id0 ? id : { name: id.name, span: id.span }];
  };

  const statements = (sts: A.Statement[], bind: ReadonlyMap<string, number>, sink: A.Statement[], scope?: Scope): void => {
    for (const st of sts) {
      tryIt(() => {
        switch (st.kind) {
          case 'const': {
            const ids = declare(st.name, 'const', scope);
            const over = scope?.overrides.get(st.name.name);
            // a constant this use gives another value: its expression is read where the place line is
            const src = over ? over.value : st.value;
            const srcBind = over ? over.bind : bind;
            const srcScope = over ? over.scope : scope;
            if (ids.length === 1 && !st.name.range) {
              const value = expand(src, srcBind, srcScope);
              sink.push({ ...st, name: ids[0], value });
              if (!st.name.index) {
                const v = evalIndex(src, srcBind, numbers, new Set(), 0, srcScope ? (n) => qualify(n, srcScope) : undefined);
                if (typeof v === 'number') numbers.set(ids[0].name, v);
              }
              return;
            }
            const items = src.kind === 'list' ? listItems(src, ids.length, st.name.name) : undefined;
            ids.forEach((id, k) => sink.push({ ...st, name: id, value: items ? expand(items[k], srcBind, srcScope) : expand(src, srcBind, srcScope) }));
            return;
          }
          case 'input':
          case 'state':
          case 'var': {
            const names: A.Ident[] = [];
            for (const id of st.names) tryIt(() => pushAll(names, declare(id, st.kind, scope)));
            if (scope && st.kind === 'input') for (const id of names) inputOwner.set(id.name, scope.prefix);
            sink.push({ ...st, names });
            return;
          }
          case 'output': {
            let name = st.name;
            const qn = scope && scope.prefix ? `${scope.prefix}.${st.name.name}` : st.name.name;
            if (st.name.index && st.name.member) {
              name = { name: memberName(qn, st.name.index, st.name.member, st.name.span, bind, scope), span: st.name.span };
            } else if (st.name.index) {
              const k = intValue(st.name.index, bind, `the index of ${st.name.name}`, scope);
              const f = families.get(qn);
              if (f && f.kind !== 'output') throw new ElabError(diag('P202', st.name.span, { name: qn, kind: f.kind }));
              const fam = f ?? { name: qn, kind: 'output' as const, from: k, to: k, span: st.name.span };
              fam.from = Math.min(fam.from, k);
              fam.to = Math.max(fam.to, k);
              families.set(qn, fam);
              name = { name: elementName(qn, k), span: st.name.span };
            } else if (qn !== st.name.name) {
              name = { name: qn, span: st.name.span };
            }
            sink.push({ ...st, name, value: expand(st.value, bind, scope) });
            return;
          }
          case 'equation': {
            const q = { ...st, lhs: expand(st.lhs, bind, scope), rhs: expand(st.rhs, bind, scope) };
            if (inputOwner.size) {
              markTied(q.lhs, scope?.prefix ?? '');
              markTied(q.rhs, scope?.prefix ?? '');
            }
            sink.push(q);
            return;
          }
          case 'each':
            eachBlock(st, bind, sink, scope);
            return;
          case 'place':
            place(st, bind, sink, scope);
            return;
          case 'part':
          case 'parts':
            return; // definitions and files: the places expand them
          case 'sweep': {
            const v = st.vary;
            if (v && v.name.index) {
              const name = v.name.member ? memberName(v.name.name, v.name.index, v.name.member, v.name.span, bind) : element(v.name.name, v.name.index, v.name.span, bind);
              sink.push({ ...st, vary: { ...v, name: { name, span: v.name.span } } });
            } else sink.push(st);
            return;
          }
          case 'point':
            sink.push({ ...st, lines: pointLines(st.lines) });
            return;
          case 'linear': {
            const at: A.LinearAt[] = [];
            for (const x of st.at) {
              tryIt(() => {
                const name = x.name.index && x.name.member ? { name: memberName(x.name.name, x.name.index, x.name.member, x.name.span, bind), span: x.name.span }
                  : x.name.index ? { name: element(x.name.name, x.name.index, x.name.span, bind), span: x.name.span } : x.name;
                at.push({ ...x, name, value: expand(x.value, bind) });
              });
            }
            const equations: A.EquationStmt[] = [];
            for (const q of st.equations) tryIt(() => equations.push({ ...q, lhs: expand(q.lhs, bind), rhs: expand(q.rhs, bind) }));
            sink.push({ ...st, at, equations });
            return;
          }
          default:
            sink.push(st);
        }
      });
    }
  };

  /** `place PART as NAME[range] with …`: the part's body once per instance, its names under the instance's. */
  const place = (st: A.PlaceStmt, bind: ReadonlyMap<string, number>, sink: A.Statement[], scope?: Scope): void => {
    // the parts of the document the place line is in: its own and those its parts lines name
    const from = scope ? scope.part.uri : scopes?.root;
    const reach = from !== undefined ? scopes?.byUri.get(from) : undefined;
    const def = (reach ?? parts).get(st.part.name);
    if (!def) throw new ElabError((from !== undefined && scopes?.hidden(from, st.part)) || diag('P251', st.part.span, { name: st.part.name }));
    const stack = scope?.stack ?? [];
    if (stack.includes(def.block.name.name)) {
      throw new ElabError(diag('P252', st.part.span, { name: def.block.name.name, chain: [...stack, def.block.name.name].join(' → ') }, { related: [{ span: def.block.name.span, message: `part ${def.block.name.name}` }] }));
    }
    const declared = namesOf(def.block);
    const consts = new Set<string>();
    const walk = (sts: A.Statement[]): void => {
      for (const x of sts) if (x.kind === 'const') consts.add(x.name.name);
    };
    walk(def.block.body);
    const base = scope && scope.prefix ? `${scope.prefix}.${st.name.name}` : st.name.name;
    const clash = families.get(base) ? `the family ${base}` : instances.has(base) || instanceFamilies.has(base) ? 'another instance' : undefined;
    if (clash) throw new ElabError(diag('P260', st.name.span, { name: base, what: clash }));
    let names: string[];
    if (st.name.range) {
      const [from, to] = rangeOf(st.name.range, bind, `the number of instances ${st.name.name}`, scope);
      if (to < from) throw new ElabError(diag('P236', st.name.range.span, { name: st.name.name, from: String(from), to: String(to) }));
      instanceFamilies.set(base, { from, to, part: def, place: st });
      names = [];
      for (let k = from; k <= to; k++) names.push(elementName(base, k));
    } else {
      names = [base];
    }
    const seen = new Set<string>();
    const lists = new Map<string, A.Expr[]>();
    for (const o of st.overrides) {
      if (!consts.has(o.name.name)) {
        const list = [...consts];
        const advice = list.length ? `its constants are ${list.join(', ')}` : 'the part has no constants';
        note(diag('P253', o.name.span, { name: o.name.name, part: def.block.name.name, advice }, { related: [{ span: def.block.name.span, message: `part ${def.block.name.name}` }] }));
        continue;
      }
      if (seen.has(o.name.name)) {
        note(diag('P254', o.name.span, { name: o.name.name }));
        continue;
      }
      seen.add(o.name.name);
      if (o.value.kind === 'list') {
        if (!st.name.range) throw new ElabError(diag('P235', o.value.span));
        lists.set(o.name.name, listItems(o.value, names.length, `${st.name.name}`));
      }
    }
    names.forEach((name, k) => {
      const overrides = new Map<string, { value: A.Expr; bind: ReadonlyMap<string, number>; scope: Scope | undefined }>();
      for (const o of st.overrides) {
        if (!seen.has(o.name.name) || overrides.has(o.name.name)) continue;
        const items = lists.get(o.name.name);
        overrides.set(o.name.name, { value: items ? items[k] : o.value, bind, scope });
      }
      instances.set(name, { name, part: def, place: st, span: st.span });
      const inner: Scope = { prefix: name, part: def, declared, overrides, stack: [...stack, def.block.name.name] };
      statements(def.block.body, new Map(), sink, inner);
    });
  };

  const eachBlock = (st: A.EachBlock, bind: ReadonlyMap<string, number>, sink: A.Statement[], scope?: Scope): void => {
    let count = 0;
    // equations, outputs and each blocks keep no index values once expanded: one map per level serves every element
    const reuse = st.body.every((b) => b.kind === 'equation' || b.kind === 'output' || b.kind === 'each');
    const loop = (level: number, cur: Map<string, number>): void => {
      if (level === st.indices.length) {
        if ((count += 1) > MAX_ELEMENTS) throw new ElabError(diag('P231', st.headerSpan, { what: 'the each block', count: `more than ${MAX_ELEMENTS}`, max: String(MAX_ELEMENTS) }));
        statements(st.body, cur, sink, scope);
        return;
      }
      const ix = st.indices[level];
      const [from, to] = rangeOf(ix.range, cur, `the range of ${ix.name.name}`, scope);
      const shared = reuse ? new Map(cur) : undefined;
      for (let k = from; k <= to; k++) {
        const next = shared ?? new Map(cur);
        next.set(ix.name.name, k);
        loop(level + 1, next);
      }
    };
    loop(0, new Map(bind));
  };

  /** The names a point line without an index stands for: a family's elements, every instance's member (`cell.level`). */
  const targetsOf = (name: string): string[] => {
    const f = families.get(name);
    if (f) {
      const out: string[] = [];
      for (let k = f.from; k <= f.to; k++) out.push(elementName(name, k));
      return out;
    }
    const dot = name.indexOf('.');
    if (dot > 0) {
      const head = name.slice(0, dot);
      const g = instanceFamilies.get(head);
      if (g) {
        const out: string[] = [];
        for (let k = g.from; k <= g.to; k++) pushAll(out, targetsOf(`${elementName(head, k)}${name.slice(dot)}`));
        return out;
      }
      // a member of an instance inside an element: t[2].sub.x, or a family of instances inside an instance
      for (let j = name.indexOf('.', dot + 1); j > 0; j = name.indexOf('.', j + 1)) {
        const g2 = instanceFamilies.get(name.slice(0, j));
        if (!g2) continue;
        const out: string[] = [];
        for (let k = g2.from; k <= g2.to; k++) pushAll(out, targetsOf(`${elementName(name.slice(0, j), k)}${name.slice(j)}`));
        return out;
      }
    }
    return [name];
  };

  const pointLines = (lines: A.PointLine[]): A.PointLine[] => {
    const res: A.PointLine[] = [];
    const nameOf = (l: A.PointLine): string => (l.name.member ? memberName(l.name.name, l.index!, l.name.member, l.name.span, new Map()) : element(l.name.name, l.index!, l.name.span, new Map()));
    // lines for one element or one name take precedence over a line for a whole family
    const single = new Set<string>();
    for (const l of lines) {
      if (!l.index) {
        const t = targetsOf(l.name.name);
        if (t.length === 1 && t[0] === l.name.name && !families.has(l.name.name)) single.add(l.name.name);
        continue;
      }
      try {
        single.add(nameOf(l));
      } catch (err) {
        if (!(err instanceof ElabError)) throw err;
      }
    }
    for (const l of lines) {
      tryIt(() => {
        if (l.index) {
          const name = nameOf(l);
          res.push({ ...l, name: { name, span: l.name.span }, index: undefined, value: expand(l.value, new Map()) });
          return;
        }
        const targets = targetsOf(l.name.name);
        if (targets.length === 1 && targets[0] === l.name.name) {
          if (l.value.kind === 'list') throw new ElabError(diag('P235', l.value.span));
          res.push({ ...l, value: expand(l.value, new Map()) });
          return;
        }
        const items = l.value.kind === 'list' ? listItems(l.value, targets.length, l.name.name) : undefined;
        targets.forEach((t, k) => {
          if (single.has(t)) return;
          res.push({ ...l, name: { name: t, span: l.name.span }, value: expand(items ? items[k] : l.value, new Map()) });
        });
      });
    }
    return res;
  };

  statements(file.statements, new Map(), out);
  let flat = out;
  if (tied.size) {
    // tied inputs of instances are vars of the flat model
    flat = [];
    for (const st of out) {
      if (st.kind !== 'input' || !st.names.some((id) => tied.has(id.name))) {
        flat.push(st);
        continue;
      }
      const free = st.names.filter((id) => !tied.has(id.name));
      if (free.length) flat.push({ ...st, names: free });
      flat.push({ ...st, kind: 'var', names: st.names.filter((id) => tied.has(id.name)) });
    }
  }
  return { file: { ...file, statements: flat }, diagnostics, families, usedInIndices, indexRefs: dedupeRefs(indexRefs), instances, instanceFamilies };
}

/** The items of a list for a family of `size` elements, each with the list's unit when it has none. */
function listItems(list: A.ListExpr, size: number, name: string): A.Expr[] {
  if (list.items.length !== size) throw new ElabError(diag('P237', list.span, { name, size: String(size), count: String(list.items.length) }));
  return list.items.map((it) => (list.unit && it.kind === 'number' && !it.unit ? { ...it, unit: list.unit } : it));
}

/** One reference per place in the text (an index expression is evaluated once per element it makes). */
function dedupeRefs(refs: { name: string; span: Span }[]): { name: string; span: Span }[] {
  const seen = new Set<string>();
  return refs.filter((r) => {
    const k = `${r.span.start}:${r.span.end}`;
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}

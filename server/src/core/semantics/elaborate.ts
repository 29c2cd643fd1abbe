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

export interface Family {
  name: string;
  kind: 'const' | 'input' | 'state' | 'var' | 'output';
  from: number;
  to: number;
  /** The declaration's name span. */
  span: Span;
}

export interface ElaborationResult {
  file: A.ModelFile;
  diagnostics: Diagnostic[];
  /** Families by name (empty for a flat model). */
  families: Map<string, Family>;
  /** Constants used in sizes, ranges and indices (used, though no equation names them). */
  usedInIndices: Set<string>;
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

function usesFamilies(file: A.ModelFile): boolean {
  const exprHas = (e: A.Expr | undefined): boolean => {
    // iterative: expressions may be very deep
    const stack: (A.Expr | undefined)[] = [e];
    while (stack.length) {
      const x = stack.pop();
      if (!x) continue;
      switch (x.kind) {
        case 'name': if (x.index) return true; break;
        case 'list':
        case 'reduce': return true;
        case 'unary': stack.push(x.arg); break;
        case 'binary': stack.push(x.left, x.right); break;
        case 'call': for (const a of x.args) stack.push(a); break;
      }
    }
    return false;
  };
  const identHas = (id: A.Ident): boolean => !!id.range || !!id.index;
  for (const st of file.statements) {
    switch (st.kind) {
      case 'each': return true;
      case 'const': if (identHas(st.name) || exprHas(st.value)) return true; break;
      case 'input': case 'state': case 'var': if (st.names.some(identHas)) return true; break;
      case 'output': if (identHas(st.name) || exprHas(st.value)) return true; break;
      case 'equation': if (exprHas(st.lhs) || exprHas(st.rhs)) return true; break;
      case 'point': if (st.lines.some((l) => l.index || exprHas(l.value))) return true; break;
      case 'linear': if (st.at.some((x) => x.name.index) || st.equations.some((q) => exprHas(q.lhs) || exprHas(q.rhs)) || st.at.some((x) => exprHas(x.value))) return true; break;
    }
  }
  return false;
}

/** Expands the families of a parsed model; a model without any returns the same tree. */
export function elaborate(file: A.ModelFile): ElaborationResult {
  const families = new Map<string, Family>();
  const usedInIndices = new Set<string>();
  if (!usesFamilies(file)) return { file, diagnostics: [], families, usedInIndices };
  const diagnostics: Diagnostic[] = [];
  const numbers = new Map<string, number>(); // constants usable in index arithmetic
  const out: A.Statement[] = [];

  const intValue = (e: A.Expr, bind: ReadonlyMap<string, number>, what: string): number => {
    const v = evalIndex(e, bind, numbers, usedInIndices);
    if (typeof v === 'string') throw new ElabError(diag('P230', e.span, { what, detail: v }));
    if (!Number.isInteger(v)) throw new ElabError(diag('P230', e.span, { what, detail: `it is ${v}, not a whole number` }));
    return v;
  };
  const rangeOf = (r: A.IndexRange, bind: ReadonlyMap<string, number>, what: string): [number, number] => {
    const from = intValue(r.from, bind, what);
    const to = intValue(r.to, bind, what);
    if (to - from + 1 > MAX_ELEMENTS) throw new ElabError(diag('P231', r.span, { what, count: String(to - from + 1), max: String(MAX_ELEMENTS) }));
    return [from, to];
  };
  const element = (name: string, index: A.Expr, span: Span, bind: ReadonlyMap<string, number>): string => {
    const k = intValue(index, bind, `the index of ${name}`);
    const f = families.get(name);
    if (!f) throw new ElabError(diag('P232', span, { name }));
    if (k < f.from || k > f.to) throw new ElabError(diag('P233', index.span, { element: elementName(name, k), family: `${name}[${f.from}..${f.to}]` }));
    return elementName(name, k);
  };

  /** Substitutes index values and expands reductions (iteratively over the expression tree). */
  const expand = (root: A.Expr, bind: ReadonlyMap<string, number>): A.Expr => {
    type Frame = { e: A.Expr; done: boolean };
    const stack: Frame[] = [{ e: root, done: false }];
    const results: A.Expr[] = [];
    while (stack.length) {
      const f = stack.pop()!;
      const e = f.e;
      if (!f.done) {
        switch (e.kind) {
          case 'unary': stack.push({ e, done: true }, { e: e.arg, done: false }); continue;
          case 'binary': stack.push({ e, done: true }, { e: e.right, done: false }, { e: e.left, done: false }); continue;
          case 'call':
            stack.push({ e, done: true });
            for (let k = e.args.length - 1; k >= 0; k--) stack.push({ e: e.args[k], done: false });
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
          if (e.index) {
            results.push({ kind: 'name', name: element(e.name, e.index, e.nameSpan, bind), primes: e.primes, delta: e.delta, span: e.span, nameSpan: e.nameSpan });
          } else if (bind.has(e.name) && !e.delta && e.primes === 0) {
            const v = bind.get(e.name)!;
            results.push({ kind: 'number', value: v, text: String(v), span: e.span });
          } else {
            if (families.has(e.name)) throw new ElabError(diag('P234', e.nameSpan, { name: e.name }));
            results.push(e);
          }
          break;
        }
        case 'reduce': {
          const [from, to] = rangeOf(e.range, bind, `the range of ${e.op}`);
          const terms: A.Expr[] = [];
          const inner = new Map(bind);
          for (let k = from; k <= to; k++) {
            inner.set(e.index.name, k);
            terms.push(expand(e.body, inner));
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
  const declare = (id: A.Ident, kind: Family['kind']): A.Ident[] => {
    if (id.range) {
      const [from, to] = rangeOf(id.range, new Map(), `the size of ${id.name}`);
      if (to < from) throw new ElabError(diag('P236', id.range.span, { name: id.name, from: String(from), to: String(to) }));
      if (families.has(id.name)) throw new ElabError(diag('P202', id.span, { name: id.name, kind: families.get(id.name)!.kind }));
      families.set(id.name, { name: id.name, kind, from, to, span: id.span });
      const ids: A.Ident[] = [];
      for (let k = from; k <= to; k++) ids.push({ name: elementName(id.name, k), span: id.span });
      return ids;
    }
    if (id.index) {
      const k = intValue(id.index, new Map(), `the index of ${id.name}`);
      const f = families.get(id.name) ?? { name: id.name, kind, from: k, to: k, span: id.span };
      f.from = Math.min(f.from, k);
      f.to = Math.max(f.to, k);
      families.set(id.name, f);
      return [{ name: elementName(id.name, k), span: id.span }];
    }
    return [id];
  };

  const statements = (sts: A.Statement[], bind: ReadonlyMap<string, number>, sink: A.Statement[]): void => {
    for (const st of sts) {
      tryIt(() => {
        switch (st.kind) {
          case 'const': {
            const ids = declare(st.name, 'const');
            if (ids.length === 1 && !st.name.range) {
              const value = expand(st.value, bind);
              sink.push({ ...st, name: ids[0], value });
              if (!st.name.index) {
                const v = evalIndex(st.value, bind, numbers, new Set());
                if (typeof v === 'number') numbers.set(st.name.name, v);
              }
              return;
            }
            const items = st.value.kind === 'list' ? listItems(st.value, ids.length, st.name.name) : undefined;
            ids.forEach((id, k) => sink.push({ ...st, name: id, value: items ? expand(items[k], bind) : expand(st.value, bind) }));
            return;
          }
          case 'input':
          case 'state':
          case 'var': {
            const names: A.Ident[] = [];
            for (const id of st.names) tryIt(() => pushAll(names, declare(id, st.kind)));
            sink.push({ ...st, names });
            return;
          }
          case 'output': {
            let name = st.name;
            if (st.name.index) {
              const k = intValue(st.name.index, bind, `the index of ${st.name.name}`);
              const f = families.get(st.name.name);
              if (f && f.kind !== 'output') throw new ElabError(diag('P202', st.name.span, { name: st.name.name, kind: f.kind }));
              const fam = f ?? { name: st.name.name, kind: 'output' as const, from: k, to: k, span: st.name.span };
              fam.from = Math.min(fam.from, k);
              fam.to = Math.max(fam.to, k);
              families.set(st.name.name, fam);
              name = { name: elementName(st.name.name, k), span: st.name.span };
            }
            sink.push({ ...st, name, value: expand(st.value, bind) });
            return;
          }
          case 'equation':
            sink.push({ ...st, lhs: expand(st.lhs, bind), rhs: expand(st.rhs, bind) });
            return;
          case 'each':
            eachBlock(st, bind, sink);
            return;
          case 'point':
            sink.push({ ...st, lines: pointLines(st.lines) });
            return;
          case 'linear': {
            const at: A.LinearAt[] = [];
            for (const x of st.at) {
              tryIt(() => {
                const name = x.name.index ? { name: element(x.name.name, x.name.index, x.name.span, bind), span: x.name.span } : x.name;
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

  const eachBlock = (st: A.EachBlock, bind: ReadonlyMap<string, number>, sink: A.Statement[]): void => {
    let count = 0;
    const loop = (level: number, cur: Map<string, number>): void => {
      if (level === st.indices.length) {
        if ((count += 1) > MAX_ELEMENTS) throw new ElabError(diag('P231', st.headerSpan, { what: 'the each block', count: `more than ${MAX_ELEMENTS}`, max: String(MAX_ELEMENTS) }));
        statements(st.body, cur, sink);
        return;
      }
      const ix = st.indices[level];
      const [from, to] = rangeOf(ix.range, cur, `the range of ${ix.name.name}`);
      for (let k = from; k <= to; k++) {
        const next = new Map(cur);
        next.set(ix.name.name, k);
        loop(level + 1, next);
      }
    };
    loop(0, new Map(bind));
  };

  const pointLines = (lines: A.PointLine[]): A.PointLine[] => {
    const res: A.PointLine[] = [];
    // elements given on their own lines take precedence over a line for their whole family
    const single = new Set<string>();
    for (const l of lines) {
      if (!l.index) continue;
      const k = evalIndex(l.index, new Map(), numbers, usedInIndices);
      if (typeof k === 'number') single.add(elementName(l.name.name, k));
    }
    for (const l of lines) {
      tryIt(() => {
        const fam = families.get(l.name.name);
        if (l.index) {
          const name = element(l.name.name, l.index, l.name.span, new Map());
          res.push({ ...l, name: { name, span: l.name.span }, index: undefined, value: expand(l.value, new Map()) });
          return;
        }
        if (!fam) {
          if (l.value.kind === 'list') throw new ElabError(diag('P235', l.value.span));
          res.push({ ...l, value: expand(l.value, new Map()) });
          return;
        }
        const size = fam.to - fam.from + 1;
        const items = l.value.kind === 'list' ? listItems(l.value, size, l.name.name) : undefined;
        for (let k = fam.from; k <= fam.to; k++) {
          if (single.has(elementName(l.name.name, k))) continue;
          res.push({ ...l, name: { name: elementName(l.name.name, k), span: l.name.span }, value: expand(items ? items[k - fam.from] : l.value, new Map()) });
        }
      });
    }
    return res;
  };

  statements(file.statements, new Map(), out);
  return { file: { ...file, statements: out }, diagnostics, families, usedInIndices };
}

/** The items of a list for a family of `size` elements, each with the list's unit when it has none. */
function listItems(list: A.ListExpr, size: number, name: string): A.Expr[] {
  if (list.items.length !== size) throw new ElabError(diag('P237', list.span, { name, size: String(size), count: String(list.items.length) }));
  return list.items.map((it) => (list.unit && it.kind === 'number' && !it.unit ? { ...it, unit: list.unit } : it));
}

/** a ⊕ b ⊕ … as a balanced tree (depth log₂ n), so long sums never make deep trees. */
function balanced(terms: A.Expr[], op: '+' | '*', span: Span): A.Expr {
  if (terms.length === 0) return { kind: 'number', value: op === '+' ? 0 : 1, text: op === '+' ? '0' : '1', span };
  let level = terms;
  while (level.length > 1) {
    const next: A.Expr[] = [];
    for (let k = 0; k + 1 < level.length; k += 2) next.push({ kind: 'binary', op, left: level[k], right: level[k + 1], span });
    if (level.length % 2) next.push(level[level.length - 1]);
    level = next;
  }
  return level[0];
}

/** Value of a whole-number expression, or the reason it has none. */
function evalIndex(e: A.Expr, bind: ReadonlyMap<string, number>, consts: ReadonlyMap<string, number>, used: Set<string>, depth = 0): number | string {
  if (depth > 200) return 'the expression is nested too deeply';
  switch (e.kind) {
    case 'number':
      if (e.unit) return `${e.text} [${e.unit.text}] has a unit; an index is a plain number`;
      return e.value;
    case 'name': {
      if (e.index || e.primes || e.delta) return `${e.name} is not a constant`;
      const v = bind.get(e.name) ?? consts.get(e.name);
      if (!bind.has(e.name) && v !== undefined) used.add(e.name);
      return v === undefined ? `${e.name} is not a whole-number constant or index` : v;
    }
    case 'unary': {
      const v = evalIndex(e.arg, bind, consts, used, depth + 1);
      return typeof v === 'number' ? (e.op === '-' ? -v : v) : v;
    }
    case 'binary': {
      const a = evalIndex(e.left, bind, consts, used, depth + 1);
      if (typeof a === 'string') return a;
      const b = evalIndex(e.right, bind, consts, used, depth + 1);
      if (typeof b === 'string') return b;
      switch (e.op) {
        case '+': return a + b;
        case '-': return a - b;
        case '*': return a * b;
        case '/': return a / b;
        case '^': return a ** b;
      }
      return 'unknown operator';
    }
    default:
      return 'only numbers, constants, index names and + − * / ^ may appear here';
  }
}

/**
 * Symbolic expressions: the core's own small computer-algebra layer. Smart constructors fold constants
 * and drop trivial terms (no 0*x, no 1*x); `derivative` applies the differentiation rules; `print`
 * writes readable infix text. Nodes are immutable plain objects; `src` keeps the source span of the
 * model text they came from (for domain errors).
 */
import { nameTable } from '../names';
import type { Span } from '../text';
import { formatNumber } from '../numbers';
import { tableDerivative, type Table1D } from '../numeric/interpolate';

/** Numbers are written by the one formatter of the core (core/numbers.ts). */
export { formatNumber };

export type Node = Num | Sym | Add | Mul | Pow | Fn;
export interface Num { t: 'num'; v: number; src?: Span }
export interface Sym { t: 'sym'; id: number; src?: Span }
export interface Add { t: 'add'; args: Node[]; src?: Span }
export interface Mul { t: 'mul'; args: Node[]; src?: Span }
export interface Pow { t: 'pow'; base: Node; exp: Node; src?: Span }
export interface Fn { t: 'fn'; fn: FnName; args: Node[]; src?: Span; /** fn 'table' only: which table and derivative. */ tab?: TableRef }

/** A lookup table as a function of one argument (SI in, SI out), shared by the nodes of its derivatives. */
export interface TableSource {
  name: string;
  /** Breakpoints and values in SI. */
  table: Table1D;
  outside: 'hold' | 'strict';
  /** Declared units of the breakpoints and values: value_SI = value*scale + offset. */
  xUnit: { text: string; scale: number; offset: number };
  yUnit: { text: string; scale: number; offset: number };
  /** The table's declaration. */
  span: Span;
}

/** A table node: the source and the order of derivative the node computes (0: the value). */
export interface TableRef { source: TableSource; order: number }

/** The k-th derivative of a table at q (SI). */
export const tableAt = (r: TableRef, q: number): number => tableDerivative(r.source.table, q, r.order);

export type FnName =
  | 'sqrt' | 'exp' | 'log' | 'log10' | 'sin' | 'cos' | 'tan' | 'asin' | 'acos' | 'atan' | 'atan2'
  | 'sinh' | 'cosh' | 'tanh' | 'abs' | 'sign' | 'min' | 'max' | 'hypot'
  /** choose(c1, v1, …, otherwise) and clamp(x, lo, hi): lowered to pick, min and max, never nodes. */
  | 'choose' | 'clamp'
  /** pick(a, b, p, q) = a <= b ? p : q — derivative of min/max, and the switch of choose. */
  | 'pick'
  /** A lookup table (the node's `tab`) of one argument. */
  | 'table';

/** Functions a model may call by name. */
export type BuiltinName = Exclude<FnName, 'pick' | 'table'>;

/** Number of arguments; choose takes any odd number from 3 (the binder checks it). */
export const BUILTIN_ARITY: Readonly<Record<BuiltinName, number>> = nameTable({
  sqrt: 1, exp: 1, log: 1, log10: 1, sin: 1, cos: 1, tan: 1, asin: 1, acos: 1, atan: 1, atan2: 2,
  sinh: 1, cosh: 1, tanh: 1, abs: 1, sign: 1, min: 2, max: 2, hypot: 2, choose: 3, clamp: 3,
});

export const BUILTIN_DOC: Readonly<Record<BuiltinName, string>> = nameTable({
  sqrt: 'square root; argument must be ≥ 0 (not differentiable at 0)',
  exp: 'exponential e^x; argument dimensionless',
  log: 'natural logarithm; argument dimensionless and > 0',
  log10: 'base-10 logarithm; argument dimensionless and > 0',
  sin: 'sine; argument an angle (dimensionless, radians)',
  cos: 'cosine; argument an angle (dimensionless, radians)',
  tan: 'tangent; argument an angle (dimensionless, radians)',
  asin: 'inverse sine in radians; argument in [-1, 1]',
  acos: 'inverse cosine in radians; argument in [-1, 1]',
  atan: 'inverse tangent in radians',
  atan2: 'atan2(y, x): angle of the point (x, y) in radians; y and x in the same unit',
  sinh: 'hyperbolic sine; argument dimensionless',
  cosh: 'hyperbolic cosine; argument dimensionless',
  tanh: 'hyperbolic tangent; argument dimensionless',
  abs: 'absolute value (not differentiable at 0)',
  sign: 'sign: -1, 0 or 1 (derivative zero, not differentiable at 0)',
  min: 'min(a, b): the smaller; a and b in the same unit (not differentiable where they tie)',
  max: 'max(a, b): the larger; a and b in the same unit (not differentiable where they tie)',
  hypot: 'hypot(a, b) = sqrt(a^2 + b^2); a and b in the same unit',
  choose: 'choose(c1, v1, c2, v2, …, otherwise): v1 where condition c1 holds, else v2 where c2 holds, …, else the last value; values in one unit (not differentiable where a condition switches)',
  clamp: 'clamp(x, lo, hi): x held within lo … hi; all three in one unit (not differentiable at the limits)',
});

export const num = (v: number, src?: Span): Num => (src ? { t: 'num', v, src } : { t: 'num', v });
export const sym = (id: number, src?: Span): Sym => (src ? { t: 'sym', id, src } : { t: 'sym', id });
export const ZERO = num(0);
export const ONE = num(1);
export const isNum = (n: Node, v?: number): n is Num => n.t === 'num' && (v === undefined || n.v === v);

const keyCache = new WeakMap<Node, string>();
/** A structural key: equal keys mean equal expressions. */
export function key(n: Node): string {
  let k = keyCache.get(n);
  if (k !== undefined) return k;
  switch (n.t) {
    case 'num': k = `#${n.v}`; break;
    case 'sym': k = `$${n.id}`; break;
    case 'add': k = `+(${n.args.map(key).join(',')})`; break;
    case 'mul': k = `*(${n.args.map(key).join(',')})`; break;
    case 'pow': k = `^(${key(n.base)},${key(n.exp)})`; break;
    case 'fn': k = `${n.tab ? `${n.fn}#${tableId(n.tab.source)}'${n.tab.order}` : n.fn}(${n.args.map(key).join(',')})`; break;
  }
  keyCache.set(n, k);
  return k;
}

/** A number per table source, for keys and hashes (a memo keyed by the immutable source). */
const tableIds = new WeakMap<TableSource, number>();
function tableId(s: TableSource): number {
  let id = tableIds.get(s);
  if (id === undefined) tableIds.set(s, (id = hashText(s.name) ^ s.table.x.length));
  return id;
}
function hashText(t: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < t.length; i++) h = Math.imul(h ^ t.charCodeAt(i), 0x01000193);
  return h | 0;
}

const hashCache = new WeakMap<Node, number>();
const FN_CODE = new Map<string, number>();
const fnCode = (f: string): number => {
  let c = FN_CODE.get(f);
  if (c === undefined) FN_CODE.set(f, (c = 16 + FN_CODE.size));
  return c;
};
const f64 = new Float64Array(1);
const i32 = new Int32Array(f64.buffer);
const mix = (a: number, b: number) => (Math.imul(a ^ b, 0x9e3779b1) + 0x7f4a7c15) | 0;
/** A 32-bit structural hash (cheap, no strings): equal expressions hash equally; confirm with `same`. */
export function hash(n: Node): number {
  // leaves are hashed directly (no cache entry: most nodes are leaves)
  if (n.t === 'sym') return mix(2, n.id);
  let h = hashCache.get(n);
  if (h !== undefined) return h;
  switch (n.t) {
    case 'num':
      f64[0] = n.v === 0 ? 0 : n.v; // -0 and 0 alike
      h = mix(mix(1, i32[0]), i32[1]);
      break;
    case 'pow': h = mix(mix(3, hash(n.base)), hash(n.exp)); break;
    default: {
      let code = n.t === 'add' ? 4 : n.t === 'mul' ? 5 : fnCode(n.fn);
      if (n.t === 'fn' && n.tab) code = mix(mix(code, tableId(n.tab.source)), n.tab.order);
      for (const a of n.args) code = mix(code, hash(a));
      h = code;
    }
  }
  hashCache.set(n, h);
  return h;
}

/** Structural equality. */
export function same(a: Node, b: Node): boolean {
  if (a === b) return true;
  if (a.t !== b.t) return false;
  // leaves without hashing (the same answers as below)
  if (a.t === 'sym') return a.id === (b as Sym).id;
  if (a.t === 'num' && (a.v === (b as Num).v || !(Number.isNaN(a.v) && Number.isNaN((b as Num).v)))) return a.v === (b as Num).v;
  if (hash(a) !== hash(b)) return false;
  switch (a.t) {
    case 'num': return a.v === (b as Num).v || (Number.isNaN(a.v) && Number.isNaN((b as Num).v));
    case 'pow': return same(a.base, (b as Pow).base) && same(a.exp, (b as Pow).exp);
    default: {
      const bb = b as Add | Mul | Fn;
      if (a.t === 'fn' && a.fn !== (bb as Fn).fn) return false;
      if (a.t === 'fn' && (a.tab || (bb as Fn).tab) && !(a.tab && (bb as Fn).tab && a.tab.source === (bb as Fn).tab!.source && a.tab.order === (bb as Fn).tab!.order)) return false;
      if (a.args.length !== bb.args.length) return false;
      for (let i = 0; i < a.args.length; i++) if (!same(a.args[i], bb.args[i])) return false;
      return true;
    }
  }
}

/** Items grouped by structural equality of their node (hash buckets, no strings), in insertion order. */
class NodeTable<T extends { node: Node }> {
  /** Hash buckets, built once the table is larger than SMALL (a few items are compared one by one). */
  private buckets: Map<number, T[]> | undefined;
  readonly order: T[] = [];
  find(n: Node): T | undefined {
    if (!this.buckets) {
      for (const e of this.order) if (same(e.node, n)) return e;
      return undefined;
    }
    const b = this.buckets.get(hash(n));
    if (b) for (const e of b) if (same(e.node, n)) return e;
    return undefined;
  }
  add(e: T): void {
    this.order.push(e);
    if (!this.buckets) {
      if (this.order.length <= SMALL) return;
      this.buckets = new Map();
      for (const x of this.order) this.bucket(x);
      return;
    }
    this.bucket(e);
  }
  private bucket(e: T): void {
    const h = hash(e.node);
    const b = this.buckets!.get(h);
    if (b) b.push(e);
    else this.buckets!.set(h, [e]);
  }
}
const SMALL = 8;

/** Split a product into numeric coefficient and the rest. */
function coeffOf(n: Node): [number, Node] {
  if (n.t === 'num') return [n.v, ONE];
  if (n.t === 'mul' && n.args[0].t === 'num') {
    const rest = n.args.slice(1);
    return [n.args[0].v, rest.length === 1 ? rest[0] : { t: 'mul', args: rest }];
  }
  return [1, n];
}

export function add(args: Node[], src?: Span): Node {
  if (args.length === 2) {
    const [a, b] = args;
    if (a.t === 'num' && b.t === 'num') return num(a.v + b.v, src);
    if (a.t === 'num' && a.v === 0) return withSrc(b, src);
    if (b.t === 'num' && b.v === 0) return withSrc(a, src);
    if (a.t === 'sym' && b.t === 'sym' && a.id !== b.id) return src ? { t: 'add', args: [a, b], src } : { t: 'add', args: [a, b] };
  }
  const flat: Node[] = [];
  for (const a of args) {
    if (a.t === 'add') for (const x of a.args) flat.push(x); // no spread: a sum may have 10^5 terms
    else flat.push(a);
  }
  let c = 0;
  const terms = new NodeTable<{ coef: number; node: Node }>();
  for (const a of flat) {
    if (a.t === 'num') {
      c += a.v;
      continue;
    }
    const [k0, rest] = coeffOf(a);
    const e = terms.find(rest);
    if (e) e.coef += k0;
    else terms.add({ coef: k0, node: rest });
  }
  const out: Node[] = [];
  for (const e of terms.order) {
    if (e.coef === 0) continue;
    out.push(e.coef === 1 ? e.node : mul([num(e.coef), e.node]));
  }
  if (c !== 0 || out.length === 0) out.push(num(c));
  if (out.length === 1) return withSrc(out[0], src);
  return src ? { t: 'add', args: out, src } : { t: 'add', args: out };
}

function withSrc<T extends Node>(n: T, src?: Span): T {
  if (!src || n.src) return n;
  return { ...n, src };
}

function baseExp(n: Node): [Node, Node] {
  if (n.t === 'pow') return [n.base, n.exp];
  return [n, ONE];
}

export function mul(args: Node[], src?: Span): Node {
  if (args.length === 2) {
    const [a, b] = args;
    if (a.t === 'num' && b.t === 'num') return num(a.v * b.v, src);
    if ((a.t === 'num' && a.v === 0) || (b.t === 'num' && b.v === 0)) return withSrc(ZERO, src);
    if (a.t === 'num' && a.v === 1) return withSrc(b, src);
    if (b.t === 'num' && b.v === 1) return withSrc(a, src);
    if (a.t === 'sym' && b.t === 'sym' && a.id !== b.id) return src ? { t: 'mul', args: [a, b], src } : { t: 'mul', args: [a, b] };
    if (a.t === 'num' && b.t === 'sym') return src ? { t: 'mul', args: [a, b], src } : { t: 'mul', args: [a, b] };
  }
  const flat: Node[] = [];
  for (const a of args) {
    if (a.t === 'mul') for (const x of a.args) flat.push(x);
    else flat.push(a);
  }
  let c = 1;
  const facs = new NodeTable<{ node: Node; exps: Node[]; src?: Span }>();
  for (const a of flat) {
    if (a.t === 'num') {
      c *= a.v;
      continue;
    }
    const [b, e] = baseExp(a);
    const f = facs.find(b);
    if (f) f.exps.push(e);
    else facs.add({ node: b, exps: [e], src: a.src });
  }
  if (c === 0) return withSrc(num(0), src);
  const out: Node[] = [];
  for (const f of facs.order) {
    const e = f.exps.length === 1 ? f.exps[0] : add(f.exps);
    // a lone factor keeps its source span (so a division by zero points at the division)
    const p = f.exps.length === 1 ? withSrc(pow(f.node, e), f.src) : pow(f.node, e);
    if (p.t === 'num') c *= p.v;
    else out.push(p);
  }
  if (out.length === 0) return withSrc(num(c), src);
  if (c !== 1) out.unshift(num(c));
  if (out.length === 1) return withSrc(out[0], src);
  return src ? { t: 'mul', args: out, src } : { t: 'mul', args: out };
}

export function pow(base: Node, exp: Node, src?: Span): Node {
  if (exp.t === 'num') {
    if (exp.v === 0) return withSrc(ONE, src);
    if (exp.v === 1) return withSrc(base, src);
    if (base.t === 'num') {
      const r = Math.pow(base.v, exp.v);
      if (Number.isFinite(r)) return num(r, src);
    }
    if (base.t === 'pow' && base.exp.t === 'num' && Number.isInteger(exp.v)) {
      return pow(base.base, num(base.exp.v * exp.v), src);
    }
    if (base.t === 'mul' && Number.isInteger(exp.v)) {
      return mul(base.args.map((a) => pow(a, exp)), src);
    }
  }
  if (base.t === 'num' && base.v === 1) return withSrc(ONE, src);
  return src ? { t: 'pow', base, exp, src } : { t: 'pow', base, exp };
}

const FOLD: Readonly<Record<FnName, (...a: number[]) => number>> = nameTable({
  sqrt: Math.sqrt, exp: Math.exp, log: Math.log, log10: Math.log10, sin: Math.sin, cos: Math.cos, tan: Math.tan,
  asin: Math.asin, acos: Math.acos, atan: Math.atan, atan2: Math.atan2, sinh: Math.sinh, cosh: Math.cosh,
  tanh: Math.tanh, abs: Math.abs, sign: Math.sign, min: Math.min, max: Math.max, hypot: Math.hypot,
  pick: (a: number, b: number, p: number, q: number) => (a <= b ? p : q),
  clamp: (x: number, lo: number, hi: number) => Math.min(Math.max(x, lo), hi),
  // conditions are 1 (holds) or 0 here (constantValue); the last value is for all other cases
  choose: (...a: number[]) => {
    for (let k = 0; k + 1 < a.length; k += 2) if (a[k] > 0.5) return a[k + 1];
    return a[a.length - 1];
  },
  table: () => NaN, // a table node is evaluated with its `tab` (tableAt)
});

/** A built-in function of numbers, without spreading up to four of them into the call. */
export function applyFn(name: FnName, a: number[]): number {
  const f = FOLD[name];
  if (a.length > 4) return f.apply(null, a);
  return a.length === 1 ? f(a[0]) : a.length === 2 ? f(a[0], a[1]) : f(a[0], a[1], a[2], a[3]);
}

/** A table node: the `order`-th derivative of table `source` at `arg`. */
export function tableFn(source: TableSource, order: number, arg: Node, src?: Span): Node {
  if (source.table.kind === 'linear' ? order > 1 : order > 3) return ZERO;
  if (arg.t === 'num') {
    const r = tableAt({ source, order }, arg.v);
    if (Number.isFinite(r)) return num(r, src);
  }
  const n: Fn = { t: 'fn', fn: 'table', args: [arg], tab: { source, order } };
  if (src) n.src = src;
  return n;
}

/** The node rebuilt with other arguments (through the folding constructors; a table keeps its table). */
export function withArgs(n: Fn, args: Node[], src: Span | undefined = n.src): Node {
  return n.tab ? tableFn(n.tab.source, n.tab.order, args[0], src) : fn(n.fn, args, src);
}

export function fn(name: FnName, args: Node[], src?: Span): Node {
  if (name === 'clamp') return fn('min', [fn('max', [args[0], args[1]], src), args[2]], src);
  if (name === 'choose' && args.length >= 3 && args.length % 2 === 1) {
    // numeric conditions (1 holds, 0 not; model.ts lowers comparisons straight to picks instead)
    let acc = args[args.length - 1];
    for (let k = args.length - 3; k >= 0; k -= 2) acc = fn('pick', [args[k], num(0.5), acc, args[k + 1]], src);
    return acc;
  }
  if (args.every((a) => a.t === 'num')) {
    const r = applyFn(name, args.map((a) => (a as Num).v));
    if (Number.isFinite(r)) return num(r, src);
  }
  if (name === 'pick' && same(args[2], args[3])) return args[2];
  return src ? { t: 'fn', fn: name, args, src } : { t: 'fn', fn: name, args };
}

export const neg = (a: Node, src?: Span): Node => mul([num(-1), a], src);
export const sub = (a: Node, b: Node, src?: Span): Node => add([a, neg(b)], src);
export const div = (a: Node, b: Node, src?: Span): Node => mul([a, pow(b, num(-1), src)], src); // the divisor keeps the span (division-by-zero ranges)

/** Evaluate with slot values. */
export function evaluate(n: Node, v: ArrayLike<number>): number {
  switch (n.t) {
    case 'num': return n.v;
    case 'sym': return v[n.id];
    case 'add': {
      let s = 0;
      for (const a of n.args) s += evaluate(a, v);
      return s;
    }
    case 'mul': {
      let s = 1;
      for (const a of n.args) s *= evaluate(a, v);
      return s;
    }
    case 'pow': return powValue(evaluate(n.base, v), evaluate(n.exp, v));
    case 'fn': return n.tab ? tableAt(n.tab, evaluate(n.args[0], v)) : applyFn(n.fn, n.args.map((a) => evaluate(a, v)));
  }
}

export function powValue(b: number, e: number): number {
  if (e === 2) return b * b;
  if (e === -1) return 1 / b;
  if (e === 0.5) return Math.sqrt(b);
  return Math.pow(b, e);
}

/** The slots an expression depends on. */
export function slots(n: Node, out: Set<number> = new Set()): Set<number> {
  switch (n.t) {
    case 'num': break;
    case 'sym': out.add(n.id); break;
    case 'pow': slots(n.base, out); slots(n.exp, out); break;
    default: for (const a of n.args) slots(a, out);
  }
  return out;
}

export function dependsOn(n: Node, id: number): boolean {
  switch (n.t) {
    case 'num': return false;
    case 'sym': return n.id === id;
    case 'pow': return dependsOn(n.base, id) || dependsOn(n.exp, id);
    default: {
      const args = n.args;
      for (let k = 0; k < args.length; k++) if (dependsOn(args[k], id)) return true;
      return false;
    }
  }
}

/** Partial derivative ∂n/∂(slot id). */
export function derivative(n: Node, id: number): Node {
  if (!dependsOn(n, id)) return ZERO;
  switch (n.t) {
    case 'num': return ZERO;
    case 'sym': return n.id === id ? ONE : ZERO;
    case 'add': {
      const ds: Node[] = [];
      for (let k = 0; k < n.args.length; k++) ds.push(derivative(n.args[k], id));
      return add(ds);
    }
    case 'mul': {
      // the product rule: one term per factor that depends on the slot, the other factors in order, then its derivative
      const args = n.args;
      const terms: Node[] = [];
      for (let i = 0; i < args.length; i++) {
        const da = derivative(args[i], id);
        if (isNum(da, 0)) continue;
        const factors: Node[] = [];
        for (let j = 0; j < args.length; j++) if (j !== i) factors.push(args[j]);
        factors.push(da);
        terms.push(mul(factors));
      }
      return add(terms);
    }
    case 'pow': {
      const { base, exp } = n;
      const db = derivative(base, id);
      if (!dependsOn(exp, id)) {
        // d(b^e) = e*b^(e-1)*db
        return mul([exp, pow(base, add([exp, num(-1)])), db]);
      }
      // d(b^e) = b^e * (de*log(b) + e*db/b)
      const de = derivative(exp, id);
      return mul([n, add([mul([de, fn('log', [base])]), mul([exp, db, pow(base, num(-1))])])]);
    }
    case 'fn': {
      const [a, b] = n.args;
      const da = derivative(a, id);
      switch (n.fn) {
        case 'sqrt': return mul([num(0.5), da, pow(n, num(-1))]);
        case 'exp': return mul([n, da]);
        case 'log': return mul([da, pow(a, num(-1))]);
        case 'log10': return mul([da, pow(mul([a, num(Math.LN10)]), num(-1))]);
        case 'sin': return mul([fn('cos', [a]), da]);
        case 'cos': return neg(mul([fn('sin', [a]), da]));
        case 'tan': return mul([da, pow(fn('cos', [a]), num(-2))]);
        case 'asin': return mul([da, pow(sub(ONE, pow(a, num(2))), num(-0.5))]);
        case 'acos': return neg(mul([da, pow(sub(ONE, pow(a, num(2))), num(-0.5))]));
        case 'atan': return mul([da, pow(add([ONE, pow(a, num(2))]), num(-1))]);
        case 'sinh': return mul([fn('cosh', [a]), da]);
        case 'cosh': return mul([fn('sinh', [a]), da]);
        case 'tanh': return mul([sub(ONE, pow(n, num(2))), da]);
        case 'abs': return mul([fn('sign', [a]), da]);
        case 'sign': return ZERO;
        case 'atan2': {
          // atan2(y, x): (x dy - y dx)/(x^2 + y^2)
          const db = derivative(b, id);
          return mul([sub(mul([b, da]), mul([a, db])), pow(add([pow(a, num(2)), pow(b, num(2))]), num(-1))]);
        }
        case 'hypot': {
          const db = derivative(b, id);
          return mul([add([mul([a, da]), mul([b, db])]), pow(n, num(-1))]);
        }
        case 'min': return fn('pick', [a, b, da, derivative(b, id)]);
        case 'max': return fn('pick', [b, a, da, derivative(b, id)]); // b <= a: the max is a
        case 'pick': return fn('pick', [a, b, derivative(n.args[2], id), derivative(n.args[3], id)]);
        case 'table': return n.tab ? mul([tableFn(n.tab.source, n.tab.order + 1, a), da]) : ZERO;
        case 'choose': case 'clamp': return derivative(fn(n.fn, n.args), id); // fn() writes them as pick, min and max
      }
    }
  }
}

/** Replace slots by expressions (used for symbolic substitution). */
export function substitute(n: Node, f: (id: number) => Node | undefined): Node {
  switch (n.t) {
    case 'num': return n;
    case 'sym': return f(n.id) ?? n;
    case 'add': return add(n.args.map((a) => substitute(a, f)), n.src);
    case 'mul': return mul(n.args.map((a) => substitute(a, f)), n.src);
    case 'pow': return pow(substitute(n.base, f), substitute(n.exp, f), n.src);
    case 'fn': return withArgs(n, n.args.map((a) => substitute(a, f)));
  }
}

// ---------------------------------------------------------------- printing

export interface PrintOptions {
  name(id: number): string;
  /** Significant digits for numbers; undefined = shortest round-trip. */
  digits?: number;
  /**
   * Text for people (symbolic.ts's formulas): a positive term first in a sum (1 - v0^2 rather than
   * -v0^2 + 1) and a coefficient 1/k with a whole k ≥ 2 as a division (kv/(2*area) rather than 0.5*kv/area).
   */
  readable?: boolean;
}

/** Binding strength of printed text (see printPrec): a sum binds weakest, an atom (number, name, call) strongest. */
export const PREC = { add: 1, mul: 2, neg: 3, pow: 4, atom: 5 };

export function print(n: Node, o: PrintOptions): string {
  return pr(n, o)[0];
}

/** Printed text and its binding strength (PREC), for callers that put the text inside a larger expression. */
export function printPrec(n: Node, o: PrintOptions): [string, number] {
  return pr(n, o);
}

/** Whether 1/c is (close to) a whole number ≥ 2: such coefficients print as a division (readable text). */
function wholeReciprocal(c: number): number | undefined {
  if (c === 0 || Math.abs(c) >= 1) return undefined;
  const r = 1 / Math.abs(c);
  const k = Math.round(r);
  return k >= 2 && Math.abs(r - k) <= 1e-12 * r ? k : undefined;
}

function pr(n: Node, o: PrintOptions): [string, number] {
  switch (n.t) {
    case 'num': {
      const s = formatNumber(n.v, o.digits);
      return [s, n.v < 0 ? PREC.neg : PREC.atom];
    }
    case 'sym': return [o.name(n.id), PREC.atom];
    case 'fn': return [`${n.tab ? n.tab.source.name + "'".repeat(n.tab.order) : n.fn}(${n.args.map((a) => pr(a, o)[0]).join(', ')})`, PREC.atom];
    case 'pow': {
      if (n.exp.t === 'num' && n.exp.v < 0) return prMul([n], o);
      if (n.exp.t === 'num' && n.exp.v === 0.5) return [`sqrt(${pr(n.base, o)[0]})`, PREC.atom];
      const [b, bp] = pr(n.base, o);
      const [e, ep] = pr(n.exp, o);
      return [`${bp <= PREC.pow ? `(${b})` : b}^${ep < PREC.atom ? `(${e})` : e}`, PREC.pow];
    }
    case 'mul': return prMul(n.args, o);
    case 'add': {
      let s = '';
      const printed = n.args.map((a) => pr(a, o));
      if (o.readable) {
        const firstPos = printed.findIndex(([t]) => !t.startsWith('-'));
        if (firstPos > 0) printed.unshift(printed.splice(firstPos, 1)[0]);
      }
      printed.forEach(([t0, p], i) => {
        let t = t0;
        if (i > 0) {
          if (t.startsWith('-')) {
            s += ' - ' + t.slice(1);
            return;
          }
          s += ' + ';
        }
        if (p < PREC.add) t = `(${t})`;
        s += t;
      });
      return [s, PREC.add];
    }
  }
}

function prMul(args: Node[], o: PrintOptions): [string, number] {
  const numer: string[] = [];
  const denom: string[] = [];
  let coef = 1;
  for (const a of args) {
    if (a.t === 'num') {
      coef *= a.v;
      continue;
    }
    if (a.t === 'pow' && a.exp.t === 'num' && a.exp.v < 0) {
      const inv = pow(a.base, num(-a.exp.v));
      const [t, p] = pr(inv, o);
      denom.push(p <= PREC.mul ? `(${t})` : t);
      continue;
    }
    const [t, p] = pr(a, o);
    numer.push(p <= PREC.mul ? `(${t})` : t);
  }
  let sign = '';
  if (coef < 0) {
    sign = '-';
    coef = -coef;
  }
  const k = o.readable ? wholeReciprocal(coef) : undefined;
  if (k !== undefined && (denom.length || numer.length)) {
    denom.unshift(String(k));
    coef = 1;
  }
  if (coef !== 1 || numer.length === 0) numer.unshift(formatNumber(coef, o.digits));
  let s = numer.join('*');
  if (denom.length === 1) s += '/' + denom[0];
  else if (denom.length > 1) s += '/(' + denom.join('*') + ')';
  return [sign + s, sign ? PREC.neg : PREC.mul];
}

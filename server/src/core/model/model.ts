/**
 * Lowering: bound syntax tree + unit facts → a system of symbolic residual equations over numbered slots
 * (constants, state components and their highest derivatives, inputs, vars, outputs), all in SI.
 * Model equations come first (residual lhs − rhs), then one definition per output (y − h = 0).
 */
import type * as A from '../syntax/ast';
import { leftSpine } from '../syntax/walk';
import { BUILTIN_CONSTANTS, type BoundModel, type ModelSymbol } from '../semantics/binder';
import * as E from '../algebra/expr';
import type { Span } from '../text';
import { hasName } from '../names';
import { constantValue, literalSI, type UnitFacts } from '../semantics/unitChecker';
import { ONE_UNIT, type UnitInfo } from '../semantics/units';
import { pushAll } from '../arrays';
import { isCondition } from '../semantics/conditions';

export type SlotKind = 'const' | 'state' | 'deriv' | 'input' | 'var' | 'output';

export interface Slot {
  id: number;
  kind: SlotKind;
  symbol: ModelSymbol;
  /** Derivative order (0 for the value itself). */
  order: number;
  /** Display name: "x", "x'", "x''". */
  name: string;
  /** value_SI = value_declared*scale + offset; derivatives are per model time unit. */
  scale: number;
  offset: number;
  unit: UnitInfo;
}

export interface ModelEquation {
  residual: E.Node;
  /** Where it came from. */
  kind: 'equation' | 'output';
  span: Span;
  /** Short text for messages, e.g. the equation's source text. */
  label: string;
  /** Index in bound.equations, or index of the output. */
  index: number;
}

export interface LoweredModel {
  slots: Slot[];
  equations: ModelEquation[];
  /** Number of model equations (the rest are output definitions). */
  nModelEquations: number;
  /** Slot id of state `name` with derivative order k. */
  slotOf(symbol: ModelSymbol, order?: number): number;
  /** First-order state components, in order (x, x', … up to order n−1 per state). */
  stateComponents: number[];
  /** Highest derivative of each state (x^(n)), same order as states; -1 for a state never differentiated. */
  highest: number[];
  /** For each state component, the slot its time derivative is. */
  componentDerivative: number[];
  algebraic: number[]; // vars, then outputs
  inputs: number[];
  consts: number[];
  /** Constants' SI values and zeros elsewhere. */
  baseValues: Float64Array;
  timeScale: number;
  timeUnit: string;
}

type SlotKindOfSymbol = ModelSymbol['kind'];

const primeName = (n: string, k: number) => n + "'".repeat(k);

export function lower(m: BoundModel, u: UnitFacts, text: string, tables: ReadonlyMap<string, E.TableSource> = new Map()): LoweredModel {
  const slots: Slot[] = [];
  // slot ids of each symbol by derivative order, found by the symbol's kind and place in its kind's list
  // (an array per kind: no hashing of 10^4 symbols); `owners` says which symbol holds each place
  const index: Record<SlotKindOfSymbol, number[][]> = { const: [], input: [], state: [], var: [], output: [] };
  const owners: Record<SlotKindOfSymbol, ModelSymbol[]> = { const: [], input: [], state: [], var: [], output: [] };
  const tscale = u.time.scale;
  /** The unit of a derivative of order k of a quantity in `base`: one object per unit and order (states in one unit share it). */
  const derivUnits = new Map<UnitInfo, UnitInfo[]>();
  const derivUnit = (base: UnitInfo, order: number, scale: number): UnitInfo => {
    let byOrder = derivUnits.get(base);
    if (!byOrder) derivUnits.set(base, (byOrder = []));
    let unit = byOrder[order];
    if (!unit) {
      // dimensionless time (no unit text) leaves a derivative in the unit of its state: "1", not "1/1"
      const unitText = !u.time.text ? base.text : `${base.text}/${u.time.text}${order > 1 ? '^' + order : ''}`;
      byOrder[order] = unit = { text: unitText, dims: base.dims, scale, offset: 0 };
    }
    return unit;
  };
  const add = (s: ModelSymbol, kind: SlotKind, order: number): number => {
    const base = u.units.get(s) ?? ONE_UNIT;
    const id = slots.length;
    const scale = base.scale / Math.pow(tscale, order);
    slots.push({
      id, kind, symbol: s, order, name: primeName(s.name, order), scale, offset: order === 0 ? base.offset : 0,
      unit: order === 0 ? base : derivUnit(base, order, scale),
    });
    const byKind = index[s.kind];
    let arr = owners[s.kind][s.index] === s ? byKind[s.index] : undefined;
    if (!arr) {
      byKind[s.index] = arr = [];
      owners[s.kind][s.index] = s;
    }
    arr[order] = id;
    return id;
  };
  const consts = m.consts.map((s) => add(s, 'const', 0));
  const stateComponents: number[] = [];
  const highest: number[] = [];
  const componentDerivative: number[] = [];
  for (const s of m.states) {
    const n = Math.max(1, s.order);
    const ids: number[] = [];
    for (let k = 0; k < n; k++) ids.push(add(s, 'state', k));
    const h = add(s, 'deriv', n);
    pushAll(stateComponents, ids);
    for (let k = 0; k < n; k++) componentDerivative.push(k + 1 < n ? ids[k + 1] : h);
    highest.push(h);
  }
  const inputs = m.inputs.map((s) => add(s, 'input', 0));
  const algebraic = [...m.vars.map((s) => add(s, 'var', 0)), ...m.outputs.map((s) => add(s, 'output', 0))];

  const slotOf = (s: ModelSymbol, order = 0): number => {
    const arr = owners[s.kind]?.[s.index] === s ? index[s.kind][s.index] : undefined;
    if (!arr || arr[order] === undefined) return -1;
    return arr[order];
  };

  const baseValues = new Float64Array(slots.length);
  m.consts.forEach((s, i) => (baseValues[consts[i]] = u.constValues.get(s) ?? NaN));

  const low = (e: A.Expr): E.Node => {
    switch (e.kind) {
      case 'number': return E.num(literalSI(e).value, e.span);
      case 'name': {
        if (hasName(BUILTIN_CONSTANTS, e.name) && !m.symbols.has(e.name)) return E.num(BUILTIN_CONSTANTS[e.name], e.span);
        const s = m.symbols.get(e.name);
        if (!s) return E.num(NaN, e.span);
        const id = slotOf(s, e.primes);
        return id < 0 ? E.num(NaN, e.span) : E.sym(id, e.span);
      }
      case 'unary': return e.op === '-' ? E.neg(low(e.arg), e.span) : e.op === 'not' ? E.num(NaN, e.span) : low(e.arg);
      case 'binary': return isCondition(e) ? E.num(NaN, e.span) : lowChain(e); // a condition as a value: P320 reported
      case 'call': {
        const table = tables.get(e.fn);
        if (table && !hasName(E.BUILTIN_ARITY, e.fn)) return e.args.length === 1 ? E.tableFn(table, 0, low(e.args[0]), e.span) : E.num(NaN, e.span);
        if (!hasName(E.BUILTIN_ARITY, e.fn)) return E.num(NaN, e.span);
        if (e.fn === 'choose') {
          // choose(c1, v1, c2, v2, …, otherwise): from the last case back to the first
          if (e.args.length < 3 || e.args.length % 2 === 0) return E.num(NaN, e.span);
          let acc = low(e.args[e.args.length - 1]);
          for (let k = e.args.length - 3; k >= 0; k -= 2) acc = select(e.args[k], low(e.args[k + 1]), acc);
          return acc;
        }
        return E.fn(e.fn as E.FnName, e.args.map(low), e.span);
      }
      case 'list':
      case 'reduce': // replaced by the elaborator; left only after an error it reported
      case 'error': return E.num(NaN, e.span);
    }
  };

  /**
   * `yes` where condition c holds, else `no`: one pick (a <= b ? p : q) per comparison, nested for and, or
   * and not, so a condition never becomes a number; the pick's span is the comparison's (P505 ranges).
   */
  const select = (c: A.Expr, yes: E.Node, no: E.Node): E.Node => {
    if (c.kind === 'unary' && c.op === 'not') return select(c.arg, no, yes);
    if (c.kind !== 'binary') return E.num(NaN, c.span);
    switch (c.op) {
      case 'and': return select(c.left, select(c.right, yes, no), no);
      case 'or': return select(c.left, yes, select(c.right, yes, no));
      case '<=': return E.fn('pick', [low(c.left), low(c.right), yes, no], c.span);
      case '<': return E.fn('pick', [low(c.right), low(c.left), no, yes], c.span);
      case '>': return E.fn('pick', [low(c.left), low(c.right), no, yes], c.span);
      case '>=': return E.fn('pick', [low(c.right), low(c.left), yes, no], c.span);
      default: return E.num(NaN, c.span);
    }
  };

  /**
   * A chain of binary operators, unwound in a loop (a sum of 10^5 terms is as long a chain). Runs of + −
   * and of * / are gathered and folded by one add/mul each, so a long sum costs linear time, not the
   * quadratic time of adding one term at a time to an ever longer sum.
   */
  const lowChain = (top: A.BinaryExpr): E.Node => {
    const { first, nodes } = leftSpine(top);
    let acc = low(first);
    let k = 0;
    while (k < nodes.length) {
      const n = nodes[k];
      if (n.op === '^') {
        acc = E.pow(acc, low(n.right), n.span);
        k++;
        continue;
      }
      const additive = n.op === '+' || n.op === '-';
      const terms: E.Node[] = [acc];
      let last = n;
      while (k < nodes.length && (additive ? nodes[k].op === '+' || nodes[k].op === '-' : nodes[k].op === '*' || nodes[k].op === '/')) {
        last = nodes[k];
        const b = low(last.right);
        if (additive) terms.push(last.op === '+' ? b : E.neg(b));
        else terms.push(last.op === '*' ? b : E.pow(b, E.num(-1), last.span)); // the divisor keeps the span (division-by-zero ranges)
        k++;
      }
      acc = additive ? E.add(terms, last.span) : E.mul(terms, last.span);
    }
    return acc;
  };

  const equations: ModelEquation[] = [];
  m.equations.forEach((eq, i) => {
    equations.push({ residual: E.sub(low(eq.lhs), low(eq.rhs)), kind: 'equation', span: eq.span, label: oneLine(text.slice(eq.span.start, eq.span.end)), index: i });
  });
  const nModelEquations = equations.length;
  m.outputs.forEach((s, i) => {
    const d = s.decl as A.OutputDecl;
    const y = E.sym(slotOf(s), d.name.span);
    equations.push({ residual: E.sub(y, low(d.value)), kind: 'output', span: d.span, label: `output ${s.name}`, index: i });
  });

  return {
    slots, equations, nModelEquations, slotOf, stateComponents, highest, componentDerivative, algebraic, inputs, consts, baseValues,
    timeScale: tscale, timeUnit: u.time.text,
  };
}

function oneLine(s: string): string {
  const t = plainLine(s) ? s : s.replace(/\s+/g, ' ').trim();
  return t.length > 60 ? t.slice(0, 57) + '…' : t;
}

/** Whether `s` is already one line with single spaces and no space at either end (printable ASCII only). */
function plainLine(s: string): boolean {
  let prevSpace = true; // a space at the start is not plain
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c === 32) {
      if (prevSpace) return false;
      prevSpace = true;
    } else if (c > 32 && c < 127) prevSpace = false;
    else return false;
  }
  return !prevSpace || s.length === 0;
}

/** Lowers a constant expression (point values, sweep bounds) to SI with constants resolved from `values`. */
export function constExprValue(e: A.Expr, m: BoundModel, lm: LoweredModel, values: ArrayLike<number>): number {
  return constantValue(e, m, (s) => values[lm.slotOf(s)]);
}

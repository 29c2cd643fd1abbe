/**
 * Symbolic coefficients: the linear model's entries as formulas in the constants and the operating-point
 * values, beside the numbers.
 *
 * Naming: a constant appears under its own name; the operating value of a state, input, var or output
 * NAME appears as NAME0 — or NAME_0 when NAME ends in a digit (h1 → h1_0), and NAME_00, NAME_000, …
 * if the model already declares that name. Every symbol stands
 * for its value in its declared unit (the unit written in the model); derivatives are zero at a steady
 * state and do not appear. Coefficients are in the declared units of the variables they connect, time in
 * the model's time unit, exactly like the numeric A, B, C, D: unit conversion factors appear as numbers
 * (e.g. 0.001 for a flow declared in L/s). Min/max branches and sign() are resolved at the point.
 *
 * Method: the symbolic Jacobian of the residual equations (jacobian.ts) is evaluated symbolically at the
 * point (derivatives set to zero, values replaced by symbols in declared units); the highest derivatives
 * and algebraic unknowns are then eliminated by sparse symbolic Gaussian elimination, with the numbers
 * carried alongside. Pivots are entries that are nonzero at the point and pass a threshold test on their
 * numeric size (|pivot| ≥ 0.1·largest in its column); among those, least fill-in (Markowitz) first, then
 * numeric-constant pivots, then the smallest formula. A formula that grows beyond a size limit is dropped
 * ("too large") and only its number kept. Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import * as E from '../algebra/expr';
import { compileModel } from '../model/jacobian';
import type { LinearModel } from '../solve/linearizer';
import type { LoweredModel, Slot } from '../model/model';
import { unitText } from '../semantics/units';
import { simplifyUnitText } from '../semantics/simplifyUnit';
import { maxOf } from '../arrays';

export interface SymbolicOptions {
  /** Largest formula kept, in expression nodes (default 250). */
  maxNodes?: number;
  /** Largest elimination attempted: number of unknowns eliminated (default 400). */
  maxUnknowns?: number;
}

/** One matrix entry: its formula (undefined when too large) and its number, both in declared units. */
export interface SymbolicEntry {
  formula: E.Node | undefined;
  value: number;
}

export interface SymbolInfo {
  /** Name used in formulas, e.g. "area" or "level0". */
  name: string;
  /** The model name it stands for. */
  of: string;
  kind: 'const' | 'value';
  /** Value in the declared unit. */
  value: number;
  unit: string;
}

export interface SymbolicLinear {
  point: string;
  lin: LinearModel;
  /** Row-major like the numeric matrices. */
  A: SymbolicEntry[];
  B: SymbolicEntry[];
  C: SymbolicEntry[];
  D: SymbolicEntry[];
  /** Name of each symbol id in the formulas (slot ids). */
  names: Map<number, string>;
  /** The symbols that appear in at least one formula, in model order. */
  symbols: SymbolInfo[];
  /** Values (declared units) by symbol id, for evaluating formulas. */
  values: Float64Array;
  /** Number of entries whose formula was too large. */
  tooLarge: number;
  /** One sentence on what units the formulas assume. */
  assumes: string;
}

// ---------------------------------------------------------------- sizes and simplification

const sizeCache = new WeakMap<E.Node, number>();
/** Size of the written-out tree (shared sub-expressions counted each time), computed over the graph with an explicit stack. */
export function nodeSize(root: E.Node): number {
  const hit = sizeCache.get(root);
  if (hit !== undefined) return hit;
  const kids = (n: E.Node): E.Node[] => (n.t === 'num' || n.t === 'sym' ? [] : n.t === 'pow' ? [n.base, n.exp] : n.args);
  const stack: [E.Node, boolean][] = [[root, false]];
  while (stack.length) {
    const top = stack[stack.length - 1];
    const n = top[0];
    if (sizeCache.has(n)) {
      stack.pop();
      continue;
    }
    if (!top[1]) {
      top[1] = true;
      for (const k of kids(n)) if (!sizeCache.has(k)) stack.push([k, false]);
      continue;
    }
    stack.pop();
    let s = 1;
    for (const k of kids(n)) s += sizeCache.get(k)!;
    sizeCache.set(n, s);
  }
  return sizeCache.get(root)!;
}

/** Factors of a product as [base, numeric exponent] (non-numeric exponents stay inside the base). */
function factorsOf(n: E.Node): { coef: number; facs: { base: E.Node; exp: number }[] } {
  const args = n.t === 'mul' ? n.args : [n];
  let coef = 1;
  const facs: { base: E.Node; exp: number }[] = [];
  for (const a of args) {
    if (a.t === 'num') coef *= a.v;
    else if (a.t === 'pow' && a.exp.t === 'num') facs.push({ base: a.base, exp: a.exp.v });
    else facs.push({ base: a, exp: 1 });
  }
  return { coef, facs };
}

/**
 * Pulls factors common to every term of a sum out of it (x*a + x*b → x*(a + b)), and a common minus
 * sign; applied bottom-up. The value is unchanged.
 */
export function factorCommon(n: E.Node): E.Node {
  switch (n.t) {
    case 'num':
    case 'sym': return n;
    case 'pow': return E.pow(factorCommon(n.base), factorCommon(n.exp));
    case 'fn': return E.withArgs(n, n.args.map(factorCommon), undefined);
    case 'mul': return E.mul(n.args.map(factorCommon));
    case 'add': {
      const terms = n.args.map(factorCommon);
      const fs = terms.map(factorsOf);
      const common: { base: E.Node; exp: number }[] = [];
      for (const f of fs[0].facs) {
        const k = E.key(f.base);
        let e = f.exp;
        let ok = true;
        for (const g of fs.slice(1)) {
          const h = g.facs.find((x) => E.key(x.base) === k);
          if (!h || Math.sign(h.exp) !== Math.sign(e)) {
            ok = false;
            break;
          }
          e = e > 0 ? Math.min(e, h.exp) : Math.max(e, h.exp);
        }
        if (ok && e !== 0) common.push({ base: f.base, exp: e });
      }
      const allNeg = fs.every((f) => f.coef < 0);
      // a numeric factor shared by every term (all coefficients of the same magnitude, not 1)
      const mag = Math.abs(fs[0].coef);
      const numeric = mag !== 1 && mag !== 0 && Number.isFinite(mag) && fs.every((f) => Math.abs(Math.abs(f.coef) - mag) <= 1e-14 * mag) ? mag : 1;
      if (!common.length && !allNeg && numeric === 1) return E.add(terms);
      const c0 = (allNeg ? -1 : 1) * numeric;
      const commonNode = E.mul([E.num(c0), ...common.map((c) => E.pow(c.base, E.num(c.exp)))]);
      const inv = E.mul([E.num(1 / c0), ...common.map((c) => E.pow(c.base, E.num(-c.exp)))]);
      const inner = E.add(terms.map((t) => tidyNumbers(E.mul([t, inv]))));
      return E.mul([commonNode, inner]);
    }
  }
}

/** Snaps numbers within a few ulps of a 12-digit value to it (59.99999999999999 → 60), removing round-off of unit factors. */
export function tidyNumbers(n: E.Node): E.Node {
  switch (n.t) {
    case 'num': {
      if (!Number.isFinite(n.v) || n.v === 0) return n;
      const r = Number(n.v.toPrecision(12));
      return Math.abs(r - n.v) <= 8 * 2.220446049250313e-16 * Math.abs(n.v) && r !== n.v ? E.num(r) : n;
    }
    case 'sym': return n;
    case 'pow': return E.pow(tidyNumbers(n.base), tidyNumbers(n.exp));
    case 'fn': return E.withArgs(n, n.args.map(tidyNumbers), undefined);
    case 'mul': return E.mul(n.args.map(tidyNumbers));
    case 'add': return E.add(n.args.map(tidyNumbers));
  }
}

// ---------------------------------------------------------------- printing

export interface FormulaPrintOptions {
  name(id: number): string;
  /** Significant digits of numbers; undefined: shortest exact. */
  digits?: number;
}

/** Readable infix text of a formula (kv/(2*area*sqrt(level0)) rather than 0.5*kv*area^-1*level0^-0.5). */
export function printFormula(n: E.Node, o: FormulaPrintOptions): string {
  return pf(n, o)[0];
}

/** expr.ts's printer in its readable form: text and binding strength (E.PREC). */
function pf(n: E.Node, o: FormulaPrintOptions): [string, number] {
  return E.printPrec(n, { name: o.name, digits: o.digits, readable: true });
}

// ---------------------------------------------------------------- names

/** Symbol names: constants by name, operating values as NAME0 (NAME_0 after a digit; more zeros on a clash). */
export function symbolNames(lm: LoweredModel, taken: Iterable<string>): Map<number, string> {
  const used = new Set(taken);
  const out = new Map<number, string>();
  for (const s of lm.slots) {
    if (s.kind === 'const') {
      out.set(s.id, s.name);
      continue;
    }
    if (s.order !== 0) continue;
    let name = /[0-9]$/.test(s.name) ? `${s.name}_0` : `${s.name}0`;
    for (let k = 1; used.has(name); k++) name = `${s.name}_${'0'.repeat(k + 1)}`;
    used.add(name);
    out.set(s.id, name);
  }
  return out;
}

// ---------------------------------------------------------------- the elimination

interface Ent {
  node: E.Node | undefined; // undefined: too large
  v: number;
}

const cache = new WeakMap<Analysis, Map<string, SymbolicLinear | undefined>>();

/**
 * The linear model at a point with a formula for every entry (undefined where too large); undefined
 * when the point does not solve or the model cannot be linearized there.
 */
export function symbolicLinear(a: Analysis, point?: string, opts: SymbolicOptions = {}): SymbolicLinear | undefined {
  const sol = a.point(point);
  if (!sol || !sol.ok) return undefined;
  const lin = a.linear(sol.name);
  if (!lin || !lin.ok) return undefined;
  let byPoint = cache.get(a);
  if (!byPoint) cache.set(a, (byPoint = new Map()));
  const ck = `${sol.name}\u0000${opts.maxNodes ?? ''}\u0000${opts.maxUnknowns ?? ''}`;
  if (byPoint.has(ck)) return byPoint.get(ck);
  const r = build(a, sol.values, lin, opts);
  byPoint.set(ck, r);
  return r;
}

function build(a: Analysis, pointValues: Float64Array, lin: LinearModel, opts: SymbolicOptions): SymbolicLinear {
  // the model the linear model was made from (for a constrained model, its reduction at the point)
  const dm = a.dynamicsAt(pointValues);
  const lm = dm.model;
  const si = dm.values;
  const maxNodes = opts.maxNodes ?? 250;
  const maxUnknowns = opts.maxUnknowns ?? 400;
  const cm = compileModel(lm);
  const slots = lm.slots;
  const names = symbolNames(lm, a.bound.symbols.keys());
  // declared values of every symbol
  const decl = new Float64Array(slots.length);
  for (const s of slots) decl[s.id] = s.order === 0 ? (si[s.id] - s.offset) / s.scale : 0;

  // symbolic value of a slot (SI) in terms of the declared-unit symbols
  const slotExpr = (s: Slot): E.Node => {
    if (s.kind === 'deriv' || s.order > 0) return E.ZERO;
    return E.add([E.mul([E.num(s.scale), E.sym(s.id)]), E.num(s.offset)]);
  };
  const memo = new Map<string, E.Node>();
  const atPoint = (n: E.Node): E.Node => {
    const k = E.key(n);
    const hit = memo.get(k);
    if (hit) return hit;
    let r: E.Node;
    switch (n.t) {
      case 'num': r = n; break;
      case 'sym': r = slotExpr(slots[n.id]); break;
      case 'add': r = factorCommon(E.add(n.args.map(atPoint))); break;
      case 'mul': r = E.mul(n.args.map(atPoint)); break;
      case 'pow': r = E.pow(atPoint(n.base), atPoint(n.exp)); break;
      case 'fn':
        if (n.fn === 'sign') r = E.num(Math.sign(E.evaluate(n.args[0], si)));
        else if (n.fn === 'abs' && E.evaluate(n.args[0], si) !== 0) r = E.evaluate(n.args[0], si) > 0 ? atPoint(n.args[0]) : E.neg(atPoint(n.args[0]));
        else if (n.fn === 'pick') r = atPoint(E.evaluate(n.args[0], si) <= E.evaluate(n.args[1], si) ? n.args[2] : n.args[3]);
        else if (n.tab) r = E.num(E.evaluate(n, si)); // a table is data, not a formula: its value (or slope) at the point
        else r = E.withArgs(n, n.args.map(atPoint), undefined);
        break;
    }
    memo.set(k, r);
    return r;
  };

  const unknownSlots = dm.unknowns;
  const N = unknownSlots.length;
  const n = lin.n;
  const m = lin.m;
  const colOf = new Int32Array(slots.length).fill(-1);
  unknownSlots.forEach((s, i) => (colOf[s] = i));
  const stateIdx = new Int32Array(slots.length).fill(-1);
  lin.stateSlots.forEach((s, i) => (stateIdx[s] = i));
  const inputIdx = new Int32Array(slots.length).fill(-1);
  lin.inputSlots.forEach((s, i) => (inputIdx[s] = i));

  let budget = 400000; // node constructions over the whole elimination
  const ok = (node: E.Node | undefined): E.Node | undefined => {
    if (!node) return undefined;
    budget -= nodeSize(node);
    return budget > 0 && nodeSize(node) <= maxNodes ? node : undefined;
  };
  const symbolic = N <= maxUnknowns;

  // rows: M part (unknown columns) and R part (state components, then inputs), right-hand side = −∂F/∂v
  const M: Map<number, Ent>[] = Array.from({ length: cm.nEq }, () => new Map());
  const R: Map<number, Ent>[] = Array.from({ length: cm.nEq }, () => new Map());
  const J = new Float64Array(cm.nodes.length);
  cm.jacobian(si, J);
  for (let k = 0; k < cm.nodes.length; k++) {
    const v = J[k];
    const r = cm.rows[k];
    const s = cm.cols[k];
    // a derivative far larger than any formula we show is not expanded at all (its tree can be huge: a power tower)
    const node = symbolic && nodeSize(cm.nodes[k]) <= 40 * maxNodes ? ok(atPoint(cm.nodes[k])) : undefined;
    if (v === 0 && (!node || E.isNum(node, 0))) continue;
    if (colOf[s] >= 0) M[r].set(colOf[s], { node, v });
    else if (stateIdx[s] >= 0) R[r].set(stateIdx[s], { node: node && E.neg(node), v: -v });
    else if (inputIdx[s] >= 0) R[r].set(n + inputIdx[s], { node: node && E.neg(node), v: -v });
  }

  // elimination
  const colRows: Set<number>[] = Array.from({ length: N }, () => new Set());
  M.forEach((row, r) => row.forEach((_e, c) => colRows[c].add(r)));
  const rowDone = new Uint8Array(cm.nEq);
  const pivotRowOfCol = new Int32Array(N).fill(-1);
  const sub = (x: Ent | undefined, f: Ent, y: Ent): Ent => {
    // x − f·y
    const v = (x ? x.v : 0) - f.v * y.v;
    const node = x && !x.node ? undefined : f.node && y.node ? ok(E.sub(x ? x.node! : E.ZERO, E.mul([f.node, y.node]))) : undefined;
    return { node, v };
  };
  for (let step = 0; step < N; step++) {
    let best: { r: number; c: number; score: [number, number, number] } | undefined;
    for (let c = 0; c < N; c++) {
      if (pivotRowOfCol[c] >= 0) continue;
      let mx = 0;
      for (const r of colRows[c]) mx = Math.max(mx, Math.abs(M[r].get(c)!.v));
      if (!(mx > 0)) continue;
      for (const r of colRows[c]) {
        const e = M[r].get(c)!;
        if (!(Math.abs(e.v) >= 0.1 * mx)) continue;
        const score: [number, number, number] = [(M[r].size - 1) * (colRows[c].size - 1), e.node && e.node.t === 'num' ? 0 : 1, e.node ? nodeSize(e.node) : 1e9];
        if (!best || score[0] < best.score[0] || (score[0] === best.score[0] && (score[1] < best.score[1] || (score[1] === best.score[1] && score[2] < best.score[2])))) best = { r, c, score };
      }
    }
    if (!best) break; // numerically singular: the numeric linearizer reports it
    const { r, c } = best;
    pivotRowOfCol[c] = r;
    rowDone[r] = 1;
    const p = M[r].get(c)!;
    for (const [cc] of M[r]) colRows[cc].delete(r);
    for (const i of [...colRows[c]]) {
      const eic = M[i].get(c)!;
      const f: Ent = { v: eic.v / p.v, node: eic.node && p.node ? ok(E.div(eic.node, p.node)) : undefined };
      M[i].delete(c);
      colRows[c].delete(i);
      for (const [j, erj] of M[r]) {
        if (j === c) continue;
        const x = sub(M[i].get(j), f, erj);
        if (x.v === 0 && x.node && E.isNum(x.node, 0)) {
          M[i].delete(j);
          colRows[j].delete(i);
        } else {
          M[i].set(j, x);
          colRows[j].add(i);
        }
      }
      for (const [k, erk] of R[r]) {
        const x = sub(R[i].get(k), f, erk);
        if (x.v === 0 && x.node && E.isNum(x.node, 0)) R[i].delete(k);
        else R[i].set(k, x);
      }
    }
  }

  // back substitution, on demand: solution of unknown column c as a map over v
  const solved = new Map<number, Map<number, Ent>>();
  const solveCol = (c: number): Map<number, Ent> | undefined => {
    const hit = solved.get(c);
    if (hit) return hit;
    const r = pivotRowOfCol[c];
    if (r < 0) return undefined;
    const p = M[r].get(c)!;
    const acc = new Map<number, Ent>();
    for (const [k, e] of R[r]) acc.set(k, { ...e });
    for (const [j, erj] of M[r]) {
      if (j === c) continue;
      const yj = solveCol(j);
      if (!yj) return undefined;
      for (const [k, yk] of yj) {
        const x = sub(acc.get(k), erj, yk);
        acc.set(k, x);
      }
    }
    const out = new Map<number, Ent>();
    const pinv: Ent = { v: 1 / p.v, node: p.node ? ok(E.pow(p.node, E.num(-1))) : undefined };
    for (const [k, e] of acc) {
      const node = e.node && pinv.node ? ok(E.mul([e.node, pinv.node])) : undefined;
      out.set(k, { v: e.v * pinv.v, node });
    }
    solved.set(c, out);
    return out;
  };

  const tscale = lm.timeScale;
  const entry = (y: Ent | undefined, factor: number, numeric: number): SymbolicEntry => {
    if (!y) return { formula: numeric === 0 ? E.ZERO : undefined, value: numeric };
    if (!y.node) return { formula: undefined, value: numeric };
    const f = ok(tidyNumbers(factorCommon(tidyNumbers(E.mul([E.num(factor), y.node])))));
    return { formula: f, value: numeric };
  };
  const A: SymbolicEntry[] = new Array(n * n);
  const B: SymbolicEntry[] = new Array(n * m);
  const outputs = lin.outputSlots;
  const C: SymbolicEntry[] = new Array(lin.p * n);
  const D: SymbolicEntry[] = new Array(lin.p * m);
  const fillRow = (target: SymbolicEntry[], tgtCols: number, row: number, y: Map<number, Ent> | undefined, rowScale: number, numericA: Float64Array, numericB: Float64Array, second: SymbolicEntry[]) => {
    for (let j = 0; j < n; j++) {
      const f = (slots[lin.stateSlots[j]].scale / rowScale) * (target === A ? tscale : 1);
      target[row * tgtCols + j] = y ? entry(y.get(j), f, numericA[row * n + j]) : { formula: undefined, value: numericA[row * n + j] };
    }
    for (let j = 0; j < m; j++) {
      const f = (slots[lin.inputSlots[j]].scale / rowScale) * (target === A ? tscale : 1);
      second[row * m + j] = y ? entry(y.get(n + j), f, numericB[row * m + j]) : { formula: undefined, value: numericB[row * m + j] };
    }
  };
  for (let i = 0; i < n; i++) {
    const d = lm.componentDerivative[i];
    const si_ = slots[lin.stateSlots[i]];
    if (stateIdx[d] >= 0) {
      // shift row: d(x^(k))/dt = x^(k+1)
      for (let j = 0; j < n; j++) {
        const val = lin.A[i * n + j];
        A[i * n + j] = { formula: E.num(j === stateIdx[d] ? (slots[lin.stateSlots[j]].scale / si_.scale) * tscale : 0), value: val };
      }
      for (let j = 0; j < m; j++) B[i * m + j] = { formula: E.ZERO, value: lin.B[i * m + j] };
      continue;
    }
    const y = symbolic && colOf[d] >= 0 ? solveCol(colOf[d]) : undefined;
    fillRow(A, n, i, y, si_.scale, lin.A, lin.B, B);
  }
  for (let i = 0; i < lin.p; i++) {
    const o = outputs[i];
    const y = symbolic && colOf[o] >= 0 ? solveCol(colOf[o]) : undefined;
    fillRow(C, n, i, y, slots[o].scale, lin.C, lin.D, D);
  }

  // the symbols in use
  const usedIds = new Set<number>();
  for (const e of [...A, ...B, ...C, ...D]) if (e.formula) E.slots(e.formula, usedIds);
  const symbols: SymbolInfo[] = [];
  for (const s of slots) {
    if (!usedIds.has(s.id)) continue;
    symbols.push({ name: names.get(s.id)!, of: s.name, kind: s.kind === 'const' ? 'const' : 'value', value: decl[s.id], unit: unitText(s.unit.text) });
  }
  const tooLarge = [...A, ...B, ...C, ...D].filter((e) => !e.formula).length;
  const assumes = `Symbols stand for values in their declared units (constants by name, NAME0 = value of NAME at point ${lin.point}); coefficients are in the declared units of the variables, time in ${lin.timeUnit}; unit conversion factors appear as numbers.`;
  return { point: lin.point, lin, A, B, C, D, names, symbols, values: decl, tooLarge, assumes };
}

// ---------------------------------------------------------------- views

const paren = (u: string) => (/[*/ ^]/.test(u) ? `(${u})` : u);

/** Unit of a coefficient: unit of the row quantity over the unit of the column variable. */
export function coefficientUnit(rowUnit: string, colUnit: string, perTime?: string): string {
  const r = unitText(rowUnit);
  const c = unitText(colUnit);
  const den: string[] = [];
  if (perTime) den.push(paren(perTime));
  if (c && c !== r) den.push(paren(c));
  const numer = r && r !== c ? paren(r) : '1';
  if (!den.length) return numer === '1' ? '' : simplifyUnitText(numer);
  // e.g. m/(s*(m/s)) → dimensionless, m/s/s → m/s^2 (semantics/simplifyUnit.ts)
  return simplifyUnitText(`${numer}/${den.length === 1 ? den[0] : `(${den.join('*')})`}`);
}

export interface CoefficientInfo {
  matrix: 'A' | 'B' | 'C' | 'D';
  row: number;
  col: number;
  /** e.g. "Δlevel'" and "Δfeed". */
  rowName: string;
  colName: string;
  /** Formula text, or undefined when too large to show. */
  formula: string | undefined;
  value: number;
  unit: string;
  /** Values of the symbols the formula uses. */
  symbols: SymbolInfo[];
  assumes: string;
}

/**
 * The coefficient of `col` (a state component or input name, e.g. "level" or "feed") in the deviation
 * equation of `row` (a state component's derivative "level'" or the state "level" itself, or an output
 * name): formula, value and unit. For hovers on a coefficient. Undefined when the names do not match or
 * the point does not solve.
 */
export function symbolicCoefficient(a: Analysis, point: string | undefined, row: string, col: string, digits?: number): CoefficientInfo | undefined {
  const s = symbolicLinear(a, point);
  if (!s) return undefined;
  const lin = s.lin;
  const strip = (x: string) => x.replace(/^Δ/, '');
  const r = strip(row);
  const c = strip(col);
  let i = lin.states.findIndex((x) => x + "'" === r);
  if (i < 0) i = lin.states.indexOf(r);
  const rowIsState = i >= 0;
  if (!rowIsState) {
    i = lin.outputs.indexOf(r);
    if (i < 0) return undefined;
  }
  let j = lin.states.indexOf(c);
  const colIsState = j >= 0;
  if (!colIsState) {
    j = lin.inputs.indexOf(c);
    if (j < 0) return undefined;
  }
  const matrix: 'A' | 'B' | 'C' | 'D' = rowIsState ? (colIsState ? 'A' : 'B') : colIsState ? 'C' : 'D';
  const cols = colIsState ? lin.n : lin.m;
  const e = s[matrix][i * cols + j];
  const t = lin.timeUnit;
  const rowUnit = rowIsState ? lin.stateUnits[i] : lin.outputUnits[i];
  const colUnit = colIsState ? lin.stateUnits[j] : lin.inputUnits[j];
  const used = new Set<number>();
  if (e.formula) E.slots(e.formula, used);
  const usedNames = new Set([...used].map((id) => s.names.get(id)));
  return {
    matrix, row: i, col: j,
    rowName: rowIsState ? `Δ${lin.states[i]}'` : `Δ${lin.outputs[i]}`,
    colName: `Δ${colIsState ? lin.states[j] : lin.inputs[j]}`,
    formula: e.formula ? printFormula(e.formula, { name: (id) => s.names.get(id) ?? `?${id}`, digits }) : undefined,
    value: e.value,
    unit: coefficientUnit(rowUnit, colUnit, rowIsState ? t : undefined),
    symbols: s.symbols.filter((x) => usedNames.has(x.name)),
    assumes: s.assumes,
  };
}

export interface SymbolicEquation {
  lhs: string;
  kind: 'state' | 'output';
  index: number;
  terms: { name: string; formula: string | undefined; value: number }[];
  /** e.g. "Δlevel' = -(kv/(2*area*sqrt(level0)))*Δlevel + (1/area)*Δfeed". */
  text: string;
}

function termText(f: E.Node | undefined, value: number, varName: string, first: boolean, o: FormulaPrintOptions, valueDigits: number): string {
  let neg = false;
  let body: string;
  if (!f) {
    neg = value < 0;
    body = `${E.formatNumber(Math.abs(value), valueDigits)}*${varName}`;
  } else {
    let g = f;
    const lead = g.t === 'num' ? g.v : g.t === 'mul' && g.args[0].t === 'num' ? g.args[0].v : 1;
    if (lead < 0) {
      neg = true;
      g = E.neg(g);
    }
    const isNumber = g.t === 'num';
    if (E.isNum(g, 1)) body = varName;
    else {
      const [t, p] = pf(g, o);
      body = p >= E.PREC.atom || isNumber ? `${t}*${varName}` : `(${t})*${varName}`;
    }
  }
  if (first) return (neg ? '-' : '') + body;
  return (neg ? ' - ' : ' + ') + body;
}

/** Deviation equations with formula coefficients (rows whose derivative is simply the next component are implied). */
export function symbolicEquations(s: SymbolicLinear, digits?: number): SymbolicEquation[] {
  const lin = s.lin;
  const o: FormulaPrintOptions = { name: (id) => s.names.get(id) ?? `?${id}`, digits };
  const out: SymbolicEquation[] = [];
  const row = (lhs: string, kind: 'state' | 'output', index: number, es: { e: SymbolicEntry; name: string }[]) => {
    const terms = es.filter(({ e }) => !(e.formula && E.isNum(e.formula, 0)) && !(e.formula === undefined && e.value === 0));
    let text = '';
    terms.forEach(({ e, name }, k) => (text += termText(e.formula, e.value, `Δ${name}`, k === 0, o, digits ?? 6)));
    out.push({ lhs, kind, index, terms: terms.map(({ e, name }) => ({ name, formula: e.formula ? printFormula(e.formula, o) : undefined, value: e.value })), text: `${lhs} = ${text || '0'}` });
  };
  const { n, m } = lin;
  for (let i = 0; i < n; i++) {
    const name = lin.states[i];
    const next = name + "'";
    const j = lin.states.indexOf(next);
    if (j >= 0) {
      let pure = true;
      for (let k = 0; k < n && pure; k++) if ((k === j) !== (s.A[i * n + k].value !== 0)) pure = false;
      for (let k = 0; k < m && pure; k++) if (s.B[i * m + k].value !== 0) pure = false;
      if (pure) continue;
    }
    row(`Δ${next}`, 'state', i, [...lin.states.map((nm, k) => ({ e: s.A[i * n + k], name: nm })), ...lin.inputs.map((nm, k) => ({ e: s.B[i * m + k], name: nm }))]);
  }
  for (let i = 0; i < lin.p; i++) {
    row(`Δ${lin.outputs[i]}`, 'output', i, [...lin.states.map((nm, k) => ({ e: s.C[i * n + k], name: nm })), ...lin.inputs.map((nm, k) => ({ e: s.D[i * m + k], name: nm }))]);
  }
  return out;
}

/** Text for `poise linearize --symbolic`: the units assumed, the symbols' values, the equations. */
export function formatSymbolic(s: SymbolicLinear, digits?: number): string {
  const out: string[] = [];
  out.push(`Symbolic linear model at point ${s.point} (time in ${s.lin.timeUnit})`);
  out.push(s.assumes);
  out.push('');
  if (s.symbols.length) {
    out.push('Symbols:');
    const w = maxOf(s.symbols.map((x) => x.name.length));
    for (const x of s.symbols) {
      const what = x.kind === 'const' ? 'constant' : `value of ${x.of} at point ${s.point}`;
      out.push(`  ${x.name.padEnd(w)} = ${E.formatNumber(x.value, 6)}${x.unit ? ` [${x.unit}]` : ''}   (${what})`);
    }
    out.push('');
  }
  out.push('Deviation equations (Δv = v − v₀; v₀: the value at the point):');
  for (const e of symbolicEquations(s, digits)) out.push('  ' + e.text);
  if (s.tooLarge) {
    const which: string[] = [];
    const lin = s.lin;
    const scan = (M: SymbolicEntry[], rows: string[], cols: string[], rowPrime: boolean) => M.forEach((e, k) => {
      if (!e.formula && e.value !== 0) which.push(`Δ${rows[Math.floor(k / cols.length)]}${rowPrime ? "'" : ''} ← Δ${cols[k % cols.length]}`);
    });
    scan(s.A, lin.states, lin.states, true);
    scan(s.B, lin.states, lin.inputs, true);
    scan(s.C, lin.outputs, lin.states, false);
    scan(s.D, lin.outputs, lin.inputs, false);
    out.push('', `Formulas too large to show (numbers given instead): ${which.join(', ')}.`);
  }
  return out.join('\n');
}

/** Evaluates a formula with the symbols' values (declared units). */
export function evaluateFormula(s: SymbolicLinear, f: E.Node): number {
  return E.evaluate(f, s.values);
}

/**
 * Index reduction, structural part: Pantelides' algorithm (C. C. Pantelides, "The consistent initialization
 * of differential-algebraic systems", SIAM J. Sci. Stat. Comput. 9, 1988) on the incidence of equations and
 * unknown variables with their derivative orders.
 *
 * The variables are the model's unknown symbols (states, vars, outputs), each with the highest order d_v at
 * which it is solved for (a declared state of order n starts at n, a var or output at 0). An equation is
 * matched to one variable among those appearing in it at their highest order. An equation that cannot be
 * matched (a constraint that holds only states, such as x² + y² = L²) is differentiated together with
 * every equation on the failed alternating path, and every variable on that path gets one more order,
 * until every equation is matched. The result: how often each equation is differentiated (c_r) and the
 * order of each variable (d_v), with the differentiated equations built symbolically,
 *
 *   d/dt e = Σ over the unknown slots s of e of ∂e/∂s · ṡ .
 *
 * Inputs are held constant (u̇ = 0): the linear model is taken with the inputs fixed at the point, so a
 * constraint that holds an input is reported (P410) and its linear model does not carry the input's rate.
 *
 * The augmented model (`IndexPlan.augmented`) keeps the original slots and equations with the same ids and
 * indices and appends the new derivative slots and the differentiated equations; the choice of states
 * (which derivatives become algebraic) is numeric and made per point in `dummyDerivatives.ts`.
 */
import * as E from '../algebra/expr';
import type { ModelSymbol } from '../semantics/binder';
import type { LoweredModel, ModelEquation, Slot } from './model';
import { maximumMatching, type StructureResult } from './structure';
import { diag, type Diagnostic } from '../diagnostics';

export interface IndexPlan {
  /** Original slots and equations (same ids and indices), then the new derivative slots and the differentiated equations. */
  augmented: LoweredModel;
  /** Pantelides' variables: the unknown symbols (states, vars, outputs) in slot order. */
  symbols: ModelSymbol[];
  /** slotAt[v][k]: the slot of variable v differentiated k times, k = 0 … d[v]. */
  slotAt: number[][];
  /** eqAt[r][c]: index in augmented.equations of original equation r differentiated c times, c = 0 … c[r]. */
  eqAt: number[][];
  /** Times each original equation is differentiated. */
  c: number[];
  /** Highest order of each variable after the reduction. */
  d: number[];
  /** Order of each variable in the model as written (state order, 0 for vars and outputs). */
  declared: number[];
  /** Structural (differential) index: max c + 1 when an algebraic variable is left, else max c. */
  index: number;
  /** Original equations that are differentiated, with their counts, in equation order. */
  differentiated: { equation: number; times: number }[];
  /** Differentiated equations that hold an input (whose rate is taken as zero), with the input slots. */
  withInputs: { equation: number; inputs: number[] }[];
}

export type PlanResult = { ok: true; plan: IndexPlan } | { ok: false; reason: 'singular' | 'limit' };

/** Differentiations per equation beyond which the model is taken as not reducible (an index above 12). */
const MAX_DIFFERENTIATIONS = 12;

const primeName = (n: string, k: number) => n + "'".repeat(k);

/** Pantelides' algorithm and the augmented model; `singular` when no assignment of equations to variables exists at any order. */
export function planIndexReduction(lm: LoweredModel): PlanResult {
  // variables: unknown symbols, with their slot per order
  const varOf = new Int32Array(lm.slots.length).fill(-1);
  const symIndex = new Map<ModelSymbol, number>();
  const symbols: ModelSymbol[] = [];
  const slotAt: number[][] = [];
  for (const s of lm.slots) {
    if (s.kind === 'const' || s.kind === 'input') continue;
    let v = symIndex.get(s.symbol);
    if (v === undefined) {
      v = symbols.length;
      symIndex.set(s.symbol, v);
      symbols.push(s.symbol);
      slotAt.push([]);
    }
    slotAt[v][s.order] = s.id;
    varOf[s.id] = v;
  }
  const nV = symbols.length;
  const nE = lm.equations.length;
  if (nV !== nE || nE === 0) return { ok: false, reason: 'singular' };
  const declared = slotAt.map((a) => a.length - 1);
  // incidence: each equation's variables with the highest order they appear at
  const sigma: [number, number][][] = lm.equations.map((eq) => {
    const best = new Map<number, number>();
    for (const id of E.slots(eq.residual)) {
      const v = varOf[id];
      if (v < 0) continue;
      const k = lm.slots[id].order;
      if ((best.get(v) ?? -1) < k) best.set(v, k);
    }
    return [...best];
  });
  // a perfect matching of equations to variables at any order is needed, or no differentiation helps
  const full = maximumMatching(nE, nV, sigma.map((row) => row.map(([v]) => v)));
  if (full.size !== nE) return { ok: false, reason: 'singular' };

  const c = new Array<number>(nE).fill(0);
  const d = declared.slice();
  const assign = new Int32Array(nV).fill(-1); // variable (at its highest order) → equation (at its highest order)
  const colEq = new Uint8Array(nE);
  const colVar = new Uint8Array(nV);
  const adj = (r: number): number[] => sigma[r].filter(([v, k]) => k + c[r] === d[v]).map(([v]) => v);
  /** An augmenting path from equation `root` over highest-order variables (iterative depth-first search). */
  const augment = (root: number): boolean => {
    const stackR = [root];
    const stackA = [adj(root)];
    const stackK = [0];
    const via = [-1];
    colEq[root] = 1;
    while (stackR.length) {
      const sp = stackR.length - 1;
      const a = stackA[sp];
      if (stackK[sp] >= a.length) {
        stackR.pop();
        stackA.pop();
        stackK.pop();
        via.pop();
        continue;
      }
      const v = a[stackK[sp]++];
      if (colVar[v]) continue;
      colVar[v] = 1;
      if (assign[v] < 0) {
        assign[v] = stackR[sp];
        for (let t = sp; t >= 1; t--) assign[via[t]] = stackR[t - 1];
        return true;
      }
      const r2 = assign[v];
      colEq[r2] = 1;
      stackR.push(r2);
      stackA.push(adj(r2));
      stackK.push(0);
      via.push(v);
    }
    return false;
  };
  for (let r0 = 0; r0 < nE; r0++) {
    for (;;) {
      colEq.fill(0);
      colVar.fill(0);
      if (augment(r0)) break;
      // differentiate every coloured equation, raise every coloured variable one order; the assignments
      // carry over (a coloured variable's equation is coloured too)
      for (let v = 0; v < nV; v++) if (colVar[v]) d[v]++;
      for (let r = 0; r < nE; r++) if (colEq[r] && ++c[r] > MAX_DIFFERENTIATIONS) return { ok: false, reason: 'limit' };
    }
  }

  // the augmented model: new derivative slots, then the differentiated equations
  const slots: Slot[] = lm.slots.slice();
  const tscale = lm.timeScale;
  for (let v = 0; v < nV; v++) {
    const base = lm.slots[slotAt[v][0]];
    for (let k = declared[v] + 1; k <= d[v]; k++) {
      const scale = base.unit.scale / Math.pow(tscale, k);
      const unitText = !lm.timeUnit ? base.unit.text : `${base.unit.text}/${lm.timeUnit}${k > 1 ? '^' + k : ''}`;
      const id = slots.length;
      slots.push({ id, kind: 'deriv', symbol: base.symbol, order: k, name: primeName(base.symbol.name, k), scale, offset: 0, unit: { text: unitText, dims: base.unit.dims, scale, offset: 0 } });
      slotAt[v][k] = id;
    }
  }
  const inputSet = new Set(lm.inputs);
  const equations: ModelEquation[] = lm.equations.slice();
  const eqAt: number[][] = lm.equations.map((_, r) => [r]);
  const withInputs: IndexPlan['withInputs'] = [];
  for (let r = 0; r < nE; r++) {
    if (!c[r]) continue;
    const eq = lm.equations[r];
    let e = eq.residual;
    const inputs = new Set<number>();
    for (let k = 1; k <= c[r]; k++) {
      const terms: E.Node[] = [];
      for (const id of [...E.slots(e)].sort((a, b) => a - b)) {
        if (inputSet.has(id)) {
          inputs.add(id);
          continue;
        }
        const v = id < varOf.length ? varOf[id] : -1;
        const sv = v >= 0 ? v : slots[id].kind === 'deriv' ? symIndex.get(slots[id].symbol) ?? -1 : -1;
        if (sv < 0) continue; // a constant
        const next = slotAt[sv][slots[id].order + 1];
        if (next === undefined) return { ok: false, reason: 'singular' }; // cannot happen after Pantelides
        const de = E.derivative(e, id);
        if (!E.isNum(de, 0)) terms.push(E.mul([de, E.sym(next)]));
      }
      e = E.add(terms);
      eqAt[r].push(equations.length);
      equations.push({ residual: e, kind: eq.kind, span: eq.span, label: derivativeLabel(eq.label, k), index: eq.index });
    }
    if (inputs.size) withInputs.push({ equation: r, inputs: [...inputs] });
  }
  const baseValues = new Float64Array(slots.length);
  baseValues.set(lm.baseValues);
  const extra = new Map<ModelSymbol, number[]>();
  for (let v = 0; v < nV; v++) extra.set(symbols[v], slotAt[v]);
  const augmented: LoweredModel = {
    ...lm, slots, equations, baseValues,
    slotOf: (s, order = 0) => extra.get(s)?.[order] ?? lm.slotOf(s, order),
  };
  const maxC = c.reduce((x, y) => Math.max(x, y), 0);
  const index = maxC + (d.some((x) => x === 0) ? 1 : 0);
  const differentiated = c.map((times, equation) => ({ equation, times })).filter((x) => x.times > 0);
  return { ok: true, plan: { augmented, symbols, slotAt, eqAt, c, d, declared, index, differentiated, withInputs } };
}

/** "d/dt (x^2 + y^2 = L^2)", "d²/dt² (…)". */
export function derivativeLabel(label: string, k: number): string {
  const sup = ['', '', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
  return k === 1 ? `d/dt (${label})` : `d${sup[k] ?? '^' + k}/dt${sup[k] ?? '^' + k} (${label})`;
}

/**
 * The structure check's verdict on a balanced model it could not match: when Pantelides' algorithm reduces
 * it, the errors (P406, P402–P404) give way to one P407 information on each differentiated equation (and a
 * P410 warning where a differentiated equation holds an input); when it gives up, P408 joins the errors.
 */
export function reduceStructure(lm: LoweredModel, structure: StructureResult): { structure: StructureResult; plan?: IndexPlan } {
  if (structure.ok || structure.diagnostics.some((d) => d.code === 'P401' || d.code === 'P405')) return { structure };
  const res = planIndexReduction(lm);
  if (!res.ok) {
    if (res.reason === 'singular') return { structure };
    const detail = `an equation would have to be differentiated more than ${MAX_DIFFERENTIATIONS} times.`;
    return { structure: { ...structure, diagnostics: [...structure.diagnostics, diag('P408', structure.diagnostics[0]?.span ?? { start: 0, end: 0 }, { detail })] } };
  }
  const plan = res.plan;
  const diagnostics: Diagnostic[] = [];
  const method = 'Pantelides 1988; states by dummy derivatives, Mattsson & Söderlind 1993';
  for (const { equation, times } of plan.differentiated) {
    diagnostics.push(diag('P407', lm.equations[equation].span, { index: plan.index, times: times === 1 ? 'once' : times === 2 ? 'twice' : `${times} times`, method }, { data: { index: plan.index, times } }));
  }
  for (const { equation, inputs } of plan.withInputs) {
    diagnostics.push(diag('P410', lm.equations[equation].span, { inputs: inputs.map((s) => `"${lm.slots[s].name}"`).join(', ') }));
  }
  return { structure: { ok: true, unknowns: structure.unknowns, diagnostics }, plan };
}

/** What an index reduction did at a point, for the outputs (text, JSON, report, hover). */
export interface IndexReductionSummary {
  /** Structural index of the model as written. */
  index: number;
  /** Differentiated equations: label and times. */
  differentiated: { label: string; times: number }[];
  /** The states chosen at the point, the dummy derivatives, and the declared states the constraints determine. */
  states: string[];
  dummies: string[];
  constrained: string[];
}

export function reductionSummary(plan: IndexPlan, states: string[], dummies: string[], constrained: string[]): IndexReductionSummary {
  const eqs = plan.augmented.equations;
  return { index: plan.index, differentiated: plan.differentiated.map(({ equation, times }) => ({ label: eqs[equation].label, times })), states, dummies, constrained };
}

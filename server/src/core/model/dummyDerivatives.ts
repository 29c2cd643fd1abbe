/**
 * Index reduction, numeric part: the dummy-derivative method (S. E. Mattsson and G. Söderlind, "Index
 * reduction in differential-algebraic equations using dummy derivatives", SIAM J. Sci. Comput. 14, 1993)
 * on the plan of Pantelides' algorithm (`indexReduction.ts`), at the values of an operating point.
 *
 * Level 1 takes every equation at its highest order and every variable at its highest order. While some of
 * the level's equations are differentiated ones, the Jacobian of those equations with respect to the
 * level's variables (evaluated at the point, columns scaled to declared units, rows to their largest
 * entry) has more columns than rows; as many columns as rows are chosen that form a nonsingular submatrix
 * (Gaussian elimination with complete pivoting). The chosen derivatives become *dummy derivatives*:
 * algebraic unknowns, no longer the time derivative of a state. The next level is those equations one
 * order lower and the chosen variables one order lower.
 *
 * What remains is an index-1 model: the states are the variable orders whose time derivative is not a
 * dummy; every other slot (dummies, the states they took over, vars, outputs) is solved from all the
 * equations, original and differentiated. Among admissible pivots (at least a tenth of the largest) the
 * choice prefers, in order: the dummies of a previous selection (so a sweep keeps its states while they
 * stay well-conditioned), derivatives the model did not write (so a declared first-order state stays a
 * state), then the largest.
 */
import * as E from '../algebra/expr';
import type { LoweredModel } from './model';
import type { IndexPlan } from './indexReduction';

export interface StateSelection {
  /** The reduced (index-1) model: the augmented slots and equations with the chosen states. */
  model: LoweredModel;
  /** Its unknown slots: derivatives of the states, then the algebraic unknowns. */
  unknowns: number[];
  /** Slot ids of the dummy derivatives. */
  dummies: number[];
  /** Names of the states (first-order components) and of the dummy derivatives. */
  stateNames: string[];
  dummyNames: string[];
  /** Declared states (order 0) that are not states here: the constraints determine them. */
  constrained: string[];
  /** A key of the selection: equal keys, same states. */
  key: string;
}

export type SelectionResult = { ok: true; selection: StateSelection } | { ok: false; equations: number[]; detail: string };

/** Admissible pivot: at least this fraction of the largest remaining entry. */
const ADMISSIBLE = 0.1;
/** Below this (rows scaled to 1) the remaining matrix is taken as singular. */
const SINGULAR = 1e-10;

const cache = new WeakMap<IndexPlan, Map<string, StateSelection>>();

/**
 * The states at the values `values` (SI, the augmented model's slots; a shorter array is extended with
 * zeros: at a steady state every derivative is zero). `prefer`: dummy slots of a previous selection.
 */
export function selectStates(plan: IndexPlan, values: ArrayLike<number>, prefer?: readonly number[]): SelectionResult {
  const aug = plan.augmented;
  const v = pointValues(plan, values);
  const { slotAt, eqAt, c, d, declared } = plan;
  const preferSet = new Set(prefer ?? []);
  const dummy = new Set<number>();
  // level 1: every equation at its highest order, every variable at its highest order
  let eqs = c.map((cr, r) => [r, cr] as [number, number]);
  let vars = d.map((dv, j) => [j, dv] as [number, number]);
  for (;;) {
    const h = eqs.filter(([, k]) => k >= 1);
    if (!h.length) break;
    const cols = vars.filter(([, k]) => k >= 1);
    const chosen = chooseColumns(aug, h.map(([r, k]) => eqAt[r][k]), cols.map(([j, k]) => slotAt[j][k]), v, (col) => {
      const [j, k] = cols[col];
      return preferSet.has(slotAt[j][k]) ? 0 : k > declared[j] ? 1 : 2;
    });
    if (!chosen.ok) return { ok: false, equations: chosen.rows.map((i) => h[i][0]), detail: 'the differentiated constraints are singular with respect to the derivatives at this point' };
    for (const col of chosen.cols) dummy.add(slotAt[cols[col][0]][cols[col][1]]);
    eqs = h.map(([r, k]) => [r, k - 1]);
    vars = chosen.cols.map((col) => [cols[col][0], cols[col][1] - 1]);
  }
  const key = [...dummy].sort((a, b) => a - b).join(',');
  let memo = cache.get(plan);
  if (!memo) cache.set(plan, (memo = new Map()));
  const hit = memo.get(key);
  if (hit) return { ok: true, selection: hit };

  // states: orders whose time derivative is not a dummy; the rest are unknowns
  const stateComponents: number[] = [];
  const componentDerivative: number[] = [];
  const highest: number[] = [];
  const algebraic: number[] = [];
  const constrained: string[] = [];
  for (let j = 0; j < plan.symbols.length; j++) {
    let m = d[j] + 1; // lowest dummy order
    for (let k = d[j]; k >= 1; k--) if (dummy.has(slotAt[j][k])) m = k;
    for (let k = 0; k <= m - 2 && k < d[j]; k++) {
      stateComponents.push(slotAt[j][k]);
      componentDerivative.push(slotAt[j][k + 1]);
    }
    if (m >= 2) highest.push(slotAt[j][m - 1]);
    for (let k = Math.max(0, m - 1) + (m >= 2 ? 1 : 0); k <= d[j]; k++) algebraic.push(slotAt[j][k]);
    if (declared[j] > 0 && m <= 1) constrained.push(plan.symbols[j].name);
  }
  const model: LoweredModel = { ...aug, stateComponents, componentDerivative, highest, algebraic };
  const dummies = [...dummy].sort((a, b) => a - b);
  const selection: StateSelection = {
    model, unknowns: [...highest, ...algebraic], dummies,
    stateNames: stateComponents.map((s) => aug.slots[s].name), dummyNames: dummies.map((s) => aug.slots[s].name), constrained, key,
  };
  memo.set(key, selection);
  return { ok: true, selection };
}

/** The values extended to the augmented slots (new derivative slots zero: a steady state). */
export function pointValues(plan: IndexPlan, values: ArrayLike<number>): Float64Array {
  const out = new Float64Array(plan.augmented.slots.length);
  for (let i = 0; i < Math.min(values.length, out.length); i++) out[i] = values[i];
  return out;
}

/**
 * rows.length columns of the Jacobian ∂(rows)/∂(cols) forming a nonsingular submatrix, by Gaussian
 * elimination with complete pivoting; among admissible pivots the lowest `rank` wins, then the largest.
 */
function chooseColumns(lm: LoweredModel, rows: number[], cols: number[], values: Float64Array, rank: (col: number) => number): { ok: true; cols: number[] } | { ok: false; rows: number[] } {
  const nr = rows.length;
  const nc = cols.length;
  const a = new Float64Array(nr * nc);
  for (let i = 0; i < nr; i++) {
    const res = lm.equations[rows[i]].residual;
    let mx = 0;
    for (let j = 0; j < nc; j++) {
      const s = cols[j];
      if (!E.dependsOn(res, s)) continue;
      const x = E.evaluate(E.derivative(res, s), values) * lm.slots[s].scale;
      a[i * nc + j] = Number.isFinite(x) ? x : 0;
      mx = Math.max(mx, Math.abs(a[i * nc + j]));
    }
    if (mx > 0) for (let j = 0; j < nc; j++) a[i * nc + j] /= mx;
  }
  const rowLeft = new Uint8Array(nr).fill(1);
  const colLeft = new Uint8Array(nc).fill(1);
  const picked: number[] = [];
  for (let step = 0; step < nr; step++) {
    let big = 0;
    for (let i = 0; i < nr; i++) if (rowLeft[i]) for (let j = 0; j < nc; j++) if (colLeft[j]) big = Math.max(big, Math.abs(a[i * nc + j]));
    if (!(big > SINGULAR)) return { ok: false, rows: rows.map((_, i) => i).filter((i) => rowLeft[i]) };
    let pi = -1;
    let pj = -1;
    let best: [number, number] = [Infinity, 0];
    for (let i = 0; i < nr; i++) {
      if (!rowLeft[i]) continue;
      for (let j = 0; j < nc; j++) {
        const x = Math.abs(a[i * nc + j]);
        if (!colLeft[j] || x < ADMISSIBLE * big) continue;
        const rk = rank(j);
        if (rk < best[0] || (rk === best[0] && x > best[1])) {
          best = [rk, x];
          pi = i;
          pj = j;
        }
      }
    }
    picked.push(pj);
    rowLeft[pi] = 0;
    colLeft[pj] = 0;
    const p = a[pi * nc + pj];
    for (let i = 0; i < nr; i++) {
      if (!rowLeft[i]) continue;
      const f = a[i * nc + pj] / p;
      if (f === 0) continue;
      for (let j = 0; j < nc; j++) a[i * nc + j] -= f * a[pi * nc + j];
    }
  }
  return { ok: true, cols: picked };
}

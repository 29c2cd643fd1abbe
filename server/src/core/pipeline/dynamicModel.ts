/**
 * The model that a point's linear model, simulation and sweeps work on: the lowered model itself (index 1),
 * or, for a constrained model reduced by Pantelides' algorithm, the augmented model with the states chosen
 * at the point's values by dummy derivatives (`model/dummyDerivatives.ts`).
 */
import * as E from '../algebra/expr';
import type { LoweredModel } from '../model/model';
import type { IndexPlan } from '../model/indexReduction';
import { pointValues, selectStates, type StateSelection } from '../model/dummyDerivatives';

export interface DynamicModel {
  /** The index-1 model (its stateComponents are the states). */
  model: LoweredModel;
  /** Its unknown slots (derivatives of the states, then the algebraic unknowns). */
  unknowns: number[];
  /** The point's values on the model's slots (SI). */
  values: Float64Array;
  selection?: StateSelection;
  /** Why no states could be chosen (then `unknowns` is empty). */
  failure?: { equations: number[]; detail: string };
}

/** Relative size of a differentiated equation's residual (against its terms) above which it does not hold. */
const HOLDS = 1e-8;

export function dynamicModel(lowered: LoweredModel, unknowns: number[], plan: IndexPlan | undefined, values: Float64Array, prefer?: readonly number[]): DynamicModel {
  if (!plan) return { model: lowered, unknowns, values };
  const v = pointValues(plan, values);
  const aug = plan.augmented;
  // the point must satisfy the differentiated constraints as well (at a steady state they hold exactly)
  const broken: number[] = [];
  for (let r = lowered.equations.length; r < aug.equations.length; r++) {
    const res = aug.equations[r].residual;
    const f = E.evaluate(res, v);
    const terms = res.t === 'add' ? res.args : [res];
    let scale = 0;
    for (const t of terms) scale = Math.max(scale, Math.abs(E.evaluate(t, v)));
    if (!Number.isFinite(f) || Math.abs(f) > HOLDS * Math.max(scale, 1e-300) && Math.abs(f) > 0) broken.push(r);
  }
  if (broken.length) {
    const rows = [...new Set(broken.map((r) => plan.eqAt.findIndex((a) => a.includes(r))))];
    return { model: aug, unknowns: [], values: v, failure: { equations: rows, detail: `the differentiated constraints ${broken.map((r) => `"${aug.equations[r].label}"`).join(', ')} do not hold (or are not finite) at this point` } };
  }
  const sel = selectStates(plan, v, prefer);
  if (!sel.ok) return { model: aug, unknowns: [], values: v, failure: { equations: sel.equations, detail: sel.detail } };
  return { model: sel.selection.model, unknowns: sel.selection.unknowns, values: v, selection: sel.selection };
}

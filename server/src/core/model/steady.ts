/**
 * The steady-state form of a lowered model: every time derivative set to zero and the residuals folded
 * again by the smart constructors of algebra/expr.ts. At an operating point every derivative is zero, so
 * `m*l*cos(th)*th''` and `m*l*sin(th)*th'^2` vanish, `exp(x')*y` becomes `y`, and an equation such as
 * `(M + m)*p'' + m*l*cos(th)*th'' = F` becomes `0 = F`: its steady-state incidence no longer holds `th`.
 * The point solver matches equations to unknowns on this incidence (an equation left without unknowns is a
 * consistency check) and solves these residuals; the dynamic structure check keeps the full equations.
 *
 * Derivatives are the slots of state components of order ≥ 1 (x', x'' of a third-order x) and the highest
 * derivatives (kind 'deriv'), of any order. A term that does not fold to a finite number with a zero
 * derivative (1/x', log(x')) stays as it is: it evaluates to a non-finite value at the point, which the
 * point checks report as a domain error.
 */
import * as E from '../algebra/expr';
import type { LoweredModel, ModelEquation } from './model';

const steadyCache = new WeakMap<LoweredModel, LoweredModel>();

/** Whether a slot is a time derivative (zero at every steady state). */
export function isDerivativeSlot(lm: LoweredModel, id: number): boolean {
  const s = lm.slots[id];
  return s.kind === 'deriv' || (s.kind === 'state' && s.order > 0);
}

/** One residual with every derivative replaced by 0 and folded. */
export function steadyResidual(lm: LoweredModel, n: E.Node): E.Node {
  return E.substitute(n, (id) => (isDerivativeSlot(lm, id) ? E.ZERO : undefined));
}

/**
 * The same model with the steady-state residuals (same slots, same equation order and labels), cached per
 * lowered model so that its compiled form (model/jacobian.ts caches per model object) is built once.
 */
export function steadyModel(lm: LoweredModel): LoweredModel {
  const hit = steadyCache.get(lm);
  if (hit) return hit;
  const equations: ModelEquation[] = lm.equations.map((eq) => {
    let changed = false;
    for (const s of E.slots(eq.residual)) if (isDerivativeSlot(lm, s)) changed = true;
    return changed ? { ...eq, residual: steadyResidual(lm, eq.residual) } : eq;
  });
  const sm: LoweredModel = { ...lm, equations };
  steadyCache.set(lm, sm);
  return sm;
}

/**
 * The point problem's equations for a set of unknown slots: `active` are the equations whose steady-state
 * residual holds an unknown (in equation order), `checks` the others (consistency checks), and `adj` the
 * steady-state incidence of each active equation (column indices into `unknowns`).
 */
export function steadyIncidence(sm: LoweredModel, unknowns: readonly number[]): { active: number[]; checks: number[]; adj: number[][] } {
  const colOf = new Int32Array(sm.slots.length).fill(-1);
  unknowns.forEach((s, i) => (colOf[s] = i));
  const active: number[] = [];
  const checks: number[] = [];
  const adj: number[][] = [];
  sm.equations.forEach((eq, r) => {
    const cols: number[] = [];
    for (const s of E.slots(eq.residual)) {
      const c = colOf[s];
      if (c >= 0) cols.push(c);
    }
    if (cols.length) {
      active.push(r);
      adj.push(cols);
    } else checks.push(r);
  });
  return { active, checks, adj };
}

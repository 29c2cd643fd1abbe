/**
 * How a solved operating point and its linear model move with one constant: the derivatives of every value
 * of the point and of A, B, C, D with respect to each constant, exact to rounding.
 *
 * The point: its steady-state residuals F(x, p) = 0 hold along p, so by the implicit function theorem the
 * unknowns move by dx/dp = −F_x⁻¹·F_p, with F_x the point's Jacobian (the one Newton's method used) and F_p
 * the derivative with respect to the constant (symbolic, model/jacobian's differentiation) plus what the
 * values the point fixes and the constants computed from p do (see `setupDirection`).
 *
 * The linear model: [Δw; Δz] = X·[Δx; Δu] with X = −M⁻¹N, M = ∂F/∂(w, z) and N = ∂F/∂(x, u). Along the
 * direction d = (∂p, dx/dp) in every slot, each Jacobian entry changes by its gradient (the second
 * derivatives, symbolic, compiled once per model) dotted with d, so dX = −M⁻¹(dM·X + dN), and the rows of
 * dX that are highest derivatives (outputs) give dA, dB (dC, dD), scaled to declared units like the
 * linearizer does. Values are per SI unit of the constant.
 */
import * as E from '../../algebra/expr';
import type { Analysis } from '../../pipeline/analysis';
import { compileModel, type CompiledModel } from '../../model/jacobian';
import { compileVector, type VectorFn } from '../../model/compile';
import type { LoweredModel } from '../../model/model';
import { steadyIncidence, steadyModel } from '../../model/steady';
import { pointSetup, type PointSolution } from '../../solve/pointSolver';
import type { LinearModel } from '../../solve/linearizer';
import { sparseLU } from '../../numeric/sparseLU';
import { SparseSolver } from '../../numeric/sparseSolve';
import type * as A from '../../syntax/ast';
import type { Span } from '../../text';
import { unitText } from '../../semantics/units';

/** A constant the point's model can be differentiated by. */
export interface ParameterInfo {
  name: string;
  slot: number;
  /** Value at the point, declared unit. */
  value: number;
  unit: string;
  /** SI per declared unit (a change of 1 declared unit is `scale` SI). */
  scale: number;
  /** The declaration's name. */
  span: Span;
}

/** Sparse entries of a matrix derivative (row-major position, value), declared units per SI unit of the constant. */
export interface SparseDelta {
  rows: number[];
  cols: number[];
  vals: number[];
}

export interface PointDerivative {
  parameter: ParameterInfo;
  /** d(SI value)/d(SI constant) of every slot of the lowered model. */
  dValues: Float64Array;
  dA: SparseDelta;
  dB: SparseDelta;
  dC: SparseDelta;
  dD: SparseDelta;
}

export interface PointDerivatives {
  ok: boolean;
  /** Why not, when not ok (a sentence). */
  problem?: string;
  point: string;
  lin?: LinearModel;
  derivatives: PointDerivative[];
}

/** Gradients of the Jacobian entries: entry k of `cm.nodes` has terms start[k] … start[k+1]−1 over slots `slot`. */
interface SecondDerivatives {
  start: Int32Array;
  slot: Int32Array;
  eval: VectorFn;
  count: number;
}

const secondCache = new WeakMap<CompiledModel, SecondDerivatives>();

function secondDerivatives(cm: CompiledModel): SecondDerivatives {
  const hit = secondCache.get(cm);
  if (hit) return hit;
  const start = new Int32Array(cm.nodes.length + 1);
  const slot: number[] = [];
  const nodes: E.Node[] = [];
  cm.nodes.forEach((n, k) => {
    for (const s of [...E.slots(n)].sort((a, b) => a - b)) {
      const d = E.derivative(n, s);
      if (E.isNum(d, 0)) continue;
      slot.push(s);
      nodes.push(d);
    }
    start[k + 1] = nodes.length;
  });
  const sd: SecondDerivatives = { start, slot: Int32Array.from(slot), eval: compileVector(nodes), count: nodes.length };
  secondCache.set(cm, sd);
  return sd;
}

/** ∂F/∂c of the steady-state residuals for every constant slot c that occurs in them. */
interface ConstColumns {
  rows: Int32Array;
  slots: Int32Array;
  eval: VectorFn;
}
const constCache = new WeakMap<LoweredModel, ConstColumns>();

function constColumns(sm: LoweredModel): ConstColumns {
  const hit = constCache.get(sm);
  if (hit) return hit;
  const rows: number[] = [];
  const slots: number[] = [];
  const nodes: E.Node[] = [];
  sm.equations.forEach((eq, r) => {
    for (const s of [...E.slots(eq.residual)].sort((a, b) => a - b)) {
      if (sm.slots[s].kind !== 'const') continue;
      const d = E.derivative(eq.residual, s);
      if (E.isNum(d, 0)) continue;
      rows.push(r);
      slots.push(s);
      nodes.push(d);
    }
  });
  const cc: ConstColumns = { rows: Int32Array.from(rows), slots: Int32Array.from(slots), eval: compileVector(nodes) };
  constCache.set(sm, cc);
  return cc;
}

/**
 * The constants a model can be differentiated by at a point: every constant written as a value (not
 * computed from other constants), at the value the point sees (a point may give a constant again).
 */
export function modelParameters(a: Analysis, sol: PointSolution): ParameterInfo[] {
  const lm = a.lowered;
  const out: ParameterInfo[] = [];
  for (const s of a.bound.consts) {
    const id = lm.slotOf(s);
    if (id < 0) continue;
    const decl = s.decl as A.ConstDecl;
    if (refersToConstant(decl.value, a)) continue;
    const sl = lm.slots[id];
    const v = sol.values[id];
    if (!Number.isFinite(v)) continue;
    out.push({ name: s.name, slot: id, value: (v - sl.offset) / sl.scale, unit: unitText(sl.unit.text), scale: sl.scale, span: s.span });
  }
  return out;
}

function refersToConstant(e: A.Expr, a: Analysis): boolean {
  let hit = false;
  const walk = (x: A.Expr): void => {
    if (hit) return;
    switch (x.kind) {
      case 'name': {
        const s = a.bound.symbols.get(x.name);
        if (s) hit = true;
        return;
      }
      case 'unary': return walk(x.arg);
      case 'binary': walk(x.left); walk(x.right); return;
      case 'call': x.args.forEach(walk); return;
      default: return;
    }
  };
  walk(e);
  return hit;
}

/**
 * How the values the point starts from move with one constant (the constant itself, constants computed
 * from it, values the point fixes with expressions of it): Richardson-extrapolated central differences of
 * the point's set-up (pointSetup evaluates only constant expressions; a value that does not move gives an
 * exact 0, a linear expression an exact slope up to rounding).
 */
function setupDirection(a: Analysis, sol: PointSolution, p: ParameterInfo): Float64Array {
  const lm = a.lowered;
  const v0 = sol.values[p.slot];
  const h = 1e-3 * Math.max(Math.abs(v0), Math.abs(p.scale));
  const at = (dv: number) => pointSetup(a.bound, lm, sol.block, new Map([[p.slot, v0 + dv]])).values;
  const f1 = at(h), b1 = at(-h), f2 = at(h / 2), b2 = at(-h / 2);
  const d = new Float64Array(lm.slots.length);
  for (let s = 0; s < d.length; s++) {
    if (s === p.slot) {
      d[s] = 1;
      continue;
    }
    const isConst = lm.slots[s].kind === 'const';
    if (!isConst && !sol.fixed.has(s)) continue;
    if (f1[s] === b1[s] && f2[s] === b2[s]) continue;
    const D1 = (f1[s] - b1[s]) / (2 * h);
    const D2 = (f2[s] - b2[s]) / h;
    d[s] = (4 * D2 - D1) / 3;
  }
  return d;
}

/** Derivatives of the point and of A, B, C, D with respect to each of `params` (all model parameters by default). */
export function pointDerivatives(a: Analysis, pointName?: string, params?: ParameterInfo[]): PointDerivatives {
  const sol = a.point(pointName);
  const name = sol?.name ?? pointName ?? '';
  const fail = (problem: string): PointDerivatives => ({ ok: false, problem, point: name, derivatives: [] });
  if (!sol || !sol.ok) return fail('the point is not solved');
  const lin = a.linear(sol.name);
  if (!lin || !lin.ok) return fail('the point has no linear model');
  const lm = a.lowered;
  // a constrained model: the point moves by its own (steady-state) equations, which the index reduction does
  // not change; A, B, C, D are those of the reduced model with the states chosen at the point (the same
  // choice as the linear model's), whose extra slots (the derivatives the reduction adds) are zero at every
  // steady state and stay so: the direction is 0 there
  const dm = a.indexPlan ? a.dynamicsAt(sol.values) : undefined;
  if (dm && !dm.selection) return fail(`no states can be chosen at the point (${dm.failure?.detail ?? 'index reduction'})`);
  const dyn = dm ? dm.model : lm;
  const dynValues = dm ? dm.values : sol.values;
  const parameters = params ?? modelParameters(a, sol);
  const values = sol.values;

  // the point's Jacobian (steady-state residuals, active equations × unknowns)
  const sm = steadyModel(lm);
  const scm = compileModel(sm);
  const unknowns = sol.unknowns;
  const { active } = steadyIncidence(sm, unknowns);
  if (active.length !== unknowns.length) return fail('the point is not square');
  const pColOf = new Int32Array(lm.slots.length).fill(-1);
  unknowns.forEach((s, i) => (pColOf[s] = i));
  const pRowOf = new Int32Array(scm.nEq).fill(-1);
  active.forEach((r, i) => (pRowOf[r] = i));
  const SJ = new Float64Array(scm.nodes.length);
  scm.jacobian(values, SJ);
  const tr: number[] = [], tc: number[] = [], tv: number[] = [];
  for (let k = 0; k < SJ.length; k++) {
    const i = pRowOf[scm.rows[k]], j = pColOf[scm.cols[k]];
    if (i < 0 || j < 0 || SJ[k] === 0) continue;
    tr.push(i); tc.push(j); tv.push(SJ[k]);
  }
  const plu = sparseLU(unknowns.length, { rows: Int32Array.from(tr), cols: Int32Array.from(tc), vals: Float64Array.from(tv), nnz: tv.length });
  if (!plu.ok) return fail('the point\'s Jacobian is singular');
  const psolve = new SparseSolver(plu.factors);
  const cc = constColumns(sm);
  const CJ = new Float64Array(cc.slots.length);
  cc.eval(values, CJ);

  // the dynamic Jacobian, M and N, and X = −M⁻¹N (dense, N_u × (n + m))
  const cm = compileModel(dyn);
  const sd = secondDerivatives(cm);
  const J = new Float64Array(cm.nodes.length);
  cm.jacobian(dynValues, J);
  const H = new Float64Array(sd.count);
  sd.eval(dynValues, H);
  const uSlots = dm ? dm.unknowns : a.structure.unknowns;
  const Nu = uSlots.length;
  const { n, m, p: pOut } = lin;
  const colOf = new Int32Array(dyn.slots.length).fill(-1);
  uSlots.forEach((s, i) => (colOf[s] = i));
  const rhsCol = new Int32Array(dyn.slots.length).fill(-1);
  lin.stateSlots.forEach((s, i) => (rhsCol[s] = i));
  lin.inputSlots.forEach((s, i) => (rhsCol[s] = n + i));
  const mr: number[] = [], mc: number[] = [], mv: number[] = [];
  for (let k = 0; k < J.length; k++) {
    const j = colOf[cm.cols[k]];
    if (j < 0 || J[k] === 0) continue;
    mr.push(cm.rows[k]); mc.push(j); mv.push(J[k]);
  }
  const lu = sparseLU(Nu, { rows: Int32Array.from(mr), cols: Int32Array.from(mc), vals: Float64Array.from(mv), nnz: mv.length });
  if (!lu.ok) return fail('the highest derivatives cannot be solved at the point');
  const solver = new SparseSolver(lu.factors);
  const nc = n + m;
  const X = new Float64Array(Nu * nc); // X[u*nc + c]
  {
    const byCol: { r: number[]; v: number[] }[] = Array.from({ length: nc }, () => ({ r: [], v: [] }));
    for (let k = 0; k < J.length; k++) {
      const c = rhsCol[cm.cols[k]];
      if (c < 0 || J[k] === 0) continue;
      byCol[c].r.push(cm.rows[k]);
      byCol[c].v.push(-J[k]);
    }
    for (let c = 0; c < nc; c++) {
      if (!byCol[c].r.length) continue;
      const s = solver.solve(Int32Array.from(byCol[c].r), Float64Array.from(byCol[c].v), byCol[c].r.length, false);
      for (let t = 0; t < s.count; t++) X[s.cols[t] * nc + c] = s.x[s.cols[t]];
    }
  }
  // rows of A/B (state components whose derivative is an unknown) and of C/D (outputs)
  const stateOfUnknown = new Int32Array(Nu).fill(-1);
  dyn.componentDerivative.forEach((d, i) => {
    if (colOf[d] >= 0) stateOfUnknown[colOf[d]] = i;
  });
  const outputOfUnknown = new Int32Array(Nu).fill(-1);
  lin.outputSlots.forEach((s, i) => {
    if (colOf[s] >= 0) outputOfUnknown[colOf[s]] = i;
  });
  const sl = dyn.slots;
  const tscale = dyn.timeScale;
  const srcScale = (c: number) => (c < n ? sl[lin.stateSlots[c]].scale : sl[lin.inputSlots[c - n]].scale);

  const derivatives: PointDerivative[] = [];
  const r = new Float64Array(Nu);
  for (const par of parameters) {
    // the direction: constants and fixed values from the set-up, unknowns by the implicit function theorem
    const d = setupDirection(a, sol, par);
    const fp = new Float64Array(unknowns.length);
    for (let k = 0; k < SJ.length; k++) {
      const i = pRowOf[scm.rows[k]];
      const s = scm.cols[k];
      if (i < 0 || pColOf[s] >= 0 || d[s] === 0) continue;
      fp[i] -= SJ[k] * d[s];
    }
    for (let k = 0; k < CJ.length; k++) {
      const i = pRowOf[cc.rows[k]];
      if (i >= 0 && d[cc.slots[k]] !== 0) fp[i] -= CJ[k] * d[cc.slots[k]];
    }
    const rr: number[] = [], rv: number[] = [];
    for (let i = 0; i < fp.length; i++) if (fp[i] !== 0) { rr.push(i); rv.push(fp[i]); }
    if (rr.length) {
      const s = psolve.solve(Int32Array.from(rr), Float64Array.from(rv), rr.length, false);
      for (let t = 0; t < s.count; t++) d[unknowns[s.cols[t]]] = s.x[s.cols[t]];
    }
    // directional derivative of each Jacobian entry (over the reduced model's slots for a constrained model)
    let dd = d;
    if (dyn !== lm) {
      dd = new Float64Array(dyn.slots.length);
      dd.set(d);
    }
    const dJk: number[] = [], dJv: number[] = [];
    for (let k = 0; k < cm.nodes.length; k++) {
      let acc = 0;
      for (let t = sd.start[k]; t < sd.start[k + 1]; t++) {
        const ds = dd[sd.slot[t]];
        if (ds !== 0) acc += H[t] * ds;
      }
      if (acc !== 0) { dJk.push(k); dJv.push(acc); }
    }
    // dX column by column: −M⁻¹(dM·X[:, c] + dN[:, c])
    const dA: SparseDelta = { rows: [], cols: [], vals: [] };
    const dB: SparseDelta = { rows: [], cols: [], vals: [] };
    const dC: SparseDelta = { rows: [], cols: [], vals: [] };
    const dD: SparseDelta = { rows: [], cols: [], vals: [] };
    for (let c = 0; c < nc; c++) {
      r.fill(0);
      const touched: number[] = [];
      for (let t = 0; t < dJk.length; t++) {
        const k = dJk[t];
        const row = cm.rows[k];
        const s = cm.cols[k];
        const u = colOf[s];
        let add = 0;
        if (u >= 0) add = dJv[t] * X[u * nc + c];
        else if (rhsCol[s] === c) add = dJv[t];
        if (add === 0) continue;
        if (r[row] === 0) touched.push(row);
        r[row] -= add;
      }
      if (!touched.length) continue;
      const rows = Int32Array.from(touched);
      const vals = Float64Array.from(touched, (i) => r[i]);
      const s = solver.solve(rows, vals, rows.length, false);
      const src = srcScale(c);
      for (let t = 0; t < s.count; t++) {
        const u = s.cols[t];
        const x = s.x[u];
        if (x === 0) continue;
        const i = stateOfUnknown[u];
        if (i >= 0) {
          const v = ((x * src) / sl[lin.stateSlots[i]].scale) * tscale;
          const tgt = c < n ? dA : dB;
          tgt.rows.push(i); tgt.cols.push(c < n ? c : c - n); tgt.vals.push(v);
        }
        const o = outputOfUnknown[u];
        if (o >= 0) {
          const v = (x * src) / sl[lin.outputSlots[o]].scale;
          const tgt = c < n ? dC : dD;
          tgt.rows.push(o); tgt.cols.push(c < n ? c : c - n); tgt.vals.push(v);
        }
      }
    }
    void pOut;
    derivatives.push({ parameter: par, dValues: d, dA, dB, dC, dD });
  }
  return { ok: true, point: sol.name, lin, derivatives };
}

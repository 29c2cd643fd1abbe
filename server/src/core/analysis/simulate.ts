/**
 * Step responses of the nonlinear model from an operating point.
 *
 * The model is the descriptor system F(w, X, z, u) = 0 of the lowering (w the highest derivatives, X the
 * first-order state components, z the vars and outputs, u the inputs). The integrator sees the ODE
 * ξ' = f(ξ) in the deviation ξ = X − X₀ (SI units, time in seconds): at each evaluation the unknowns
 * (w, z) — the columns `structure.unknowns` — are found from F = 0 by Newton's method with the sparse
 * analytic Jacobian, warm-started from the previous solution (a chord iteration that refactors when it
 * contracts poorly), and X' = (the next state component for the shift rows, w for the highest
 * derivatives). The Jacobian for the stiff integrator is analytic: ∂(w, z)/∂X = −M⁻¹·F_X with
 * M = ∂F/∂(w, z) at the converged point, the same elimination the linearizer makes, kept in its sparse
 * pattern (numeric/reducedJacobian.ts). M is factorised by numeric/patternLU.ts: one pivot order and fill
 * pattern, refactorised in place while the pivots stay acceptable. When M depends on constants only (F
 * affine in the unknowns, e.g. every var given explicitly) it is factorised once, one Newton step solves
 * F = 0 and the rows of M⁻¹ the Jacobian needs are kept. Integration is Rodas4 (numeric/ode.ts), its
 * iteration matrix factorised sparse and kept from one simulation to the next. The drift of f at the
 * point itself (the round-off the point solver left) is subtracted, so an exact steady state stays put.
 *
 * A trial state outside the model's domain (√ of a negative, log of zero, …) makes f return false; the
 * integrator shrinks its step, and when it cannot get past, the result has status 'domain' with a message
 * naming the function and the states that left their sign. Never throws for model failures.
 */
import { timeUnitLabel } from '../semantics/units';
import type { Analysis } from '../pipeline/analysis';
import { compileModel, type CompiledModel } from '../model/jacobian';
import type { LoweredModel } from '../model/model';
import { integrateStiff, stiffMatrix, type SparseJacobian, type StiffMatrix } from '../numeric/ode';
import { PatternLU } from '../numeric/patternLU';
import { ReducedJacobian } from '../numeric/reducedJacobian';
import { pointChecks } from '../solve/pointSolver';
import { formatShort } from '../numbers';
import * as E from '../algebra/expr';
import { unitText } from '../semantics/units';

export interface StepOptions {
  /** Input steps (deviations) in each input's declared unit, in input order. */
  du: ArrayLike<number>;
  /** End time in the model's time unit. */
  horizon: number;
  /** Sample times in the model's time unit (ascending, within [0, horizon]); default: `samples` uniform points. */
  times?: ArrayLike<number>;
  samples?: number;
  /** Relative tolerance of the integrator (default 1e-6). */
  rtol?: number;
  /** Expected size of each state component's deviation, declared unit (sets the absolute tolerance). */
  stateScale?: ArrayLike<number>;
  /** Step attempts allowed (default 20000). */
  maxSteps?: number;
}

export interface StepResult {
  status: 'ok' | 'domain' | 'failed';
  message?: string;
  /** Sample times in the model's time unit (only those reached). */
  t: number[];
  /** Deviations from the operating point in declared units: [state component][sample]. */
  states: number[][];
  /** Deviations of the outputs in declared units: [output][sample]. */
  outputs: number[][];
  /** Time (model unit) the integration reached. */
  reached: number;
  stats: { steps: number; rejected: number; fEvals: number; jEvals: number; newton: number; factorizations: number };
}

/** Integrates the nonlinear model from one operating point; reusable for many steps. */
export class Simulator {
  readonly lm: LoweredModel;
  readonly cm: CompiledModel;
  readonly n: number;
  readonly m: number;
  readonly N: number;
  /** Output slot ids (in declaration order). */
  readonly outputSlots: number[];
  private readonly unknowns: number[];
  private readonly colOf: Int32Array;
  private readonly stateIdx: Int32Array;
  private readonly values: Float64Array;
  private readonly base: Float64Array;
  private readonly F: Float64Array;
  private readonly Jv: Float64Array;
  private readonly dx: Float64Array;
  /** Natural magnitude of each unknown: the size that balances the terms of its equations at the point. */
  private readonly natural: Float64Array;
  /** Size of the terms of each equation at the point (scales the residual in the damped Newton iteration). */
  private readonly eqScale: Float64Array;
  private readonly zStart: Float64Array;
  private readonly zTrial: Float64Array;
  /** Jacobian entries that belong to M (unknown columns) and to F_X (state columns). */
  private readonly mEnt: Int32Array;
  private readonly xEnt: Int32Array;
  /** M's entries as triplets (rows: equations, cols: unknowns); the values rewritten at each factorisation. */
  private readonly mRows: Int32Array;
  private readonly mCols: Int32Array;
  private readonly mVals: Float64Array;
  /** M's factors: the pivot order kept while it stays acceptable, values refactorised in place. */
  private lu: PatternLU | undefined;
  /**
   * M depends on constants only: F is affine in the unknowns, one Newton step from any start solves it,
   * M is factorised once and the rows of M⁻¹ the Jacobian needs are kept.
   */
  private readonly mConstant: boolean;
  /** ∂X'/∂X in its sparse pattern (built at the first simulation). */
  private rj: ReducedJacobian | undefined;
  /** ∂X'/∂X for the integrator and its iteration matrix, kept from one simulation to the next. */
  private ode: { f: (t: number, xi: Float64Array, dxi: Float64Array) => boolean; sparseJac: SparseJacobian; matrix: StiffMatrix } | undefined;
  /** Latest time the right-hand side was evaluated at in the current simulation (for a domain message). */
  private tGood = 0;
  private f0: Float64Array;
  private z0: Float64Array;
  private newtonCount = 0;
  private factorCount = 0;
  private badValues: Float64Array | undefined;
  /** Why the base point itself cannot be used (undefined when fine). */
  readonly problem: string | undefined;

  constructor(lm: LoweredModel, unknowns: number[], pointValues: Float64Array, private readonly pointName = '') {
    this.lm = lm;
    this.cm = compileModel(lm);
    this.unknowns = unknowns;
    this.n = lm.stateComponents.length;
    this.m = lm.inputs.length;
    this.N = unknowns.length;
    this.outputSlots = lm.slots.filter((s) => s.kind === 'output').map((s) => s.id);
    this.colOf = new Int32Array(lm.slots.length).fill(-1);
    unknowns.forEach((s, i) => (this.colOf[s] = i));
    this.stateIdx = new Int32Array(lm.slots.length).fill(-1);
    lm.stateComponents.forEach((s, i) => (this.stateIdx[s] = i));
    this.base = Float64Array.from(pointValues);
    this.values = Float64Array.from(pointValues);
    this.F = new Float64Array(this.cm.nEq);
    this.Jv = new Float64Array(this.cm.nodes.length);
    this.dx = new Float64Array(this.N);
    const mEnt: number[] = [];
    const xEnt: number[] = [];
    for (let k = 0; k < this.cm.nodes.length; k++) {
      const c = this.cm.cols[k];
      if (this.colOf[c] >= 0) mEnt.push(k);
      else if (this.stateIdx[c] >= 0) xEnt.push(k);
    }
    this.mEnt = Int32Array.from(mEnt);
    this.xEnt = Int32Array.from(xEnt);
    this.mRows = Int32Array.from(mEnt, (k) => this.cm.rows[k]);
    this.mCols = Int32Array.from(mEnt, (k) => this.colOf[this.cm.cols[k]]);
    this.mVals = new Float64Array(mEnt.length);
    this.mConstant = mEnt.every((k) => [...E.slots(this.cm.nodes[k])].every((id) => lm.slots[id].kind === 'const'));
    const scales = naturalScales(this.cm, this.base, this.colOf, this.N, unknowns.map((id) => lm.slots[id].scale));
    this.natural = scales.natural;
    this.eqScale = scales.equation;
    this.zStart = new Float64Array(this.N);
    this.zTrial = new Float64Array(this.N);
    // the point itself: solve once (refines the point solver's result) and record the drift
    this.f0 = new Float64Array(this.n);
    this.z0 = new Float64Array(this.N);
    if (this.cm.nEq !== this.N) {
      this.problem = 'the model is not square (structure errors)';
      return;
    }
    const ok = this.solve(this.values);
    if (!ok) {
      this.problem = `the equations cannot be solved at the operating point itself${this.domainDetail() ? ` (${this.domainDetail()})` : ''}`;
      return;
    }
    this.deriv(this.values, this.f0, false);
    for (let k = 0; k < this.N; k++) this.z0[k] = this.values[unknowns[k]];
  }

  /**
   * Solves F(w, X, z, u) = 0 for the unknowns in v (states and inputs as set), starting from the values in
   * v: first the fast chord iteration, then, when that fails, the damped Newton iteration from the same
   * start. False on failure; `badValues` is set only for a real domain failure (the equations are not
   * finite at the start itself, or every damped step leaves the domain).
   */
  private solve(v: Float64Array): boolean {
    const { N, unknowns } = this;
    if (N === 0) {
      this.cm.residual(v, this.F);
      if (allFinite(this.F)) return true;
      this.badValues = Float64Array.from(v);
      return false;
    }
    const start = this.zStart;
    for (let k = 0; k < N; k++) start[k] = v[unknowns[k]];
    if (this.mConstant && this.lu ? this.solveAffine(v) : this.solveChord(v)) return true;
    for (let k = 0; k < N; k++) v[unknowns[k]] = start[k];
    return this.solveDamped(v);
  }

  /** F affine in the unknowns (constant M, factorised): one Newton step. False when something is not finite. */
  private solveAffine(v: Float64Array): boolean {
    const { N, F, dx, cm, unknowns } = this;
    cm.residual(v, F);
    for (let k = 0; k < N; k++) dx[k] = -F[k];
    const step = this.lu!.solve(dx, dx);
    this.newtonCount++;
    for (let k = 0; k < N; k++) {
      const a = step[k];
      if (!Number.isFinite(a)) return false;
      v[unknowns[k]] += a;
    }
    return true;
  }

  /**
   * Chord iteration: reuses the last factorisation and refactors when the corrections stop shrinking fast;
   * stops at a relative correction of 1e-13 or at the round-off floor. False when it does not converge.
   */
  private solveChord(v: Float64Array): boolean {
    const { N, F, dx, cm, unknowns } = this;
    let prev = Infinity;
    let fresh = false;
    for (let it = 0; it < 30; it++) {
      cm.residual(v, F);
      if (!allFinite(F)) return false;
      if (!this.lu) {
        if (!this.factor(v)) return false;
        fresh = true;
      }
      for (let k = 0; k < N; k++) dx[k] = -F[k];
      const step = this.lu!.solve(dx, dx);
      let conv = 0;
      let tight = true;
      for (let k = 0; k < N; k++) {
        const id = unknowns[k];
        const a = Math.abs(step[k]);
        const vk = Math.abs(v[id]);
        const c = a / (vk + this.natural[k]);
        if (c > conv) conv = c;
        if (!(a <= 1e-13 * vk + 1e-14 * this.natural[k])) tight = false;
        v[id] += step[k];
      }
      this.newtonCount++;
      if (!Number.isFinite(conv)) return false;
      if (tight || this.mConstant) return true; // F affine in the unknowns: one step solves it
      if (it >= 1 && conv >= 0.25 * prev) {
        if (fresh) return conv <= 1e-9; // round-off floor reached (or no convergence)
        if (!this.factor(v)) return false;
        fresh = true;
      }
      prev = conv;
    }
    return false;
  }

  /**
   * Damped Newton in scaled variables (Deuflhard, "Newton Methods for Nonlinear Problems", Springer 2004,
   * Sect. 3.1; Dennis & Schnabel, "Numerical Methods for Unconstrained Optimization and Nonlinear
   * Equations", SIAM 1996, Sect. 6.3): a fresh Jacobian at every iterate, the Newton correction limited to
   * a few natural sizes of each unknown (so a stiff exponential cannot jump by many of its own scales in
   * one step), then backtracking on the equation-scaled residual ‖F_i/r_i‖² (Armijo's sufficient decrease,
   * halving the step; a trial outside the domain halves it too). A real domain failure is recorded only
   * when the start itself is not finite or no damped step stays finite.
   */
  private solveDamped(v: Float64Array): boolean {
    const { N, F, cm, unknowns, eqScale, natural } = this;
    const trial = this.zTrial;
    const merit = (): number => {
      let s = 0;
      for (let i = 0; i < N; i++) s += (F[i] / eqScale[i]) ** 2;
      return s;
    };
    cm.residual(v, F);
    if (!allFinite(F)) {
      this.badValues = Float64Array.from(v);
      return false;
    }
    let phi = merit();
    let allNonFinite = true;
    for (let it = 0; it < 100; it++) {
      if (!this.factor(v)) return false;
      for (let k = 0; k < N; k++) this.dx[k] = -F[k];
      const step = this.lu!.solve(this.dx, this.dx);
      // limit the correction to LIMIT natural sizes of each unknown (scaled step limiting)
      let lim = 1;
      let conv = 0;
      let tight = true;
      for (let k = 0; k < N; k++) {
        const a = Math.abs(step[k]);
        const vk = Math.abs(v[unknowns[k]]);
        if (!Number.isFinite(a)) return false;
        const c = a / (vk + natural[k]);
        if (c > conv) conv = c;
        if (!(a <= 1e-13 * vk + 1e-14 * natural[k])) tight = false;
        const allowed = DAMPED_LIMIT * (vk + natural[k]);
        if (a > allowed) lim = Math.min(lim, allowed / a);
      }
      for (let k = 0; k < N; k++) trial[k] = v[unknowns[k]];
      if (tight) {
        for (let k = 0; k < N; k++) v[unknowns[k]] += step[k];
        this.newtonCount++;
        cm.residual(v, F);
        return allFinite(F);
      }
      let lambda = lim;
      let accepted = false;
      for (let h = 0; h < 40; h++) {
        for (let k = 0; k < N; k++) v[unknowns[k]] = trial[k] + lambda * step[k];
        this.newtonCount++;
        cm.residual(v, F);
        if (allFinite(F)) {
          allNonFinite = false;
          const phiNew = merit();
          if (phiNew <= (1 - 2e-4 * lambda) * phi || (lambda === 1 && conv <= 1e-9)) {
            phi = phiNew;
            accepted = true;
            break;
          }
        }
        lambda *= 0.5;
      }
      if (!accepted) {
        if (allNonFinite) this.badValues = Float64Array.from(v);
        for (let k = 0; k < N; k++) v[unknowns[k]] = trial[k];
        return false;
      }
      if (lambda === 1 && conv <= 1e-9) {
        // full steps at the round-off floor: finish with the chord iteration's tight test
        return this.solveChord(v);
      }
    }
    return false;
  }

  /**
   * LU of M = ∂F/∂(w, z) at v: the last factorisation's pivot order and pattern with the new values while
   * its pivots stay acceptable (numeric/patternLU.ts), else a new order; the last good factors stay when
   * M is singular.
   */
  private factor(v: Float64Array): boolean {
    const { cm, Jv, mEnt, mVals } = this;
    cm.jacobian(v, Jv);
    if (this.mConstant && this.lu) return true;
    const nnz = mEnt.length;
    for (let q = 0; q < nnz; q++) {
      const x = Jv[mEnt[q]];
      mVals[q] = x;
      if (!Number.isFinite(x)) {
        this.badValues = Float64Array.from(v);
        return false;
      }
    }
    this.factorCount++;
    if (this.lu && this.lu.refactor(mVals)) return true;
    const lu = PatternLU.analyse(this.N, { rows: this.mRows, cols: this.mCols, vals: mVals, nnz });
    if (!lu) return false;
    this.lu = lu;
    return true;
  }

  /** ∂X'/∂X's pattern and filling (built once). */
  private reduced(): ReducedJacobian {
    if (!this.rj) {
      const { n, cm, xEnt, stateIdx, colOf } = this;
      const cd = this.lm.componentDerivative;
      const shiftCol = Int32Array.from({ length: n }, (_, i) => stateIdx[cd[i]]);
      this.rj = new ReducedJacobian({
        n, N: this.N, mRows: this.mRows, mCols: this.mCols,
        xEnt, xRows: Int32Array.from(xEnt, (k) => cm.rows[k]), xCols: Int32Array.from(xEnt, (k) => stateIdx[cm.cols[k]]),
        shiftCol, unknownCol: Int32Array.from({ length: n }, (_, i) => (shiftCol[i] >= 0 ? -1 : colOf[cd[i]])),
      });
    }
    return this.rj;
  }

  /** ∂X'/∂X at the point of the last factorisation (Jv and lu current), into `vals` in the pattern's order. */
  private fillJacobian(vals: Float64Array): void {
    this.reduced().fill(vals, this.Jv, this.lu!, this.mConstant);
  }

  /** X' from solved values (SI per second), minus the drift at the point when `relative`. */
  private deriv(v: Float64Array, out: Float64Array, relative = true): void {
    const cd = this.lm.componentDerivative;
    for (let i = 0; i < this.n; i++) out[i] = v[cd[i]] - (relative ? this.f0[i] : 0);
  }

  private setInputs(v: Float64Array, du: ArrayLike<number>): void {
    const { lm } = this;
    lm.inputs.forEach((id, j) => (v[id] = this.base[id] + (du[j] ?? 0) * lm.slots[id].scale));
  }

  private setStates(v: Float64Array, xi: Float64Array): void {
    const sc = this.lm.stateComponents;
    for (let i = 0; i < this.n; i++) v[sc[i]] = this.base[sc[i]] + xi[i];
  }

  /** Text for a domain failure at the last bad values: the function and states that changed sign. */
  private domainDetail(): string {
    const bad = this.badValues;
    if (!bad) return '';
    const parts: string[] = [];
    const ds = pointChecks(this.lm, bad, this.pointName, { start: 0, end: 0 }).filter((d) => d.code === 'P504');
    if (ds.length) {
      const d = ds[0];
      const detail = d.message.replace(/^Domain error at point "[^"]*": /, '').replace(/\.$/, '');
      const eq = this.lm.equations.find((e) => e.span.start <= d.span.start && d.span.end <= e.span.end);
      parts.push(eq ? `${detail} in "${eq.label}"` : detail);
    }
    const crossed: string[] = [];
    for (const id of [...this.lm.stateComponents, ...this.lm.algebraic]) {
      const s = this.lm.slots[id];
      if (s.order !== 0 || s.kind === 'deriv') continue;
      const b = this.base[id];
      const x = bad[id];
      if (b > 0 && x < 0) crossed.push(`${s.name} fell below zero (${formatShort((x - s.offset) / s.scale)}${unitText(s.unit.text) ? ' ' + s.unit.text : ''})`);
    }
    if (crossed.length) parts.push(crossed.slice(0, 3).join(', '));
    return parts.join('; ');
  }

  /**
   * Response to input steps `du` (declared units) applied at t = 0 from the operating point.
   * Deviations in declared units, time in the model's unit.
   */
  step(o: StepOptions): StepResult {
    const { lm, n, m } = this;
    const ts = lm.timeScale || 1;
    const stats = { steps: 0, rejected: 0, fEvals: 0, jEvals: 0, newton: 0, factorizations: 0 };
    this.newtonCount = 0;
    this.factorCount = 0;
    const samples = Math.max(2, o.samples ?? 241);
    const tModel: number[] = [];
    if (o.times) for (let k = 0; k < o.times.length; k++) tModel.push(o.times[k]);
    else for (let k = 0; k < samples; k++) tModel.push((o.horizon * k) / (samples - 1));
    const empty = (status: StepResult['status'], message: string): StepResult => ({
      status, message, t: [], states: Array.from({ length: n }, () => []), outputs: this.outputSlots.map(() => []), reached: 0, stats,
    });
    if (this.problem) return empty('failed', `The nonlinear model cannot be simulated: ${this.problem}.`);
    if (o.du.length !== m) throw new RangeError(`expected ${m} input steps, got ${o.du.length}`);
    const v = this.values;
    this.badValues = undefined;
    // the algebraic unknowns just after the input step (by continuation in the step when needed)
    if (!this.startAfterStep(v, o.du)) {
      const r = this.badValues ? empty('domain', this.domainMessage(0)) : empty('failed', `The nonlinear integration cannot start: the algebraic equations have no solution found just after the step (t = 0 ${timeUnitLabel(lm.timeUnit)}).`);
      return { ...r, stats: { ...stats, newton: this.newtonCount, factorizations: this.factorCount } };
    }
    const zAfter = new Float64Array(this.N);
    for (let k = 0; k < this.N; k++) zAfter[k] = v[this.unknowns[k]];
    this.tGood = 0;

    if (!this.ode) {
      const jp = this.reduced().pattern;
      const sparseJac: SparseJacobian = {
        rowPtr: jp.rowPtr,
        colIdx: jp.colIdx,
        values: (_t: number, xi: Float64Array, vals: Float64Array): boolean => {
          this.setStates(this.values, xi);
          if (!this.solve(this.values)) return false;
          if (!this.factor(this.values)) return false;
          this.fillJacobian(vals);
          return true;
        },
      };
      // X' at a state deviation (one function for every simulation: the engine keeps its optimised integrator)
      const f = (t: number, xi: Float64Array, dxi: Float64Array): boolean => {
        this.setStates(this.values, xi);
        if (!this.solve(this.values)) return false;
        this.deriv(this.values, dxi);
        if (t > this.tGood) this.tGood = t;
        return true;
      };
      this.ode = { f, sparseJac, matrix: stiffMatrix(n, sparseJac) };
    }
    const { f, sparseJac, matrix } = this.ode;

    const record = (xi: Float64Array, states: number[][], outputs: number[][]): boolean => {
      this.setStates(v, xi);
      if (!this.solve(v)) return false;
      for (let i = 0; i < n; i++) states[i].push(xi[i] / lm.slots[lm.stateComponents[i]].scale);
      this.outputSlots.forEach((id, i) => outputs[i].push((v[id] - this.z0[this.colOf[id]]) / lm.slots[id].scale));
      return true;
    };

    const states: number[][] = Array.from({ length: n }, () => []);
    const outputs: number[][] = this.outputSlots.map(() => []);
    const tOut: number[] = [];
    if (n === 0) {
      const xi = new Float64Array(0);
      for (const t of tModel) {
        if (!record(xi, states, outputs)) return { ...empty('domain', this.domainMessage(0)), stats };
        tOut.push(t);
      }
      return { status: 'ok', t: tOut, states, outputs, reached: o.horizon, stats };
    }
    const atol = new Float64Array(n);
    const rtol = o.rtol ?? 1e-6;
    for (let i = 0; i < n; i++) {
      const s = lm.slots[lm.stateComponents[i]];
      const sc = o.stateScale ? Math.abs(o.stateScale[i]) * Math.abs(s.scale) : 0;
      atol[i] = sc > 0 && Number.isFinite(sc) ? rtol * sc : 1e-9 * Math.max(Math.abs(this.base[s.id]), Math.abs(s.scale));
    }
    const outputTimes = Float64Array.from(tModel, (t) => t * ts);
    const t1 = outputTimes[outputTimes.length - 1];
    const sol = integrateStiff({ n, f, sparseJac, matrix, autonomous: true }, { t0: 0, t1, x0: new Float64Array(n), rtol, atol, outputTimes, maxSteps: o.maxSteps ?? 20000 });
    stats.steps = sol.stats.steps;
    stats.rejected = sol.stats.rejected;
    stats.fEvals = sol.stats.fEvals;
    stats.jEvals = sol.stats.jEvals;
    const bad = this.badValues;
    // samples in order, each warm-started from the one before (the first from just after the step)
    for (let k = 0; k < this.N; k++) v[this.unknowns[k]] = zAfter[k];
    for (let k = 0; k < sol.t.length; k++) {
      if (!record(sol.x[k], states, outputs)) break;
      tOut.push(sol.t[k] / ts);
    }
    this.badValues = bad ?? this.badValues;
    stats.newton = this.newtonCount;
    stats.factorizations = this.factorCount;
    const reached = tOut.length ? tOut[tOut.length - 1] : 0;
    if (sol.status === 'ok' && tOut.length === tModel.length) return { status: 'ok', t: tOut, states, outputs, reached, stats };
    if (this.badValues) {
      return { status: 'domain', message: this.domainMessage(this.tGood / ts), t: tOut, states, outputs, reached, stats };
    }
    return {
      status: 'failed', t: tOut, states, outputs, reached, stats,
      message: `The nonlinear integration stopped at t = ${formatShort(reached)} ${timeUnitLabel(lm.timeUnit)}: ${sol.message ?? 'the algebraic equations could not be solved'}.`,
    };
  }

  /**
   * Sets the inputs to the point's values plus du and solves for the unknowns at the point's states: from
   * the point's solution directly, else by continuation in the step (du split in 2, 4, … 64 equal parts,
   * each solved from the last). False when no part can be solved.
   */
  private startAfterStep(v: Float64Array, du: ArrayLike<number>): boolean {
    const { N, unknowns } = this;
    const fromPoint = (): void => {
      v.set(this.base);
      for (let k = 0; k < N; k++) v[unknowns[k]] = this.z0[k];
    };
    fromPoint();
    this.setInputs(v, du);
    if (this.solve(v)) return true;
    const part = new Float64Array(du.length);
    for (let parts = 2; parts <= 64; parts *= 2) {
      fromPoint();
      this.badValues = undefined;
      let ok = true;
      for (let q = 1; q <= parts && ok; q++) {
        for (let j = 0; j < du.length; j++) part[j] = (du[j] * q) / parts;
        this.setInputs(v, part);
        ok = this.solve(v);
      }
      if (ok) return true;
    }
    return false;
  }

  /**
   * ξ' = f(ξ) for a deviation ξ of the state components (SI) and input steps du (declared units), in SI per
   * second, with the drift at the point removed; undefined outside the domain. For checks and tools.
   */
  derivative(xi: ArrayLike<number>, du: ArrayLike<number>): Float64Array | undefined {
    if (this.problem) return undefined;
    const v = this.values;
    this.setInputs(v, du);
    this.setStates(v, Float64Array.from(xi));
    if (!this.solve(v)) return undefined;
    const out = new Float64Array(this.n);
    this.deriv(v, out);
    return out;
  }

  /** The analytic ∂f/∂ξ (row-major n×n, SI per second) at ξ, du; undefined outside the domain. */
  jacobian(xi: ArrayLike<number>, du: ArrayLike<number>): Float64Array | undefined {
    if (this.problem) return undefined;
    const v = this.values;
    this.setInputs(v, du);
    this.setStates(v, Float64Array.from(xi));
    if (!this.solve(v) || !this.factor(v)) return undefined;
    const { rowPtr, colIdx } = this.reduced().pattern;
    const vals = new Float64Array(rowPtr[this.n]);
    this.fillJacobian(vals);
    const J = new Float64Array(this.n * this.n);
    for (let i = 0; i < this.n; i++) for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) J[i * this.n + colIdx[p]] = vals[p];
    return J;
  }

  private domainMessage(t: number): string {
    const d = this.domainDetail();
    return `The step drives the model out of its domain near t = ${formatShort(t)} ${timeUnitLabel(this.lm.timeUnit)}${d ? `: ${d}` : ''}.`;
  }
}

/**
 * For each unknown k: the smallest r_i/|M_ik| over the equations i it appears in, where r_i is the sum of
 * |∂F_i/∂v_j·v_j| over the equation's variables (the size of its terms at the point). Falls back on the
 * unit scale of the slot. Also r_i itself for each equation (1 where it is zero).
 */
function naturalScales(
  cm: CompiledModel, v: Float64Array, colOf: Int32Array, N: number, unitScale: number[],
): { natural: Float64Array; equation: Float64Array } {
  const J = new Float64Array(cm.nodes.length);
  cm.jacobian(v, J);
  const r = new Float64Array(cm.nEq);
  for (let k = 0; k < J.length; k++) {
    const t = Math.abs(J[k] * v[cm.cols[k]]);
    if (Number.isFinite(t)) r[cm.rows[k]] += t;
  }
  const out = new Float64Array(N).fill(Infinity);
  for (let k = 0; k < J.length; k++) {
    const c = colOf[cm.cols[k]];
    if (c < 0) continue;
    const a = Math.abs(J[k]);
    const ri = r[cm.rows[k]];
    if (a > 0 && ri > 0 && Number.isFinite(ri / a)) out[c] = Math.min(out[c], ri / a);
  }
  for (let k = 0; k < N; k++) if (!(out[k] < Infinity) || !(out[k] > 0)) out[k] = Math.abs(unitScale[k]) || 1;
  const equation = new Float64Array(cm.nEq);
  for (let i = 0; i < cm.nEq; i++) equation[i] = r[i] > 0 && Number.isFinite(r[i]) ? r[i] : 1;
  return { natural: out, equation };
}

/** Largest damped Newton correction, in natural sizes (|v| + natural scale) of each unknown. */
const DAMPED_LIMIT = 4;

function allFinite(a: Float64Array): boolean {
  for (let i = 0; i < a.length; i++) if (!Number.isFinite(a[i])) return false;
  return true;
}

/** A simulator for a solved point of an analysis; undefined when the point does not solve. */
export function createSimulator(a: Analysis, point: string): Simulator | undefined {
  const sol = a.point(point);
  if (!sol || !sol.ok) return undefined;
  const dm = a.dynamicsAt(sol.values);
  return new Simulator(dm.model, dm.unknowns, dm.values, point);
}

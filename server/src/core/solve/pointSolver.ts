/**
 * Point solver: the steady state (every derivative zero) of a point block. Unknowns are the states,
 * inputs, vars and outputs not fixed with "="; equations are the model equations and output definitions.
 * Newton's method with the analytic sparse Jacobian, scaled by each unknown's magnitude, a backtracking
 * line search and a Levenberg–Marquardt fallback; deterministic, with an iteration cap.
 */
import type * as A from '../syntax/ast';
import { someExpr } from '../syntax/walk';
import type { BoundModel } from '../semantics/binder';
import { diag, type Diagnostic } from '../diagnostics';
import * as E from '../algebra/expr';
import { compileModel } from '../model/jacobian';
import { constExprValue, type LoweredModel } from '../model/model';
import { sparseLU } from '../numeric/sparseLU';
import { isDimensionless } from '../semantics/units';
import { leftovers, listNames, maximumMatching } from '../model/structure';
import { steadyIncidence, steadyModel } from '../model/steady';
import { pushAll } from '../arrays';
import { domainDiagnostic, pointChecks, switchNodes } from './pointChecks';
export { pointChecks } from './pointChecks';

export interface PointSolution {
  name: string;
  block: A.PointBlock;
  ok: boolean;
  /** SI values of every slot at the point (constants included, derivatives zero). */
  values: Float64Array;
  /** The starting values (guesses), SI. */
  guesses: Float64Array;
  /** Slot ids that were unknown at this point. */
  unknowns: number[];
  fixed: Set<number>;
  iterations: number;
  /**
   * Achieved relative residual of a solved point: the largest over the equations of |F_i| divided by
   * max_j |∂F_i/∂x_j|·max(|x_j|, unit of x_j) at the solution (0 when every equation holds exactly; about
   * 1e-16 is the limit of double precision). For a point that did not converge, the largest scaled residual.
   */
  residual: number;
  diagnostics: Diagnostic[];
}

export interface SolveOptions {
  maxIterations?: number;
  tolerance?: number;
  /** Override values (SI) for slots, e.g. a sweep's varied value; they count as fixed. */
  overrides?: Map<number, number>;
  /** Starting values (SI) for unknown slots, e.g. the previous sweep point. */
  start?: Float64Array;
}

/** Values (SI) the point fixes, the guesses, and the constants as the point sees them. */
export function pointSetup(m: BoundModel, lm: LoweredModel, block: A.PointBlock, overrides?: Map<number, number>) {
  const values = Float64Array.from(lm.baseValues);
  const fixed = new Set<number>();
  const guessed = new Set<number>();
  const lineOf = new Map<number, A.PointLine>();
  // constants: overrides from the point, then re-evaluate dependants in order
  const constOverride = new Map<number, A.PointLine>();
  for (const l of block.lines) {
    const s = m.symbols.get(l.name.name);
    if (s && s.kind === 'const' && l.mode === 'fixed') constOverride.set(lm.slotOf(s), l);
  }
  for (const s of m.consts) {
    const id = lm.slotOf(s);
    const ov = overrides?.get(id);
    if (ov !== undefined) values[id] = ov;
    else {
      const l = constOverride.get(id);
      const expr = l ? l.value : (s.decl as A.ConstDecl).value;
      values[id] = l ? pointValue(l.value, id) : constExprValue(expr, m, lm, values);
    }
  }
  function pointValue(e: A.Expr, id: number): number {
    const v = constExprValue(e, m, lm, values);
    const slot = lm.slots[id];
    // a bare number is in the declared unit of the variable; a unit literal or a constant with a
    // dimension (h = hmax, hmax in m, h in cm) makes the value a quantity, already in SI
    return hasUnit(e, dimensionalConst) ? v : v * slot.scale + slot.offset;
  }
  function dimensionalConst(name: string): boolean {
    const s = m.symbols.get(name);
    if (!s || s.kind !== 'const') return false;
    const id = lm.slotOf(s);
    return id >= 0 && !isDimensionless(lm.slots[id].unit.dims);
  }
  for (const l of block.lines) {
    const s = m.symbols.get(l.name.name);
    if (!s || s.kind === 'const' || l.primes) continue;
    const id = lm.slotOf(s);
    if (id < 0) continue;
    values[id] = pointValue(l.value, id);
    lineOf.set(id, l);
    if (l.mode === 'fixed') fixed.add(id);
    else guessed.add(id);
  }
  const candidates: number[] = [];
  for (const sl of lm.slots) {
    if (sl.kind === 'const') continue;
    if ((sl.kind === 'state' && sl.order > 0) || sl.kind === 'deriv') {
      values[sl.id] = 0;
      continue;
    }
    if (overrides?.has(sl.id)) {
      values[sl.id] = overrides.get(sl.id)!;
      fixed.add(sl.id);
      guessed.delete(sl.id);
      continue;
    }
    if (!fixed.has(sl.id) && !guessed.has(sl.id)) values[sl.id] = sl.scale * 1 + sl.offset; // default guess: 1 in its unit
    if (!fixed.has(sl.id)) candidates.push(sl.id);
  }
  // a start outside the model's domain (a residual not a number): unknowns tied to guessed values start there
  if (outsideDomain(lm, values)) {
    const before = Float64Array.from(values);
    tiedGuesses(lm, values, fixed, guessed);
    if (outsideDomain(lm, values) >= outsideDomain(lm, before)) values.set(before);
  }
  return { values, fixed, unknowns: candidates, lineOf };
}

/**
 * An unknown without a guess that an equation ties to one other value — `fill[1].p_up = p_header`: a
 * part's input tied from outside; the user guessed the header, not the instances' copies of it — starts at
 * that value instead of 1 in its unit, which can lie outside the model's domain (a square root of a
 * negative pressure difference). Only copies `x = y` (two terms, each a bare value) whose other side is
 * fixed, guessed or tied already; and only when the default start lies outside the model's domain and the
 * tied start lies inside it more: laws keep their default start, so the solver's path elsewhere is unchanged.
 */
/** How many equations have no number as residual at these values (a square root of a negative, …). */
function outsideDomain(lm: LoweredModel, values: Float64Array): number {
  let n = 0;
  for (const eq of lm.equations) if (Number.isNaN(E.evaluate(eq.residual, values))) n++;
  return n;
}

function tiedGuesses(lm: LoweredModel, values: Float64Array, fixed: ReadonlySet<number>, guessed: ReadonlySet<number>): void {
  const known = (id: number) => fixed.has(id) || guessed.has(id) || lm.slots[id].kind === 'const' || tied.has(id) || lm.slots[id].kind === 'deriv' || (lm.slots[id].kind === 'state' && lm.slots[id].order > 0);
  const tied = new Set<number>();
  const bare = (n: E.Node): { id: number; sign: number } | undefined => {
    if (n.t === 'sym') return { id: n.id, sign: 1 };
    if (n.t === 'mul' && n.args.length === 2 && n.args[0].t === 'num' && Math.abs(n.args[0].v) === 1 && n.args[1].t === 'sym') return { id: n.args[1].id, sign: n.args[0].v };
    return undefined;
  };
  for (let pass = 0; pass < 4; pass++) {
    let more = false;
    for (const eq of lm.equations) {
      const r = eq.residual;
      if (r.t !== 'add' || r.args.length !== 2) continue; // a copy x = y only (a tie), not a law
      let pick = -1;
      let open = 0;
      for (let k = 0; k < r.args.length; k++) {
        for (const id of E.slots(r.args[k])) if (!known(id)) open++;
        const b = bare(r.args[k]);
        if (b && !known(b.id)) pick = k;
      }
      if (pick < 0 || open !== 1) continue; // exactly one unknown without a value, written alone
      const b = bare(r.args[pick])!;
      let rest = 0;
      for (let k = 0; k < r.args.length; k++) if (k !== pick) rest += E.evaluate(r.args[k], values);
      const v = -rest / b.sign;
      if (!Number.isFinite(v)) continue;
      values[b.id] = v;
      tied.add(b.id);
      more = true;
    }
    if (!more) break;
  }
}

/** P512 for every point line whose value (SI) is not finite; a constant computed from others points at its declaration. */
function nonFiniteLines(m: BoundModel, lm: LoweredModel, block: A.PointBlock, values: Float64Array): Diagnostic[] {
  const out: Diagnostic[] = [];
  const point = block.name.name;
  const lineAt = new Map<string, A.PointLine>();
  for (const l of block.lines) if (!l.primes) lineAt.set(l.name.name, l);
  for (const sl of lm.slots) {
    if (sl.order !== 0 || Number.isFinite(values[sl.id])) continue;
    const l = lineAt.get(sl.name);
    if (l) out.push(diag('P512', l.value.span, { name: sl.name, point, value: String(values[sl.id]) }));
    else if (sl.kind === 'const' && Number.isFinite(lm.baseValues[sl.id])) {
      // a constant computed from one the point gives again: the point's header
      out.push(diag('P512', block.name.span, { name: sl.name, point, value: String(values[sl.id]) }));
    }
  }
  return out;
}

function hasUnit(e: A.Expr, dimensionalConst: (name: string) => boolean): boolean {
  return someExpr(e, (x) => (x.kind === 'number' && !!x.unit) || (x.kind === 'name' && dimensionalConst(x.name)));
}

export function solvePoint(m: BoundModel, lm: LoweredModel, block: A.PointBlock, opts: SolveOptions = {}): PointSolution {
  const name = block.name.name;
  const diagnostics: Diagnostic[] = [];
  const setup = pointSetup(m, lm, block, opts.overrides);
  const { values, fixed, unknowns } = setup;
  if (opts.start) for (const id of unknowns) if (Number.isFinite(opts.start[id])) values[id] = opts.start[id];
  const guesses = Float64Array.from(values);
  // the steady-state residuals (every derivative zero, folded): their incidence decides which equations
  // hold unknowns at this point, and Newton solves them
  const sm = steadyModel(lm);
  const cm = compileModel(sm);
  const result: PointSolution = { name, block, ok: false, values, guesses, unknowns, fixed, iterations: 0, residual: NaN, diagnostics };
  // a value the point writes (or a constant it gives again, or one computed from it) that is not finite
  const bad = nonFiniteLines(m, lm, block, values);
  if (bad.length) {
    pushAll(diagnostics, bad);
    return result;
  }

  const colOf = new Int32Array(lm.slots.length).fill(-1);
  unknowns.forEach((s, i) => (colOf[s] = i));
  // equations with unknowns (on the steady-state incidence) vs consistency checks
  const { active, checks, adj } = steadyIncidence(sm, unknowns);
  const nR = active.length;
  const nC = unknowns.length;
  const mt = maximumMatching(nR, nC, adj);
  const F = new Float64Array(cm.nEq);

  const pointSpan = block.name.span;
  if (mt.size < nR || mt.size < nC) {
    const lo = leftovers(nR, nC, adj, mt);
    // the under-determined part: unknowns no equation determines at this point (the unmatched ones first)
    const unmatchedCols = lo.underCols.filter((c) => mt.colMatch[c] < 0);
    const underCols = [...unmatchedCols, ...lo.underCols.filter((c) => mt.colMatch[c] >= 0)];
    const freeCols = underCols.map((c) => lm.slots[unknowns[c]].name);
    // the over-determined part: equations that determine fewer unknowns than they are
    const extraRows = lo.overRows.filter((r) => mt.rowMatch[r] < 0).map((r) => active[r]);
    const cand = new Set<string>();
    for (const r of lo.overRows) for (const s of E.slots(sm.equations[active[r]].residual)) if (fixed.has(s)) cand.add(lm.slots[s].name);
    const parts: string[] = [];
    if (unmatchedCols.length) {
      const k = unmatchedCols.length;
      parts.push(freeCols.length > k
        ? `Fix ${k} more value(s) with "=": at this point ${listNames(freeCols)} have only ${freeCols.length - k} equation(s) between them; fix ${k} of them.`
        : `Fix ${k} more value(s) with "=": at this point no equation determines ${listNames(freeCols)}.`);
    }
    if (extraRows.length) {
      const k = extraRows.length;
      const overNames = lo.overCols.map((c) => lm.slots[unknowns[c]].name);
      const eqs = lo.overRows.map((r) => steadyLabel(lm, sm, active[r]));
      parts.push(`Free ${k} fixed value(s) (write "~" instead of "=")${cand.size ? `, e.g. ${listNames([...cand])}` : ''}: at this point ${eqs.join(', ')} determine only ${listNames(overNames)}; left over: ${extraRows.map((r) => `"${lm.equations[r].label}"`).join(', ')}.`);
    }
    if (checks.length) parts.push(`(${checks.length} equation(s) with no unknown at this point are checks, not counted.)`);
    const advice = parts.join(' ');
    // data for quick fixes: names that could be fixed (missing) or freed (free), and the counts
    diagnostics.push(diag('P501', pointSpan, { point: name, equations: nR, unknowns: nC, advice }, { data: { point: name, missing: freeCols, free: [...cand], equations: nR, unknowns: nC } }));
    return result;
  }

  // scaling
  const nU = nC;
  const xs = new Float64Array(nU);
  for (let j = 0; j < nU; j++) {
    const sl = lm.slots[unknowns[j]];
    xs[j] = Math.max(Math.abs(values[unknowns[j]]), Math.abs(sl.scale), 1e-300);
  }
  const J = new Float64Array(cm.nodes.length);
  const rowScale = new Float64Array(nR).fill(1);

  const evalF = (): number => {
    cm.residual(values, F);
    let worst = 0;
    for (let i = 0; i < nR; i++) {
      const f = F[active[i]] * rowScale[i];
      if (!Number.isFinite(f)) return NaN;
      worst = Math.max(worst, Math.abs(f));
    }
    return worst;
  };
  const phi = (): number => {
    let s = 0;
    for (let i = 0; i < nR; i++) {
      const f = F[active[i]] * rowScale[i];
      s += f * f;
    }
    return 0.5 * s;
  };
  const activeIdx = new Int32Array(cm.nEq).fill(-1);
  active.forEach((r, i) => (activeIdx[r] = i));
  // the Jacobian entries of the problem once: entry k of the compiled model is (row entRow[k], unknown
  // entCol[k]) of the point problem, or not part of it (-1)
  const entRow = new Int32Array(J.length).fill(-1);
  const entCol = new Int32Array(J.length).fill(-1);
  let nnzP = 0;
  for (let k = 0; k < J.length; k++) {
    const i = activeIdx[cm.rows[k]];
    const j = colOf[cm.cols[k]];
    if (i < 0 || j < 0) continue;
    entRow[k] = i;
    entCol[k] = j;
    nnzP++;
  }
  // the problem's entries in the compiled model's order: entry t is J[entK[t]] at (rows[t], cols[t])
  const entK = new Int32Array(nnzP);
  const ent = { rows: new Int32Array(nnzP), cols: new Int32Array(nnzP), vals: new Float64Array(nnzP), nnz: nnzP };
  for (let k = 0, t = 0; k < J.length; k++) {
    if (entRow[k] < 0) continue;
    entK[t] = k;
    ent.rows[t] = entRow[k];
    ent.cols[t++] = entCol[k];
  }
  /** Scaled Jacobian entries (row i active, col j unknown); the values are rewritten by the next call. */
  const entries = (): { rows: Int32Array; cols: Int32Array; vals: Float64Array; nnz: number } => {
    cm.jacobian(values, J);
    const { rows, cols, vals } = ent;
    for (let t = 0; t < nnzP; t++) vals[t] = J[entK[t]] * rowScale[rows[t]] * xs[cols[t]];
    return ent;
  };

  const tol = opts.tolerance ?? 1e-10;
  const maxIt = opts.maxIterations ?? 100;
  let fmax = evalF();
  if (Number.isNaN(fmax)) {
    diagnostics.push(domainDiagnostic(lm, values, name, active.map((r) => r), pointSpan, 'at the starting guesses'));
    return result;
  }
  // row scaling from the first Jacobian: each equation divided by its largest scaled sensitivity
  {
    const e = entries();
    const mx = new Float64Array(nR);
    for (let k = 0; k < e.nnz; k++) mx[e.rows[k]] = Math.max(mx[e.rows[k]], Math.abs(e.vals[k]));
    for (let i = 0; i < nR; i++) {
      const f = Math.abs(F[active[i]]);
      rowScale[i] = mx[i] > 0 ? 1 / mx[i] : f > 0 ? 1 / f : 1;
    }
    fmax = evalF();
  }
  /** |F_i| / max_j |∂F_i/∂x_j|·max(|x_j|, unit scale) per active equation, Jacobian at the current values. */
  const currentRatios = (): Float64Array => {
    cm.residual(values, F);
    cm.jacobian(values, J);
    const mx = new Float64Array(nR);
    for (let k = 0; k < J.length; k++) {
      const i = entRow[k];
      if (i < 0) continue;
      const j = entCol[k];
      const mag = Math.max(Math.abs(values[unknowns[j]]), Math.abs(lm.slots[unknowns[j]].scale));
      mx[i] = Math.max(mx[i], Math.abs(J[k]) * mag);
    }
    const ratio = new Float64Array(nR);
    for (let i = 0; i < nR; i++) {
      const f = Math.abs(F[active[i]]);
      ratio[i] = mx[i] > 0 ? f / mx[i] : f * rowScale[i];
    }
    return ratio;
  };
  const currentResidual = (): number => currentRatios().reduce((a, b) => (b > a || Number.isNaN(b) ? b : a), 0);
  const x0 = new Float64Array(nU);
  const step = new Float64Array(nU);
  // Switches (choose, min, max, clamp): a residual that jumps or kinks where a switch flips can fail the
  // descent test on the very step that crosses to the right branch. A full Newton step that flips a switch
  // is taken anyway (a bounded number of times), and the next step works on the new branch.
  const switches = switchNodes(sm.equations.map((q) => q.residual));
  const signature = (): string => {
    let sig = '';
    for (const n of switches) sig += E.evaluate(n.args[0], values) <= E.evaluate(n.args[1], values) ? '1' : '0';
    return sig;
  };
  let switchSteps = 0;
  let it = 0;
  let lambda = 0;
  let converged = false;
  let lastStep = Infinity;
  for (; it < maxIt; it++) {
    if (fmax <= tol && lastStep <= 1e-6) {
      converged = true;
      break;
    }
    const e = entries();
    const rhs = new Float64Array(nR);
    for (let i = 0; i < nR; i++) rhs[i] = -F[active[i]] * rowScale[i];
    let dy: Float64Array | null = null;
    if (lambda === 0 && nR === nU) {
      const lu = sparseLU(nU, e);
      if (lu.ok) dy = lu.solve(rhs);
    }
    if (!dy) {
      // Levenberg–Marquardt: (JᵀJ + λ·diag(JᵀJ)) dy = Jᵀ rhs
      lambda = lambda === 0 ? 1e-3 : lambda;
      dy = lmStep(nR, nU, e, rhs, lambda);
    }
    if (!dy) break;
    for (let j = 0; j < nU; j++) x0[j] = values[unknowns[j]];
    const phi0 = phi();
    let alpha = 1;
    let accepted = false;
    const sig0 = switches.length ? signature() : '';
    for (let ls = 0; ls < 40; ls++) {
      for (let j = 0; j < nU; j++) values[unknowns[j]] = landed(x0[j], alpha * dy[j], xs[j]);
      const f = evalF();
      if (!Number.isNaN(f) && phi() <= (1 - 1e-4 * alpha) * phi0 + 1e-300) {
        fmax = f;
        accepted = true;
        break;
      }
      if (ls === 0 && !Number.isNaN(f) && switches.length && switchSteps < 2 * switches.length + 10 && signature() !== sig0) {
        switchSteps++;
        fmax = f;
        accepted = true;
        break;
      }
      alpha *= 0.5;
    }
    if (!accepted) {
      for (let j = 0; j < nU; j++) values[unknowns[j]] = x0[j];
      fmax = evalF();
      if (lambda > 1e8) break;
      lambda = lambda === 0 ? 1e-3 : lambda * 10;
      continue;
    }
    let st = 0;
    for (let j = 0; j < nU; j++) {
      step[j] = alpha * dy[j];
      st = Math.max(st, Math.abs(step[j]) * xs[j] / Math.max(Math.abs(values[unknowns[j]]), Math.abs(lm.slots[unknowns[j]].scale) * 1e-12, 1e-300));
    }
    lastStep = st;
    if (lambda > 0) lambda = alpha === 1 ? lambda / 10 : lambda;
    if (lambda < 1e-9) lambda = 0;
  }
  result.iterations = it;
  result.residual = fmax;
  // The row scales were taken at the guesses: a residual that is small against those sensitivities may
  // still be large against the current ones (e.g. exp(x) far from its root). Before accepting a small
  // scaled residual without a small step, measure each equation against its current sensitivities.
  if (!converged && fmax <= tol * 10 && currentResidual() <= tol * 10) converged = true;

  if (!converged) {
    // worst equation, measured against its current sensitivities; reported as its own residual (SI)
    let worst = -1;
    let wv = -1;
    const ratios = currentRatios();
    let wr = -1;
    for (let i = 0; i < nR; i++) {
      if (ratios[i] > wr) {
        wr = ratios[i];
        wv = Math.abs(F[active[i]]);
        worst = active[i];
      }
    }
    if (Number.isNaN(fmax) || wv < 0) {
      diagnostics.push(domainDiagnostic(lm, values, name, active, pointSpan, 'while solving'));
    } else {
      const eq = lm.equations[worst];
      const d = diag('P502', eq.span, { point: name, iterations: it, residual: wv.toExponential(2) }, { related: [{ span: pointSpan, message: `point ${name}` }] });
      if (lambda > 0) {
        diagnostics.push(diag('P503', pointSpan, { point: name, detail: `the least-squares minimum leaves a residual of ${wv.toExponential(2)} in "${eq.label}"; the equations may have no real steady state for these fixed values.` }, { related: [{ span: eq.span, message: 'largest residual here' }] }));
      } else diagnostics.push(d);
    }
    return result;
  }

  // Polish: once the tolerance is met, full Newton steps (scaled variables, the Jacobian at the current
  // values) while they still lower the relative residual, down to the limit of double precision. Cheap
  // (one or two iterations, quadratic convergence), and it makes the point as exact as the arithmetic allows.
  if (nR === nU && nU > 0) {
    let best = currentResidual();
    for (let k = 0; k < 4 && best > 0; k++) {
      const e = entries();
      const rhs = new Float64Array(nR);
      for (let i = 0; i < nR; i++) rhs[i] = -F[active[i]] * rowScale[i];
      const lu = sparseLU(nU, e);
      if (!lu.ok) break;
      const dy = lu.solve(rhs);
      let moved = false;
      for (let j = 0; j < nU; j++) {
        x0[j] = values[unknowns[j]];
        const v = landed(x0[j], dy[j], xs[j]);
        if (Number.isFinite(v)) values[unknowns[j]] = v;
        if (values[unknowns[j]] !== x0[j]) moved = true;
      }
      const r = moved ? currentResidual() : best;
      if (!(r < best)) {
        for (let j = 0; j < nU; j++) values[unknowns[j]] = x0[j];
        break;
      }
      best = r;
      it++;
    }
    result.iterations = it;
    result.residual = best;
  }

  // consistency checks
  cm.residual(values, F);
  for (const r of checks) {
    const f = F[r];
    const scale = equationScale(sm, r, values);
    if (!Number.isFinite(f) || !(Math.abs(f) <= 1e-8 * scale)) { // an infinite term makes the scale infinite too
      const form = steadyForm(lm, sm, r);
      diagnostics.push(diag('P508', lm.equations[r].span, { point: name, residual: Number.isFinite(f) ? f.toExponential(3) : String(f), form: form ? ` (with every derivative zero it reads ${form} = 0)` : '' }, { related: [{ span: pointSpan, message: `point ${name}` }] }));
    }
  }
  // isolated? Jacobian at the solution must be nonsingular
  if (nR === nU && nU > 0) {
    const e = entries();
    // an infinite slope (√ at 0) is reported by pointChecks as not differentiable, not as a free direction
    let finite = true;
    for (let k = 0; k < e.nnz; k++) if (!Number.isFinite(e.vals[k])) finite = false;
    const lu = finite ? sparseLU(nU, e) : undefined;
    if (lu && !lu.ok) {
      const names = lu.singularCols.map((c) => lm.slots[unknowns[c]].name);
      diagnostics.push(diag('P506', pointSpan, { point: name, names: listNames(names) }, { data: { point: name, names } }));
    }
  }
  pushAll(diagnostics, pointChecks(lm, values, name, pointSpan));
  result.ok = !diagnostics.some((d) => d.severity === 'error');
  return result;
}

/** An equation's label and, when derivatives dropped out of it, what it reads at a steady state. */
function steadyLabel(lm: LoweredModel, sm: LoweredModel, r: number): string {
  const eq = lm.equations[r];
  const form = steadyForm(lm, sm, r);
  return form ? `"${eq.label}" (every derivative zero: ${form} = 0)` : `"${eq.label}"`;
}

/** The steady-state residual as text when derivatives dropped out of the equation (and it is short). */
function steadyForm(lm: LoweredModel, sm: LoweredModel, r: number): string | undefined {
  if (sm.equations[r] === lm.equations[r]) return undefined;
  let n = sm.equations[r].residual;
  // "… = 0" reads the same with either sign: drop a leading −1 (−(u − x) = 0 reads u − x = 0)
  if (n.t === 'mul' && E.isNum(n.args[0], -1)) n = E.mul(n.args.slice(1));
  const text = E.print(n, { name: (id) => lm.slots[id].name, digits: 4, readable: true });
  return text.length <= 60 ? text : undefined;
}

function equationScale(lm: LoweredModel, r: number, values: Float64Array): number {
  // magnitude of the terms: evaluate |terms| of the top-level sum
  const n = lm.equations[r].residual;
  const terms = n.t === 'add' ? n.args : [n];
  let s = 0;
  for (const t of terms) s = Math.max(s, Math.abs(E.evaluate(t, values)));
  return Math.max(s, 1e-300);
}

function lmStep(nR: number, nU: number, e: { rows: Int32Array; cols: Int32Array; vals: Float64Array; nnz: number }, rhs: Float64Array, lambda: number): Float64Array | null {
  // JᵀJ sparse via row lists
  const byRow: { c: number; v: number }[][] = Array.from({ length: nR }, () => []);
  for (let k = 0; k < e.nnz; k++) byRow[e.rows[k]].push({ c: e.cols[k], v: e.vals[k] });
  const acc = new Map<number, number>();
  const g = new Float64Array(nU);
  for (let i = 0; i < nR; i++) {
    const row = byRow[i];
    for (const a of row) {
      g[a.c] += a.v * rhs[i];
      for (const b of row) {
        const key = a.c * nU + b.c;
        acc.set(key, (acc.get(key) ?? 0) + a.v * b.v);
      }
    }
  }
  const diagv = new Float64Array(nU);
  for (const [key, v] of acc) {
    const r = Math.floor(key / nU);
    if (r === key % nU) diagv[r] = v;
  }
  const entries: { row: number; col: number; val: number }[] = [];
  for (const [key, v] of acc) entries.push({ row: Math.floor(key / nU), col: key % nU, val: v });
  for (let j = 0; j < nU; j++) entries.push({ row: j, col: j, val: lambda * Math.max(diagv[j], 1e-12) });
  const lu = sparseLU(nU, entries);
  if (!lu.ok) return null;
  return lu.solve(g);
}

/**
 * x0 moved by the scaled step dy (in units of the unknown's size xs). A value that is exactly 0 (a spill on
 * its zero branch) moved by a step below the resolution of its size (|dy| ≤ 64 ulps: noise of the coupled
 * solve) stays 0: written as −1.034e-25 [m^3/h], such residue would change again at the next Solve. The
 * solver's own residual measure (sizes of at least the unit) cannot tell such a value from 0 anyway.
 */
function landed(x0: number, dy: number, xs: number): number {
  return x0 === 0 && Math.abs(dy) <= 64 * Number.EPSILON ? 0 : x0 + dy * xs;
}

/**
 * Sweeps (gain scheduling): vary one constant, input or fixed value of a point over a range and follow
 * the steady state by natural-parameter continuation (each point starts from the previous solution,
 * with a secant predictor; a failed step is halved down to a limit). Every point is linearized; the
 * result holds, per swept value, the operating point, eigenvalues, time constants, damping ratios and
 * DC gains. Where the number of eigenvalues in the right half-plane changes, the crossing is located by
 * bisection on the swept value and named (a real eigenvalue through zero, or a complex pair through the
 * imaginary axis with its frequency). Where the steady state ends or turns back (a fold: the steady-state
 * Jacobian becomes singular) or continuation fails even at the smallest step, the sweep stops cleanly
 * and returns what it has. Pure: takes an Analysis, returns plain data. Declared `sweep` blocks are checked in
 * pipeline/sweepChecks.ts; modes, verdicts and gains come from analysis/dynamics/; the renderings are in
 * present/ (sweepText.ts, sweepCsv.ts, sweepJson.ts, sweepHtml.ts).
 */
import { timeUnitLabel } from '../semantics/units';
import type { Analysis } from '../pipeline/analysis';
import { diag, type Diagnostic } from '../diagnostics';
import { formatNumber } from '../algebra/expr';
import { compileModel } from '../model/jacobian';
import { declaredValue, linearize, type LinearModel } from '../solve/linearizer';
import { AXIS_TOL, eigenFigures, linearSystem, stabilityOf, type Mode, type StabilityClass } from './dynamics';
import { steadyStateGain } from './dynamics/dcGain';
import { perUnit } from './dynamics';
import { simplifyUnitText } from '../semantics/simplifyUnit';
import { eigenvalues, sortEigen } from '../numeric/eigen';
import { sparseLU } from '../numeric/sparseLU';
import { pointSetup, solvePoint, type PointSolution } from '../solve/pointSolver';
import { unitSuffix, unitText } from '../semantics/units';
import { MAX_STEPS, declaredSweeps, varSlot, variedProblem, type SweepSpec } from '../pipeline/sweepChecks';
// declared sweeps are checked in the pipeline; re-exported for the shells
export { MAX_STEPS, declaredSweeps, sweepCandidates, sweepDiagnostics, variedProblem, type DeclaredSweep, type SweepSpec } from '../pipeline/sweepChecks';
import { locateFold } from './fold';
import { steadyModel } from '../model/steady';
import { maxOf, minOf, pushAll } from '../arrays';

export interface SweepOptions {
  /** A failed continuation step is halved at most this many times (default 12). */
  maxHalvings?: number;
  /** Bisection stops when the bracket is narrower than this fraction of max(|value|, grid step) (default 1e-10). */
  bisectTolerance?: number;
  /** Largest accepted relative change of any unknown in one continuation step (default 0.5); larger ones count as a jump to another branch. */
  maxRelativeChange?: number;
}

/**
 * One eigenvalue (a complex pair appears once, with im > 0) and its figures, computed by
 * analysis/dynamics/modes.ts (`eigenFigures`), under the names a dynamics Mode gives them (schema
 * poise-sweep/2: the damping ratio is `dampingRatio`, as everywhere; poise-sweep/1 called it `damping`).
 */
export type SweepMode = Pick<Mode, 're' | 'im' | 'timeConstant' | 'naturalFrequency' | 'dampingRatio'>;

export interface SweepPoint {
  /** Swept value, declared unit. */
  value: number;
  /** Operating point in declared units, aligned with SweepResult.columns. */
  values: number[];
  /** Eigenvalues of A (per model time unit), sorted by real part. */
  eigenvalues: { re: number; im: number }[];
  modes: SweepMode[];
  /** Steady-state gains −C·A⁻¹·B + D (rows SweepResult.gainRows, columns the inputs); null when A is singular. */
  dcGain: number[][] | null;
  stability: StabilityClass;
  /** Eigenvalues with a real part above the tolerance. */
  unstableCount: number;
  /** Newton iterations of the solve that produced this point. */
  iterations: number;
  /** Extra continuation steps (halvings) needed to reach this point. */
  substeps: number;
  /** A constrained model's states at this point (index reduction; chosen by dummy derivatives). */
  states?: string[];
}

export interface Crossing {
  kind: 'real' | 'complex';
  /** The swept value of the crossing (declared unit): the middle of the final bisection bracket. */
  at: number;
  lower: number;
  upper: number;
  /** Frequency of the pair at the crossing, rad per model time unit (complex crossings). */
  frequency?: number;
  /** The eigenvalue at the crossing (from the side with more unstable eigenvalues). */
  eigenvalue: { re: number; im: number };
  /** Verdicts and unstable counts just before and after, in the direction of the sweep. */
  before: StabilityClass;
  after: StabilityClass;
  unstableBefore: number;
  unstableAfter: number;
  bisections: number;
  message: string;
}

export interface SweepStop {
  /** fold: the steady-state Jacobian becomes singular where continuation ends; no-solution: continuation failed otherwise;
   *  singular: the linear model cannot be formed (highest derivatives or algebraic unknowns not solvable); start: nothing computed. */
  kind: 'fold' | 'no-solution' | 'singular' | 'start';
  /** Last swept value with a steady state (declared unit); NaN when none was found. */
  at: number;
  /** The value that could not be reached. */
  next: number;
  /** At a fold: the steady state there (declared units, aligned with SweepResult.columns), located with `at`. */
  values?: number[];
  message: string;
}

export interface SweepResult {
  name?: string;
  point: string;
  vary: { name: string; kind: string; unit: string; from: number; to: number; steps: number; log: boolean };
  timeUnit: string;
  /** Columns of SweepPoint.values: every state, input, var and output at the point. */
  columns: { name: string; unit: string; kind: string }[];
  states: string[];
  inputs: string[];
  outputs: string[];
  /** Rows of dcGain: the outputs, or the states when the model declares no output. */
  gainRows: string[];
  /** Unit of each DC gain (rows gainRows, columns inputs): row unit per input unit, simplified. */
  gainUnits: string[][];
  points: SweepPoint[];
  crossings: Crossing[];
  stop?: SweepStop;
  /** True when every requested value was computed. */
  complete: boolean;
  diagnostics: Diagnostic[];
  stats: { solves: number; linearizations: number; bisections: number };
}

/** Runs the declared sweep `name`; undefined when there is no such sweep or it has problems (see declaredSweeps). */
export function runDeclaredSweep(a: Analysis, name: string, opts: SweepOptions = {}): SweepResult | undefined {
  const d = declaredSweeps(a).find((x) => x.block.name.name === name);
  return d && d.spec && !d.diagnostics.length ? runSweep(a, d.spec, opts) : undefined;
}

// ---------------------------------------------------------------- analysis of one linear model

/** Modes of a sorted eigenvalue list: complex pairs once (im > 0); a time constant wherever Re λ ≠ 0. */
function modesOf(eig: { re: number; im: number }[]): SweepMode[] {
  return eig.filter((e) => e.im >= 0).map((e) => {
    const f = eigenFigures(e, e.re === 0);
    return { re: e.re, im: e.im, timeConstant: f.timeConstant, dampingRatio: f.dampingRatio, naturalFrequency: f.naturalFrequency };
  });
}

/** −C·A⁻¹·B + D (or −A⁻¹·B when there are no outputs); null when A is singular. */
function dcGain(lin: LinearModel): number[][] | null {
  if (lin.m === 0) return new Array(lin.p > 0 ? lin.p : lin.n).fill(0).map(() => []);
  return steadyStateGain(linearSystem(lin));
}

/**
 * Tolerances below which a real part counts as zero: `axis` relative to the spectral radius (the same
 * rule as analysis/dynamics/, AXIS_TOL·ρ(A)) for the verdicts; `fine`, a few hundred round-offs of ‖A‖∞, for
 * locating a crossing.
 */
function eigTolerance(lin: LinearModel, eig: { re: number; im: number }[]): { axis: number; fine: number } {
  let mx = 0;
  for (let i = 0; i < lin.n; i++) {
    let s = 0;
    for (let j = 0; j < lin.n; j++) s += Math.abs(lin.A[i * lin.n + j]);
    mx = Math.max(mx, s);
  }
  let rho = 0;
  for (const e of eig) rho = Math.max(rho, Math.hypot(e.re, e.im));
  return { axis: Math.max(AXIS_TOL * rho, 1e-300), fine: Math.max(64 * 2.220446049250313e-16 * mx, 1e-300) };
}

function countAbove(eig: { re: number; im: number }[], tol: number): number {
  let k = 0;
  for (const e of eig) if (!(e.re <= tol)) k++;
  return k;
}

function classify(eig: { re: number; im: number }[], tol: number): { verdict: StabilityClass; unstable: number } {
  let unstable = 0;
  let marginal = 0;
  for (const e of eig) {
    const c = stabilityOf(e.re, tol); // NaN counts as unstable: nothing is known
    if (c === 'unstable') unstable++;
    else if (c === 'marginal') marginal++;
  }
  return { verdict: unstable ? 'unstable' : marginal ? 'marginal' : 'stable', unstable };
}

// ---------------------------------------------------------------- the sweep

interface State {
  p: number;
  sol: PointSolution;
}

interface Evaluated {
  lin: LinearModel;
  eig: { re: number; im: number }[];
  verdict: StabilityClass;
  unstable: number;
  tol: number;
  fineTol: number;
}

/** The swept values: steps + 1 values from `from` to `to`, evenly or logarithmically spaced. */
export function sweepValues(spec: Pick<SweepSpec, 'from' | 'to' | 'steps' | 'log'>): number[] {
  const out: number[] = [];
  for (let k = 0; k <= spec.steps; k++) {
    const t = k / spec.steps;
    // 15 significant digits: 1.45 rather than 1.4500000000000002 (far below any solver tolerance)
    if (k === spec.steps) out.push(spec.to);
    else if (spec.log) out.push(Number((spec.from * Math.pow(spec.to / spec.from, t)).toPrecision(15)));
    else out.push(Number((spec.from + (spec.to - spec.from) * t).toPrecision(15)));
  }
  return out;
}

export function runSweep(a: Analysis, spec: SweepSpec, opts: SweepOptions = {}): SweepResult {
  const lm = a.lowered;
  const slot = varSlot(a, spec.vary);
  const timeUnit = timeUnitLabel(lm.timeUnit);
  const columns = lm.slots.filter((s) => s.order === 0 && s.kind !== 'const').map((s) => ({ name: s.name, unit: unitText(s.unit.text), kind: s.kind === 'deriv' ? 'state' : s.kind }));
  const colSlots = lm.slots.filter((s) => s.order === 0 && s.kind !== 'const').map((s) => s.id);
  const outputs = lm.slots.filter((s) => s.kind === 'output').map((s) => s.name);
  const states = lm.stateComponents.map((s) => lm.slots[s].name);
  const unitOf = (id: number) => (lm.slots[id].unit.text === '1' ? '' : lm.slots[id].unit.text);
  const rowUnits = outputs.length ? lm.slots.filter((s) => s.kind === 'output').map((s) => unitOf(s.id)) : lm.stateComponents.map(unitOf);
  const gainUnits = rowUnits.map((ru) => lm.inputs.map((id) => simplifyUnitText(perUnit(ru, unitOf(id)))));
  const result: SweepResult = {
    name: spec.name, point: spec.point,
    vary: { name: spec.vary, kind: slot ? slot.kind : '?', unit: slot ? unitText(slot.unit.text) : '', from: spec.from, to: spec.to, steps: spec.steps, log: !!spec.log },
    timeUnit, columns, states, inputs: lm.inputs.map((s) => lm.slots[s].name), outputs,
    gainRows: outputs.length ? outputs : states, gainUnits,
    points: [], crossings: [], complete: false, diagnostics: [], stats: { solves: 0, linearizations: 0, bisections: 0 },
  };
  const varyUnit = unitSuffix(result.vary.unit);
  const fmt = (v: number) => `${formatNumber(v, 6)}${varyUnit}`;
  const block = a.pointBlock(spec.point);
  const rangeProblem =
    !Number.isInteger(spec.steps) || spec.steps < 1 || spec.steps > MAX_STEPS ? `the number of steps must be a whole number from 1 to ${MAX_STEPS}.`
    : !Number.isFinite(spec.from) || !Number.isFinite(spec.to) || spec.from === spec.to ? 'the range needs two different finite values.'
    : spec.log && (spec.from <= 0 || spec.to <= 0) ? 'a logarithmic sweep needs values above zero.'
    : undefined;
  const problem = !a.canSolve ? 'the model has errors; fix them first.' : !block ? `no point named "${spec.point}".` : rangeProblem ?? variedProblem(a, spec.point, spec.vary);
  if (problem || !slot || !block) {
    result.stop = { kind: 'start', at: NaN, next: spec.from, message: problem ?? `"${spec.vary}" cannot be varied.` };
    return result;
  }
  const maxHalvings = opts.maxHalvings ?? 12;
  const bisTol = opts.bisectTolerance ?? 1e-10;
  const maxRel = opts.maxRelativeChange ?? 0.5;
  const grid = sweepValues(spec);
  const gridStep = Math.abs(grid.length > 1 ? grid[1] - grid[0] : spec.to - spec.from);
  const id = slot.id;
  const toSI = (p: number) => p * slot.scale + slot.offset;
  const unknownSlots = a.structure.unknowns;

  const solveAt = (p: number, start?: Float64Array): PointSolution => {
    result.stats.solves++;
    return solvePoint(a.bound, lm, block, { overrides: new Map([[id, toSI(p)]]), start });
  };
  const relChange = (x: PointSolution, y: PointSolution): number => {
    let d = 0;
    for (const s of y.unknowns) {
      const u = x.values[s];
      const v = y.values[s];
      const sc = Math.max(Math.abs(u), Math.abs(v), Math.abs(lm.slots[s].scale));
      d = Math.max(d, Math.abs(v - u) / sc);
    }
    return d;
  };
  /** Continuation from `from` to the value `target`: secant predictor, halving on failure or on a jump. */
  const advance = (hist: State[], target: number): { ok: true; state: State; substeps: number } | { ok: false; last: State; failed: number } => {
    let cur = hist[hist.length - 1];
    const prev = () => (hist.length > 1 ? hist[hist.length - 2] : undefined);
    let h = target - cur.p;
    const hMin = Math.max(Math.abs(h), gridStep) / Math.pow(2, maxHalvings);
    let substeps = 0;
    for (let guard = 0; guard < 100000; guard++) {
      const remaining = target - cur.p;
      if (remaining === 0) return { ok: true, state: cur, substeps };
      if (Math.abs(h) > Math.abs(remaining)) h = remaining;
      const trial = Math.abs(remaining - h) < 1e-12 * Math.abs(remaining) ? target : cur.p + h;
      const tries: (Float64Array | undefined)[] = [];
      const pv = prev();
      if (pv && pv.p !== cur.p && Math.abs(trial - cur.p) <= 4 * Math.abs(cur.p - pv.p)) {
        const t = (trial - cur.p) / (cur.p - pv.p);
        const pred = Float64Array.from(cur.sol.values);
        for (const s of cur.sol.unknowns) pred[s] = cur.sol.values[s] + t * (cur.sol.values[s] - pv.sol.values[s]);
        tries.push(pred);
      }
      tries.push(cur.sol.values);
      let got: PointSolution | undefined;
      for (const start of tries) {
        const sol = solveAt(trial, start);
        if (usable(sol) && relChange(cur.sol, sol) <= maxRel) {
          got = sol;
          break;
        }
      }
      if (got) {
        hist.push({ p: trial, sol: got });
        if (hist.length > 3) hist.shift();
        cur = hist[hist.length - 1];
        if (trial !== target) substeps++;
        // grow again after a success, up to the original step
        if (Math.abs(h) < Math.abs(target - trial)) h *= 2;
        continue;
      }
      if (Math.abs(h) / 2 < hMin) return { ok: false, last: cur, failed: trial };
      h /= 2;
      substeps++;
    }
    return { ok: false, last: cur, failed: target };
  };

  // a constrained model: the states chosen at the previous evaluation are kept while they stay well-conditioned
  let keepDummies: number[] | undefined;
  const evaluate = (sol: PointSolution): Evaluated | undefined => {
    result.stats.linearizations++;
    const dm = a.indexPlan ? a.dynamicsAt(sol.values, keepDummies) : undefined;
    const lin = dm ? linearize(dm.model, dm.unknowns, dm.values, spec.point, block.name.span) : linearize(lm, unknownSlots, sol.values, spec.point, block.name.span);
    if (!lin.ok) return undefined;
    if (dm?.selection) {
      keepDummies = dm.selection.dummies;
      lin.reduction = { index: 0, differentiated: [], states: dm.selection.stateNames, dummies: dm.selection.dummyNames, constrained: dm.selection.constrained };
    }
    const e = eigenvalues({ rows: lin.n, cols: lin.n, data: lin.A });
    const eig = sortEigen(e.re, e.im);
    const t = eigTolerance(lin, eig);
    const c = classify(eig, t.axis);
    return { lin, eig, verdict: c.verdict, unstable: c.unstable, tol: t.axis, fineTol: t.fine };
  };
  const record = (st: State, ev: Evaluated, substeps: number): SweepPoint => {
    const pt: SweepPoint = {
      value: st.p,
      values: colSlots.map((s) => declaredValue(lm.slots[s], st.sol.values[s])),
      eigenvalues: ev.eig,
      modes: modesOf(ev.eig),
      dcGain: dcGain(ev.lin),
      stability: ev.verdict,
      unstableCount: ev.unstable,
      iterations: st.sol.iterations,
      substeps,
    };
    if (ev.lin.reduction) {
      pt.states = ev.lin.reduction.states;
      const before = result.points[result.points.length - 1]?.states;
      if (!result.points.length && !outputs.length) {
        result.gainRows = result.states = pt.states;
        result.gainUnits = ev.lin.stateUnits.map((ru) => lm.inputs.map((id) => simplifyUnitText(perUnit(ru === '1' ? '' : ru, unitOf(id)))));
      }
      if (before && before.join(',') !== pt.states.join(',')) {
        result.diagnostics.push(diag('P412', block.name.span, { name: spec.name ? ` "${spec.name}"` : '', from: before.join(', '), to: pt.states.join(', '), at: fmt(st.p) }, { data: { at: st.p, from: before, to: pt.states } }));
      }
    }
    result.points.push(pt);
    return pt;
  };

  // start: the declared point, then continuation to the first value
  let start: State | undefined;
  const declared = a.point(spec.point);
  if (declared && declared.ok) {
    const pd = declaredValue(slot, declared.values[id]);
    const first = advance([{ p: pd, sol: declared }], grid[0]);
    if (first.ok) start = first.state;
  }
  if (!start) {
    const sol = solveAt(grid[0]);
    if (usable(sol)) start = { p: grid[0], sol };
    else {
      pushAll(result.diagnostics, sol.diagnostics);
      const why = sol.diagnostics.find((d) => d.severity === 'error');
      result.stop = { kind: 'start', at: NaN, next: grid[0], message: `no steady state at ${spec.vary} = ${fmt(grid[0])}${why ? `: ${why.message}` : ''}` };
      return result;
    }
  }
  // reference scaling of the steady-state Jacobian (for the fold test)
  const ref = jacobianMeasure(a, start.sol);
  const ev0 = evaluate(start.sol);
  if (!ev0) {
    result.stop = { kind: 'start', at: NaN, next: grid[0], message: `the linear model at ${spec.vary} = ${fmt(grid[0])} cannot be formed (the highest derivatives or algebraic unknowns cannot be solved for there).` };
    return result;
  }
  record(start, ev0, 0);
  const hist: State[] = [start];
  let prevEv = ev0;

  for (let k = 1; k < grid.length; k++) {
    const left = hist[hist.length - 1];
    const r = advance(hist, grid[k]);
    if (!r.ok) {
      result.stop = locateEnd(r.last, r.failed);
      break;
    }
    const ev = evaluate(r.state.sol);
    if (!ev) {
      result.stop = { kind: 'singular', at: r.state.p, next: r.state.p, message: `at ${spec.vary} = ${fmt(r.state.p)} the linear model cannot be formed (singular: the highest derivatives or algebraic unknowns cannot be solved for); the sweep stops here.` };
      break;
    }
    record(r.state, ev, r.substeps);
    if (ev.unstable !== prevEv.unstable) bisect(left, prevEv, r.state, ev);
    prevEv = ev;
  }
  if (!result.stop) result.complete = true;
  return result;

  function bisect(a0: State, ea: Evaluated, b0: State, eb: Evaluated): void {
    let pa = a0.p;
    let pb = b0.p;
    let sa = a0;
    let evA = ea;
    let evB = eb;
    let n = 0;
    // inside the bracket, count with a tolerance near round-off (a tight location); fall back to the
    // grid's tolerance when the end points do not differ with it
    const fineTol = (ev: Evaluated) => ev.fineTol;
    const fine = (ev: Evaluated) => countAbove(ev.eig, fineTol(ev));
    const coarse = (ev: Evaluated) => ev.unstable;
    const useFine = fine(ea) !== fine(eb);
    const count = useFine ? fine : coarse;
    const width = () => Math.abs(pb - pa);
    const tol = bisTol * Math.max(Math.abs(pa), Math.abs(pb), gridStep);
    let note = '';
    while (width() > tol && n < 200) {
      const mid = 0.5 * (pa + pb);
      if (mid === pa || mid === pb) break;
      n++;
      result.stats.bisections++;
      const r = advance([sa], mid);
      if (!r.ok) {
        note = ' (bisection stopped early: no steady state found inside the bracket)';
        break;
      }
      const ev = evaluate(r.state.sol);
      if (!ev) {
        note = ' (bisection stopped early: the linear model cannot be formed inside the bracket)';
        break;
      }
      if (count(ev) === count(evA)) {
        pa = mid;
        sa = r.state;
        evA = ev;
      } else {
        pb = mid;
        evB = ev;
      }
    }
    // the eigenvalue that crossed: on the side with more unstable eigenvalues, the unstable one nearest the axis
    const more = count(evB) > count(evA) ? evB : evA;
    const tolM = useFine ? fineTol(more) : more.tol;
    let pick = more.eig.filter((e) => e.re > tolM).sort((x, y) => x.re - y.re)[0] ?? more.eig[0];
    if (pick.im < 0) pick = { re: pick.re, im: -pick.im };
    const complex = Math.abs(pick.im) > 1e-7 * Math.max(Math.hypot(pick.re, pick.im), more.tol);
    const at = 0.5 * (pa + pb);
    const intoRight = count(evB) > count(evA);
    const dir = spec.to > spec.from ? 'increases' : 'decreases';
    const what = complex
      ? `a complex pair crosses the imaginary axis at ±${formatNumber(pick.im, 6)} rad/${timeUnit} (${formatNumber(pick.im / (2 * Math.PI), 6)} cycles/${timeUnit})`
      : 'a real eigenvalue crosses zero';
    const side = intoRight ? 'into the right half-plane' : 'into the left half-plane';
    const message = `${spec.vary} = ${fmt(at)}: ${what} ${side} as ${spec.vary} ${dir} (${ea.verdict} → ${eb.verdict}; located by bisection to ±${formatNumber(Math.abs(pb - pa) / 2, 2)}${varyUnit})${note}`;
    result.crossings.push({
      kind: complex ? 'complex' : 'real', at, lower: Math.min(pa, pb), upper: Math.max(pa, pb),
      frequency: complex ? pick.im : undefined, eigenvalue: pick,
      before: ea.verdict, after: eb.verdict, unstableBefore: ea.unstable, unstableAfter: eb.unstable, bisections: n, message,
    });
  }

  /** Narrows down where continuation ends and says whether the steady-state Jacobian becomes singular there. */
  function locateEnd(last: State, failed: number): SweepStop {
    let good = last;
    let bad = failed;
    const tol = bisTol * Math.max(Math.abs(good.p), Math.abs(bad), gridStep);
    for (let n = 0; n < 200 && Math.abs(bad - good.p) > tol; n++) {
      const mid = 0.5 * (good.p + bad);
      if (mid === good.p || mid === bad) break;
      result.stats.bisections++;
      const r = advance([good], mid);
      if (r.ok) good = r.state;
      else bad = mid;
    }
    const m = jacobianMeasure(a, good.sol, ref);
    const singular = ref !== undefined && m !== undefined && m.sigma <= 1e-4 * ref.sigma;
    const where = `${spec.vary} = ${fmt(good.p)}`;
    if (singular) {
      // the fold itself, by Newton on the extended system (fold.ts); the bisection's end if that fails
      const f = locateFold(a.bound, lm, block!, id, toSI(good.p), good.sol.values, good.sol.unknowns, { maxDistance: Math.abs(toSI(bad) - toSI(good.p)) + 0.01 * gridStep * Math.abs(slot!.scale) });
      if (f) {
        const at = declaredValue(slot!, f.p);
        return {
          kind: 'fold', at, next: bad, values: colSlots.map((s) => declaredValue(lm.slots[s], f.values[s])),
          message: `fold at ${spec.vary} = ${fmt(at)}: the steady-state Jacobian is singular there and no steady state continues beyond it (the branch ends or turns back); the sweep stops. Points beyond it need another starting point on the other side.`,
        };
      }
      return {
        kind: 'fold', at: good.p, next: bad,
        message: `fold at ${where}: the steady-state Jacobian becomes singular there and no steady state continues beyond it (the branch ends or turns back); the sweep stops. Points beyond it need another starting point on the other side.`,
      };
    }
    const why = solveAt(bad, good.sol.values).diagnostics.find((d) => d.severity === 'error');
    return {
      kind: 'no-solution', at: good.p, next: bad,
      message: `no steady state found beyond ${where} (continuation failed even with the smallest step)${why ? `: ${why.message}` : ''}; the sweep stops.`,
    };
  }
}

/**
 * A solution the sweep can use: solved, or solved with a singular steady-state Jacobian only (P506: the
 * point is not isolated, as exactly at a fold or a branch point; the sweep's own tests judge that).
 */
function usable(sol: PointSolution): boolean {
  if (sol.ok) return true;
  if (!sol.values.length || sol.unknowns.some((s) => !Number.isFinite(sol.values[s]))) return false;
  return sol.diagnostics.every((d) => d.severity !== 'error' || d.code === 'P506') && sol.diagnostics.some((d) => d.code === 'P506');
}

interface JacobianMeasure {
  /** Row scales fixed at the reference point. */
  rowScale: Float64Array;
  /** Estimate of the smallest singular value of the scaled steady-state Jacobian: ‖J‖₁/cond₁(J); 0 when singular. */
  sigma: number;
}

/**
 * Size of the steady-state Jacobian (equations × unknowns of the point problem), with each unknown scaled
 * by its magnitude and each equation by a scale fixed at a reference point, so that the measure falls
 * towards zero as the Jacobian becomes singular (even for a 1×1 problem).
 */
function jacobianMeasure(a: Analysis, sol: PointSolution, ref?: JacobianMeasure): JacobianMeasure | undefined {
  const lm = a.lowered;
  const cm = compileModel(steadyModel(lm));
  const colOf = new Map<number, number>();
  sol.unknowns.forEach((s, j) => colOf.set(s, j));
  const nU = sol.unknowns.length;
  const J = new Float64Array(cm.nodes.length);
  cm.jacobian(sol.values, J);
  const rowIdx = new Int32Array(cm.nEq).fill(-1);
  let nR = 0;
  for (let r = 0; r < cm.nEq; r++) {
    for (const k of cm.rowEntries[r]) {
      if (colOf.has(cm.cols[k])) {
        rowIdx[r] = nR++;
        break;
      }
    }
  }
  if (nR !== nU || nU === 0) return undefined;
  const rows: number[] = [];
  const cols: number[] = [];
  const vals: number[] = [];
  for (let k = 0; k < J.length; k++) {
    const i = rowIdx[cm.rows[k]];
    const j = colOf.get(cm.cols[k]);
    if (i < 0 || j === undefined) continue;
    const s = sol.unknowns[j];
    rows.push(i);
    cols.push(j);
    vals.push(J[k] * Math.max(Math.abs(sol.values[s]), Math.abs(lm.slots[s].scale)));
  }
  let rowScale = ref?.rowScale;
  if (!rowScale) {
    rowScale = new Float64Array(nR);
    for (let k = 0; k < vals.length; k++) rowScale[rows[k]] = Math.max(rowScale[rows[k]], Math.abs(vals[k]));
    for (let i = 0; i < nR; i++) rowScale[i] = rowScale[i] > 0 ? 1 / rowScale[i] : 1;
  }
  const colSum = new Float64Array(nU);
  for (let k = 0; k < vals.length; k++) {
    vals[k] *= rowScale[rows[k]];
    colSum[cols[k]] += Math.abs(vals[k]);
  }
  const lu = sparseLU(nU, { rows: Int32Array.from(rows), cols: Int32Array.from(cols), vals: Float64Array.from(vals), nnz: vals.length });
  if (!lu.ok) return { rowScale, sigma: 0 };
  let norm = 0;
  for (let j = 0; j < nU; j++) norm = Math.max(norm, colSum[j]);
  const cond = lu.conditionEstimate();
  return { rowScale, sigma: Number.isFinite(cond) && cond > 0 ? norm / cond : 0 };
}

/**
 * Sweeps (gain scheduling): vary one constant, input or fixed value of a point over a range and follow
 * the steady state by natural-parameter continuation (each point starts from the previous solution,
 * with a secant predictor; a failed step is halved down to a limit). Every point is linearized; the
 * result holds, per swept value, the operating point, eigenvalues, time constants, damping ratios and
 * DC gains. Where the number of eigenvalues in the right half-plane changes, the crossing is located by
 * bisection on the swept value and named (a real eigenvalue through zero, or a complex pair through the
 * imaginary axis with its frequency). Where the steady state ends or turns back (a fold: the steady-state
 * Jacobian becomes singular) or continuation fails even at the smallest step, the sweep stops cleanly
 * and returns what it has. Pure: takes an Analysis, returns plain data.
 */
import { timeUnitLabel } from '../semantics/units';
import type { Analysis } from '../pipeline/analysis';
import type * as A from '../syntax/ast';
import { diag, type Diagnostic } from '../diagnostics';
import { formatNumber } from '../algebra/expr';
import { compileModel } from '../model/jacobian';
import { declaredValue, linearize, type LinearModel } from '../solve/linearizer';
import { constExprValue, type Slot } from '../model/model';
import { luFactor } from '../numeric/dense';
import { AXIS_TOL } from './dynamics';
import { eigenvalues, sortEigen } from '../numeric/eigen';
import { sparseLU } from '../numeric/sparseLU';
import { pointSetup, solvePoint, type PointSolution } from '../solve/pointSolver';
import type { Span } from '../text';
import { hasUnitLiteral } from '../semantics/unitChecker';
import { dimsEqual, parseUnit } from '../semantics/units';

/** What to sweep. `from` and `to` are in the declared unit of the varied name. */
export interface SweepSpec {
  point: string;
  vary: string;
  from: number;
  to: number;
  /** Number of intervals: the sweep has steps + 1 values, both ends included. */
  steps: number;
  log?: boolean;
  /** Name of the declared `sweep` block, if it came from one. */
  name?: string;
}

export interface SweepOptions {
  /** A failed continuation step is halved at most this many times (default 12). */
  maxHalvings?: number;
  /** Bisection stops when the bracket is narrower than this fraction of max(|value|, grid step) (default 1e-10). */
  bisectTolerance?: number;
  /** Largest accepted relative change of any unknown in one continuation step (default 0.5); larger ones count as a jump to another branch. */
  maxRelativeChange?: number;
}

/** One eigenvalue (a complex pair appears once, with im > 0) and what it means for the response. */
export interface Mode {
  re: number;
  im: number;
  /** 1/|re| in the model's time unit (decay time; for an unstable mode the e-folding growth time); null on the imaginary axis. */
  timeConstant: number | null;
  /** −re/|λ| for a complex pair (negative when it grows); null for a real eigenvalue. */
  damping: number | null;
  /** |λ| of a complex pair, rad per model time unit; null for a real eigenvalue. */
  naturalFrequency: number | null;
}

export type Verdict = 'stable' | 'marginal' | 'unstable';

export interface SweepPoint {
  /** Swept value, declared unit. */
  value: number;
  /** Operating point in declared units, aligned with SweepResult.columns. */
  values: number[];
  /** Eigenvalues of A (per model time unit), sorted by real part. */
  eigenvalues: { re: number; im: number }[];
  modes: Mode[];
  /** Steady-state gains −C·A⁻¹·B + D (rows SweepResult.gainRows, columns the inputs); null when A is singular. */
  dcGain: number[][] | null;
  stability: Verdict;
  /** Eigenvalues with a real part above the tolerance. */
  unstableCount: number;
  /** Newton iterations of the solve that produced this point. */
  iterations: number;
  /** Extra continuation steps (halvings) needed to reach this point. */
  substeps: number;
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
  before: Verdict;
  after: Verdict;
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
  points: SweepPoint[];
  crossings: Crossing[];
  stop?: SweepStop;
  /** True when every requested value was computed. */
  complete: boolean;
  diagnostics: Diagnostic[];
  stats: { solves: number; linearizations: number; bisections: number };
}

const MAX_STEPS = 100000;

// ---------------------------------------------------------------- validation of declared sweeps

export interface DeclaredSweep {
  block: A.SweepBlock;
  spec?: SweepSpec;
  diagnostics: Diagnostic[];
}

const kindWord: Record<string, string> = { const: 'a constant', input: 'an input', state: 'a state', var: 'a variable', output: 'an output' };

/**
 * Checks the varied name against a point: returns a message when it cannot be swept there (it must be
 * a constant, or an input, state, var or output the point fixes with "=").
 */
export function variedProblem(a: Analysis, point: string, name: string): string | undefined {
  const s = a.bound.symbols.get(name);
  if (!s) return `unknown name "${name}"`;
  if (s.kind === 'const') return undefined;
  const block = a.pointBlock(point);
  if (!block) return `no point named "${point}"`;
  const line = block.lines.find((l) => l.name.name === name);
  if (!line || line.mode !== 'fixed') {
    return `"${name}" is ${kindWord[s.kind]} that point "${point}" ${line ? 'solves for (written with "~")' : 'does not fix'}; vary a constant, or a value the point fixes with "=" (add "${name} = …" to the point).`;
  }
  return undefined;
}

function varSlot(a: Analysis, name: string): Slot | undefined {
  const s = a.bound.symbols.get(name);
  if (!s) return undefined;
  const id = a.lowered.slotOf(s, 0);
  return id >= 0 ? a.lowered.slots[id] : undefined;
}

/** The declared sweep blocks with their resolved specs and P602 problems (static: no solving). */
export function declaredSweeps(a: Analysis): DeclaredSweep[] {
  const out: DeclaredSweep[] = [];
  for (const block of a.bound.sweeps) {
    const ds: Diagnostic[] = [];
    const res: DeclaredSweep = { block, diagnostics: ds };
    out.push(res);
    const name = block.name.name;
    const v = block.vary;
    // unknown points and names and unit mismatches are reported by the binder and unit checker (P213, P201, P308)
    if (!name || !block.point || !v || !a.pointBlock(block.point.name)) continue;
    const s = a.bound.symbols.get(v.name.name);
    if (!s) continue;
    const point = block.point.name;
    const problem = variedProblem(a, point, v.name.name);
    if (problem) {
      ds.push(diag('P602', v.name.span, { name, detail: problem }, { data: { sweep: name, point, vary: v.name.name } }));
      continue;
    }
    const slot = varSlot(a, v.name.name);
    if (!slot) continue;
    const pb = a.pointBlock(point)!;
    let consts: Float64Array;
    try {
      consts = pointSetup(a.bound, a.lowered, pb).values;
    } catch {
      continue;
    }
    const bound = (e: A.Expr): number => {
      const x = constExprValue(e, a.bound, a.lowered, consts);
      return hasUnitLiteral(e) ? declaredValue(slot, x) : x;
    };
    const from = bound(v.from);
    const to = bound(v.to);
    const unit = slot.unit.text === '1' ? '' : ` [${slot.unit.text}]`;
    const spanOf = (which: 'from' | 'to'): Span => (which === 'from' ? v.from.span : v.to.span);
    let bad = false;
    for (const [w, x] of [['from', from], ['to', to]] as const) {
      if (!Number.isFinite(x)) {
        ds.push(diag('P602', spanOf(w), { name, detail: `the ${w === 'from' ? 'start' : 'end'} value is not a finite number.` }));
        bad = true;
      } else if (v.log && x <= 0) {
        ds.push(diag('P602', spanOf(w), { name, detail: `a "log" sweep needs values above zero, but the ${w === 'from' ? 'start' : 'end'} is ${formatNumber(x, 6)}${unit}; remove "log" or start above zero.` }));
        bad = true;
      }
    }
    if (!bad && from === to) {
      ds.push(diag('P602', v.span, { name, detail: `the range is empty: it starts and ends at ${formatNumber(from, 6)}${unit}.` }));
      bad = true;
    }
    if (v.steps > MAX_STEPS) {
      ds.push(diag('P602', v.stepsSpan, { name, detail: `${v.steps} steps is too many; use at most ${MAX_STEPS}.` }));
      bad = true;
    }
    if (!bad) res.spec = { name, point, vary: v.name.name, from, to, steps: v.steps, log: v.log };
  }
  return out;
}

/** Runs the declared sweep `name`; undefined when there is no such sweep or it has problems (see declaredSweeps). */
export function runDeclaredSweep(a: Analysis, name: string, opts: SweepOptions = {}): SweepResult | undefined {
  const d = declaredSweeps(a).find((x) => x.block.name.name === name);
  return d && d.spec && !d.diagnostics.length ? runSweep(a, d.spec, opts) : undefined;
}

/** P602 diagnostics of every declared sweep (for the language server and `poise check`). */
export function sweepDiagnostics(a: Analysis): Diagnostic[] {
  return declaredSweeps(a).flatMap((d) => d.diagnostics);
}

/** What can be swept at a point (for an editor's pick list): constants and the values the point fixes, with a suggested range. */
export function sweepCandidates(a: Analysis, point: string): { name: string; kind: string; unit: string; value: number; from: number; to: number }[] {
  const block = a.pointBlock(point);
  if (!block) return [];
  let values: Float64Array;
  try {
    values = pointSetup(a.bound, a.lowered, block).values;
  } catch {
    return [];
  }
  const out: { name: string; kind: string; unit: string; value: number; from: number; to: number }[] = [];
  const fixedFirst = [...a.bound.inputs, ...a.bound.states, ...a.bound.vars, ...a.bound.outputs, ...a.bound.consts];
  for (const s of fixedFirst) {
    if (variedProblem(a, point, s.name)) continue;
    const slot = varSlot(a, s.name);
    if (!slot) continue;
    const v = declaredValue(slot, values[slot.id]);
    if (!Number.isFinite(v)) continue;
    const half = v !== 0 ? Math.abs(v) / 2 : 1;
    out.push({ name: s.name, kind: s.kind, unit: slot.unit.text === '1' ? '' : slot.unit.text, value: v, from: v - half, to: v + half });
  }
  return out;
}

// ---------------------------------------------------------------- analysis of one linear model

/** Modes of a sorted eigenvalue list: complex pairs once (im > 0). */
export function modesOf(eig: { re: number; im: number }[]): Mode[] {
  const out: Mode[] = [];
  for (const e of eig) {
    if (e.im < 0) continue;
    const mag = Math.hypot(e.re, e.im);
    const pair = e.im > 0;
    out.push({
      re: e.re, im: e.im,
      timeConstant: e.re === 0 ? null : 1 / Math.abs(e.re),
      damping: pair ? -e.re / mag : null,
      naturalFrequency: pair ? mag : null,
    });
  }
  return out;
}

/** −C·A⁻¹·B + D (or −A⁻¹·B when there are no outputs); null when A is singular. */
export function dcGain(lin: LinearModel): number[][] | null {
  const { n, m, p } = lin;
  if (m === 0) return (p > 0 ? new Array(p) : new Array(n)).fill(0).map(() => []);
  if (n === 0) {
    const out: number[][] = [];
    for (let i = 0; i < p; i++) out.push(Array.from(lin.D.subarray(i * m, i * m + m)));
    return out;
  }
  const lu = luFactor({ rows: n, cols: n, data: lin.A });
  if (!lu.ok) return null;
  const X: Float64Array[] = [];
  const b = new Float64Array(n);
  for (let j = 0; j < m; j++) {
    for (let i = 0; i < n; i++) b[i] = lin.B[i * m + j];
    X.push(lu.solve(b));
  }
  const out: number[][] = [];
  if (p === 0) {
    for (let i = 0; i < n; i++) out.push(X.map((x) => -x[i] + 0));
    return out;
  }
  for (let i = 0; i < p; i++) {
    const row: number[] = [];
    for (let j = 0; j < m; j++) {
      let s = lin.D[i * m + j];
      for (let k = 0; k < n; k++) s -= lin.C[i * n + k] * X[j][k];
      row.push(s);
    }
    out.push(row);
  }
  return out;
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

function classify(eig: { re: number; im: number }[], tol: number): { verdict: Verdict; unstable: number } {
  let unstable = 0;
  let marginal = 0;
  for (const e of eig) {
    if (!(e.re <= tol)) unstable++; // NaN counts as unstable: nothing is known
    else if (e.re >= -tol) marginal++;
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
  verdict: Verdict;
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
  const columns = lm.slots.filter((s) => s.order === 0 && s.kind !== 'const').map((s) => ({ name: s.name, unit: s.unit.text === '1' ? '' : s.unit.text, kind: s.kind === 'deriv' ? 'state' : s.kind }));
  const colSlots = lm.slots.filter((s) => s.order === 0 && s.kind !== 'const').map((s) => s.id);
  const outputs = lm.slots.filter((s) => s.kind === 'output').map((s) => s.name);
  const states = lm.stateComponents.map((s) => lm.slots[s].name);
  const result: SweepResult = {
    name: spec.name, point: spec.point,
    vary: { name: spec.vary, kind: slot ? slot.kind : '?', unit: slot && slot.unit.text !== '1' ? slot.unit.text : '', from: spec.from, to: spec.to, steps: spec.steps, log: !!spec.log },
    timeUnit, columns, states, inputs: lm.inputs.map((s) => lm.slots[s].name), outputs,
    gainRows: outputs.length ? outputs : states,
    points: [], crossings: [], complete: false, diagnostics: [], stats: { solves: 0, linearizations: 0, bisections: 0 },
  };
  const unitText = result.vary.unit ? ` [${result.vary.unit}]` : '';
  const fmt = (v: number) => `${formatNumber(v, 6)}${unitText}`;
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

  const evaluate = (sol: PointSolution): Evaluated | undefined => {
    result.stats.linearizations++;
    const lin = linearize(lm, unknownSlots, sol.values, spec.point, block.name.span);
    if (!lin.ok) return undefined;
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
      result.diagnostics.push(...sol.diagnostics);
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
    const message = `${spec.vary} = ${fmt(at)}: ${what} ${side} as ${spec.vary} ${dir} (${ea.verdict} → ${eb.verdict}; located by bisection to ±${formatNumber(Math.abs(pb - pa) / 2, 2)}${unitText})${note}`;
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
  const cm = compileModel(lm);
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

// ---------------------------------------------------------------- output

/** JSON-safe copy (non-finite numbers become null) with a schema tag. */
export function sweepJson(r: SweepResult): unknown {
  return JSON.parse(JSON.stringify({ schema: 'poise-sweep/1', ...r, diagnostics: r.diagnostics.map((d) => ({ code: d.code, severity: d.severity, message: d.message })) }, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v)));
}

const csvCell = (s: string) => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
const num = (v: number | null | undefined) => (v === null || v === undefined || Number.isNaN(v) ? '' : String(v));

/** One row per swept value: value, verdict, the operating point, eigenvalues (re, im, τ, ζ) and DC gains. */
export function sweepCsv(r: SweepResult): string {
  const u = (x: string) => (x ? ` [${x}]` : '');
  const n = r.states.length;
  const head = [`${r.vary.name}${u(r.vary.unit)}`, 'stability', 'unstable_count'];
  for (const c of r.columns) head.push(`${c.name}${u(c.unit)}`);
  for (let k = 0; k < n; k++) head.push(`eig${k + 1}_re [1/${r.timeUnit}]`, `eig${k + 1}_im [1/${r.timeUnit}]`, `eig${k + 1}_tau [${r.timeUnit}]`, `eig${k + 1}_zeta`);
  for (const row of r.gainRows) for (const inp of r.inputs) head.push(`gain ${row}/${inp}`);
  const lines = [head.map(csvCell).join(',')];
  for (const p of r.points) {
    const cells = [num(p.value), p.stability, String(p.unstableCount), ...p.values.map(num)];
    for (let k = 0; k < n; k++) {
      const e = p.eigenvalues[k];
      if (!e) {
        cells.push('', '', '', '');
        continue;
      }
      const mag = Math.hypot(e.re, e.im);
      cells.push(num(e.re), num(e.im), e.re === 0 ? '' : num(1 / Math.abs(e.re)), e.im === 0 ? '' : num(-e.re / mag));
    }
    for (let i = 0; i < r.gainRows.length; i++) for (let j = 0; j < r.inputs.length; j++) cells.push(p.dcGain ? num(p.dcGain[i]?.[j]) : '');
    lines.push(cells.join(','));
  }
  return lines.join('\n') + '\n';
}

function eigText(eig: { re: number; im: number }[], digits: number, max = 4): string {
  if (!eig.length) return '(none)';
  // the ones nearest instability first
  const shown: string[] = [];
  const sorted = [...eig].filter((e) => e.im >= 0).sort((x, y) => y.re - x.re);
  for (const e of sorted.slice(0, max)) shown.push(e.im === 0 ? formatNumber(e.re, digits) : `${formatNumber(e.re, digits)} ± ${formatNumber(e.im, digits)}i`);
  if (sorted.length > max) shown.push(`… ${sorted.length - max} more`);
  return shown.join(', ');
}

/** Plain-text table of a sweep, with the stability changes and where it stopped. */
export function formatSweepText(r: SweepResult, digits = 5): string {
  const u = (x: string) => (x ? ` [${x}]` : '');
  const out: string[] = [];
  const title = r.name ? `Sweep ${r.name} from point ${r.point}` : `Sweep from point ${r.point}`;
  out.push(`${title}: ${r.vary.name} from ${formatNumber(r.vary.from, 6)} to ${formatNumber(r.vary.to, 6)}${u(r.vary.unit)}, ${r.vary.steps + 1} values (${r.vary.log ? 'logarithmic' : 'linear'} spacing), time in ${r.timeUnit}`);
  const shownCols = r.columns.map((c, i) => ({ c, i })).filter(({ c }) => c.name !== r.vary.name).slice(0, 6);
  const headers = [`${r.vary.name}${u(r.vary.unit)}`, 'stability', `eigenvalues [1/${r.timeUnit}] (largest real part first)`, `slowest τ [${r.timeUnit}]`, 'min ζ', ...shownCols.map(({ c }) => `${c.name}${u(c.unit)}`)];
  const rows: string[][] = r.points.map((p) => {
    const timed = p.modes.filter((m) => m.timeConstant !== null);
    const slow = timed.length ? Math.max(...timed.map((m) => m.timeConstant!)) : NaN;
    const pairs = p.modes.filter((m) => m.im > 0 && m.damping !== null);
    const zmin = pairs.length ? Math.min(...pairs.map((m) => m.damping!)) : NaN;
    return [
      formatNumber(p.value, 6), p.stability, eigText(p.eigenvalues, digits), Number.isNaN(slow) ? '-' : formatNumber(slow, digits), Number.isNaN(zmin) ? '-' : formatNumber(zmin, digits),
      ...shownCols.map(({ i }) => formatNumber(p.values[i], digits)),
    ];
  });
  const w = headers.map((h, j) => Math.max(h.length, ...rows.map((row) => row[j].length)));
  out.push('  ' + headers.map((h, j) => h.padEnd(w[j])).join('  ').trimEnd());
  for (const row of rows) out.push('  ' + row.map((c, j) => (j === 1 || j === 2 ? c.padEnd(w[j]) : c.padStart(w[j]))).join('  ').trimEnd());
  if (r.columns.length - 1 > shownCols.length) out.push(`  (${r.columns.length - 1 - shownCols.length} more variables in --format json or csv)`);
  if (r.inputs.length && r.gainRows.length && r.points.length) {
    const last = r.points[r.points.length - 1];
    const first = r.points[0];
    const g = (p: SweepPoint) => (p.dcGain ? p.dcGain.map((row, i) => row.map((v, j) => `${r.gainRows[i]}/${r.inputs[j]} ${formatNumber(v, digits)}`).join(', ')).join(', ') : 'none (A is singular: an integrator)');
    out.push('', `DC gains at ${formatNumber(first.value, 6)}: ${g(first)}`, `DC gains at ${formatNumber(last.value, 6)}: ${g(last)}`);
  }
  out.push('');
  if (r.crossings.length) {
    out.push('Stability changes:');
    for (const c of r.crossings) out.push('  ' + c.message);
  } else out.push('No stability change over the points computed.');
  if (r.stop) out.push('', `Stopped: ${r.stop.message}`);
  out.push('', 'Each row is a linear model valid only near its own operating point; check conclusions on the nonlinear model and the plant.');
  return out.join('\n');
}

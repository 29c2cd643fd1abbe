/**
 * The dynamics report of one operating point as plain, JSON-serialisable data: the point, the modes and
 * stability, gains, transfer functions, controllability/observability, frequency responses, linear versus
 * nonlinear step responses and the validity range of the linear model per input. `renderReportHtml`
 * (present/reportHtml.ts) turns it into one standalone page; `formatReportText` (present/reportText.ts) into a
 * readable summary. Pure.
 */
import type { IndexReductionSummary } from '../model/indexReduction';
import { dynamicsProblem } from './finiteDynamics';
import { timeUnitLabel } from '../semantics/units';
import { hasName } from '../names';
import type { Analysis } from '../pipeline/analysis';
import {
  analyzeDynamics, frequencyGrid, frequencyResponse,
  type Complex, type DcGain, type FrequencyResponse, type Horizon, type Mode, type RankTest, type StabilityVerdict, type TransferFunction,
} from './dynamics';
import { declaredValue, type LinearSignals } from '../solve/linearizer';
import { linearStepResponse } from '../numeric/expm';
import { Simulator } from './simulate';
import { maxOf, pushAll } from '../arrays';
import type { HoldMethod } from '../numeric/discretize';
import { sampledModel } from './handoff/sampled';
import { carefulLimit, fastLimit, SEARCH_RATIO, type LimitSearch } from './validitySearch';
import { reducedModel } from './handoff/reduced';
import { reducedPlain, sampledPlain, type ReducedPlain, type SampledPlain } from './handoff/plain';

export interface ReportOptions {
  /** Step size per input (declared unit) for the step-response plots; default 10 % of the operating value (of one unit when it is 0). */
  steps?: Record<string, number>;
  /** Validity tolerance as a fraction of the nonlinear response's largest change (default 0.05). */
  tolerance?: number;
  /** Number of frequencies of the frequency responses (default 200). */
  frequencies?: number;
  /** Compute the validity ranges (default true; they cost about twenty nonlinear simulations per input). */
  validity?: boolean;
  /** Title shown on the page (e.g. the file name). */
  title?: string;
  /** Samples of each step response (default 241). */
  samples?: number;
  /**
   * How the validity limits are searched: 'fast' (default) scouts with loose simulations and confirms next
   * to the limit at the careful tolerance; 'careful' makes every trial at the careful tolerance. Both
   * bracket each limit to a ratio of 1.04 between careful trials (analysis/validitySearch.ts).
   */
  validitySearch?: 'fast' | 'careful';
  /** Stop the validity search after this many milliseconds (default: no limit); what was found is kept. */
  validityBudgetMs?: number;
  /**
   * Work budget of the nonlinear simulations, in integrator step attempts (accepted plus rejected) counted
   * by the core over the step responses and the validity search (default: no limit). A step response gets
   * what is left, at most; a validity evaluation is not started once the budget is spent. What was cut is
   * listed in `skipped`. Deterministic: the same model and budget give the same report on any machine.
   */
  workBudget?: number;
  /** A quick report: no validity search (the `--quick` of `poise report`); listed in `skipped`. */
  quick?: boolean;
  /** Add the sampled-data model for this sample time (model time unit), hold and input-delay fraction. */
  sample?: { every: number; hold: HoldMethod; delay?: number };
  /** Add the reduced model (balanced truncation): stable states to keep, or the bound relative to σ₁. */
  reduce?: { order?: number; tolerance?: number };
}

export interface ValueRow {
  name: string;
  kind: string;
  value: number;
  unit: string;
  role: string;
}

export interface StepOutput {
  name: string;
  unit: string;
  /** Deviations from the point, declared unit, at the times `t`. */
  linear: number[];
  /** Same for the nonlinear model (shorter when the integration stopped early). */
  nonlinear: number[];
  /** Half-width of the validity band: tolerance × largest |nonlinear change|. */
  band: number;
  /** Largest |linear − nonlinear| / largest |nonlinear change| (null when not available). */
  error: number | null;
  /** False when the linear model has no path from this input to this output. */
  linked: boolean;
}

export interface StepReport {
  input: string;
  inputUnit: string;
  operatingValue: number;
  step: number;
  /** Step as % of the operating value (of one unit when the value is 0). */
  stepPercent: number;
  percentBasis: 'operating value' | 'unit';
  t: number[];
  outputs: StepOutput[];
  status: 'ok' | 'domain' | 'failed';
  message?: string;
  /** Worst error over the linked outputs, and whether it is within the tolerance (null when unknown). */
  error: number | null;
  withinTolerance: boolean | null;
}

export interface ValidityLimit {
  /** Largest step found valid (declared unit, ≥ 0). */
  step: number;
  percent: number;
  /** What ends the range. */
  limitedBy: 'tolerance' | 'domain' | 'search limit' | 'nothing valid' | 'time budget' | 'work budget';
  /** Smallest step found invalid (null when none was). */
  firstInvalid: number | null;
  /** Message of the smallest step that left the domain, if any. */
  domainMessage?: string;
}

export interface ValiditySample {
  /** Signed step, declared unit. */
  step: number;
  /** Error as a fraction of the nonlinear change (null when the simulation failed). */
  error: number | null;
  status: 'ok' | 'domain' | 'failed';
}

export interface ValidityReport {
  input: string;
  unit: string;
  operatingValue: number;
  percentBasis: 'operating value' | 'unit';
  tolerance: number;
  /** Outputs the criterion looks at. */
  outputs: string[];
  up: ValidityLimit | null;
  down: ValidityLimit | null;
  samples: ValiditySample[];
  note?: string;
}

export interface ReportData extends LinearSignals {
  schema: 'poise-report/1';
  title: string;
  point: string;
  timeUnit: string;
  digest: string;
  ok: boolean;
  problems: string[];
  values: ValueRow[];
  /** How the point was solved: Newton iterations and the achieved relative residual (see PointSolution.residual). */
  solve?: { iterations: number; residual: number };
  /** A constrained model's index reduction: the differentiated equations and the states chosen at the point. */
  indexReduction?: IndexReductionSummary;
  outputsAreStates: boolean;
  matrices: { A: number[][]; B: number[][]; C: number[][]; D: number[][] } | null;
  stability: StabilityVerdict | null;
  eigenvalues: Complex[];
  modes: Mode[];
  dcGain: DcGain | null;
  transfer: TransferFunction[];
  controllability: RankTest | null;
  observability: RankTest | null;
  frequency: FrequencyResponse | null;
  horizon: Horizon | null;
  tolerance: number;
  steps: StepReport[];
  validity: ValidityReport[] | null;
  cautions: string[];
  /** Sections left out or cut short (quick report, work budget), one sentence each; empty when complete. */
  skipped: string[];
  /** Integrator step attempts spent on the nonlinear simulations (the unit of `workBudget`). */
  work: number;
  /** Wall-clock milliseconds of each stage (for information; varies run to run). */
  timingsMs: Record<string, number>;
  /** The sampled-data model when asked for (ReportOptions.sample); null when it cannot be formed. */
  sampled?: SampledPlain | null;
  /** The reduced model when asked for (ReportOptions.reduce); null when the truncation fails. */
  reduced?: ReducedPlain | null;
}

export const CAUTIONS = [
  'A linear model describes the plant only near the operating point it was taken at. Check the validity range of each input before relying on it for larger moves.',
  'Validate any controller designed from this model on the full nonlinear model, and then on the plant itself, before putting it into service.',
  'Loops that protect people, equipment or the environment must follow the local codes and standards that apply and be engineered and approved under licensed professional practice; this report does not replace that.',
];

const now = (): number => (typeof performance !== 'undefined' ? performance.now() : Date.now());

/** JSON-safe number (NaN and ±Infinity become null). */
const js = (v: number): number | null => (Number.isFinite(v) ? v : null);

function rows(a: Float64Array, r: number, c: number): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < r; i++) out.push(Array.from(a.subarray(i * c, i * c + c)));
  return out;
}

export function buildReport(a: Analysis, point: string, opts: ReportOptions = {}): ReportData {
  const tolerance = opts.tolerance ?? 0.05;
  const timingsMs: Record<string, number> = {};
  const data: ReportData = {
    schema: 'poise-report/1', title: opts.title ?? `Point ${point}`, point, timeUnit: timeUnitLabel(a.lowered.timeUnit), digest: a.pointBlock(point) ? a.digest(point) : '',
    ok: false, problems: [], values: [], states: [], inputs: [], outputs: [], stateUnits: [], inputUnits: [], outputUnits: [], outputsAreStates: false,
    matrices: null, stability: null, eigenvalues: [], modes: [], dcGain: null, transfer: [], controllability: null, observability: null,
    frequency: null, horizon: null, tolerance, steps: [], validity: null, cautions: CAUTIONS.slice(), skipped: [], work: 0, timingsMs,
  };
  const t0 = now();
  if (!a.pointBlock(point)) {
    data.problems.push(`The model has no point named "${point}".`);
    return data;
  }
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length || !a.canSolve) {
    pushAll(data.problems, errors.length ? errors.map((d) => d.message) : ['The model has errors; fix them first.']);
    return data;
  }
  const sol = a.point(point);
  if (!sol || !sol.ok) {
    pushAll(data.problems, sol?.diagnostics.filter((d) => d.severity === 'error').map((d) => d.message) ?? ['The point could not be solved.']);
    return data;
  }
  data.values = a.values(sol).map((v) => ({ name: v.name, kind: v.kind, value: v.value, unit: v.unit, role: v.role }));
  data.solve = { iterations: sol.iterations, residual: sol.residual };
  const lin = a.linear(point);
  if (!lin || !lin.ok) {
    pushAll(data.problems, lin?.diagnostics.map((d) => d.message) ?? ['The model could not be linearized at this point.']);
    return data;
  }
  if (lin.reduction) data.indexReduction = lin.reduction;
  const dyn = analyzeDynamics(lin);
  const overflow = dynamicsProblem(dyn, point, sol.block.name.span);
  if (overflow) {
    data.problems.push(overflow.message);
    return data;
  }
  const sys = dyn.system;
  timingsMs.analysis = now() - t0;
  Object.assign(data, {
    ok: true, states: sys.states, inputs: sys.inputs, outputs: sys.outputs, stateUnits: sys.stateUnits, inputUnits: sys.inputUnits, outputUnits: sys.outputUnits,
    outputsAreStates: sys.outputsAreStates,
    matrices: { A: rows(lin.A, lin.n, lin.n), B: rows(lin.B, lin.n, lin.m), C: rows(lin.C, lin.p, lin.n), D: rows(lin.D, lin.p, lin.m) },
    stability: dyn.stability, eigenvalues: dyn.eigenvalues, modes: dyn.modes, dcGain: dyn.dcGain, transfer: dyn.transfer,
    controllability: dyn.controllability, observability: dyn.observability, horizon: dyn.horizon,
  });

  if (opts.sample) {
    const sm = sampledModel(sys, opts.sample.every, opts.sample.hold, opts.sample.delay ?? 0);
    data.sampled = sm ? sampledPlain(sm) : null;
  }
  if (opts.reduce) {
    const rm = reducedModel(sys, opts.reduce);
    data.reduced = rm ? reducedPlain(rm) : null;
  }
  const t1 = now();
  data.frequency = frequencyResponse(dyn, frequencyGrid(dyn, opts.frequencies ?? 200));
  timingsMs.frequency = now() - t1;

  // step responses: linear (exact) and nonlinear from the point
  const t2 = now();
  const { n, m, p } = sys;
  const T = dyn.horizon.value;
  const samples = Math.max(11, opts.samples ?? 241);
  const times = Array.from({ length: samples }, (_, k) => (T * k) / (samples - 1));
  const dm = a.dynamicsAt(sol.values);
  const sim = new Simulator(dm.model, dm.unknowns, dm.values, point);
  const linked = (i: number, j: number) => {
    const tf = dyn.transfer.find((x) => x.outputIndex === i && x.inputIndex === j);
    return !!tf && !tf.identicallyZero;
  };
  // the linear response to a unit step of each input, at the step responses' times; the validity search's
  // coarser times are taken from it when they are every r-th of those exactly (the default 241 and 121)
  const unitCache = new Map<number, ReturnType<typeof linearStepResponse>>();
  const unitResp = (j: number, tt: number[]): ReturnType<typeof linearStepResponse> => {
    const u = new Float64Array(m);
    u[j] = 1;
    const full = unitCache.get(j);
    if (full && tt.length > 1 && (full.t.length - 1) % (tt.length - 1) === 0) {
      const r = (full.t.length - 1) / (tt.length - 1);
      if (tt.every((x, k) => full.t[k * r] === x)) {
        const pick = <T>(a: T[]) => tt.map((_, k) => a[k * r]);
        return { t: Float64Array.from(tt), x: pick(full.x), y: pick(full.y) };
      }
    }
    const lr = linearStepResponse(sys.A, sys.B, sys.C, sys.D, n, m, p, u, Float64Array.from(tt));
    if (!full) unitCache.set(j, lr);
    return lr;
  };
  const opValue = (j: number) => declaredValue(a.lowered.slots[lin.inputSlots[j]], sol.values[lin.inputSlots[j]]);
  const outputSeries = (r: ReturnType<Simulator['step']>): number[][] => (sys.outputsAreStates ? r.states : r.outputs);

  // the work budget, counted in integrator step attempts
  const budgetWork = opts.workBudget !== undefined && opts.workBudget >= 0 ? opts.workBudget : Infinity;
  let work = 0;
  const workLeft = (): number => Math.max(0, budgetWork - work);
  const spend = (r: ReturnType<Simulator['step']>): void => {
    work += r.stats.steps + r.stats.rejected;
    data.work = work;
  };
  for (let j = 0; j < m; j++) {
    const op = opValue(j);
    const basis = op !== 0 ? Math.abs(op) : 1;
    const given = opts.steps && hasName(opts.steps, sys.inputs[j]) ? opts.steps[sys.inputs[j]] : undefined;
    const step = given !== undefined && Number.isFinite(given) && given !== 0 ? given : 0.1 * basis;
    const lr = unitResp(j, times);
    const du = new Float64Array(m);
    du[j] = step;
    const stateScale = maxAbsCols(lr.x, n).map((v) => v * Math.abs(step));
    // rtol 1e-5: a global error of about 1e-4 of the change (measured), far below what a plot shows
    const left = workLeft();
    const r = left < 1 ? sim.step({ du, horizon: T, times, stateScale, rtol: 1e-5, maxSteps: 1 }) : sim.step({ du, horizon: T, times, stateScale, rtol: 1e-5, maxSteps: Math.min(20000, left) });
    spend(r);
    if (r.status !== 'ok' && left < 20000 && r.stats.steps + r.stats.rejected >= Math.min(20000, left)) {
      data.skipped.push(`The nonlinear step response of ${sys.inputs[j]} stopped at the work budget (${work} integrator steps spent).`);
    }
    const ys = outputSeries(r);
    const outs: StepOutput[] = [];
    let worst: number | null = null;
    for (let i = 0; i < p; i++) {
      const L = lr.y.map((y) => y[i] * step);
      const N = ys[i] ?? [];
      let mx = 0;
      let dev = 0;
      for (let k = 0; k < N.length; k++) {
        mx = Math.max(mx, Math.abs(N[k]));
        dev = Math.max(dev, Math.abs(N[k] - L[k]));
      }
      const ok = r.status === 'ok';
      const err = ok && mx > 0 ? dev / mx : ok && dev === 0 ? 0 : null;
      const lk = linked(i, j);
      if (lk && ok) worst = Math.max(worst ?? 0, err ?? Infinity);
      outs.push({ name: sys.outputs[i], unit: sys.outputUnits[i], linear: L, nonlinear: N, band: tolerance * mx, error: err === null ? null : js(err), linked: lk });
    }
    data.steps.push({
      input: sys.inputs[j], inputUnit: sys.inputUnits[j], operatingValue: op, step, stepPercent: (100 * step) / basis, percentBasis: op !== 0 ? 'operating value' : 'unit',
      t: times, outputs: outs, status: r.status, message: r.message, error: worst === null ? null : js(worst), withinTolerance: worst === null ? null : worst <= tolerance,
    });
  }
  timingsMs.steps = now() - t2;

  if (opts.quick && opts.validity !== false && m > 0) {
    data.skipped.push('Validity range: not computed (quick report); run the report without --quick for the search, about twenty nonlinear simulations per input.');
  }
  if (opts.validity !== false && !opts.quick) {
    const t3 = now();
    const budget = opts.validityBudgetMs ?? Infinity;
    let outOfTime = false;
    let outOfWork = false;
    const vs = Math.min(samples, 121);
    const vtimes = Array.from({ length: vs }, (_, k) => (T * k) / (vs - 1));
    data.validity = [];
    for (let j = 0; j < m; j++) {
      const op = opValue(j);
      const basis = op !== 0 ? Math.abs(op) : 1;
      const lr = unitResp(j, vtimes);
      const outIdx = Array.from({ length: p }, (_, i) => i).filter((i) => linked(i, j));
      const rep: ValidityReport = {
        input: sys.inputs[j], unit: sys.inputUnits[j], operatingValue: op, percentBasis: op !== 0 ? 'operating value' : 'unit', tolerance,
        outputs: outIdx.map((i) => sys.outputs[i]), up: null, down: null, samples: [],
      };
      if (!outIdx.length) {
        rep.note = 'No output responds to this input in the linear model, so there is nothing to compare.';
        data.validity.push(rep);
        continue;
      }
      const xScale = maxAbsCols(lr.x, n);
      const cache = new Map<number, ValiditySample & { message?: string }>();
      const looseCache = new Map<number, ValiditySample & { message?: string }>();
      const evaluate = (s: number, careful: boolean): ValiditySample & { message?: string; careful: boolean } => {
        const hit = cache.get(s);
        if (hit) return { ...hit, careful: true };
        const lhit = careful ? undefined : looseCache.get(s);
        if (lhit) return { ...lhit, careful: false };
        if (now() - t3 > budget) {
          outOfTime = true;
          return { step: s, error: null, status: 'failed', message: 'not computed (time budget)', careful };
        }
        if (workLeft() < 1) {
          outOfWork = true;
          return { step: s, error: null, status: 'failed', message: 'not computed (work budget)', careful };
        }
        const du = new Float64Array(m);
        du[j] = s;
        // careful: rtol 3e-5, a global error of about 4e-4 of the change, small against the tolerance;
        // loose (the fast search's scouting trials): rtol 1e-3, the error off by up to a tenth of itself
        const rtol = careful ? 3e-5 : 1e-3;
        const r = sim.step({ du, horizon: T, times: vtimes, stateScale: xScale.map((v) => v * Math.abs(s)), rtol, maxSteps: Math.min(20000, workLeft()) });
        spend(r);
        let error: number | null = null;
        if (r.status === 'ok') {
          const ys = outputSeries(r);
          error = 0;
          for (const i of outIdx) {
            let mx = 0;
            let dev = 0;
            const N = ys[i];
            for (let k = 0; k < N.length; k++) {
              mx = Math.max(mx, Math.abs(N[k]));
              dev = Math.max(dev, Math.abs(N[k] - lr.y[k][i] * s));
            }
            error = Math.max(error, mx > 0 ? dev / mx : dev === 0 ? 0 : Infinity);
          }
        }
        const smp = { step: s, error: error === null ? null : js(error), status: r.status, message: r.message };
        (careful ? cache : looseCache).set(s, smp);
        return { ...smp, careful };
      };
      const valid = (x: ValiditySample) => x.status === 'ok' && x.error !== null && x.error <= tolerance;
      const given = opts.steps && hasName(opts.steps, sys.inputs[j]) ? opts.steps[sys.inputs[j]] : undefined;
      const s0 = given !== undefined && Number.isFinite(given) && given !== 0 ? Math.abs(given) : 0.1 * basis;
      const cap = 10 * basis;
      const search = (sign: 1 | -1): ValidityLimit => {
        const spec: LimitSearch = {
          tolerance, start: s0, cap, stopped: () => outOfTime || outOfWork,
          trial: (mag, careful) => {
            const x = evaluate(sign * mag, careful);
            return { mag, error: x.error, status: x.status, message: x.message, careful: x.careful };
          },
        };
        const found = opts.validitySearch === 'careful' ? carefulLimit(spec) : fastLimit(spec);
        let lo = found.lo;
        let hi = found.hi;
        if (outOfTime) {
          // only what was actually simulated (carefully) counts
          lo = 0;
          hi = Infinity;
          for (const x of cache.values()) {
            if (Math.sign(x.step) !== sign || x.message?.startsWith('not computed')) continue;
            const mag = Math.abs(x.step);
            if (valid(x)) lo = Math.max(lo, mag);
            else hi = Math.min(hi, mag);
          }
          if (hi <= lo) hi = Infinity;
        }
        // the message of the smallest step found to leave the domain, up to the first invalid one
        let domainMsg: string | undefined;
        let domainMag = Infinity;
        for (const x of cache.values()) {
          const mag = Math.abs(x.step);
          if (Math.sign(x.step) === sign && x.status === 'domain' && mag <= hi && mag < domainMag) {
            domainMag = mag;
            domainMsg = x.message;
          }
        }
        const firstInvalid = hi < Infinity ? hi : null;
        const inv = firstInvalid !== null ? cache.get(sign * firstInvalid) : undefined;
        let limitedBy: ValidityLimit['limitedBy'];
        if (outOfTime && (lo === 0 || firstInvalid === null || firstInvalid / lo > SEARCH_RATIO)) limitedBy = 'time budget';
        else if (outOfWork && (lo === 0 || firstInvalid === null || firstInvalid / lo > SEARCH_RATIO)) limitedBy = 'work budget';
        else if (lo === 0) limitedBy = 'nothing valid';
        else if (firstInvalid === null) limitedBy = 'search limit';
        else limitedBy = inv && inv.status === 'domain' ? 'domain' : 'tolerance';
        return { step: lo, percent: (100 * lo) / basis, limitedBy, firstInvalid, domainMessage: domainMsg };
      };
      rep.up = search(1);
      rep.down = search(-1);
      // the careful trials, and the loose ones where no careful trial was made (their errors a little rougher)
      for (const [st, x] of looseCache) if (!cache.has(st)) cache.set(st, x);
      rep.samples = [...cache.values()].filter((x) => !x.message?.startsWith('not computed')).map(({ step, error, status }) => ({ step, error, status })).sort((x, y) => x.step - y.step);
      if (outOfWork && !outOfTime) {
        rep.note = rep.samples.length ? 'The search stopped at its work budget: the range is at least as wide as shown.' : 'Not computed: the work budget ran out.';
        data.skipped.push(`Validity range of ${sys.inputs[j]}: ${rep.samples.length ? 'cut short' : 'not computed'} (work budget of ${budgetWork} integrator steps).`);
      }
      if (outOfTime) rep.note = rep.samples.length ? 'The search stopped at its time budget: the range is at least as wide as shown (run `poise report` for the full search).' : 'Not computed: the time budget ran out (run `poise report` for the full search).';
      data.validity.push(rep);
    }
    timingsMs.validity = now() - t3;
  }
  return data;
}

function maxAbsCols(x: Float64Array[], n: number): number[] {
  const out = new Array<number>(n).fill(0);
  for (const v of x) for (let i = 0; i < n; i++) out[i] = Math.max(out[i], Math.abs(v[i]));
  return out;
}

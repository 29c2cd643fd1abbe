/**
 * Linearizer: at a solved point, the descriptor form F(w, x, z, u) = 0 (w the highest derivatives,
 * x the state components, z the vars and outputs, u the inputs) is differentiated symbolically; the
 * square block ∂F/∂(w, z) is factored (sparse LU with pivoting) and the highest derivatives and the
 * algebraic unknowns are eliminated:  [Δw; Δz] = −[F_w F_z]⁻¹ (F_x Δx + F_u Δu).
 * A, B, C, D are returned in the declared units of each variable, time in the model's time unit.
 */
import { pushAll } from '../arrays';
import { timeUnitLabel } from '../semantics/units';
import { diag, type Diagnostic } from '../diagnostics';
import { formatNumber } from '../algebra/expr';
import { compileModel } from '../model/jacobian';
import type { LoweredModel, Slot } from '../model/model';
import { sparseLU } from '../numeric/sparseLU';
import { SparseSolver } from '../numeric/sparseSolve';
import { csrFromTriplets, csrToDense, type CsrMatrix } from '../numeric/csr';
import { listNames } from '../model/structure';
import type { IndexReductionSummary } from '../model/indexReduction';
import type { Span } from '../text';
import { linearModelProblems } from './finiteLinear';

/**
 * The signals of a linear model, in matrix order, with their declared units: the one list shared by the
 * linear model, the dynamics' LinearSystem and the report's data.
 */
export interface LinearSignals {
  /** First-order state components (x, x', …), inputs and outputs, in matrix order. */
  states: string[];
  inputs: string[];
  outputs: string[];
  stateUnits: string[];
  inputUnits: string[];
  outputUnits: string[];
}

/**
 * x' = A x + B u, y = C x + D u: row-major dense matrices in declared units, n states, m inputs, p outputs
 * (a LinearModel builds them from its sparse form on first use, for the dense methods: dynamics, reports,
 * sweeps on models small enough for them).
 */
export interface StateSpace {
  readonly A: Float64Array;
  readonly B: Float64Array;
  readonly C: Float64Array;
  readonly D: Float64Array;
  n: number;
  m: number;
  p: number;
}

export interface LinearModel extends LinearSignals, StateSpace {
  point: string;
  /** A, B, C, D in compressed sparse rows, declared units: the core's own form, at any size. */
  sparse: LinearSparse;
  /** Slot ids in matrix order (for the core's own use). */
  stateSlots: number[];
  inputSlots: number[];
  outputSlots: number[];
  /** Operating values in declared units for every non-constant slot (states, inputs, vars, outputs). */
  timeUnit: string;
  diagnostics: Diagnostic[];
  ok: boolean;
  /** For a constrained model: the index reduction (differentiated equations, states chosen at the point). */
  reduction?: IndexReductionSummary;
}

export interface LinearSparse {
  A: CsrMatrix;
  B: CsrMatrix;
  C: CsrMatrix;
  D: CsrMatrix;
}

const emptyCsr = (rows: number, cols: number): CsrMatrix => ({ rows, cols, rowPtr: new Int32Array(rows + 1), colIdx: new Int32Array(0), values: new Float64Array(0) });

/** A linear model object whose dense A, B, C, D are made from the sparse ones when first read. */
export function withDenseViews<T extends Omit<LinearModel, 'A' | 'B' | 'C' | 'D'>>(base: T): T & LinearModel {
  const cache: Partial<Record<'A' | 'B' | 'C' | 'D', Float64Array>> = {};
  for (const k of ['A', 'B', 'C', 'D'] as const) {
    Object.defineProperty(base, k, {
      enumerable: true,
      configurable: true,
      get: () => (cache[k] ??= csrToDense(base.sparse[k]).data),
    });
  }
  return base as T & LinearModel;
}

/** Relative size below which an entry of A–D is taken as left over from cancellation (see chop). */
const CHOP = 1e-13;

export function linearize(lm: LoweredModel, unknownSlots: number[], values: Float64Array, point: string, pointSpan: Span): LinearModel {
  const cm = compileModel(lm);
  const diagnostics: Diagnostic[] = [];
  const states = lm.stateComponents;
  const inputs = lm.inputs;
  const outputs = lm.slots.filter((s) => s.kind === 'output').map((s) => s.id);
  const n = states.length;
  const m = inputs.length;
  const p = outputs.length;
  const res = withDenseViews({
    point, states: states.map((s) => lm.slots[s].name), inputs: inputs.map((s) => lm.slots[s].name), outputs: outputs.map((s) => lm.slots[s].name),
    stateUnits: states.map((s) => lm.slots[s].unit.text), inputUnits: inputs.map((s) => lm.slots[s].unit.text), outputUnits: outputs.map((s) => lm.slots[s].unit.text),
    sparse: { A: emptyCsr(n, n), B: emptyCsr(n, m), C: emptyCsr(p, n), D: emptyCsr(p, m) }, n, m, p,
    stateSlots: states, inputSlots: inputs, outputSlots: outputs, timeUnit: timeUnitLabel(lm.timeUnit), diagnostics, ok: false as boolean,
  });

  const N = unknownSlots.length; // highest derivatives then algebraic
  const colOf = new Int32Array(lm.slots.length).fill(-1);
  unknownSlots.forEach((s, i) => (colOf[s] = i));
  const stateIdx = new Int32Array(lm.slots.length).fill(-1);
  states.forEach((s, i) => (stateIdx[s] = i));
  const inputIdx = new Int32Array(lm.slots.length).fill(-1);
  inputs.forEach((s, i) => (inputIdx[s] = i));

  const J = new Float64Array(cm.nodes.length);
  cm.jacobian(values, J);
  for (let k = 0; k < J.length; k++) {
    if (!Number.isFinite(J[k])) {
      diagnostics.push(diag('P504', lm.equations[cm.rows[k]].span, { point, detail: `the derivative with respect to ${lm.slots[cm.cols[k]].name} is not finite` }));
      return res;
    }
  }
  if (cm.nEq !== N) return res; // structure errors are reported by the structure checker
  // the square block ∂F/∂(w, z) as triplets; the right-hand sides (one column per state component and
  // per input) in compressed columns: column c holds rhsRow/rhsVal[rhsPtr[c] … rhsPtr[c+1]−1]
  let nM = 0;
  const rhsPtr = new Int32Array(n + m + 1);
  const rhsColOf = (s: number) => (stateIdx[s] >= 0 ? stateIdx[s] : inputIdx[s] >= 0 ? n + inputIdx[s] : -1);
  for (let k = 0; k < J.length; k++) {
    if (J[k] === 0) continue;
    const s = cm.cols[k];
    if (colOf[s] >= 0) nM++;
    else {
      const c = rhsColOf(s);
      if (c >= 0) rhsPtr[c + 1]++;
    }
  }
  for (let c = 0; c < n + m; c++) rhsPtr[c + 1] += rhsPtr[c];
  const mRows = new Int32Array(nM);
  const mCols = new Int32Array(nM);
  const mVals = new Float64Array(nM);
  const rhsRow = new Int32Array(rhsPtr[n + m]);
  const rhsVal = new Float64Array(rhsPtr[n + m]);
  {
    const fillAt = rhsPtr.slice(0, n + m);
    let w = 0;
    for (let k = 0; k < J.length; k++) {
      const v = J[k];
      if (v === 0) continue;
      const r = cm.rows[k];
      const s = cm.cols[k];
      if (colOf[s] >= 0) {
        mRows[w] = r;
        mCols[w] = colOf[s];
        mVals[w++] = v;
      } else {
        const c = rhsColOf(s);
        if (c >= 0) {
          rhsRow[fillAt[c]] = r;
          rhsVal[fillAt[c]++] = -v;
        }
      }
    }
  }
  const lu = sparseLU(N, { rows: mRows, cols: mCols, vals: mVals, nnz: nM });
  if (!lu.ok) {
    const names = lu.singularCols.map((c) => lm.slots[unknownSlots[c]].name);
    const hasDeriv = lu.singularCols.some((c) => lm.slots[unknownSlots[c]].kind === 'deriv');
    diagnostics.push(diag('P507', pointSpan, { point, what: hasDeriv ? 'the highest derivatives' : 'the algebraic unknowns', names: listNames(names) }, { data: { names } }));
    return res;
  }

  const tscale = lm.timeScale;
  const sl = lm.slots;
  // For each state component i, its derivative slot: either another component (shift) or a highest derivative.
  const derivRow = lm.componentDerivative.map((d) => (stateIdx[d] >= 0 ? -1 - stateIdx[d] : colOf[d]));
  // which rows of A/B and C/D each unknown feeds
  const stateOfUnknown = new Int32Array(N).fill(-1);
  for (let i = 0; i < n; i++) if (derivRow[i] >= 0) stateOfUnknown[derivRow[i]] = i;
  const outputOfUnknown = new Int32Array(N).fill(-1);
  for (let i = 0; i < p; i++) if (colOf[outputs[i]] >= 0) outputOfUnknown[colOf[outputs[i]]] = i;
  const stateScale = states.map((s) => sl[s].scale);
  const outScale = outputs.map((s) => sl[s].scale);

  // entries of [A B] (rows: state components) and [C D] (rows: outputs) as triplets with their bounds
  const top = new Triplets();
  const bottom = new Triplets();
  const solver = new SparseSolver(lu.factors);
  for (let c = 0; c < n + m; c++) {
    const srcScale = c < n ? sl[states[c]].scale : sl[inputs[c - n]].scale;
    const r0 = rhsPtr[c];
    const sol = solver.solve(rhsRow.subarray(r0), rhsVal.subarray(r0), rhsPtr[c + 1] - r0, true);
    for (let t = 0; t < sol.count; t++) {
      const u = sol.cols[t];
      const i = stateOfUnknown[u];
      if (i >= 0) top.push(i, c, ((sol.x[u] * srcScale) / stateScale[i]) * tscale, ((sol.bound[u] * srcScale) / stateScale[i]) * tscale);
      const o = outputOfUnknown[u];
      if (o >= 0) bottom.push(o, c, (sol.x[u] * srcScale) / outScale[o], (sol.bound[u] * srcScale) / outScale[o]);
    }
  }
  // shift rows of higher-order states: d(x^(k))/dt = x^(k+1)
  for (let i = 0; i < n; i++) {
    const dr = derivRow[i];
    if (dr < 0) {
      const j = -1 - dr;
      const v = (sl[states[j]].scale / sl[states[i]].scale) * tscale;
      top.push(i, j, v, Math.abs(v));
    }
  }
  [res.sparse.A, res.sparse.B] = top.toCsr(n, n, m);
  [res.sparse.C, res.sparse.D] = bottom.toCsr(p, n, m);
  // an entry that is not finite, or beyond what the analyses can take, is an error on its equation
  const problems = linearModelProblems(lm, res, pointSpan);
  if (problems.length) {
    pushAll(diagnostics, problems);
    return res;
  }
  res.ok = true;
  return res;
}

/**
 * Entries (row, column of [M N], value, bound) of a pair of matrices sharing their rows. An entry whose
 * magnitude is below CHOP times its bound (the same substitutions in absolute values) is what is left
 * where terms cancel exactly; it is dropped. The test compares each entry with its own terms only, so a
 * model whose coefficients span many orders of magnitude keeps every entry (no row-wide threshold).
 */
class Triplets {
  r = new Int32Array(64);
  c = new Int32Array(64);
  v = new Float64Array(64);
  count = 0;
  push(i: number, j: number, v: number, bound: number): void {
    if (v === 0 || Math.abs(v) < CHOP * bound) return;
    const k = this.count;
    if (k === this.r.length) {
      const grow = <A extends Int32Array | Float64Array>(a: A, make: (n: number) => A): A => {
        const b = make(2 * k);
        b.set(a);
        return b;
      };
      this.r = grow(this.r, (n) => new Int32Array(n));
      this.c = grow(this.c, (n) => new Int32Array(n));
      this.v = grow(this.v, (n) => new Float64Array(n));
    }
    this.r[k] = i;
    this.c[k] = j;
    this.v[k] = v;
    this.count = k + 1;
  }
  /**
   * [M N] split at column c1 into two CSR matrices. The entries come column by column (and a row's
   * entries in ascending columns), without repeats, so a stable bucketing by row gives each row's
   * columns in order; any other input goes through csrFromTriplets (sorts, sums repeats).
   */
  toCsr(rows: number, c1: number, c2: number): [CsrMatrix, CsrMatrix] {
    const { r, c, v, count } = this;
    const ptrL = new Int32Array(rows + 1);
    const ptrR = new Int32Array(rows + 1);
    for (let k = 0; k < count; k++) (c[k] < c1 ? ptrL : ptrR)[r[k] + 1]++;
    for (let i = 0; i < rows; i++) {
      ptrL[i + 1] += ptrL[i];
      ptrR[i + 1] += ptrR[i];
    }
    const L: CsrMatrix = { rows, cols: c1, rowPtr: ptrL, colIdx: new Int32Array(ptrL[rows]), values: new Float64Array(ptrL[rows]) };
    const R: CsrMatrix = { rows, cols: c2, rowPtr: ptrR, colIdx: new Int32Array(ptrR[rows]), values: new Float64Array(ptrR[rows]) };
    const atL = ptrL.slice(0, rows);
    const atR = ptrR.slice(0, rows);
    let ordered = true;
    for (let k = 0; k < count; k++) {
      const i = r[k];
      const left = c[k] < c1;
      const M = left ? L : R;
      const at = left ? atL : atR;
      const w = at[i]++;
      const j = left ? c[k] : c[k] - c1;
      if (w > M.rowPtr[i] && M.colIdx[w - 1] >= j) ordered = false;
      M.colIdx[w] = j;
      M.values[w] = v[k];
    }
    if (ordered) return [L, R];
    const pick = (left: boolean) => {
      const ks: number[] = [];
      for (let k = 0; k < count; k++) if (c[k] < c1 === left) ks.push(k);
      const off = left ? 0 : c1;
      return csrFromTriplets(rows, left ? c1 : c2, ks.map((k) => r[k]), ks.map((k) => c[k] - off), ks.map((k) => v[k]));
    };
    return [pick(true), pick(false)];
  }
}

/** Value of a slot in its declared unit. */
export function declaredValue(slot: Slot, si: number): number {
  return (si - slot.offset) / slot.scale;
}

export interface DeviationEquation {
  /** e.g. "Δlevel'" or "Δlevel_cm" */
  lhs: string;
  terms: { coef: number; name: string }[];
  text: string;
  kind: 'state' | 'output';
  /** Index into states or outputs. */
  index: number;
}

/**
 * Deviation equations, one per first-order state component whose derivative is not simply the next
 * component (those rows, Δx' = Δx', are implied), and one per output.
 */
export function deviationEquations(lin: LinearModel, digits = 4): DeviationEquation[] {
  const out: DeviationEquation[] = [];
  const { n, p, states, inputs } = lin;
  const { A, B, C, D } = lin.sparse;
  // a coefficient's magnitude as text: for digits ≤ 15 rounding is idempotent (the double nearest a
  // 15-digit decimal prints back to it), so it is the signed text without its sign
  const exactMag = digits <= 15;
  const row = (lhs: string, M: CsrMatrix, N: CsrMatrix, i: number, kind: 'state' | 'output') => {
    const terms: { coef: number; name: string }[] = [];
    let text = '';
    const add = (coef: number, name: string) => {
      const k = terms.length;
      terms.push({ coef, name });
      const signed = formatNumber(coef, digits);
      const neg = coef < 0;
      const magText = !neg ? signed : exactMag ? signed.slice(1) : formatNumber(Math.abs(Number(signed)), digits);
      const coefText = magText === '1' ? '' : `${magText}*`;
      const sign = neg ? (k === 0 ? '-' : ' - ') : k === 0 ? '' : ' + ';
      text += `${sign}${coefText}Δ${name}`;
    };
    for (let t = M.rowPtr[i], e = M.rowPtr[i + 1]; t < e; t++) if (M.values[t] !== 0) add(M.values[t], states[M.colIdx[t]]);
    for (let t = N.rowPtr[i], e = N.rowPtr[i + 1]; t < e; t++) if (N.values[t] !== 0) add(N.values[t], inputs[N.colIdx[t]]);
    out.push({ lhs, terms, text: `${lhs} = ${text || '0'}`, kind, index: i });
  };
  for (let i = 0; i < n; i++) {
    const next = states[i] + "'";
    // Δx' = Δx' rows are implied: row i is only a non-zero in the column of the state named x'
    const j = soleColumn(lin.sparse, i);
    if (j >= 0 && states[j] === next) continue;
    row(`Δ${next}`, A, B, i, 'state');
  }
  for (let i = 0; i < p; i++) row(`Δ${lin.outputs[i]}`, C, D, i, 'output');
  return out;
}

/** The one column of A in which row i of [A B] has non-zeros (−1 when there are none, several, or some in B). */
function soleColumn(s: LinearSparse, i: number): number {
  const { A, B } = s;
  let j = -1;
  for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) {
    if (A.values[t] === 0) continue;
    if (j >= 0 && A.colIdx[t] !== j) return -1;
    j = A.colIdx[t];
  }
  for (let t = B.rowPtr[i]; t < B.rowPtr[i + 1]; t++) if (B.values[t] !== 0) return -1;
  return j;
}

/** Whether row i of [A B] is only a non-zero in column j (exactly `one` there when given). */
export function impliedShift(s: LinearSparse, i: number, j: number, one?: number): boolean {
  const { A, B } = s;
  let hit = false;
  for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) {
    const v = A.values[t];
    if (v === 0) continue;
    if (A.colIdx[t] !== j || (one !== undefined && v !== one)) return false;
    hit = true;
  }
  for (let t = B.rowPtr[i]; t < B.rowPtr[i + 1]; t++) if (B.values[t] !== 0) return false;
  return hit;
}

/**
 * Linearizer: at a solved point, the descriptor form F(w, x, z, u) = 0 (w the highest derivatives,
 * x the state components, z the vars and outputs, u the inputs) is differentiated symbolically; the
 * square block ∂F/∂(w, z) is factored (sparse LU with pivoting) and the highest derivatives and the
 * algebraic unknowns are eliminated:  [Δw; Δz] = −[F_w F_z]⁻¹ (F_x Δx + F_u Δu).
 * A, B, C, D are returned in the declared units of each variable, time in the model's time unit.
 */
import { diag, type Diagnostic } from '../diagnostics';
import { formatNumber } from '../algebra/expr';
import { compileModel } from '../model/jacobian';
import type { LoweredModel, Slot } from '../model/model';
import { sparseLU } from '../numeric/sparseLU';
import { listNames } from '../model/structure';
import type { Span } from '../text';
import { chopRoundOff, equilibrate, linearModelProblems } from './scaling';

export interface LinearModel {
  point: string;
  /** First-order state components (x, x', …), inputs and outputs, in matrix order. */
  states: string[];
  inputs: string[];
  outputs: string[];
  stateUnits: string[];
  inputUnits: string[];
  outputUnits: string[];
  /** Row-major dense matrices in declared units. */
  A: Float64Array;
  B: Float64Array;
  C: Float64Array;
  D: Float64Array;
  n: number;
  m: number;
  p: number;
  /** Slot ids in matrix order (for the core's own use). */
  stateSlots: number[];
  inputSlots: number[];
  outputSlots: number[];
  /** Operating values in declared units for every non-constant slot (states, inputs, vars, outputs). */
  timeUnit: string;
  diagnostics: Diagnostic[];
  ok: boolean;
}

export function linearize(lm: LoweredModel, unknownSlots: number[], values: Float64Array, point: string, pointSpan: Span): LinearModel {
  const cm = compileModel(lm);
  const diagnostics: Diagnostic[] = [];
  const states = lm.stateComponents;
  const inputs = lm.inputs;
  const outputs = lm.slots.filter((s) => s.kind === 'output').map((s) => s.id);
  const n = states.length;
  const m = inputs.length;
  const p = outputs.length;
  const res: LinearModel = {
    point, states: states.map((s) => lm.slots[s].name), inputs: inputs.map((s) => lm.slots[s].name), outputs: outputs.map((s) => lm.slots[s].name),
    stateUnits: states.map((s) => lm.slots[s].unit.text), inputUnits: inputs.map((s) => lm.slots[s].unit.text), outputUnits: outputs.map((s) => lm.slots[s].unit.text),
    A: new Float64Array(n * n), B: new Float64Array(n * m), C: new Float64Array(p * n), D: new Float64Array(p * m), n, m, p,
    stateSlots: states, inputSlots: inputs, outputSlots: outputs, timeUnit: lm.timeUnit || 's', diagnostics, ok: false,
  };

  const N = unknownSlots.length; // highest derivatives then algebraic
  const colOf = new Int32Array(lm.slots.length).fill(-1);
  unknownSlots.forEach((s, i) => (colOf[s] = i));
  const stateIdx = new Int32Array(lm.slots.length).fill(-1);
  states.forEach((s, i) => (stateIdx[s] = i));
  const inputIdx = new Int32Array(lm.slots.length).fill(-1);
  inputs.forEach((s, i) => (inputIdx[s] = i));

  const J = new Float64Array(cm.nodes.length);
  cm.jacobian(values, J);
  const mRows: number[] = [];
  const mCols: number[] = [];
  const mVals: number[] = [];
  // right-hand sides: one column per state component and per input (sparse lists)
  const rhsX: { r: number; v: number }[][] = Array.from({ length: n }, () => []);
  const rhsU: { r: number; v: number }[][] = Array.from({ length: m }, () => []);
  for (let k = 0; k < J.length; k++) {
    const v = J[k];
    if (v === 0) continue;
    const r = cm.rows[k];
    const s = cm.cols[k];
    if (colOf[s] >= 0) {
      mRows.push(r);
      mCols.push(colOf[s]);
      mVals.push(v);
    } else if (stateIdx[s] >= 0) rhsX[stateIdx[s]].push({ r, v: -v });
    else if (inputIdx[s] >= 0) rhsU[inputIdx[s]].push({ r, v: -v });
  }
  for (let k = 0; k < J.length; k++) {
    if (!Number.isFinite(J[k])) {
      diagnostics.push(diag('P504', lm.equations[cm.rows[k]].span, { point, detail: `the derivative with respect to ${lm.slots[cm.cols[k]].name} is not finite` }));
      return res;
    }
  }
  if (cm.nEq !== N) return res; // structure errors are reported by the structure checker
  // equilibrated (exact power-of-two factors): a rescaled model eliminates alike (solve/scaling.ts)
  const eq = equilibrate(N, N, mRows, mCols, mVals);
  const sVals = Float64Array.from(mVals, (v, k) => v * eq.r[mRows[k]] * eq.c[mCols[k]]);
  const lu = sparseLU(N, { rows: Int32Array.from(mRows), cols: Int32Array.from(mCols), vals: sVals, nnz: mRows.length });
  if (!lu.ok) {
    const names = lu.singularCols.map((c) => lm.slots[unknownSlots[c]].name);
    const hasDeriv = lu.singularCols.some((c) => lm.slots[unknownSlots[c]].kind === 'deriv');
    diagnostics.push(diag('P507', pointSpan, { point, what: hasDeriv ? 'the highest derivatives' : 'the algebraic unknowns', names: listNames(names) }, { data: { names } }));
    return res;
  }

  // rows of interest in the solution: highest derivatives feeding A/B, outputs feeding C/D
  const tscale = lm.timeScale;
  const sl = lm.slots;
  const b = new Float64Array(N);
  const solveCol = (col: { r: number; v: number }[]): Float64Array => {
    b.fill(0);
    for (const e of col) b[e.r] += e.v * eq.r[e.r];
    const x = lu.solve(b);
    chopRoundOff(x); // in equilibrated units, per solved column
    for (let i = 0; i < N; i++) x[i] *= eq.c[i];
    return x;
  };
  // For each state component i, its derivative slot: either another component (shift) or a highest derivative.
  const derivRow = lm.componentDerivative.map((d) => (stateIdx[d] >= 0 ? -1 - stateIdx[d] : colOf[d]));
  const outRow = outputs.map((o) => colOf[o]);
  const fill = (j: number, x: Float64Array, srcScale: number, Mx: Float64Array, ncol: number, Dy: Float64Array) => {
    for (let i = 0; i < n; i++) {
      const dr = derivRow[i];
      if (dr >= 0) {
        const si = sl[states[i]].scale;
        Mx[i * ncol + j] = x[dr] * srcScale / si * tscale;
      }
    }
    for (let i = 0; i < p; i++) Dy[i * ncol + j] = x[outRow[i]] * srcScale / sl[outputs[i]].scale;
  };
  for (let j = 0; j < n; j++) {
    const x = solveCol(rhsX[j]);
    fill(j, x, sl[states[j]].scale, res.A, n, res.C);
  }
  for (let j = 0; j < m; j++) {
    const x = solveCol(rhsU[j]);
    fill(j, x, sl[inputs[j]].scale, res.B, m, res.D);
  }
  // shift rows of higher-order states: d(x^(k))/dt = x^(k+1)
  for (let i = 0; i < n; i++) {
    const dr = derivRow[i];
    if (dr < 0) {
      const j = -1 - dr;
      res.A[i * n + j] = (sl[states[j]].scale / sl[states[i]].scale) * tscale;
    }
  }
  // an entry that is not finite, or beyond what the analyses can take, is an error on its equation
  const problems = linearModelProblems(lm, res, pointSpan);
  if (problems.length) {
    diagnostics.push(...problems);
    return res;
  }
  res.ok = true;
  return res;
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
  const { n, m, p } = lin;
  const row = (lhs: string, coefs: [number, string][], kind: 'state' | 'output', index: number) => {
    const terms = coefs.filter(([c]) => c !== 0).map(([coef, name]) => ({ coef, name }));
    let text = '';
    terms.forEach((t, k) => {
      const c = Number(formatNumber(t.coef, digits));
      const mag = Math.abs(c);
      const coefText = mag === 1 ? '' : `${formatNumber(mag, digits)}*`;
      const sign = c < 0 ? (k === 0 ? '-' : ' - ') : k === 0 ? '' : ' + ';
      text += `${sign}${coefText}Δ${t.name}`;
    });
    out.push({ lhs, terms, text: `${lhs} = ${text || '0'}`, kind, index });
  };
  for (let i = 0; i < n; i++) {
    const name = lin.states[i];
    const next = name + "'";
    if (lin.states.includes(next)) {
      // implied shift row: check it really is the identity
      const j = lin.states.indexOf(next);
      let pure = lin.A[i * n + j] !== 0;
      for (let k = 0; k < n && pure; k++) if (k !== j && lin.A[i * n + k] !== 0) pure = false;
      for (let k = 0; k < m && pure; k++) if (lin.B[i * m + k] !== 0) pure = false;
      if (pure) continue;
    }
    const coefs: [number, string][] = [];
    for (let j = 0; j < n; j++) coefs.push([lin.A[i * n + j], lin.states[j]]);
    for (let j = 0; j < m; j++) coefs.push([lin.B[i * m + j], lin.inputs[j]]);
    row(`Δ${next}`, coefs, 'state', i);
  }
  for (let i = 0; i < p; i++) {
    const coefs: [number, string][] = [];
    for (let j = 0; j < n; j++) coefs.push([lin.C[i * n + j], lin.states[j]]);
    for (let j = 0; j < m; j++) coefs.push([lin.D[i * m + j], lin.inputs[j]]);
    row(`Δ${lin.outputs[i]}`, coefs, 'output', i);
  }
  return out;
}

/**
 * Scaling for the elimination of the linearizer, and the checks of its results.
 *
 * - `equilibrate`: row and column scale factors (powers of two, so scaling is exact in floating point) that
 *   bring the largest entry of every row and column of a sparse matrix near 1 (Ruiz's iteration: divide
 *   by the square root of the row and column maxima until they settle). A model whose equations or
 *   variables are rescaled (other units, an equation multiplied by 1e10, a coefficient of 1e-16) then
 *   gives the same elimination, and round-off is judged against numbers of the same size.
 * - `chopRoundOff`: zeroes, in one solved column, what is round-off of exact cancellation (|x| below
 *   1e-13 of the column's largest entry, in equilibrated units). Judged per column (one solve), never across
 *   the columns of a row: a B entry of 1 next to an A entry of 1e16 is a real entry, not round-off.
 * - `linearModelProblems`: every A–D entry that is not finite, or is so large or small that the analyses
 *   built on it (eigenvalues, transfer functions, responses) would overflow or underflow, as an error on
 *   the equation that produced its row.
 */
import { diag, type Diagnostic } from '../diagnostics';
import { dependsOn, formatNumber } from '../algebra/expr';
import type { LoweredModel } from '../model/model';
import type { Span } from '../text';

export interface Equilibration {
  /** Row factors (multiply row r by r[r]). */
  r: Float64Array;
  /** Column factors (the unknown of column c is c[c] times the scaled unknown). */
  c: Float64Array;
}

const pow2 = (x: number): number => (x > 0 && Number.isFinite(x) ? Math.pow(2, Math.round(Math.log2(x))) : 1);

export function equilibrate(nRows: number, nCols: number, rows: ArrayLike<number>, cols: ArrayLike<number>, vals: ArrayLike<number>, sweeps = 20): Equilibration {
  const r = new Float64Array(nRows).fill(1);
  const c = new Float64Array(nCols).fill(1);
  const rmax = new Float64Array(nRows);
  const cmax = new Float64Array(nCols);
  for (let it = 0; it < sweeps; it++) {
    rmax.fill(0);
    cmax.fill(0);
    for (let k = 0; k < vals.length; k++) {
      const a = Math.abs(vals[k] * r[rows[k]] * c[cols[k]]);
      if (a > rmax[rows[k]]) rmax[rows[k]] = a;
      if (a > cmax[cols[k]]) cmax[cols[k]] = a;
    }
    let moved = false;
    for (let i = 0; i < nRows; i++) {
      const f = pow2(1 / Math.sqrt(rmax[i]));
      if (f !== 1) {
        r[i] *= f;
        moved = true;
      }
    }
    for (let j = 0; j < nCols; j++) {
      const f = pow2(1 / Math.sqrt(cmax[j]));
      if (f !== 1) {
        c[j] *= f;
        moved = true;
      }
    }
    if (!moved) break;
  }
  return { r, c };
}

/** Zeroes round-off of exact cancellation in one solved column (see the file comment). */
export function chopRoundOff(x: Float64Array, rel = 1e-13): void {
  let mx = 0;
  for (let i = 0; i < x.length; i++) mx = Math.max(mx, Math.abs(x[i]));
  const tol = mx * rel;
  for (let i = 0; i < x.length; i++) if (Math.abs(x[i]) < tol) x[i] = 0;
}

/** Entries beyond these magnitudes make products in the analyses overflow or underflow (≈ √ of double's range). */
export const ENTRY_MAX = 1e150;
export const ENTRY_MIN = 1e-150;

export interface LinearEntries {
  point: string;
  states: string[];
  inputs: string[];
  outputs: string[];
  stateSlots: number[];
  outputSlots: number[];
  A: Float64Array;
  B: Float64Array;
  C: Float64Array;
  D: Float64Array;
  n: number;
  m: number;
  p: number;
}

/**
 * P511 for the first bad entry of each row of [A B] and [C D]: not finite, or beyond ENTRY_MAX/ENTRY_MIN.
 * The range is the equation that holds the row's highest derivative (state rows) or the output's
 * definition (output rows); `fallback` (the point's name) when there is none.
 */
export function linearModelProblems(lm: LoweredModel, lin: LinearEntries, fallback: Span): Diagnostic[] {
  const out: Diagnostic[] = [];
  // the equation each slot first appears in (highest derivatives and outputs)
  const firstEquation = (slot: number): Span => {
    if (slot < 0) return fallback;
    const sl = lm.slots[slot];
    if (sl.kind === 'output') {
      const e = lm.equations.find((q) => q.kind === 'output' && lm.slots.filter((s) => s.kind === 'output')[q.index]?.id === slot);
      if (e) return e.span;
    }
    for (const q of lm.equations) if (dependsOn(q.residual, slot)) return q.span;
    return fallback;
  };
  const check = (rowName: string, slot: number, M: Float64Array, N: Float64Array, i: number, c1: number, c2: number, cols1: string[], cols2: string[], m1: string, m2: string) => {
    for (let j = 0; j < c1 + c2; j++) {
      const v = j < c1 ? M[i * c1 + j] : N[i * c2 + j - c1];
      const a = Math.abs(v);
      if (Number.isFinite(v) && (v === 0 || (a <= ENTRY_MAX && a >= ENTRY_MIN))) continue;
      const what = !Number.isFinite(v) ? `a value that is not finite (${v})` : a > ENTRY_MAX ? `an entry too large for the analyses (${formatNumber(v, 4)}, beyond ±1e150)` : `an entry too small for the analyses (${formatNumber(v, 4)}, below 1e-150)`;
      const entry = `${j < c1 ? m1 : m2}[${rowName}, ${j < c1 ? cols1[j] : cols2[j - c1]}]`;
      out.push(diag('P511', firstEquation(slot), { point: lin.point, what, entry }, { data: { entry } }));
      return;
    }
  };
  for (let i = 0; i < lin.n; i++) {
    const comp = lm.componentDerivative[lm.stateComponents.indexOf(lin.stateSlots[i])] ?? -1;
    const slot = comp >= 0 && lm.slots[comp].kind === 'deriv' ? comp : -1;
    check(`Δ${lin.states[i]}'`, slot, lin.A, lin.B, i, lin.n, lin.m, lin.states, lin.inputs, 'A', 'B');
  }
  for (let i = 0; i < lin.p; i++) check(`Δ${lin.outputs[i]}`, lin.outputSlots[i], lin.C, lin.D, i, lin.n, lin.m, lin.states, lin.inputs, 'C', 'D');
  return out;
}

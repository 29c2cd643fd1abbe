/**
 * Range check of a linear model: every A–D entry that is not finite, or so large or small that the
 * analyses built on it (eigenvalues, transfer functions, responses) would overflow or underflow, is an
 * error (P511) on the equation that produced its row — never printed, exported or written by a lens.
 * Works on the sparse form, so it costs one pass over the stored entries.
 */
import { diag, type Diagnostic } from '../diagnostics';
import { dependsOn, formatNumber } from '../algebra/expr';
import type { LoweredModel } from '../model/model';
import type { CsrMatrix } from '../numeric/csr';
import type { Span } from '../text';

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
  sparse: { A: CsrMatrix; B: CsrMatrix; C: CsrMatrix; D: CsrMatrix };
  n: number;
  p: number;
}

const inRange = (v: number): boolean => v === 0 || (Number.isFinite(v) && Math.abs(v) <= ENTRY_MAX && Math.abs(v) >= ENTRY_MIN);

/**
 * P511 for the first bad entry of each row of [A B] and [C D]. The range is the equation that holds the
 * row's highest derivative (state rows) or the output's definition (output rows); `fallback` (the point's
 * name) when there is none.
 */
export function linearModelProblems(lm: LoweredModel, lin: LinearEntries, fallback: Span): Diagnostic[] {
  const out: Diagnostic[] = [];
  const { A, B, C, D } = lin.sparse;
  const equationOf = (slot: number): Span => {
    if (slot < 0) return fallback;
    if (lm.slots[slot].kind === 'output') {
      const k = lin.outputSlots.indexOf(slot);
      const e = lm.equations.find((q) => q.kind === 'output' && q.index === k);
      if (e) return e.span;
    }
    for (const q of lm.equations) if (dependsOn(q.residual, slot)) return q.span;
    return fallback;
  };
  const firstBad = (M: CsrMatrix, i: number): number => {
    for (let t = M.rowPtr[i]; t < M.rowPtr[i + 1]; t++) if (!inRange(M.values[t])) return t;
    return -1;
  };
  const check = (rowName: string, slot: number, M: CsrMatrix, N: CsrMatrix, i: number, m1: string, m2: string, cols1: string[], cols2: string[]) => {
    let t = firstBad(M, i);
    let mat = M;
    let name = m1;
    let cols = cols1;
    if (t < 0) {
      t = firstBad(N, i);
      mat = N;
      name = m2;
      cols = cols2;
    }
    if (t < 0) return;
    const v = mat.values[t];
    const what = !Number.isFinite(v)
      ? `a value that is not finite (${v})`
      : Math.abs(v) > ENTRY_MAX
        ? `an entry too large for the analyses (${formatNumber(v, 4)}, beyond ±1e150)`
        : `an entry too small for the analyses (${formatNumber(v, 4)}, below 1e-150 in magnitude)`;
    const entry = `${name}[${rowName}, ${cols[mat.colIdx[t]]}]`;
    out.push(diag('P511', equationOf(slot), { point: lin.point, what, entry }, { data: { entry } }));
  };
  // the equation of a row is looked up only for a row with a bad entry (one pass over the entries otherwise)
  let componentOf: Map<number, number> | undefined;
  const slotOfRow = (i: number): number => {
    componentOf ??= new Map(lm.stateComponents.map((s, k) => [s, k]));
    const comp = lm.componentDerivative[componentOf.get(lin.stateSlots[i]) ?? -1] ?? -1;
    return comp >= 0 && lm.slots[comp].kind === 'deriv' ? comp : -1;
  };
  for (let i = 0; i < lin.n; i++) {
    if (firstBad(A, i) < 0 && firstBad(B, i) < 0) continue;
    check(`Δ${lin.states[i]}'`, slotOfRow(i), A, B, i, 'A', 'B', lin.states, lin.inputs);
  }
  for (let i = 0; i < lin.p; i++) check(`Δ${lin.outputs[i]}`, lin.outputSlots[i], C, D, i, 'C', 'D', lin.states, lin.inputs);
  return out;
}

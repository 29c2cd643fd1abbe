/**
 * The Jacobian of an ODE reduced from a descriptor system (analysis/simulate.ts), in a sparse pattern:
 * X' has rows of two kinds, a shift row (X'_i is another state component: one unit entry) and the row of
 * a highest derivative w, found from F(w, X, z) = 0, whose row is −e_wᵀ M⁻¹ F_X with M = ∂F/∂(w, z).
 *
 * The pattern of M⁻¹F_X is found numerically with random values on the patterns of M and F_X (a fixed
 * seed; the values of every entry independent): an entry of the product that is structurally non-zero
 * is then non-zero with probability one, and one that is structurally zero comes out exactly zero (the
 * sparse solves never touch it). A product entry that is zero for independent random values is zero for
 * every value, so the pattern holds every entry the model can produce.
 *
 * The values are filled row by row (a transposed solve per highest derivative, then the product with F_X
 * over the non-zeros of the solution) or column by column (a solve per state component), whichever needs
 * fewer solves; with a constant M the rows of M⁻¹ are solved for once and kept.
 */
import { sparseLU } from './sparseLU';
import type { PatternLU } from './patternLU';

export interface ReducedPattern {
  /** Compressed rows: row i's columns colIdx[rowPtr[i] … rowPtr[i+1]−1], ascending. */
  rowPtr: Int32Array;
  colIdx: Int32Array;
  /** Positions (in colIdx) of the unit entries of the shift rows. */
  unitEntries: Int32Array;
  /** The rows of highest derivatives, and the unknown column of each one's derivative. */
  wRows: Int32Array;
  wCol: Int32Array;
  /** By state column j: entries e from colStart[j] to colStart[j+1]−1 of highest-derivative rows, at position colSlot[e], unknown column colUnknown[e]. */
  colStart: Int32Array;
  colSlot: Int32Array;
  colUnknown: Int32Array;
}

/** The descriptor system's Jacobian entries the reduction uses. */
export interface ReducedParts {
  /** Number of state components and of unknowns (= equations). */
  n: number;
  N: number;
  /** M's pattern: equation and unknown column of each entry. */
  mRows: Int32Array;
  mCols: Int32Array;
  /** F_X's entries: index into the Jacobian's value vector, equation, state component. */
  xEnt: Int32Array;
  xRows: Int32Array;
  xCols: Int32Array;
  /** Per row i of X': the state component X'_i is (≥ 0), or −1 for a highest derivative … */
  shiftCol: Int32Array;
  /** … whose unknown column is this. */
  unknownCol: Int32Array;
}

export class ReducedJacobian {
  readonly pattern: ReducedPattern;
  /** F_X by equation: positions byEq[eqPtr[r] … eqPtr[r+1]−1] into xEnt. */
  private readonly eqPtr: Int32Array;
  private readonly byEq: Int32Array;
  /** F_X by state component: positions byState[statePtr[j] … statePtr[j+1]−1] into xEnt. */
  private readonly statePtr: Int32Array;
  private readonly byState: Int32Array;
  /** With a constant M: the non-zeros of M⁻ᵀ e_w for each highest derivative (solved for once). */
  private yRows: { ptr: Int32Array; eq: Int32Array; val: Float64Array } | undefined;
  private readonly rhs: Float64Array;
  private readonly y: Float64Array;
  private readonly acc: Float64Array;

  constructor(private readonly parts: ReducedParts) {
    const { n, N, xRows, xCols } = parts;
    this.pattern = reducedPattern(parts);
    const group = (keys: Int32Array, size: number): [Int32Array, Int32Array] => {
      const ptr = new Int32Array(size + 1);
      for (let q = 0; q < keys.length; q++) ptr[keys[q] + 1]++;
      for (let r = 0; r < size; r++) ptr[r + 1] += ptr[r];
      const list = new Int32Array(keys.length);
      const fill = ptr.slice(0, size);
      for (let q = 0; q < keys.length; q++) list[fill[keys[q]]++] = q;
      return [ptr, list];
    };
    [this.eqPtr, this.byEq] = group(xRows, N);
    [this.statePtr, this.byState] = group(xCols, n);
    this.rhs = new Float64Array(N);
    this.y = new Float64Array(N);
    this.acc = new Float64Array(n);
  }

  /**
   * The values of ∂X'/∂X into `vals` (pattern order) from the Jacobian values `Jv` of the descriptor
   * system and the factors of M at the same point; `constant`: M never changes (its rows are kept).
   */
  fill(vals: Float64Array, Jv: Float64Array, lu: PatternLU, constant: boolean): void {
    const { n, N, xEnt, xRows, xCols } = this.parts;
    const { rowPtr, colIdx, wRows, wCol } = this.pattern;
    const { rhs, acc, eqPtr, byEq } = this;
    for (const p of this.pattern.unitEntries) vals[p] = 1;
    if (!wRows.length) return;
    if (wRows.length < n) {
      // row i: −e_wᵀ M⁻¹ F_X = −(M⁻ᵀ e_w)ᵀ F_X, over the non-zeros of M⁻ᵀ e_w and the rows of F_X
      const yr = constant ? this.constantRows(lu) : undefined;
      // acc[j] −= y_eq·F_X[eq, j] over the non-zeros y_eq, or (clear) acc[j] = 0 where that touched
      const sweep = (eqs: Int32Array | undefined, yv: Float64Array, from: number, to: number, clear: boolean): void => {
        for (let q = from; q < to; q++) {
          const eq = eqs ? eqs[q] : q;
          const ye = yv[q];
          if (ye === 0) continue;
          for (let t = eqPtr[eq], te = eqPtr[eq + 1]; t < te; t++) {
            const e = byEq[t];
            if (clear) acc[xCols[e]] = 0;
            else acc[xCols[e]] -= ye * Jv[xEnt[e]];
          }
        }
      };
      for (let r = 0; r < wRows.length; r++) {
        const i = wRows[r];
        if (yr) sweep(yr.eq, yr.val, yr.ptr[r], yr.ptr[r + 1], false);
        else {
          rhs.fill(0);
          rhs[wCol[r]] = 1;
          lu.solveTranspose(rhs, this.y);
          sweep(undefined, this.y, 0, N, false);
        }
        for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) vals[p] = acc[colIdx[p]];
        // clear what was touched (round-off outside the pattern, from a pivot order other than the pattern's, is dropped)
        if (yr) sweep(yr.eq, yr.val, yr.ptr[r], yr.ptr[r + 1], true);
        else sweep(undefined, this.y, 0, N, true);
      }
      return;
    }
    const { colStart, colSlot, colUnknown } = this.pattern;
    const { statePtr, byState } = this;
    for (let j = 0; j < n; j++) {
      rhs.fill(0);
      for (let t = statePtr[j]; t < statePtr[j + 1]; t++) {
        const e = byState[t];
        rhs[xRows[e]] -= Jv[xEnt[e]];
      }
      const y = lu.solve(rhs, this.y);
      for (let e = colStart[j]; e < colStart[j + 1]; e++) vals[colSlot[e]] = y[colUnknown[e]];
    }
  }

  /** With a constant M: the non-zeros of M⁻ᵀ e_w for each highest derivative w (solved once). */
  private constantRows(lu: PatternLU): { ptr: Int32Array; eq: Int32Array; val: Float64Array } {
    if (this.yRows) return this.yRows;
    const { wCol } = this.pattern;
    const ptr = new Int32Array(wCol.length + 1);
    const eq: number[] = [];
    const val: number[] = [];
    for (let r = 0; r < wCol.length; r++) {
      this.rhs.fill(0);
      this.rhs[wCol[r]] = 1;
      const y = lu.solveTranspose(this.rhs, this.y);
      for (let k = 0; k < this.parts.N; k++) {
        if (y[k] === 0) continue;
        eq.push(k);
        val.push(y[k]);
      }
      ptr[r + 1] = eq.length;
    }
    this.yRows = { ptr, eq: Int32Array.from(eq), val: Float64Array.from(val) };
    return this.yRows;
  }
}

/** The pattern (see the file comment). */
export function reducedPattern(parts: ReducedParts): ReducedPattern {
  const { n, N, mRows, mCols, xRows, xCols, shiftCol, unknownCol } = parts;
  const wRowList: number[] = [];
  for (let i = 0; i < n; i++) if (shiftCol[i] < 0) wRowList.push(i);
  const wRows = Int32Array.from(wRowList);
  const wCol = Int32Array.from(wRowList, (i) => unknownCol[i]);
  // random values, fixed seed (a 32-bit linear congruential generator with Numerical Recipes' constants)
  let seed = 0x2545f491;
  const rand = (): number => {
    seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
    return (1 + seed / 4294967296) * (seed & 1 ? 1 : -1);
  };
  const nnzM = mRows.length;
  const lu = wRows.length ? sparseLU(N, { rows: mRows, cols: mCols, vals: Float64Array.from({ length: nnzM }, rand), nnz: nnzM }) : undefined;
  const rowCols: number[][] = new Array(n);
  const mark = new Int32Array(n).fill(-1);
  const e = new Float64Array(N);
  for (let i = 0; i < n; i++) {
    if (shiftCol[i] >= 0) {
      rowCols[i] = [shiftCol[i]];
      continue;
    }
    const cols: number[] = [];
    if (lu && lu.ok) {
      e.fill(0);
      e[unknownCol[i]] = 1;
      const y = lu.solveTranspose(e);
      for (let q = 0; q < xRows.length; q++) {
        const j = xCols[q];
        if (y[xRows[q]] !== 0 && mark[j] !== i) {
          mark[j] = i;
          cols.push(j);
        }
      }
    } else {
      // no factorisation to trace (cannot happen for a model the simulator accepts): every column
      for (let j = 0; j < n; j++) cols.push(j);
    }
    rowCols[i] = cols.sort((a, b) => a - b);
  }
  const rowPtr = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) rowPtr[i + 1] = rowPtr[i] + rowCols[i].length;
  const colIdx = new Int32Array(rowPtr[n]);
  const units: number[] = [];
  const colCount = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) {
    colIdx.set(rowCols[i], rowPtr[i]);
    if (shiftCol[i] >= 0) units.push(rowPtr[i]);
    else for (const j of rowCols[i]) colCount[j + 1]++;
  }
  for (let j = 0; j < n; j++) colCount[j + 1] += colCount[j];
  const colStart = colCount.slice();
  const colSlot = new Int32Array(colCount[n]);
  const colUnknown = new Int32Array(colCount[n]);
  const fill = colCount.slice(0, n);
  for (const i of wRows) {
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
      const at = fill[colIdx[p]]++;
      colSlot[at] = p;
      colUnknown[at] = unknownCol[i];
    }
  }
  return { rowPtr, colIdx, unitEntries: Int32Array.from(units), wRows, wCol, colStart, colSlot, colUnknown };
}

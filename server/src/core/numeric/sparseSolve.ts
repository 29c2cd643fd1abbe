/**
 * Solves with sparse right-hand sides after one sparse LU (sparseLU.ts), touching only the non-zeros:
 * the steps of the forward substitution that a right-hand side can reach are found by a depth-first
 * search in the graph of L, those of the back substitution by a search in the graph of Uᵀ (the method of
 * Gilbert and Peierls, "Sparse partial pivoting in time proportional to arithmetic operations", 1988).
 * The reached steps are then processed in step order, so every result is the same floating-point number
 * the dense substitution gives. Buffers are allocated once per solver and cleared after each solve.
 *
 * Alongside each solution the solver can give a bound of the same substitutions run with absolute values
 * (|U|⁻¹-like sums of |L|, |U| and |b|): an entry much smaller than its bound is left over from
 * cancellation, whatever the magnitudes elsewhere in the model.
 */
import type { SparseFactors } from './sparseLU';

export interface SparseSolution {
  /** Number of columns (unknowns) that may be non-zero. */
  count: number;
  /** Their indices: cols[0 … count−1]. */
  cols: Int32Array;
  /** Values, indexed by unknown; only the entries listed in cols are meaningful. */
  x: Float64Array;
  /** Bound of each entry by the substitutions in absolute values (when asked for), indexed like x. */
  bound: Float64Array;
}

export class SparseSolver {
  private readonly f: SparseFactors;
  private readonly stepOfRow: Int32Array;
  /** Graph of Uᵀ over steps: for step k, the earlier steps whose U row has an entry in column pivCol[k]. */
  private readonly utPtr: Int32Array;
  private readonly utStep: Int32Array;
  private readonly y: Float64Array;
  private readonly yb: Float64Array;
  private readonly x: Float64Array;
  private readonly xb: Float64Array;
  private readonly mark: Int32Array;
  private stamp = 0;
  private readonly stack: Int32Array;
  private readonly edge: Int32Array;
  private readonly fwd: Int32Array;
  private readonly bwd: Int32Array;
  private readonly cols: Int32Array;
  private lastCount = 0;

  constructor(factors: SparseFactors) {
    const f = (this.f = factors);
    const { n, rank } = f;
    if (rank !== n) throw new Error('SparseSolver: the matrix is singular');
    this.stepOfRow = new Int32Array(n);
    const stepOfCol = new Int32Array(n);
    for (let k = 0; k < n; k++) {
      this.stepOfRow[f.pivRow[k]] = k;
      stepOfCol[f.pivCol[k]] = k;
    }
    const cnt = new Int32Array(n + 1);
    for (let k = 0; k < n; k++) for (let t = f.up[k]; t < f.up[k + 1]; t++) cnt[stepOfCol[f.ui[t]] + 1]++;
    for (let k = 0; k < n; k++) cnt[k + 1] += cnt[k];
    this.utPtr = cnt.slice();
    this.utStep = new Int32Array(cnt[n]);
    const pos = cnt.slice(0, n);
    for (let k = 0; k < n; k++) for (let t = f.up[k]; t < f.up[k + 1]; t++) this.utStep[pos[stepOfCol[f.ui[t]]]++] = k;
    this.y = new Float64Array(n);
    this.yb = new Float64Array(n);
    this.x = new Float64Array(n);
    this.xb = new Float64Array(n);
    this.mark = new Int32Array(n);
    this.stack = new Int32Array(n);
    this.edge = new Int32Array(n);
    this.fwd = new Int32Array(n);
    this.bwd = new Int32Array(n);
    this.cols = new Int32Array(n);
  }

  /**
   * Depth-first search from the listed steps in the graph (ptr, adj mapped by map); appends every reached
   * step to out and returns the new length.
   */
  private reach(starts: Int32Array, nStart: number, ptr: Int32Array, adj: Int32Array, map: Int32Array | null, out: Int32Array): number {
    const mark = this.mark;
    const st = this.stamp;
    const stack = this.stack;
    const edge = this.edge;
    let count = 0;
    for (let s = 0; s < nStart; s++) {
      const k0 = starts[s];
      if (mark[k0] === st) continue;
      mark[k0] = st;
      out[count++] = k0;
      let sp = 0;
      stack[sp] = k0;
      edge[sp] = ptr[k0];
      sp++;
      while (sp > 0) {
        const k = stack[sp - 1];
        const t = edge[sp - 1];
        if (t < ptr[k + 1]) {
          edge[sp - 1] = t + 1;
          const j = map ? map[adj[t]] : adj[t];
          if (mark[j] !== st) {
            mark[j] = st;
            out[count++] = j;
            stack[sp] = j;
            edge[sp] = ptr[j];
            sp++;
          }
        } else sp--;
      }
    }
    return count;
  }

  /**
   * x with A x = b for the sparse b given as (rows[k], vals[k]), k < nb (duplicates summed). The result
   * stays valid until the next call. withBound also fills the bound of each entry.
   */
  solve(rows: ArrayLike<number>, vals: ArrayLike<number>, nb: number, withBound = false): SparseSolution {
    const f = this.f;
    const { rs, cs, pivRow, pivCol, pivVal, lp, li, lv, up, ui, uv } = f;
    const { y, yb, x, xb } = this;
    // clear what the previous solve left
    for (let c = 0; c < this.lastCount; c++) {
      const j = this.cols[c];
      x[j] = 0;
      xb[j] = 0;
    }
    // right-hand side
    const starts = this.bwd; // scratch for the start list
    for (let e = 0; e < nb; e++) {
      const r = rows[e];
      y[r] += vals[e];
      starts[e] = this.stepOfRow[r];
    }
    // forward: steps reachable in the graph of L
    this.stamp++;
    const nf = this.reach(starts, nb, lp, li, this.stepOfRow, this.fwd);
    const fwd = this.fwd.subarray(0, nf).sort();
    for (let s = 0; s < nf; s++) {
      const r = pivRow[fwd[s]];
      y[r] *= rs[r];
      if (withBound) yb[r] = Math.abs(y[r]);
    }
    for (let s = 0; s < nf; s++) {
      const k = fwd[s];
      const yp = y[pivRow[k]];
      if (yp === 0) continue;
      for (let t = lp[k], e = lp[k + 1]; t < e; t++) y[li[t]] -= lv[t] * yp;
      if (withBound) {
        const ypb = yb[pivRow[k]];
        for (let t = lp[k], e = lp[k + 1]; t < e; t++) yb[li[t]] += Math.abs(lv[t]) * ypb;
      }
    }
    // backward: steps reachable from those in the graph of Uᵀ
    this.stamp++;
    const nbk = this.reach(fwd, nf, this.utPtr, this.utStep, null, this.bwd);
    const bwd = this.bwd.subarray(0, nbk).sort();
    for (let s = nbk - 1; s >= 0; s--) {
      const k = bwd[s];
      let acc = y[pivRow[k]];
      for (let t = up[k], e = up[k + 1]; t < e; t++) acc -= uv[t] * x[ui[t]];
      x[pivCol[k]] = acc / pivVal[k];
      if (withBound) {
        let accb = yb[pivRow[k]];
        for (let t = up[k], e = up[k + 1]; t < e; t++) accb += Math.abs(uv[t]) * xb[ui[t]];
        xb[pivCol[k]] = accb / Math.abs(pivVal[k]);
      }
    }
    for (let s = 0; s < nf; s++) {
      const r = pivRow[fwd[s]];
      y[r] = 0;
      yb[r] = 0;
    }
    for (let s = 0; s < nbk; s++) {
      const j = pivCol[bwd[s]];
      this.cols[s] = j;
      x[j] *= cs[j];
      if (withBound) xb[j] *= cs[j];
    }
    this.lastCount = nbk;
    if (this.stamp > 0x3fffffff) {
      this.mark.fill(0);
      this.stamp = 0;
    }
    return { count: nbk, cols: this.cols, x, bound: xb };
  }
}

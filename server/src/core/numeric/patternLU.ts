/**
 * Sparse LU of a matrix whose non-zero pattern stays fixed while its values change (the Newton and
 * Rosenbrock iteration matrices of a simulation): the pivot order is chosen once by `sparseLU`
 * (Markowitz with threshold pivoting, sparseLU.ts), the fill pattern of L and U is found once
 * symbolically, and each new set of values is factorised numerically into preallocated storage without
 * searching or allocating. The solves write into the caller's vectors.
 *
 * A refactorisation with the old order is accepted only while every pivot passes the row-wise threshold
 * test that sparseLU pivots by (|u_kk| ≥ u·max_j |u_kj| on the column-scaled matrix, u = 0.01, a decade
 * looser than the choice; a tenth of its ratio at the analysis where that was smaller): that bounds the growth of the entries per step to a factor 1 + 1/u, as for
 * threshold pivoting (Duff, Erisman & Reid, "Direct Methods for Sparse Matrices", Oxford University Press,
 * on threshold pivoting and on refactorising with a known pivot sequence). When it fails, `refactor`
 * returns false and the caller analyses afresh (`PatternLU.analyse` with the new values).
 *
 * Numerical method per row (the row-oriented, "up-looking" Doolittle form): row k of the permuted matrix
 * is scattered into a dense work row, the earlier rows of U that its L part names are subtracted in
 * increasing order, and the result is gathered back.
 */
import { sparseLU, type SparseTriplets } from './sparseLU';

/** Row-wise threshold a reused pivot must still pass (sparseLU chooses with 0.1). */
const REUSE_THRESHOLD = 0.01;
/** A pivot this small against its original row (column-scaled) counts as singular. */
const SINGULAR = 1e-13;

export class PatternLU {
  readonly n: number;
  /** Original row and column of each pivot step. */
  private readonly pr: Int32Array;
  private readonly pc: Int32Array;
  /** Column scales of the analysis (powers of two; used by the pivot test only). */
  private readonly cs: Float64Array;
  /** Rows of L\U in pivot order: columns (pivot steps) ascending, the pivot at diag[k]. */
  private readonly ptr: Int32Array;
  private readonly idx: Int32Array;
  private readonly diag: Int32Array;
  /** The factors' values; `spare` takes the next factorisation and is swapped in when it succeeds. */
  private val: Float64Array;
  private spare: Float64Array;
  /** For each input entry (position in the triplets), its place in `val`. */
  private readonly slot: Int32Array;
  private readonly nnzIn: number;
  private readonly w: Float64Array;
  private readonly c: Float64Array;
  /** Row-wise ratio |u_kk| / max_j |u_kj| each pivot must keep on refactorisation. */
  private readonly need: Float64Array;

  private constructor(n: number, pr: Int32Array, pc: Int32Array, cs: Float64Array, rows: Int32Array, cols: Int32Array, nnz: number) {
    this.n = n;
    this.pr = pr;
    this.pc = pc;
    this.cs = cs;
    this.nnzIn = nnz;
    const stepOfRow = new Int32Array(n);
    const stepOfCol = new Int32Array(n);
    for (let k = 0; k < n; k++) {
      stepOfRow[pr[k]] = k;
      stepOfCol[pc[k]] = k;
    }
    // the permuted matrix's rows (steps), as column steps
    const aPtr = new Int32Array(n + 1);
    for (let q = 0; q < nnz; q++) aPtr[stepOfRow[rows[q]] + 1]++;
    for (let k = 0; k < n; k++) aPtr[k + 1] += aPtr[k];
    const aIdx = new Int32Array(nnz);
    const aQ = new Int32Array(nnz);
    {
      const fill = aPtr.slice(0, n);
      for (let q = 0; q < nnz; q++) {
        const p = fill[stepOfRow[rows[q]]]++;
        aIdx[p] = stepOfCol[cols[q]];
        aQ[p] = q;
      }
    }
    // symbolic factorisation, row by row: the L part of row k is closed under "j in L(k), then U(j)'s
    // columns below k"; the columns below k are taken from a binary heap in increasing order
    const mark = new Int32Array(n).fill(-1);
    const heap = new Int32Array(n);
    const rowCols: Int32Array[] = new Array(n);
    const uStart = new Int32Array(n); // in rowCols[k], where its U part (diagonal first) begins
    const lBuf = new Int32Array(n);
    const uBuf = new Int32Array(n);
    let total = 0;
    for (let k = 0; k < n; k++) {
      let hn = 0;
      let nu = 0;
      const push = (j: number): void => {
        let i = hn++;
        while (i > 0) {
          const parent = (i - 1) >> 1;
          if (heap[parent] <= j) break;
          heap[i] = heap[parent];
          i = parent;
        }
        heap[i] = j;
      };
      const pop = (): number => {
        const top = heap[0];
        const last = heap[--hn];
        let i = 0;
        for (;;) {
          let child = 2 * i + 1;
          if (child >= hn) break;
          if (child + 1 < hn && heap[child + 1] < heap[child]) child++;
          if (heap[child] >= last) break;
          heap[i] = heap[child];
          i = child;
        }
        heap[i] = last;
        return top;
      };
      mark[k] = k;
      uBuf[nu++] = k;
      for (let p = aPtr[k]; p < aPtr[k + 1]; p++) {
        const j = aIdx[p];
        if (mark[j] === k) continue;
        mark[j] = k;
        if (j < k) push(j);
        else uBuf[nu++] = j;
      }
      let nl = 0;
      while (hn > 0) {
        const j = pop();
        lBuf[nl++] = j;
        const rj = rowCols[j];
        for (let p = uStart[j] + 1; p < rj.length; p++) {
          const c = rj[p];
          if (mark[c] === k) continue;
          mark[c] = k;
          if (c < k) push(c);
          else uBuf[nu++] = c;
        }
      }
      const u = uBuf.subarray(1, nu).sort();
      const row = new Int32Array(nl + nu);
      row.set(lBuf.subarray(0, nl), 0);
      row[nl] = k;
      row.set(u, nl + 1);
      rowCols[k] = row;
      uStart[k] = nl;
      total += row.length;
    }
    this.ptr = new Int32Array(n + 1);
    this.idx = new Int32Array(total);
    this.diag = new Int32Array(n);
    let t = 0;
    for (let k = 0; k < n; k++) {
      this.ptr[k] = t;
      this.diag[k] = t + uStart[k];
      this.idx.set(rowCols[k], t);
      t += rowCols[k].length;
    }
    this.ptr[n] = t;
    this.val = new Float64Array(total);
    this.spare = new Float64Array(total);
    // where each input entry lands
    this.slot = new Int32Array(nnz);
    const pos = new Int32Array(n);
    for (let k = 0; k < n; k++) {
      for (let p = this.ptr[k]; p < this.ptr[k + 1]; p++) pos[this.idx[p]] = p;
      for (let p = aPtr[k]; p < aPtr[k + 1]; p++) this.slot[aQ[p]] = pos[aIdx[p]];
    }
    this.w = new Float64Array(n);
    this.c = new Float64Array(n);
    this.need = new Float64Array(n);
  }

  /**
   * Chooses the pivot order for the matrix given by triplets (row, col, value; duplicates summed; the
   * positions define the pattern, zeros included) with sparseLU, builds the pattern and factorises.
   * Undefined when the matrix is (numerically) singular.
   */
  static analyse(n: number, t: SparseTriplets): PatternLU | undefined {
    const lu = sparseLU(n, t);
    if (!lu.ok) return undefined;
    const f = lu.factors;
    const plu = new PatternLU(n, f.pivRow.slice(0, n), f.pivCol.slice(0, n), f.cs.slice(), t.rows, t.cols, t.nnz);
    return plu.factorise(t.vals, true) ? plu : undefined;
  }

  /** Number of stored entries of L and U. */
  get factorNnz(): number {
    return this.val.length;
  }

  /**
   * Factorises new values of the same triplets (same order and count as at the analysis). False when a
   * value is not finite or a pivot fails the reuse test; the factors of the last successful factorisation
   * then stay in use.
   */
  refactor(vals: Float64Array): boolean {
    return this.factorise(vals, false);
  }

  /**
   * The numeric factorisation. At the analysis (`first`) every non-singular pivot is accepted and the
   * test each later pivot must pass is recorded: REUSE_THRESHOLD, or a tenth of the pivot's own ratio
   * when sparseLU took a smaller one (its dense phase pivots by columns).
   */
  private factorise(vals: Float64Array, first: boolean): boolean {
    const { n, ptr, idx, diag, slot, w, cs, pc, need } = this;
    const val = this.spare;
    val.fill(0);
    for (let q = 0; q < this.nnzIn; q++) val[slot[q]] += vals[q];
    for (let k = 0; k < n; k++) {
      const s = ptr[k];
      const e = ptr[k + 1];
      const dk = diag[k];
      let orig = 0;
      for (let p = s; p < e; p++) {
        const j = idx[p];
        const v = val[p];
        w[j] = v;
        const a = Math.abs(v) * cs[pc[j]];
        if (a > orig) orig = a;
      }
      for (let p = s; p < dk; p++) {
        const j = idx[p];
        const l = w[j] / val[diag[j]];
        w[j] = l;
        if (l === 0) continue;
        for (let pp = diag[j] + 1, ee = ptr[j + 1]; pp < ee; pp++) w[idx[pp]] -= l * val[pp];
      }
      let big = 0;
      let finite = true;
      for (let p = s; p < e; p++) {
        const j = idx[p];
        const v = w[j];
        val[p] = v;
        w[j] = 0;
        if (!Number.isFinite(v)) finite = false;
        else if (p >= dk) {
          const a = Math.abs(v) * cs[pc[j]];
          if (a > big) big = a;
        }
      }
      const piv = Math.abs(val[dk]) * cs[pc[k]];
      if (!finite || !(piv > SINGULAR * orig)) return false;
      if (first) need[k] = Math.min(REUSE_THRESHOLD, (0.1 * piv) / big);
      else if (!(piv >= need[k] * big)) return false;
    }
    this.spare = this.val;
    this.val = val;
    return true;
  }

  /** x with A x = b, into x (b and x may be the same array). */
  solve(b: ArrayLike<number>, x: Float64Array): Float64Array {
    const { n, ptr, idx, diag, val, pr, pc, c } = this;
    for (let k = 0; k < n; k++) c[k] = b[pr[k]];
    for (let k = 0; k < n; k++) {
      let s = c[k];
      for (let p = ptr[k], e = diag[k]; p < e; p++) s -= val[p] * c[idx[p]];
      c[k] = s;
    }
    for (let k = n - 1; k >= 0; k--) {
      const dk = diag[k];
      let s = c[k];
      for (let p = dk + 1, e = ptr[k + 1]; p < e; p++) s -= val[p] * c[idx[p]];
      c[k] = s / val[dk];
    }
    for (let k = 0; k < n; k++) x[pc[k]] = c[k];
    return x;
  }

  /** x with Aᵀ x = b, into x (b and x may be the same array). */
  solveTranspose(b: ArrayLike<number>, x: Float64Array): Float64Array {
    const { n, ptr, idx, diag, val, pr, pc, c } = this;
    for (let k = 0; k < n; k++) c[k] = b[pc[k]];
    // Uᵀ z = c: column k of Uᵀ is row k of U
    for (let k = 0; k < n; k++) {
      const dk = diag[k];
      const z = c[k] / val[dk];
      c[k] = z;
      if (z === 0) continue;
      for (let p = dk + 1, e = ptr[k + 1]; p < e; p++) c[idx[p]] -= val[p] * z;
    }
    // Lᵀ y = z (unit diagonal)
    for (let k = n - 1; k >= 0; k--) {
      const y = c[k];
      if (y === 0) continue;
      for (let p = ptr[k], e = diag[k]; p < e; p++) c[idx[p]] -= val[p] * y;
    }
    for (let k = 0; k < n; k++) x[pr[k]] = c[k];
    return x;
  }
}

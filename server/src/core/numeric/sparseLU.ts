/**
 * Sparse LU factorisation of a square matrix.
 *
 * Method (right-looking, Markowitz ordering with threshold pivoting):
 *  1. The triplets are assembled (duplicates summed, exact zeros dropped) and
 *     the matrix is equilibrated with power-of-two row and column scales so
 *     that every row and column has largest magnitude about 1.
 *  2. At each step a pivot (i, j) is chosen among the entries of the active
 *     submatrix that pass the row-wise threshold test
 *     |a_ij| >= u · max_k |a_ik| (u = pivotTolerance, default 0.1) with the
 *     smallest Markowitz cost (r_i − 1)(c_j − 1); the search scans rows and
 *     columns by increasing count and stops after a few candidates (Zlatev's
 *     limited search) or as soon as no cheaper pivot can exist.
 *  3. When the active submatrix becomes dense (more than DENSE_SWITCH of its
 *     entries non-zero) the rest is factorised as a dense block with partial
 *     pivoting; its factors are kept in the same sparse step format.
 *
 * Numerical singularity: an entry is negligible when its magnitude is at most
 * singularTolerance (default 1e-12) times the magnitude history of its row in
 * the equilibrated matrix (the largest value the row has held or has had
 * subtracted from it). A row or column of the active submatrix whose entries
 * are all negligible (or that has no entries) cannot be pivoted; it is removed
 * and reported, and the factorisation goes on with the rest, so that every
 * row and column that could not be pivoted is listed.
 */

/** One matrix entry; duplicates (same row and col) are summed. */
export interface SparseEntry {
  row: number;
  col: number;
  val: number;
}

/** Triplet (coordinate) form: the first nnz entries of rows/cols/vals are used. */
export interface SparseTriplets {
  rows: Int32Array;
  cols: Int32Array;
  vals: Float64Array;
  nnz: number;
}

export interface SparseLUOptions {
  /** Threshold u of the row-wise pivot test (0 < u ≤ 1, default 0.1). */
  pivotTolerance?: number;
  /** Relative magnitude below which an entry counts as numerically zero (default 1e-12). */
  singularTolerance?: number;
}

export interface SparseLUResult {
  /** false when numerically singular. */
  ok: boolean;
  n: number;
  /** Numerical rank found (number of pivots). */
  rank: number;
  /** Columns (unknowns) that got no acceptable pivot (empty when ok), ascending. */
  singularCols: number[];
  /** Rows (equations) left without a pivot (empty when ok), ascending. */
  singularRows: number[];
  /** Returns x with A x = b (only when ok, throws otherwise); does not modify b. */
  solve(b: Float64Array): Float64Array;
  /** Returns x with Aᵀ x = b (only when ok, throws otherwise); does not modify b. */
  solveTranspose(b: Float64Array): Float64Array;
  /** Estimate of the 1-norm condition number ‖A‖₁‖A⁻¹‖₁ (Hager/Higham estimator); Infinity when not ok. */
  conditionEstimate(): number;
  /** Number of stored entries of L and U (multipliers + upper entries + pivots). */
  readonly factorNnz: number;
  /** The factors themselves, for solvers that touch only the non-zeros (sparseSolve.ts). */
  readonly factors: SparseFactors;
}

/**
 * The factors of D_r A D_c = P L U Q in step form: step k pivots on row pivRow[k], column pivCol[k]
 * (original numbering) with value pivVal[k]; its multipliers are li/lv[lp[k] … lp[k+1]−1] (rows of later
 * steps), its upper entries ui/uv[up[k] … up[k+1]−1] (columns of later steps). rs, cs: the row and column
 * scales (powers of two).
 */
export interface SparseFactors {
  n: number;
  rank: number;
  rs: Float64Array;
  cs: Float64Array;
  pivRow: Int32Array;
  pivCol: Int32Array;
  pivVal: Float64Array;
  lp: Int32Array;
  li: Int32Array;
  lv: Float64Array;
  up: Int32Array;
  ui: Int32Array;
  uv: Float64Array;
}

/** Fraction of non-zeros in the active submatrix above which the dense kernel takes over. */
const DENSE_SWITCH = 0.3;
/** Number of rows/columns examined once a candidate pivot is known (Zlatev). */
const SEARCH_LIMIT = 4;

class I32Buf {
  a: Int32Array;
  n = 0;
  constructor(cap: number) {
    this.a = new Int32Array(Math.max(cap, 16));
  }
  push(v: number): void {
    if (this.n === this.a.length) {
      const b = new Int32Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = v;
  }
  trim(): Int32Array {
    return this.a.slice(0, this.n);
  }
}

class F64Buf {
  a: Float64Array;
  n = 0;
  constructor(cap: number) {
    this.a = new Float64Array(Math.max(cap, 16));
  }
  push(v: number): void {
    if (this.n === this.a.length) {
      const b = new Float64Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = v;
  }
  trim(): Float64Array {
    return this.a.slice(0, this.n);
  }
}

/**
 * Items 0..n−1 (rows or columns) kept in buckets by their count of entries, each bucket a doubly linked
 * list: moving an item between buckets is O(1), and the pivot search walks the buckets in order of count.
 */
class CountBuckets {
  /** First item of each bucket (−1: empty). */
  readonly head: Int32Array;
  /** Next item in the same bucket (−1: last). */
  readonly next: Int32Array;
  private readonly prev: Int32Array;
  /** The bucket each item is in (−1: none). */
  private readonly bucket: Int32Array;

  constructor(n: number) {
    this.head = new Int32Array(n + 2).fill(-1);
    this.next = new Int32Array(n);
    this.prev = new Int32Array(n);
    this.bucket = new Int32Array(n).fill(-1);
  }

  /** Takes item i out of its bucket (if any). */
  unlink(i: number): void {
    const b = this.bucket[i];
    if (b < 0) return;
    const pv = this.prev[i], nx = this.next[i];
    if (pv >= 0) this.next[pv] = nx;
    else this.head[b] = nx;
    if (nx >= 0) this.prev[nx] = pv;
    this.bucket[i] = -1;
  }

  /** Puts item i first in bucket b, moving it there if it is in another one. */
  link(i: number, b: number): void {
    if (this.bucket[i] === b) return;
    if (this.bucket[i] >= 0) this.unlink(i);
    const h = this.head[b];
    this.next[i] = h;
    this.prev[i] = -1;
    if (h >= 0) this.prev[h] = i;
    this.head[b] = i;
    this.bucket[i] = b;
  }
}

function pow2Inverse(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  return Math.pow(2, -Math.round(Math.log2(x)));
}

function isTriplets(e: SparseEntry[] | SparseTriplets): e is SparseTriplets {
  return !Array.isArray(e);
}

/** Factorises the n×n matrix given by its entries. */
export function sparseLU(
  n: number,
  entries: SparseEntry[] | SparseTriplets,
  opts?: SparseLUOptions,
): SparseLUResult {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`sparseLU: invalid size ${n}`);
  let u = opts?.pivotTolerance ?? 0.1;
  if (!(u > 0)) u = 1e-6;
  if (u > 1) u = 1;
  const singTol = opts?.singularTolerance ?? 1e-12;

  // ---------------------------------------------------------------- assemble
  let nzIn: number;
  let tr: Int32Array, tc: Int32Array, tv: Float64Array;
  if (isTriplets(entries)) {
    nzIn = entries.nnz;
    tr = entries.rows;
    tc = entries.cols;
    tv = entries.vals;
    if (tr.length < nzIn || tc.length < nzIn || tv.length < nzIn) throw new RangeError('sparseLU: nnz exceeds array lengths');
  } else {
    nzIn = entries.length;
    tr = new Int32Array(nzIn);
    tc = new Int32Array(nzIn);
    tv = new Float64Array(nzIn);
    for (let k = 0; k < nzIn; k++) {
      const e = entries[k];
      tr[k] = e.row;
      tc[k] = e.col;
      tv[k] = e.val;
      if (e.row !== tr[k] || e.col !== tc[k]) throw new RangeError(`sparseLU: bad index (${e.row}, ${e.col})`);
    }
  }
  const rowCount = new Int32Array(n + 1);
  for (let k = 0; k < nzIn; k++) {
    const i = tr[k], j = tc[k];
    if (i < 0 || i >= n || j < 0 || j >= n) throw new RangeError(`sparseLU: entry (${i}, ${j}) outside ${n}x${n}`);
    rowCount[i + 1]++;
  }
  for (let i = 0; i < n; i++) rowCount[i + 1] += rowCount[i];
  const csrCol = new Int32Array(nzIn);
  const csrVal = new Float64Array(nzIn);
  {
    const fillPos = rowCount.slice(0, n);
    for (let k = 0; k < nzIn; k++) {
      const p = fillPos[tr[k]]++;
      csrCol[p] = tc[k];
      csrVal[p] = tv[k];
    }
  }
  // sum duplicates, drop zeros, flag non-finite rows/cols
  const rowPtr = new Int32Array(n + 1);
  const badRow = new Uint8Array(n);
  const badCol = new Uint8Array(n);
  let anyBad = false;
  {
    const where = new Int32Array(n).fill(-1);
    let w = 0;
    for (let i = 0; i < n; i++) {
      const start = w;
      for (let p = rowCount[i]; p < rowCount[i + 1]; p++) {
        const j = csrCol[p];
        if (where[j] >= start) csrVal[where[j]] += csrVal[p];
        else {
          where[j] = w;
          csrCol[w] = j;
          csrVal[w] = csrVal[p];
          w++;
        }
      }
      // compact away zeros, detect non-finite
      let w2 = start;
      for (let p = start; p < w; p++) {
        // forget this row's positions: after compaction they hold other entries (or the next row's), and a
        // stale `where` of a dropped zero would make the next row sum into them
        where[csrCol[p]] = -1;
        const v = csrVal[p];
        if (!Number.isFinite(v)) {
          badRow[i] = 1;
          badCol[csrCol[p]] = 1;
          anyBad = true;
        }
        if (v !== 0) {
          csrCol[w2] = csrCol[p];
          csrVal[w2] = v;
          w2++;
        }
      }
      w = w2;
      rowPtr[i + 1] = w;
    }
  }
  // original 1-norm (for the condition estimate)
  const colAbsSum = new Float64Array(n);
  for (let p = 0; p < rowPtr[n]; p++) colAbsSum[csrCol[p]] += Math.abs(csrVal[p]);
  let normA1 = 0;
  for (let j = 0; j < n; j++) if (colAbsSum[j] > normA1) normA1 = colAbsSum[j];

  // ----------------------------------------------------------- equilibrate
  const rs = new Float64Array(n).fill(1);
  const cs = new Float64Array(n).fill(1);
  {
    for (let i = 0; i < n; i++) {
      if (badRow[i]) continue;
      let mx = 0;
      for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
        if (badCol[csrCol[p]]) continue;
        const v = Math.abs(csrVal[p]);
        if (v > mx) mx = v;
      }
      rs[i] = pow2Inverse(mx);
    }
    const cmax = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      if (badRow[i]) continue;
      for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
        const j = csrCol[p];
        if (badCol[j]) continue;
        const v = Math.abs(csrVal[p]) * rs[i];
        if (v > cmax[j]) cmax[j] = v;
      }
    }
    for (let j = 0; j < n; j++) cs[j] = pow2Inverse(cmax[j]);
  }

  // ------------------------------------------------------------ eliminate
  const singularRows: number[] = [];
  const singularCols: number[] = [];
  const el = new Elimination(n, u, singTol, rowPtr, csrCol, csrVal, rs, cs, badRow, badCol, singularRows, singularCols);
  el.run();
  const { rowActive, colActive } = el;
  for (let i = 0; i < n; i++) if (rowActive[i]) singularRows.push(i);
  for (let j = 0; j < n; j++) if (colActive[j]) singularCols.push(j);
  singularRows.sort((x, y) => x - y);
  singularCols.sort((x, y) => x - y);

  const pivRow = el.pivRowB.trim();
  const pivCol = el.pivColB.trim();
  const pivVal = el.pivValB.trim();
  const lp = el.Lptr.trim();
  const li = el.Li.trim();
  const lv = el.Lv.trim();
  const up = el.Uptr.trim();
  const ui = el.Ui.trim();
  const uv = el.Uv.trim();
  const rank = pivRow.length;
  const ok = rank === n && !anyBad;

  const notOk = (): never => {
    throw new Error('sparseLU: matrix is singular; solve is unavailable');
  };

  const solveInto = (b: Float64Array, y: Float64Array, x: Float64Array): void => {
    for (let i = 0; i < n; i++) y[i] = b[i] * rs[i];
    for (let k = 0; k < rank; k++) {
      const yp = y[pivRow[k]];
      if (yp === 0) continue;
      for (let t = lp[k], e = lp[k + 1]; t < e; t++) y[li[t]] -= lv[t] * yp;
    }
    for (let k = rank - 1; k >= 0; k--) {
      let s = y[pivRow[k]];
      for (let t = up[k], e = up[k + 1]; t < e; t++) s -= uv[t] * x[ui[t]];
      x[pivCol[k]] = s / pivVal[k];
    }
    for (let j = 0; j < n; j++) x[j] *= cs[j];
  };
  const solve = (b: Float64Array): Float64Array => {
    if (!ok) notOk();
    if (b.length !== n) throw new RangeError(`sparseLU.solve: expected ${n} values, got ${b.length}`);
    const y = new Float64Array(n);
    const x = new Float64Array(n);
    solveInto(b, y, x);
    return x;
  };
  const solveTranspose = (b: Float64Array): Float64Array => {
    if (!ok) notOk();
    if (b.length !== n) throw new RangeError(`sparseLU.solveTranspose: expected ${n} values, got ${b.length}`);
    // Aᵀ z = b  ⇔  Ãᵀ w = Dc b with z = Dr w
    const c = new Float64Array(n);
    for (let j = 0; j < n; j++) c[j] = b[j] * cs[j];
    const tk = new Float64Array(rank);
    for (let k = 0; k < rank; k++) {
      const t0 = c[pivCol[k]] / pivVal[k];
      tk[k] = t0;
      if (t0 === 0) continue;
      for (let t = up[k], e = up[k + 1]; t < e; t++) c[ui[t]] -= uv[t] * t0;
    }
    const w = new Float64Array(n);
    for (let k = rank - 1; k >= 0; k--) {
      let s = tk[k];
      for (let t = lp[k], e = lp[k + 1]; t < e; t++) s -= lv[t] * w[li[t]];
      w[pivRow[k]] = s;
    }
    for (let i = 0; i < n; i++) w[i] *= rs[i];
    return w;
  };

  let condCache = -1;
  const conditionEstimate = (): number => {
    if (!ok) return Infinity;
    if (n === 0) return 0;
    if (condCache >= 0) return condCache;
    // Hager's method with Higham's refinements (1-norm of A⁻¹)
    let x = new Float64Array(n).fill(1 / n);
    let est = 0;
    let lastJ = -1;
    for (let iter = 0; iter < 5; iter++) {
      const y = solve(x);
      let ny = 0;
      for (let i = 0; i < n; i++) ny += Math.abs(y[i]);
      if (iter > 0 && ny <= est) {
        est = Math.max(est, ny);
        break;
      }
      est = ny;
      const xi = new Float64Array(n);
      for (let i = 0; i < n; i++) xi[i] = y[i] >= 0 ? 1 : -1;
      const z = solveTranspose(xi);
      let jm = 0, zm = -1, zx = 0;
      for (let i = 0; i < n; i++) {
        const az = Math.abs(z[i]);
        if (az > zm) {
          zm = az;
          jm = i;
        }
        zx += z[i] * x[i];
      }
      if (zm <= zx || jm === lastJ) break;
      lastJ = jm;
      x = new Float64Array(n);
      x[jm] = 1;
    }
    // Higham's alternative vector guards against underestimation
    const alt = new Float64Array(n);
    for (let i = 0; i < n; i++) alt[i] = (i % 2 === 0 ? 1 : -1) * (1 + i / Math.max(1, n - 1));
    const ya = solve(alt);
    let na = 0;
    for (let i = 0; i < n; i++) na += Math.abs(ya[i]);
    const altEst = (2 * na) / (3 * n);
    if (altEst > est) est = altEst;
    condCache = normA1 * est;
    return condCache;
  };

  return {
    ok,
    n,
    rank,
    singularCols,
    singularRows,
    solve,
    solveTranspose,
    conditionEstimate,
    factorNnz: li.length + ui.length + rank,
    factors: { n, rank, rs, cs, pivRow, pivCol, pivVal, lp, li, lv, up, ui, uv },
  };
}

/**
 * The right-looking elimination of one factorisation (Markowitz pivots, threshold test, dense switch): the
 * active submatrix, its buckets and the factors as they grow. A class rather than closures inside
 * `sparseLU`, so that every factorisation calls the same functions: the engine's optimised code of the
 * first factorisation serves the next ones (closures made afresh per call are new call targets, and code
 * that inlined the last call's closures is thrown away at each call).
 */
class Elimination {
  readonly rowActive: Uint8Array;
  readonly colActive: Uint8Array;
  readonly rStart: Int32Array;
  readonly rLen: Int32Array;
  readonly rCap: Int32Array;
  readonly cStart: Int32Array;
  readonly cLen: Int32Array;
  readonly cCap: Int32Array;
  readonly rowMax: Float64Array;
  readonly hist: Float64Array;
  rIdx: Int32Array;
  rVal: Float64Array;
  rTop = 0;
  cIdx: Int32Array;
  cTop = 0;
  activeNnz = 0;
  nAR = 0;
  nAC = 0;
  readonly rowBuckets: CountBuckets;
  readonly colBuckets: CountBuckets;
  // factors
  readonly pivRowB: I32Buf;
  readonly pivColB: I32Buf;
  readonly pivValB: F64Buf;
  readonly Lptr: I32Buf;
  readonly Li: I32Buf;
  readonly Lv: F64Buf;
  readonly Uptr: I32Buf;
  readonly Ui: I32Buf;
  readonly Uv: F64Buf;
  // work arrays
  readonly pivPos: Int32Array;
  readonly seen: Int32Array;
  stamp = 0;
  readonly pCols: Int32Array;
  readonly pVals: Float64Array;
  readonly fillBuf: Int32Array;
  readonly colRowsTmp: Int32Array;
  readonly pendRows: number[] = [];
  readonly pendCols: number[] = [];
  P = -1;
  Q = -1;

  constructor(
    readonly n: number,
    readonly u: number,
    readonly singTol: number,
    rowPtr: Int32Array,
    csrCol: Int32Array,
    csrVal: Float64Array,
    rs: Float64Array,
    cs: Float64Array,
    badRow: Uint8Array,
    badCol: Uint8Array,
    readonly singularRows: number[],
    readonly singularCols: number[],
  ) {
    this.rowActive = new Uint8Array(n);
    this.colActive = new Uint8Array(n);
    this.rStart = new Int32Array(n);
    this.rLen = new Int32Array(n);
    this.rCap = new Int32Array(n);
    this.cStart = new Int32Array(n);
    this.cLen = new Int32Array(n);
    this.cCap = new Int32Array(n);
    this.rowMax = new Float64Array(n);
    this.hist = new Float64Array(n);
    const { rowActive, colActive, rStart, rLen, rCap, cStart, cLen, cCap, rowMax, hist } = this;

    // column counts first
    const colCnt = new Int32Array(n);
    let nnz0 = 0;
    for (let i = 0; i < n; i++) {
      if (badRow[i]) continue;
      for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
        const j = csrCol[p];
        if (badCol[j]) continue;
        colCnt[j]++;
        nnz0++;
      }
    }
    const rIdx = (this.rIdx = new Int32Array(Math.max(16, 2 * nnz0 + 4 * n)));
    const rVal = (this.rVal = new Float64Array(rIdx.length));
    let rTop = 0;
    const cIdx = (this.cIdx = new Int32Array(Math.max(16, 2 * nnz0 + 4 * n)));
    let cTop = 0;
    for (let j = 0; j < n; j++) {
      if (badCol[j]) continue;
      const cap = colCnt[j] + 2 + (colCnt[j] >> 1);
      cStart[j] = cTop;
      cCap[j] = cap;
      cTop += cap;
      colActive[j] = 1;
    }
    let activeNnz = 0;
    for (let i = 0; i < n; i++) {
      if (badRow[i]) continue;
      rowActive[i] = 1;
      let len = 0;
      for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) if (!badCol[csrCol[p]]) len++;
      const cap = len + 2 + (len >> 1);
      rStart[i] = rTop;
      rCap[i] = cap;
      let mx = 0;
      let t = rTop;
      for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
        const j = csrCol[p];
        if (badCol[j]) continue;
        const v = csrVal[p] * rs[i] * cs[j];
        rIdx[t] = j;
        rVal[t] = v;
        t++;
        const av = Math.abs(v);
        if (av > mx) mx = av;
        cIdx[cStart[j] + cLen[j]++] = i;
      }
      rLen[i] = len;
      rTop += cap;
      rowMax[i] = mx;
      hist[i] = mx;
      activeNnz += len;
    }
    this.rTop = rTop;
    this.cTop = cTop;
    this.activeNnz = activeNnz;
    let nAR = 0, nAC = 0;
    for (let i = 0; i < n; i++) {
      if (badRow[i]) singularRows.push(i);
      else nAR++;
      if (badCol[i]) singularCols.push(i);
      else nAC++;
    }
    this.nAR = nAR;
    this.nAC = nAC;

    // rows and columns in buckets by their current count of entries
    this.rowBuckets = new CountBuckets(n);
    this.colBuckets = new CountBuckets(n);
    for (let j = n - 1; j >= 0; j--) if (colActive[j]) this.colBuckets.link(j, cLen[j]);
    for (let i = n - 1; i >= 0; i--) if (rowActive[i]) this.rowBuckets.link(i, rLen[i]);

    this.pivRowB = new I32Buf(n);
    this.pivColB = new I32Buf(n);
    this.pivValB = new F64Buf(n);
    this.Lptr = new I32Buf(n + 1);
    this.Li = new I32Buf(2 * nnz0 + 16);
    this.Lv = new F64Buf(2 * nnz0 + 16);
    this.Uptr = new I32Buf(n + 1);
    this.Ui = new I32Buf(2 * nnz0 + 16);
    this.Uv = new F64Buf(2 * nnz0 + 16);
    this.Lptr.push(0);
    this.Uptr.push(0);

    this.pivPos = new Int32Array(n).fill(-1);
    this.seen = new Int32Array(n);
    this.pCols = new Int32Array(n);
    this.pVals = new Float64Array(n);
    this.fillBuf = new Int32Array(n);
    this.colRowsTmp = new Int32Array(n);
  }

  /** The elimination to its end: sparse steps, then the dense kernel once the active submatrix fills in. */
  run(): void {
    for (;;) {
      if (this.nAR === 0 || this.nAC === 0) break;
      if (this.activeNnz > DENSE_SWITCH * this.nAR * this.nAC) {
        this.densePhase();
        break;
      }
      if (!this.findPivot()) break;
      this.eliminate(this.P, this.Q);
    }
  }

  // pool management -------------------------------------------------------
  compactRows(extra: number): void {
    const { n, rowActive, rCap, rStart, rLen } = this;
    const rIdx = this.rIdx, rVal = this.rVal;
    let live = extra;
    for (let i = 0; i < n; i++) if (rowActive[i]) live += rCap[i];
    const size = Math.max(rIdx.length, 2 * live + 16);
    const ni = new Int32Array(size);
    const nv = new Float64Array(size);
    let top = 0;
    for (let i = 0; i < n; i++) {
      if (!rowActive[i]) continue;
      const s = rStart[i], l = rLen[i];
      ni.set(rIdx.subarray(s, s + l), top);
      nv.set(rVal.subarray(s, s + l), top);
      rStart[i] = top;
      top += rCap[i];
    }
    this.rIdx = ni;
    this.rVal = nv;
    this.rTop = top;
  }

  growRow(i: number, need: number): void {
    const { rLen, rCap, rStart } = this;
    const want = rLen[i] + need;
    if (want <= rCap[i]) return;
    const cap = Math.max(want + (want >> 1), 2 * rCap[i], 4);
    if (this.rTop + cap > this.rIdx.length) this.compactRows(cap);
    const s = rStart[i], l = rLen[i];
    const rTop = this.rTop;
    this.rIdx.copyWithin(rTop, s, s + l);
    this.rVal.copyWithin(rTop, s, s + l);
    rStart[i] = rTop;
    rCap[i] = cap;
    this.rTop = rTop + cap;
  }

  compactCols(extra: number): void {
    const { n, colActive, cCap, cStart, cLen } = this;
    const cIdx = this.cIdx;
    let live = extra;
    for (let j = 0; j < n; j++) if (colActive[j]) live += cCap[j];
    const size = Math.max(cIdx.length, 2 * live + 16);
    const ni = new Int32Array(size);
    let top = 0;
    for (let j = 0; j < n; j++) {
      if (!colActive[j]) continue;
      const s = cStart[j], l = cLen[j];
      ni.set(cIdx.subarray(s, s + l), top);
      cStart[j] = top;
      top += cCap[j];
    }
    this.cIdx = ni;
    this.cTop = top;
  }

  colAppend(j: number, i: number): void {
    const { cLen, cCap, cStart } = this;
    if (cLen[j] === cCap[j]) {
      const cap = Math.max(2 * cCap[j], 4);
      if (this.cTop + cap > this.cIdx.length) this.compactCols(cap);
      const s = cStart[j], l = cLen[j];
      const cTop = this.cTop;
      this.cIdx.copyWithin(cTop, s, s + l);
      cStart[j] = cTop;
      cCap[j] = cap;
      this.cTop = cTop + cap;
    }
    this.cIdx[cStart[j] + cLen[j]++] = i;
  }

  colRemove(j: number, i: number): void {
    const cIdx = this.cIdx, cLen = this.cLen;
    const s = this.cStart[j];
    const e = s + cLen[j] - 1;
    for (let t = s; t <= e; t++) {
      if (cIdx[t] === i) {
        cIdx[t] = cIdx[e];
        cLen[j]--;
        return;
      }
    }
  }

  /** Removes entry j from row i (if present) and returns its value (0 if absent). */
  rowRemove(i: number, j: number): number {
    const rIdx = this.rIdx, rVal = this.rVal, rLen = this.rLen;
    const s = this.rStart[i];
    const e = s + rLen[i] - 1;
    for (let t = s; t <= e; t++) {
      if (rIdx[t] === j) {
        const v = rVal[t];
        rIdx[t] = rIdx[e];
        rVal[t] = rVal[e];
        rLen[i]--;
        this.activeNnz--;
        return v;
      }
    }
    return 0;
  }

  recomputeRowMax(i: number): void {
    const rVal = this.rVal;
    let mx = 0;
    const s = this.rStart[i], e = s + this.rLen[i];
    for (let t = s; t < e; t++) {
      const av = Math.abs(rVal[t]);
      if (av > mx) mx = av;
    }
    this.rowMax[i] = mx;
  }

  /** Row i cannot be pivoted: removed from the active submatrix. */
  dropRow(i: number): void {
    const { rStart, rLen, cLen, colBuckets } = this;
    const rIdx = this.rIdx;
    const s = rStart[i], e = s + rLen[i];
    for (let t = s; t < e; t++) {
      const j = rIdx[t];
      this.colRemove(j, i);
      colBuckets.link(j, cLen[j]);
    }
    this.activeNnz -= rLen[i];
    rLen[i] = 0;
    this.rowBuckets.unlink(i);
    this.rowActive[i] = 0;
    this.nAR--;
    this.singularRows.push(i);
  }

  dropCol(j: number): void {
    const { cStart, cLen, rLen, rowBuckets } = this;
    const cIdx = this.cIdx;
    const s = cStart[j], e = s + cLen[j];
    for (let t = s; t < e; t++) {
      const i = cIdx[t];
      this.rowRemove(i, j);
      this.recomputeRowMax(i);
      rowBuckets.link(i, rLen[i]);
    }
    cLen[j] = 0;
    this.colBuckets.unlink(j);
    this.colActive[j] = 0;
    this.nAC--;
    this.singularCols.push(j);
  }

  /** Finds a pivot (P, Q); returns false when no acceptable pivot remains. */
  findPivot(): boolean {
    const { n, u, singTol, rStart, rLen, cStart, cLen, rowMax, hist, rowActive, colActive, pendRows, pendCols } = this;
    const rHead = this.rowBuckets.head, rNext = this.rowBuckets.next;
    const cHead = this.colBuckets.head, cNext = this.colBuckets.next;
    for (;;) {
      while (rHead[0] >= 0) this.dropRow(rHead[0]);
      while (cHead[0] >= 0) this.dropCol(cHead[0]);
      if (this.nAR === 0 || this.nAC === 0) return false;
      // the pools do not move during the search
      const rIdx = this.rIdx, rVal = this.rVal, cIdx = this.cIdx;
      let bestP = -1, bestQ = -1, bestCost = Infinity, bestRatio = 0;
      let searched = 0;
      pendRows.length = 0;
      pendCols.length = 0;
      outer: for (let k = 1; k <= n; k++) {
        const km1 = k - 1;
        for (let j = cHead[k]; j >= 0; j = cNext[j]) {
          let any = false;
          const cs0 = cStart[j], ce = cs0 + cLen[j];
          for (let t = cs0; t < ce; t++) {
            const i = cIdx[t];
            // value of (i, j)
            const s = rStart[i], e = s + rLen[i];
            let v = 0;
            for (let q = s; q < e; q++) {
              if (rIdx[q] === j) {
                v = rVal[q];
                break;
              }
            }
            const av = Math.abs(v);
            if (!(av > singTol * hist[i])) continue;
            any = true;
            if (av >= u * rowMax[i]) {
              const cost = (rLen[i] - 1) * km1;
              const ratio = av / rowMax[i];
              if (cost < bestCost || (cost === bestCost && ratio > bestRatio)) {
                bestCost = cost;
                bestRatio = ratio;
                bestP = i;
                bestQ = j;
              }
            }
          }
          if (!any) pendCols.push(j);
          searched++;
          if (bestP >= 0 && (bestCost <= km1 * km1 || searched >= SEARCH_LIMIT)) break outer;
        }
        for (let i = rHead[k]; i >= 0; i = rNext[i]) {
          const rm = rowMax[i];
          const negl = singTol * hist[i];
          if (!(rm > negl)) {
            pendRows.push(i);
            continue;
          }
          const thr = Math.max(u * rm, negl);
          const s = rStart[i], e = s + rLen[i];
          for (let q = s; q < e; q++) {
            const av = Math.abs(rVal[q]);
            if (av >= thr && av > negl) {
              const cost = km1 * (cLen[rIdx[q]] - 1);
              const ratio = av / rm;
              if (cost < bestCost || (cost === bestCost && ratio > bestRatio)) {
                bestCost = cost;
                bestRatio = ratio;
                bestP = i;
                bestQ = rIdx[q];
              }
            }
          }
          searched++;
          if (bestP >= 0 && (bestCost <= km1 * km1 || searched >= SEARCH_LIMIT)) break outer;
        }
      }
      if (pendRows.length > 0 || pendCols.length > 0) {
        for (const i of pendRows) if (rowActive[i]) this.dropRow(i);
        // a column whose entries are all negligible stays so (later updates only subtract
        // bounded multiples of negligible pivot-row entries): it cannot be pivoted
        for (const j of pendCols) if (colActive[j]) this.dropCol(j);
        continue;
      }
      if (bestP < 0) return false;
      this.P = bestP;
      this.Q = bestQ;
      return true;
    }
  }

  eliminate(p: number, q: number): void {
    const { rStart, rLen, cStart, cLen, rowMax, hist, pivPos, seen, pCols, pVals, fillBuf, colRowsTmp, Li, Lv, Ui, Uv, rowBuckets, colBuckets } = this;
    // pivot row: record U entries, scatter
    let rIdx = this.rIdx, rVal = this.rVal;
    const ps = rStart[p], pe = ps + rLen[p];
    let piv = 0;
    let np = 0;
    for (let t = ps; t < pe; t++) {
      const j = rIdx[t];
      const v = rVal[t];
      if (j === q) piv = v;
      else {
        pCols[np] = j;
        pVals[np] = v;
        pivPos[j] = np;
        np++;
        Ui.push(j);
        Uv.push(v);
      }
      this.colRemove(j, p);
    }
    this.pivRowB.push(p);
    this.pivColB.push(q);
    this.pivValB.push(piv);
    this.Uptr.push(Ui.n);
    this.activeNnz -= rLen[p];
    rLen[p] = 0;
    rowBuckets.unlink(p);
    this.rowActive[p] = 0;
    this.nAR--;
    const histP = hist[p];
    // rows to update
    const nq = cLen[q];
    colRowsTmp.set(this.cIdx.subarray(cStart[q], cStart[q] + nq));
    cLen[q] = 0;
    colBuckets.unlink(q);
    this.colActive[q] = 0;
    this.nAC--;
    for (let r = 0; r < nq; r++) {
      const i = colRowsTmp[r];
      const aiq = this.rowRemove(i, q);
      const l = aiq / piv;
      Li.push(i);
      Lv.push(l);
      const stamp = ++this.stamp;
      let s = rStart[i];
      let len = rLen[i];
      let mx = 0;
      for (let t = s; t < s + len; t++) {
        const m = pivPos[rIdx[t]];
        let v = rVal[t];
        if (m >= 0) {
          v -= l * pVals[m];
          rVal[t] = v;
          seen[m] = stamp;
        }
        const av = Math.abs(v);
        if (av > mx) mx = av;
      }
      let nf = 0;
      for (let m = 0; m < np; m++) if (seen[m] !== stamp) fillBuf[nf++] = m;
      if (nf > 0) {
        this.growRow(i, nf);
        // the row may have moved, and the pool with it
        rIdx = this.rIdx;
        rVal = this.rVal;
        s = rStart[i];
        for (let f = 0; f < nf; f++) {
          const m = fillBuf[f];
          const j = pCols[m];
          const v = -l * pVals[m];
          rIdx[s + len] = j;
          rVal[s + len] = v;
          len++;
          const av = Math.abs(v);
          if (av > mx) mx = av;
          this.colAppend(j, i);
        }
        rLen[i] = len;
        this.activeNnz += nf;
      }
      rowMax[i] = mx;
      let h = hist[i];
      if (mx > h) h = mx;
      const g = Math.abs(l) * histP;
      if (g > h) h = g;
      hist[i] = h;
      rowBuckets.link(i, rLen[i]);
    }
    this.Lptr.push(Li.n);
    for (let m = 0; m < np; m++) {
      const j = pCols[m];
      pivPos[j] = -1;
      colBuckets.link(j, cLen[j]);
    }
  }

  densePhase(): void {
    const { n, rowActive, colActive, rStart, rLen, hist, pivRowB, pivColB, pivValB, Li, Lv, Ui, Uv, Lptr, Uptr, singularRows, singularCols } = this;
    const rIdx = this.rIdx, rVal = this.rVal;
    const R: number[] = [];
    const C: number[] = [];
    for (let i = 0; i < n; i++) if (rowActive[i]) R.push(i);
    for (let j = 0; j < n; j++) if (colActive[j]) C.push(j);
    const nr = R.length, nc = C.length;
    const loc = this.pivPos; // reuse as column -> local index map
    for (let c = 0; c < nc; c++) loc[C[c]] = c;
    const M = new Float64Array(nr * nc);
    const h = new Float64Array(nr);
    for (let r = 0; r < nr; r++) {
      const i = R[r];
      const s = rStart[i], e = s + rLen[i];
      for (let t = s; t < e; t++) M[r * nc + loc[rIdx[t]]] = rVal[t];
      h[r] = hist[i];
    }
    for (let c = 0; c < nc; c++) loc[C[c]] = -1;
    const res = denseBlockLU(M, nr, nc, h, this.singTol);
    // record the steps in the common sparse format
    const k = res.pr.length;
    for (let s = 0; s < k; s++) {
      const p = res.pr[s], c = res.pc[s];
      const po = p * nc;
      pivRowB.push(R[p]);
      pivColB.push(C[c]);
      pivValB.push(M[po + c]);
      for (let c2 = c + 1; c2 < nc; c2++) {
        const v = M[po + c2];
        if (v !== 0) {
          Ui.push(C[c2]);
          Uv.push(v);
        }
      }
      Uptr.push(Ui.n);
      // rows live at step s: rows pivoted later, and rows never pivoted
      for (let r = 0; r < nr; r++) {
        const st = res.rowStep[r];
        if (st > s || st === -1) {
          const l = M[r * nc + c];
          if (l !== 0) {
            Li.push(R[r]);
            Lv.push(l);
          }
        }
      }
      Lptr.push(Li.n);
    }
    for (let c = 0; c < nc; c++) if (res.colStep[c] < 0) singularCols.push(C[c]);
    for (let r = 0; r < nr; r++) if (res.rowStep[r] < 0) singularRows.push(R[r]);
    for (let r = 0; r < nr; r++) rowActive[R[r]] = 0;
    for (let c = 0; c < nc; c++) colActive[C[c]] = 0;
    this.nAR = 0;
    this.nAC = 0;
  }
}

/** Panel width of the blocked dense LU. */
const PANEL = 32;

/**
 * Blocked right-looking LU with partial (row) pivoting of the nr×nc
 * row-major block M, in place: after return, for pivot step s (row pr[s],
 * column pc[s]) M[pr[s], pc[s]] is the pivot, M[pr[s], c] for later columns
 * the U entries, and M[r, pc[s]] the multiplier of every row r pivoted after
 * step s (or never pivoted). Columns whose live entries are all negligible
 * (≤ tol · h[r]) are skipped (colStep = −1); rowStep[r] = −1 for rows never
 * pivoted. h is the per-row magnitude history, updated here.
 */
function denseBlockLU(
  M: Float64Array,
  nr: number,
  nc: number,
  h: Float64Array,
  tol: number,
): { pr: number[]; pc: number[]; rowStep: Int32Array; colStep: Int32Array } {
  const pr: number[] = [];
  const pc: number[] = [];
  const rowStep = new Int32Array(nr).fill(-1);
  const colStep = new Int32Array(nc).fill(-1);
  const live = new Int32Array(nr);
  for (let r = 0; r < nr; r++) live[r] = r;
  let nLive = nr;
  const poff = new Int32Array(PANEL); // row offsets of the panel's pivot rows
  const pcol = new Int32Array(PANEL); // their pivot columns
  for (let c0 = 0; c0 < nc && nLive > 0; c0 += PANEL) {
    const c1 = Math.min(nc, c0 + PANEL);
    let k = 0;
    // factor the panel (updates restricted to panel columns)
    for (let c = c0; c < c1; c++) {
      if (nLive === 0) break;
      let best = -1;
      let bmax = 0;
      for (let t = 0; t < nLive; t++) {
        const r = live[t];
        const av = Math.abs(M[r * nc + c]);
        if (av > tol * h[r] && av > bmax) {
          bmax = av;
          best = t;
        }
      }
      if (best < 0) continue;
      const p = live[best];
      live[best] = live[--nLive];
      rowStep[p] = pr.length;
      colStep[c] = pr.length;
      pr.push(p);
      pc.push(c);
      const po = p * nc;
      poff[k] = po;
      pcol[k] = c;
      k++;
      const piv = M[po + c];
      const hp = h[p];
      for (let t = 0; t < nLive; t++) {
        const r = live[t];
        const ro = r * nc;
        const x = M[ro + c];
        if (x === 0) continue;
        const l = x / piv;
        M[ro + c] = l;
        for (let c2 = c + 1; c2 < c1; c2++) M[ro + c2] -= l * M[po + c2];
        const g = Math.abs(l) * hp;
        if (g > h[r]) h[r] = g;
      }
    }
    if (c1 >= nc || k === 0) continue;
    // U12: pivot rows of this panel, trailing columns (forward substitution in pivot order)
    for (let t = 1; t < k; t++) rankUpdate(M, poff[t], poff, pcol, t, c1, nc);
    // trailing update of the live rows
    for (let t = 0; t < nLive; t++) rankUpdate(M, live[t] * nc, poff, pcol, k, c1, nc);
  }
  // columns never reached or skipped stay at −1; mark skipped ones distinctly is unnecessary
  return { pr, pc, rowStep, colStep };
}

/** M[ro + c1..nc) −= Σ_{s<k} M[ro + pcol[s]] · M[poff[s] + c1..nc), four terms at a time. */
function rankUpdate(
  M: Float64Array,
  ro: number,
  poff: Int32Array,
  pcol: Int32Array,
  k: number,
  c1: number,
  nc: number,
): void {
  let s = 0;
  for (; s + 4 <= k; s += 4) {
    const l0 = M[ro + pcol[s]], l1 = M[ro + pcol[s + 1]], l2 = M[ro + pcol[s + 2]], l3 = M[ro + pcol[s + 3]];
    if (l0 === 0 && l1 === 0 && l2 === 0 && l3 === 0) continue;
    const a0 = poff[s], a1 = poff[s + 1], a2 = poff[s + 2], a3 = poff[s + 3];
    for (let j = c1; j < nc; j++) {
      M[ro + j] -= l0 * M[a0 + j] + l1 * M[a1 + j] + l2 * M[a2 + j] + l3 * M[a3 + j];
    }
  }
  for (; s < k; s++) {
    const l0 = M[ro + pcol[s]];
    if (l0 === 0) continue;
    const a0 = poff[s];
    for (let j = c1; j < nc; j++) M[ro + j] -= l0 * M[a0 + j];
  }
}

/** Solves A x = b for each right-hand side after one factorisation. */
export function solveMany(lu: SparseLUResult, rhsColumns: Float64Array[]): Float64Array[] {
  const out: Float64Array[] = new Array(rhsColumns.length);
  for (let k = 0; k < rhsColumns.length; k++) out[k] = lu.solve(rhsColumns[k]);
  return out;
}

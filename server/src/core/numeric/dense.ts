/**
 * Dense linear-algebra helpers on row-major Float64Array storage.
 *
 * Everything here is pure (no I/O). The singular value decomposition is
 * delegated to ml-matrix; the LU factorisations are written here so that
 * singular columns can be reported with a scale-aware tolerance.
 */
import { Matrix, SingularValueDecomposition } from 'ml-matrix';

/** A dense matrix, stored row-major: element (i, j) is data[i * cols + j]. */
export interface DenseMatrix {
  rows: number;
  cols: number;
  data: Float64Array;
}

/** Result of {@link luFactor}. */
export interface DenseLU {
  /** false when the matrix is numerically singular (some column got no acceptable pivot). */
  ok: boolean;
  /** Number of pivots found (a numerical rank estimate; use {@link numericalRank} for a rank-revealing one). */
  rank: number;
  /** Solves A x = b; throws when the factorisation is not ok. Does not modify b. */
  solve(b: Float64Array): Float64Array;
  /** Determinant of A (0 when not ok). */
  det(): number;
  /** Columns that got no acceptable pivot (empty when ok). */
  singularCols: number[];
}

const EPS = 2.220446049250313e-16;

/** Creates a rows×cols matrix, zero-filled or copied from nested arrays (which must match the size). */
export function dense(rows: number, cols: number, fill?: number[][]): DenseMatrix {
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || rows < 0 || cols < 0) {
    throw new RangeError(`dense: invalid size ${rows}x${cols}`);
  }
  const data = new Float64Array(rows * cols);
  if (fill) {
    if (fill.length !== rows) throw new RangeError(`dense: expected ${rows} rows, got ${fill.length}`);
    for (let i = 0; i < rows; i++) {
      const r = fill[i];
      if (r.length !== cols) throw new RangeError(`dense: row ${i} has ${r.length} entries, expected ${cols}`);
      for (let j = 0; j < cols; j++) data[i * cols + j] = r[j];
    }
  }
  return { rows, cols, data };
}

/** Converts to nested arrays (row by row). */
export function toArrays(m: DenseMatrix): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < m.rows; i++) {
    const r: number[] = new Array(m.cols);
    for (let j = 0; j < m.cols; j++) r[j] = m.data[i * m.cols + j];
    out.push(r);
  }
  return out;
}

/** Matrix product a·b. */
export function matMul(a: DenseMatrix, b: DenseMatrix): DenseMatrix {
  if (a.cols !== b.rows) throw new RangeError(`matMul: ${a.rows}x${a.cols} times ${b.rows}x${b.cols}`);
  return { rows: a.rows, cols: b.cols, data: mulRowMajor(a.data, b.data, a.rows, a.cols, b.cols) };
}

/** a·b for row-major arrays a (r×k) and b (k×c). */
export function mulRowMajor(a: Float64Array, b: Float64Array, r: number, k: number, c: number): Float64Array {
  const out = new Float64Array(r * c);
  for (let i = 0; i < r; i++) {
    const oi = i * c;
    for (let p = 0; p < k; p++) {
      const aip = a[i * k + p];
      if (aip === 0) continue;
      const bp = p * c;
      for (let j = 0; j < c; j++) out[oi + j] += aip * b[bp + j];
    }
  }
  return out;
}

/** The transpose of a row-major r×c array. */
export function transposeRowMajor(a: Float64Array, r: number, c: number): Float64Array {
  const out = new Float64Array(r * c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) out[j * r + i] = a[i * c + j];
  return out;
}

/** Power of two closest to 1/x (exact scaling, no rounding error). */
function pow2Inverse(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  return Math.pow(2, -Math.round(Math.log2(x)));
}

/**
 * LU factorisation with partial pivoting of a square matrix.
 *
 * The matrix is first equilibrated with power-of-two row and column scales
 * (each row and column then has largest magnitude about 1). A column whose
 * remaining entries are all below `singularTolerance` times the magnitude
 * history of their rows (the largest value that row held or had subtracted
 * from it) is numerically dependent on the columns already pivoted: it is
 * skipped and reported in `singularCols`.
 */
export function luFactor(a: DenseMatrix, opts?: { singularTolerance?: number }): DenseLU {
  if (a.rows !== a.cols) throw new RangeError(`luFactor: matrix must be square, got ${a.rows}x${a.cols}`);
  const n = a.rows;
  const tol = opts?.singularTolerance ?? 1e-12;
  const m = new Float64Array(a.data);
  const rs = new Float64Array(n).fill(1);
  const cs = new Float64Array(n).fill(1);
  let finite = true;
  for (let i = 0; i < n; i++) {
    let mx = 0;
    for (let j = 0; j < n; j++) {
      const v = Math.abs(m[i * n + j]);
      if (!Number.isFinite(v)) finite = false;
      else if (v > mx) mx = v;
    }
    rs[i] = pow2Inverse(mx);
    for (let j = 0; j < n; j++) m[i * n + j] *= rs[i];
  }
  for (let j = 0; j < n; j++) {
    let mx = 0;
    for (let i = 0; i < n; i++) {
      const v = Math.abs(m[i * n + j]);
      if (v > mx && Number.isFinite(v)) mx = v;
    }
    cs[j] = pow2Inverse(mx);
    for (let i = 0; i < n; i++) m[i * n + j] *= cs[j];
  }
  const hist = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let mx = 0;
    for (let j = 0; j < n; j++) mx = Math.max(mx, Math.abs(m[i * n + j]));
    hist[i] = mx;
  }
  // perm[k] = row pivoted at step k (for the pivoted columns in pivCol order)
  const live = new Int32Array(n);
  for (let i = 0; i < n; i++) live[i] = i;
  let nLive = n;
  const pivRow: number[] = [];
  const pivCol: number[] = [];
  const singularCols: number[] = [];
  for (let c = 0; c < n; c++) {
    let best = -1;
    let bmax = 0;
    for (let t = 0; t < nLive; t++) {
      const r = live[t];
      const v = Math.abs(m[r * n + c]);
      if (v > tol * hist[r] && v > bmax) {
        bmax = v;
        best = t;
      }
    }
    if (best < 0 || !finite) {
      singularCols.push(c);
      continue;
    }
    const p = live[best];
    live[best] = live[--nLive];
    pivRow.push(p);
    pivCol.push(c);
    const po = p * n;
    const piv = m[po + c];
    for (let t = 0; t < nLive; t++) {
      const r = live[t];
      const ro = r * n;
      const x = m[ro + c];
      if (x === 0) continue;
      const l = x / piv;
      m[ro + c] = l; // multiplier stored in place
      for (let j = c + 1; j < n; j++) m[ro + j] -= l * m[po + j];
      const g = Math.abs(l) * hist[p];
      if (g > hist[r]) hist[r] = g;
    }
  }
  const ok = singularCols.length === 0 && finite;
  const rank = pivRow.length;
  // Row order of pivot steps: step k pivoted row pivRow[k] on column pivCol[k] (= k when ok).
  const solve = (b: Float64Array): Float64Array => {
    if (!ok) throw new Error('luFactor: matrix is singular; solve is unavailable');
    if (b.length !== n) throw new RangeError(`luFactor.solve: expected ${n} values, got ${b.length}`);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) y[i] = b[i] * rs[i];
    // forward: rows pivoted later hold the multipliers of earlier steps in column pivCol[k]
    for (let k = 0; k < n; k++) {
      const p = pivRow[k];
      const yp = y[p];
      if (yp === 0) continue;
      const c = pivCol[k];
      for (let t = k + 1; t < n; t++) {
        const r = pivRow[t];
        y[r] -= m[r * n + c] * yp;
      }
    }
    const x = new Float64Array(n);
    for (let k = n - 1; k >= 0; k--) {
      const p = pivRow[k];
      const po = p * n;
      let s = y[p];
      for (let j = k + 1; j < n; j++) s -= m[po + j] * x[j];
      x[k] = s / m[po + k];
    }
    for (let j = 0; j < n; j++) x[j] *= cs[j];
    return x;
  };
  const det = (): number => {
    if (!ok) return 0;
    // sign of the row permutation pivRow
    const seen = new Uint8Array(n);
    let sign = 1;
    for (let i = 0; i < n; i++) {
      if (seen[i]) continue;
      let len = 0;
      let j = i;
      while (!seen[j]) {
        seen[j] = 1;
        j = pivRow[j];
        len++;
      }
      if (len % 2 === 0) sign = -sign;
    }
    let d = sign;
    for (let k = 0; k < n; k++) d *= m[pivRow[k] * n + k] / (rs[pivRow[k]] * cs[k]);
    return d;
  };
  return { ok, rank, solve, det, singularCols };
}

/**
 * Solves (Are + i·Aim) X = Bre + i·Bim for X by complex LU with partial
 * pivoting (pivot on the largest modulus). B may have several columns.
 * Throws when a pivot is exactly zero (the matrix is singular).
 */
export function complexSolve(
  are: DenseMatrix,
  aim: DenseMatrix,
  bre: DenseMatrix,
  bim: DenseMatrix,
): { re: DenseMatrix; im: DenseMatrix } {
  const n = are.rows;
  if (are.cols !== n || aim.rows !== n || aim.cols !== n) throw new RangeError('complexSolve: A must be square');
  if (bre.rows !== n || bim.rows !== n || bim.cols !== bre.cols) throw new RangeError('complexSolve: B has the wrong shape');
  const nr = bre.cols;
  const ar = new Float64Array(are.data);
  const ai = new Float64Array(aim.data);
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  for (let k = 0; k < n; k++) {
    // pivot search on |re| + |im| (a cheap magnitude, common practice)
    let best = -1;
    let bmax = -1;
    for (let i = k; i < n; i++) {
      const v = Math.abs(ar[i * n + k]) + Math.abs(ai[i * n + k]);
      if (v > bmax) {
        bmax = v;
        best = i;
      }
    }
    if (!(bmax > 0) || !Number.isFinite(bmax)) throw new Error('complexSolve: matrix is singular');
    if (best !== k) {
      const bo = best * n, ko = k * n;
      for (let j = 0; j < n; j++) {
        let t = ar[bo + j]; ar[bo + j] = ar[ko + j]; ar[ko + j] = t;
        t = ai[bo + j]; ai[bo + j] = ai[ko + j]; ai[ko + j] = t;
      }
      const t = perm[best]; perm[best] = perm[k]; perm[k] = t;
    }
    const ko = k * n;
    const pr = ar[ko + k], pi = ai[ko + k];
    // 1/p by Smith's scaling (no overflow for large or small pivots)
    let ipr: number, ipi: number;
    if (Math.abs(pr) >= Math.abs(pi)) {
      const r = pi / pr, d = pr + pi * r;
      ipr = 1 / d; ipi = -r / d;
    } else {
      const r = pr / pi, d = pi + pr * r;
      ipr = r / d; ipi = -1 / d;
    }
    for (let i = k + 1; i < n; i++) {
      const io = i * n;
      const xr = ar[io + k], xi = ai[io + k];
      if (xr === 0 && xi === 0) continue;
      const lr = xr * ipr - xi * ipi;
      const li = xr * ipi + xi * ipr;
      ar[io + k] = lr; ai[io + k] = li;
      for (let j = k + 1; j < n; j++) {
        const ur = ar[ko + j], ui = ai[ko + j];
        ar[io + j] -= lr * ur - li * ui;
        ai[io + j] -= lr * ui + li * ur;
      }
    }
  }
  const xr = new Float64Array(n * nr);
  const xi = new Float64Array(n * nr);
  const yr = new Float64Array(n);
  const yi = new Float64Array(n);
  for (let c = 0; c < nr; c++) {
    for (let i = 0; i < n; i++) {
      yr[i] = bre.data[perm[i] * nr + c];
      yi[i] = bim.data[perm[i] * nr + c];
    }
    for (let i = 0; i < n; i++) {
      const io = i * n;
      let sr = yr[i], si = yi[i];
      for (let j = 0; j < i; j++) {
        const lr = ar[io + j], li = ai[io + j];
        sr -= lr * yr[j] - li * yi[j];
        si -= lr * yi[j] + li * yr[j];
      }
      yr[i] = sr; yi[i] = si;
    }
    for (let i = n - 1; i >= 0; i--) {
      const io = i * n;
      let sr = yr[i], si = yi[i];
      for (let j = i + 1; j < n; j++) {
        const ur = ar[io + j], ui = ai[io + j];
        sr -= ur * yr[j] - ui * yi[j];
        si -= ur * yi[j] + ui * yr[j];
      }
      // divide by pivot (Smith's algorithm)
      const pr = ar[io + i], pi = ai[io + i];
      let qr: number, qi: number;
      if (Math.abs(pr) >= Math.abs(pi)) {
        const r = pi / pr, d = pr + pi * r;
        qr = (sr + si * r) / d; qi = (si - sr * r) / d;
      } else {
        const r = pr / pi, d = pi + pr * r;
        qr = (sr * r + si) / d; qi = (si * r - sr) / d;
      }
      yr[i] = qr; yi[i] = qi;
    }
    for (let i = 0; i < n; i++) {
      xr[i * nr + c] = yr[i];
      xi[i * nr + c] = yi[i];
    }
  }
  return { re: { rows: n, cols: nr, data: xr }, im: { rows: n, cols: nr, data: xi } };
}

/** Singular values in descending order (ml-matrix SVD). */
export function svdValues(a: DenseMatrix): Float64Array {
  const k = Math.min(a.rows, a.cols);
  if (k === 0) return new Float64Array(0);
  const svd = new SingularValueDecomposition(new Matrix(toArrays(a)), {
    computeLeftSingularVectors: false,
    computeRightSingularVectors: false,
    autoTranspose: true,
  });
  const s = Float64Array.from(svd.diagonal.slice(0, k), (v) => Math.abs(v));
  s.sort();
  s.reverse();
  return s;
}

/** Numerical rank: number of singular values above tol (default max(m,n)·eps·σmax). */
export function numericalRank(a: DenseMatrix, tol?: number): number {
  const s = svdValues(a);
  if (s.length === 0) return 0;
  const t = tol ?? Math.max(a.rows, a.cols) * EPS * s[0];
  let r = 0;
  for (let i = 0; i < s.length; i++) if (s[i] > t) r++;
  return r;
}

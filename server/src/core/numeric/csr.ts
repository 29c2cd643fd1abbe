/**
 * Compressed sparse row (CSR) matrices: row i holds the entries colIdx[p], values[p] for
 * p in rowPtr[i] … rowPtr[i+1]−1, columns ascending and without duplicates. Explicit zeros may be
 * stored; the algorithms that look at the pattern (e.g. the block triangular splitting in eigen.ts)
 * treat a stored 0 as absent.
 */
import { DenseMatrix } from './dense';

export interface CsrMatrix {
  rows: number;
  cols: number;
  /** rows + 1 offsets into colIdx/values. */
  rowPtr: Int32Array;
  colIdx: Int32Array;
  values: Float64Array;
}

function checkSize(rows: number, cols: number, who: string): void {
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || rows < 0 || cols < 0) {
    throw new RangeError(`${who}: invalid size ${rows}x${cols}`);
  }
}

/**
 * Builds a CSR matrix from triplets (row[k], col[k], val[k]) for k < nnz (default: all); duplicates
 * are summed, columns sorted. Entries outside the size throw a RangeError.
 */
export function csrFromTriplets(
  rows: number,
  cols: number,
  ti: ArrayLike<number>,
  tj: ArrayLike<number>,
  tv: ArrayLike<number>,
  nnz: number = ti.length,
): CsrMatrix {
  checkSize(rows, cols, 'csrFromTriplets');
  if (tj.length < nnz || tv.length < nnz || ti.length < nnz) throw new RangeError('csrFromTriplets: triplet arrays shorter than nnz');
  const count = new Int32Array(rows + 1);
  for (let k = 0; k < nnz; k++) {
    const i = ti[k], j = tj[k];
    if (!(i >= 0 && i < rows && j >= 0 && j < cols) || !Number.isInteger(i) || !Number.isInteger(j)) {
      throw new RangeError(`csrFromTriplets: entry (${i}, ${j}) outside ${rows}x${cols}`);
    }
    count[i + 1]++;
  }
  for (let i = 0; i < rows; i++) count[i + 1] += count[i];
  // bucket by row
  const next = count.slice(0, rows);
  const bc = new Int32Array(nnz);
  const bv = new Float64Array(nnz);
  for (let k = 0; k < nnz; k++) {
    const p = next[ti[k]]++;
    bc[p] = tj[k];
    bv[p] = tv[k];
  }
  // bucket by column within each row (counting sort via a column marker), summing duplicates
  const where = new Int32Array(cols).fill(-1);
  const rowPtr = new Int32Array(rows + 1);
  const colIdx = new Int32Array(nnz);
  const values = new Float64Array(nnz);
  let w = 0;
  for (let i = 0; i < rows; i++) {
    const start = w;
    for (let p = count[i]; p < count[i + 1]; p++) {
      const j = bc[p];
      if (where[j] >= start) values[where[j]] += bv[p];
      else {
        where[j] = w;
        colIdx[w] = j;
        values[w] = bv[p];
        w++;
      }
    }
    // sort the row's columns (insertion sort: rows are short; already sorted input costs one pass)
    for (let a = start + 1; a < w; a++) {
      const c = colIdx[a], v = values[a];
      let b = a - 1;
      while (b >= start && colIdx[b] > c) {
        colIdx[b + 1] = colIdx[b];
        values[b + 1] = values[b];
        b--;
      }
      colIdx[b + 1] = c;
      values[b + 1] = v;
    }
    rowPtr[i + 1] = w;
  }
  return { rows, cols, rowPtr, colIdx: colIdx.slice(0, w), values: values.slice(0, w) };
}

/** The non-zero entries of a dense matrix in CSR form (exact zeros are left out). */
export function csrFromDense(a: DenseMatrix): CsrMatrix {
  const { rows, cols, data } = a;
  checkSize(rows, cols, 'csrFromDense');
  let nz = 0;
  for (let k = 0; k < rows * cols; k++) if (data[k] !== 0) nz++;
  const rowPtr = new Int32Array(rows + 1);
  const colIdx = new Int32Array(nz);
  const values = new Float64Array(nz);
  let w = 0;
  for (let i = 0; i < rows; i++) {
    const o = i * cols;
    for (let j = 0; j < cols; j++) {
      const v = data[o + j];
      if (v !== 0) {
        colIdx[w] = j;
        values[w++] = v;
      }
    }
    rowPtr[i + 1] = w;
  }
  return { rows, cols, rowPtr, colIdx, values };
}

/** The dense (row-major) form. */
export function csrToDense(c: CsrMatrix): DenseMatrix {
  const data = new Float64Array(c.rows * c.cols);
  for (let i = 0; i < c.rows; i++) {
    for (let p = c.rowPtr[i]; p < c.rowPtr[i + 1]; p++) data[i * c.cols + c.colIdx[p]] += c.values[p];
  }
  return { rows: c.rows, cols: c.cols, data };
}

/** Entry (i, j), 0 when not stored (binary search in the row). */
export function csrGet(c: CsrMatrix, i: number, j: number): number {
  let lo = c.rowPtr[i], hi = c.rowPtr[i + 1] - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const cj = c.colIdx[mid];
    if (cj === j) return c.values[mid];
    if (cj < j) lo = mid + 1;
    else hi = mid - 1;
  }
  return 0;
}

/**
 * Sylvester and Lyapunov equations by the Bartels–Stewart method.
 *
 * R. H. Bartels and G. W. Stewart, "Solution of the matrix equation AX + XB = C", Comm. ACM 15(9), 1972
 * (Algorithm 432): both coefficient matrices are brought to real Schur form, A = U·S·Uᵀ and B = V·T·Vᵀ,
 * the equation becomes S·Y + Y·T = F with F = Uᵀ·C·V, which is solved block column by block column
 * (T upper quasi-triangular) and, inside each block column, block row by block row from the bottom
 * (S upper quasi-triangular); every step is a linear system of order 1, 2 or 4. Then X = U·Y·Vᵀ.
 *
 * The continuous Lyapunov equation A·X + X·Aᵀ + Q = 0 is the case B = Aᵀ, C = −Q; its solution is
 * symmetrised at the end. Both need λ_i(A) + λ_j(B) ≠ 0 for all i, j (for Lyapunov: no two eigenvalues
 * of A symmetric about the imaginary axis, e.g. A stable).
 */
import { mulRowMajor, transposeRowMajor, type DenseMatrix } from './dense';
import { realSchur } from './eigen';

/** Starts (row indices) of the diagonal blocks of a quasi-triangular n×n matrix t (row-major). */
function blockStarts(t: Float64Array, n: number): number[] {
  const starts: number[] = [];
  for (let i = 0; i < n; ) {
    starts.push(i);
    i += i + 1 < n && t[(i + 1) * n + i] !== 0 ? 2 : 1;
  }
  return starts;
}

/** Solves the small dense system m·x = b (order ≤ 4) by Gaussian elimination with partial pivoting. */
function smallSolve(m: number[][], b: number[]): number[] | undefined {
  const k = b.length;
  const a = m.map((r, i) => [...r, b[i]]);
  for (let c = 0; c < k; c++) {
    let p = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(a[r][c]) > Math.abs(a[p][c])) p = r;
    if (a[p][c] === 0) return undefined;
    [a[c], a[p]] = [a[p], a[c]];
    for (let r = c + 1; r < k; r++) {
      const f = a[r][c] / a[c][c];
      if (f === 0) continue;
      for (let j = c; j <= k; j++) a[r][j] -= f * a[c][j];
    }
  }
  const x = new Array<number>(k).fill(0);
  for (let r = k - 1; r >= 0; r--) {
    let s = a[r][k];
    for (let j = r + 1; j < k; j++) s -= a[r][j] * x[j];
    x[r] = s / a[r][r];
  }
  return x;
}



/**
 * Solves S·Y + Y·T = F for Y, with S (m×m) and T (n×n) upper quasi-triangular (real Schur forms) and F
 * m×n, all row-major. Returns undefined when some λ(S) + λ(T) is exactly zero.
 */
function quasiTriangularSylvester(s: Float64Array, m: number, t: Float64Array, n: number, f: Float64Array): Float64Array | undefined {
  const y = new Float64Array(m * n);
  const rows = blockStarts(s, m);
  const cols = blockStarts(t, n);
  for (let cb = 0; cb < cols.length; cb++) {
    const j0 = cols[cb];
    const nj = (cb + 1 < cols.length ? cols[cb + 1] : n) - j0;
    // rhs(i, jj) = F(i, j0+jj) − Σ_{l<j0} Y(i, l)·T(l, j0+jj)
    const rhs = new Float64Array(m * nj);
    for (let i = 0; i < m; i++) {
      for (let jj = 0; jj < nj; jj++) {
        let v = f[i * n + j0 + jj];
        for (let l = 0; l < j0; l++) v -= y[i * n + l] * t[l * n + j0 + jj];
        rhs[i * nj + jj] = v;
      }
    }
    for (let rb = rows.length - 1; rb >= 0; rb--) {
      const i0 = rows[rb];
      const mi = (rb + 1 < rows.length ? rows[rb + 1] : m) - i0;
      // S_ii·Y_b + Y_b·T_jj = rhs_b − Σ_{k>i} S_ik·Y_kb ; unknowns Y(i0+a, j0+c), index a*nj + c
      const size = mi * nj;
      const mat: number[][] = Array.from({ length: size }, () => new Array<number>(size).fill(0));
      const b = new Array<number>(size).fill(0);
      for (let a = 0; a < mi; a++) {
        for (let c = 0; c < nj; c++) {
          const row = a * nj + c;
          let v = rhs[(i0 + a) * nj + c];
          for (let k = i0 + mi; k < m; k++) v -= s[(i0 + a) * m + k] * y[k * n + j0 + c];
          b[row] = v;
          for (let a2 = 0; a2 < mi; a2++) mat[row][a2 * nj + c] += s[(i0 + a) * m + i0 + a2];
          for (let c2 = 0; c2 < nj; c2++) mat[row][a * nj + c2] += t[(j0 + c2) * n + j0 + c];
        }
      }
      const x = smallSolve(mat, b);
      if (!x) return undefined;
      for (let a = 0; a < mi; a++) for (let c = 0; c < nj; c++) y[(i0 + a) * n + j0 + c] = x[a * nj + c];
    }
  }
  return y;
}

/**
 * Solves A·X + X·B = C (A m×m, B n×n, C m×n). Returns undefined when the Schur iteration fails or the
 * equation is singular (λ_i(A) + λ_j(B) = 0).
 */
export function solveSylvester(a: DenseMatrix, b: DenseMatrix, c: DenseMatrix): DenseMatrix | undefined {
  const m = a.rows, n = b.rows;
  if (a.cols !== m || b.cols !== n || c.rows !== m || c.cols !== n) throw new RangeError('solveSylvester: sizes do not match');
  const sa = realSchur(a);
  const sb = realSchur(b);
  if (!sa || !sb) return undefined;
  const f = mulRowMajor(mulRowMajor(transposeRowMajor(sa.q, m, m), c.data, m, m, n), sb.q, m, n, n);
  const y = quasiTriangularSylvester(sa.t, m, sb.t, n, f);
  if (!y) return undefined;
  const x = mulRowMajor(mulRowMajor(sa.q, y, m, m, n), transposeRowMajor(sb.q, n, n), m, n, n);
  for (let k = 0; k < x.length; k++) if (!Number.isFinite(x[k])) return undefined;
  return { rows: m, cols: n, data: x };
}

/**
 * Solves the continuous Lyapunov equation A·X + X·Aᵀ + Q = 0 (Q symmetric); the result is symmetric.
 * For stable A and Q = B·Bᵀ this is the controllability Gramian; with Aᵀ and Cᵀ·C the observability one.
 */
export function solveLyapunov(a: DenseMatrix, q: DenseMatrix): DenseMatrix | undefined {
  const n = a.rows;
  const at: DenseMatrix = { rows: n, cols: n, data: transposeRowMajor(a.data, n, n) };
  const negQ: DenseMatrix = { rows: n, cols: n, data: q.data.map((v) => -v) };
  const x = solveSylvester(a, at, negQ);
  if (!x) return undefined;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const v = (x.data[i * n + j] + x.data[j * n + i]) / 2;
      x.data[i * n + j] = v;
      x.data[j * n + i] = v;
    }
  }
  return x;
}

/** Relative residual ‖A·X + X·Aᵀ + Q‖_F / (2‖A‖_F‖X‖_F + ‖Q‖_F) of a Lyapunov solution. */
export function lyapunovResidual(a: DenseMatrix, x: DenseMatrix, q: DenseMatrix): number {
  const n = a.rows;
  const ax = mulRowMajor(a.data, x.data, n, n, n);
  let r = 0, na = 0, nx = 0, nq = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const v = ax[i * n + j] + ax[j * n + i] + q.data[i * n + j];
      r += v * v;
      na += a.data[i * n + j] ** 2;
      nx += x.data[i * n + j] ** 2;
      nq += q.data[i * n + j] ** 2;
    }
  }
  const den = 2 * Math.sqrt(na) * Math.sqrt(nx) + Math.sqrt(nq);
  return den === 0 ? 0 : Math.sqrt(r) / den;
}

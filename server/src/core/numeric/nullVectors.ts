/**
 * Null vectors of a small dense matrix by the one-sided Jacobi SVD (Hestenes, "Inversion of matrices by
 * biorthogonalization and related results", J. SIAM 6, 1958; Golub & Van Loan, "Matrix Computations",
 * 4th ed., Sect. 8.6.3): plane rotations from the right make the columns of G = M·V mutually orthogonal;
 * then the column norms are the singular values of M and the columns of V its right singular vectors. The
 * columns of V whose column of G has a norm at or below `tol` span the (numerical) null space of M.
 * Accurate to the rounding of M (no product MᵀM is formed). For the few eigenvalues a rank test fails on.
 */
export function nullVectors(M: Float64Array, rows: number, cols: number, tol: number): Float64Array[] {
  return rightSingularVectors(M, rows, cols).filter((x) => x.sigma <= tol).map((x) => x.v);
}

/** Every right singular vector of M with its singular value, smallest first (same method). */
export function rightSingularVectors(M: Float64Array, rows: number, cols: number): { sigma: number; v: Float64Array }[] {
  const G = Float64Array.from(M);
  const V = new Float64Array(cols * cols);
  for (let i = 0; i < cols; i++) V[i * cols + i] = 1;
  for (let sweep = 0; sweep < 60; sweep++) {
    let rotated = false;
    for (let p = 0; p < cols - 1; p++) {
      for (let q = p + 1; q < cols; q++) {
        let a = 0;
        let b = 0;
        let g = 0;
        for (let i = 0; i < rows; i++) {
          const x = G[i * cols + p];
          const y = G[i * cols + q];
          a += x * x;
          b += y * y;
          g += x * y;
        }
        if (g === 0 || Math.abs(g) <= Number.EPSILON * Math.sqrt(a * b)) continue;
        rotated = true;
        const zeta = (b - a) / (2 * g);
        const t = (zeta >= 0 ? 1 : -1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = c * t;
        for (let i = 0; i < rows; i++) {
          const x = G[i * cols + p];
          const y = G[i * cols + q];
          G[i * cols + p] = c * x - s * y;
          G[i * cols + q] = s * x + c * y;
        }
        for (let i = 0; i < cols; i++) {
          const x = V[i * cols + p];
          const y = V[i * cols + q];
          V[i * cols + p] = c * x - s * y;
          V[i * cols + q] = s * x + c * y;
        }
      }
    }
    if (!rotated) break;
  }
  const out: { sigma: number; v: Float64Array }[] = [];
  for (let j = 0; j < cols; j++) {
    let s = 0;
    for (let i = 0; i < rows; i++) s += G[i * cols + j] ** 2;
    const v = new Float64Array(cols);
    for (let i = 0; i < cols; i++) v[i] = V[i * cols + j];
    out.push({ sigma: Math.sqrt(s), v });
  }
  return out.sort((x, y) => x.sigma - y.sigma);
}

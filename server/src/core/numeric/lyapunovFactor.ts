/**
 * The Cholesky factor of the solution of a stable Lyapunov equation, computed directly (without forming
 * the solution): S. J. Hammarling, "Numerical solution of the stable, non-negative definite Lyapunov
 * equation", IMA Journal of Numerical Analysis 2(3), 1982.
 *
 * For A stable, A·P + P·Aᵀ + B·Bᵀ = 0 has P = L·Lᵀ. Forming P first (Bartels–Stewart) and factoring it
 * afterwards loses every eigenvalue of P below ε·‖P‖, so the Hankel singular values of a balanced
 * truncation computed from such factors stop at about √ε·σ₁. The factor computed directly is accurate
 * to about ε relative to itself, which carries the Hankel values down to about ε·σ₁.
 *
 * Method: A = Z·S·Zᴴ with S upper triangular (the real Schur form, its 2×2 blocks of complex pairs
 * turned into complex triangular ones by one plane rotation each); with B̂ = Zᴴ·B the equation
 * S·X + X·Sᴴ + B̂·B̂ᴴ = 0 has X = U·Uᴴ, U upper triangular, found from the last column backwards. Split
 * S = [[S₁, s], [0, λ]], U = [[U₁, u], [0, α]], last row of B̂ = bᴴ, the rest B₁:
 *   α = ‖b‖ / √(−2·Re λ);   (S₁ + λ̄·I)·u = −(α·s + B₁·b/α);   then the same problem for S₁, U₁ with
 *   B₁ replaced by B₁ − u·bᴴ/α  (u = 0 and B₁ unchanged when α = 0).
 * Then P = (Z·U)·(Z·U)ᴴ; with Z·U = R + i·J, P real means P = R·Rᵀ + J·Jᵀ = [R, J]·[R, J]ᵀ, and a QR
 * factorisation of [R, J]ᵀ gives the real n×n factor.
 */
import { QrDecomposition, Matrix } from 'ml-matrix';
import { realSchur } from './eigen';

/** A complex n×n matrix as two row-major real arrays. */
interface CMat {
  re: Float64Array;
  im: Float64Array;
}

/**
 * The complex Schur form from the real one: each 2×2 diagonal block (a complex pair) is made upper
 * triangular by a plane rotation G = [[c̄, s], [−s, c]] (c complex, s real, |c|² + s² = 1) applied to the
 * rows and columns it touches; Z accumulates the rotations.
 */
function complexSchur(t: Float64Array, q: Float64Array, n: number): { s: CMat; z: CMat } {
  const s: CMat = { re: t.slice(), im: new Float64Array(n * n) };
  const z: CMat = { re: q.slice(), im: new Float64Array(n * n) };
  for (let m = n - 1; m >= 1; m--) {
    const sub = s.re[m * n + m - 1];
    if (sub === 0 && s.im[m * n + m - 1] === 0) continue;
    // eigenvalue of the real 2×2 block [[a, b], [c, d]] (rows m−1, m), minus d
    const a = s.re[(m - 1) * n + m - 1], b = s.re[(m - 1) * n + m], c = s.re[m * n + m - 1], d = s.re[m * n + m];
    const half = (a - d) / 2;
    const disc = half * half + b * c; // negative for a complex pair
    const muRe = half; // (a + d)/2 − d
    const muIm = Math.sqrt(Math.max(-disc, 0));
    const r = Math.hypot(muRe, muIm, sub);
    const cr = muRe / r, ci = muIm / r, sr = sub / r;
    // rows m−1, m: [x; y] ← [c̄·x + s·y; −s·x + c·y] for columns m−1 … n−1
    for (let j = m - 1; j < n; j++) {
      const xr = s.re[(m - 1) * n + j], xi = s.im[(m - 1) * n + j];
      const yr = s.re[m * n + j], yi = s.im[m * n + j];
      s.re[(m - 1) * n + j] = cr * xr + ci * xi + sr * yr;
      s.im[(m - 1) * n + j] = cr * xi - ci * xr + sr * yi;
      s.re[m * n + j] = -sr * xr + cr * yr - ci * yi;
      s.im[m * n + j] = -sr * xi + cr * yi + ci * yr;
    }
    // columns m−1, m of rows 0 … m (and of Z): [x, y] ← [x·c + y·s, −x·s + y·c̄]  (times Gᴴ)
    const cols = (M: CMat, rows: number) => {
      for (let i = 0; i < rows; i++) {
        const xr = M.re[i * n + m - 1], xi = M.im[i * n + m - 1];
        const yr = M.re[i * n + m], yi = M.im[i * n + m];
        M.re[i * n + m - 1] = xr * cr - xi * ci + yr * sr;
        M.im[i * n + m - 1] = xr * ci + xi * cr + yi * sr;
        M.re[i * n + m] = -xr * sr + yr * cr + yi * ci;
        M.im[i * n + m] = -xi * sr + yi * cr - yr * ci;
      }
    };
    cols(s, m + 1);
    cols(z, n);
    s.re[m * n + m - 1] = 0;
    s.im[m * n + m - 1] = 0;
  }
  return { s, z };
}

/**
 * A real factor L (n×n) with L·Lᵀ = P, P the solution of A·P + P·Aᵀ + B·Bᵀ = 0 (A n×n stable, B n×m,
 * row-major), by Hammarling's method. Returns undefined when the Schur iteration fails or A is not stable
 * (an eigenvalue with Re λ ≥ 0).
 */
export function lyapunovFactor(a: Float64Array, b: Float64Array, n: number, m: number): Float64Array | undefined {
  if (n === 0) return new Float64Array(0);
  const schur = realSchur({ rows: n, cols: n, data: a });
  if (!schur) return undefined;
  const { s, z } = complexSchur(schur.t, schur.q, n);
  // B̂ = Zᴴ·B
  const br = new Float64Array(n * m);
  const bi = new Float64Array(n * m);
  for (let k = 0; k < n; k++) {
    for (let i = 0; i < n; i++) {
      const zr = z.re[k * n + i], zi = z.im[k * n + i];
      if (zr === 0 && zi === 0) continue;
      for (let j = 0; j < m; j++) {
        const v = b[k * m + j];
        br[i * m + j] += zr * v;
        bi[i * m + j] -= zi * v;
      }
    }
  }
  const ur = new Float64Array(n * n);
  const ui = new Float64Array(n * n);
  const wr = new Float64Array(n);
  const wi = new Float64Array(n);
  for (let k = n - 1; k >= 0; k--) {
    const lr = s.re[k * n + k], li = s.im[k * n + k];
    if (!(lr < 0)) return undefined;
    let nb = 0;
    for (let j = 0; j < m; j++) nb = Math.hypot(nb, br[k * m + j], bi[k * m + j]);
    const alpha = nb / Math.sqrt(-2 * lr);
    ur[k * n + k] = alpha;
    if (alpha === 0 || k === 0) continue;
    // right-hand side −(α·s + B₁·b/α), b = conj of the last row of B̂
    for (let i = 0; i < k; i++) {
      let xr = alpha * s.re[i * n + k], xi = alpha * s.im[i * n + k];
      for (let j = 0; j < m; j++) {
        const pr = br[i * m + j], pi = bi[i * m + j];
        const qr = br[k * m + j], qi = -bi[k * m + j];
        xr += (pr * qr - pi * qi) / alpha;
        xi += (pr * qi + pi * qr) / alpha;
      }
      wr[i] = -xr;
      wi[i] = -xi;
    }
    // (S₁ + λ̄·I)·u = w, upper triangular, from the bottom
    for (let i = k - 1; i >= 0; i--) {
      let xr = wr[i], xi = wi[i];
      for (let l = i + 1; l < k; l++) {
        const sr = s.re[i * n + l], si = s.im[i * n + l];
        const vr = ur[l * n + k], vi = ui[l * n + k];
        xr -= sr * vr - si * vi;
        xi -= sr * vi + si * vr;
      }
      const dr = s.re[i * n + i] + lr, di = s.im[i * n + i] - li;
      const den = dr * dr + di * di;
      if (den === 0) return undefined;
      ur[i * n + k] = (xr * dr + xi * di) / den;
      ui[i * n + k] = (xi * dr - xr * di) / den;
    }
    // B₁ ← B₁ − u·bᴴ/α (bᴴ = the last row of B̂)
    for (let i = 0; i < k; i++) {
      const vr = ur[i * n + k] / alpha, vi = ui[i * n + k] / alpha;
      for (let j = 0; j < m; j++) {
        const qr = br[k * m + j], qi = bi[k * m + j];
        br[i * m + j] -= vr * qr - vi * qi;
        bi[i * m + j] -= vr * qi + vi * qr;
      }
    }
  }
  // Z·U = R + i·J
  const R = new Float64Array(n * n);
  const J = new Float64Array(n * n);
  let complex = false;
  for (let i = 0; i < n; i++) {
    for (let l = 0; l < n; l++) {
      const zr = z.re[i * n + l], zi = z.im[i * n + l];
      if (zr === 0 && zi === 0) continue;
      for (let j = l; j < n; j++) {
        const vr = ur[l * n + j], vi = ui[l * n + j];
        R[i * n + j] += zr * vr - zi * vi;
        J[i * n + j] += zr * vi + zi * vr;
      }
    }
  }
  for (let k = 0; k < n * n; k++) if (J[k] !== 0) complex = true;
  for (let k = 0; k < n * n; k++) if (!Number.isFinite(R[k]) || !Number.isFinite(J[k])) return undefined;
  if (!complex) return R;
  // [R, J]ᵀ = Qf·Rf, so [R, J]·[R, J]ᵀ = Rfᵀ·Rf: L = Rfᵀ
  const stacked = new Matrix(2 * n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      stacked.set(j, i, R[i * n + j]);
      stacked.set(n + j, i, J[i * n + j]);
    }
  }
  const rf = new QrDecomposition(stacked).upperTriangularMatrix;
  const L = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) L[i * n + j] = rf.get(j, i);
  return L;
}

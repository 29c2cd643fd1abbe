/** Controllability and observability by the PBH rank test (SVD ranks, Cholesky certificates of full rank). */
import { svdValues } from '../../numeric/dense';
import { rightSingularVectors } from '../../numeric/nullVectors';
import type { Complex, Mode, RankTest, StateDirection } from './types';
import { frob } from './system';

/** Rank of λI − A (complex λ) by SVD of its real embedding. */
export function complexRank(A: Float64Array, n: number, lam: Complex, tol: number): number {
  return embeddedRank(A, n, new Float64Array(0), 0, lam, tol);
}

/** Rank of [λI − A, B] (n × (n+m), complex λ) from the singular values of its real form. */
function embeddedRank(A: Float64Array, n: number, B: Float64Array, m: number, lam: Complex, tol: number): number {
  const w = n + m;
  if (lam.im === 0) {
    const M = new Float64Array(n * w);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) M[i * w + j] = -A[i * n + j];
      M[i * w + i] += lam.re;
      for (let k = 0; k < m; k++) M[i * w + n + k] = B[i * m + k];
    }
    const s = svdValues({ rows: n, cols: w, data: M });
    let r = 0;
    for (let i = 0; i < s.length; i++) if (s[i] > tol) r++;
    return r;
  }
  // [[Re, −Im], [Im, Re]] has every singular value of the complex matrix twice
  const R = 2 * n;
  const Cc = 2 * w;
  const M = new Float64Array(R * Cc);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < w; j++) {
      let re: number;
      let im = 0;
      if (j < n) {
        re = -A[i * n + j];
        if (i === j) {
          re += lam.re;
          im = lam.im;
        }
      } else re = B[i * m + (j - n)];
      M[i * Cc + j] = re;
      M[i * Cc + w + j] = -im;
      M[(n + i) * Cc + j] = im;
      M[(n + i) * Cc + w + j] = re;
    }
  }
  const s = svdValues({ rows: R, cols: Cc, data: M });
  let r = 0;
  for (let i = 0; i < s.length; i++) if (s[i] > tol) r++;
  return Math.round(r / 2);
}

/**
 * True when σ_min([λI − A, B]) > τ for certain: the Hermitian matrix
 * G = [λI − A, B]·[λI − A, B]ᴴ − τ²I = S + (|λ|² − τ²)I − Re λ·(A + Aᵀ) + i·Im λ·(A − Aᵀ), with S = AAᵀ + BBᵀ,
 * has a Cholesky factorisation exactly when its smallest eigenvalue σ_min² − τ² is positive. Rounding in
 * forming G is about n·ε·‖[A, B]‖², far below τ² (τ is 10⁻⁴ of the size), so success is a safe certificate;
 * failure proves nothing and the caller falls back on the SVD.
 */
function clearlyFullRank(S: Float64Array, A: Float64Array, n: number, lam: Complex, tau: number, w: { re: Float64Array; im: Float64Array }): boolean {
  const Lr = w.re;
  const Li = w.im;
  const shift = lam.re * lam.re + lam.im * lam.im - tau * tau;
  for (let j = 0; j < n; j++) {
    // diagonal: G_jj − Σ|L_jk|²
    let d = S[j * n + j] + shift - 2 * lam.re * A[j * n + j];
    for (let k = 0; k < j; k++) d -= Lr[j * n + k] * Lr[j * n + k] + Li[j * n + k] * Li[j * n + k];
    if (!(d > 0)) return false;
    const ljj = Math.sqrt(d);
    Lr[j * n + j] = ljj;
    Li[j * n + j] = 0;
    for (let i = j + 1; i < n; i++) {
      // G_ij = S_ij − Re λ·(A_ij + A_ji) + i·Im λ·(A_ij − A_ji)
      let gr = S[i * n + j] - lam.re * (A[i * n + j] + A[j * n + i]);
      let gi = lam.im * (A[i * n + j] - A[j * n + i]);
      // − Σ_k L_ik·conj(L_jk)
      for (let k = 0; k < j; k++) {
        const ar = Lr[i * n + k];
        const ai = Li[i * n + k];
        const br = Lr[j * n + k];
        const bi = Li[j * n + k];
        gr -= ar * br + ai * bi;
        gi -= ai * br - ar * bi;
      }
      Lr[i * n + j] = gr / ljj;
      Li[i * n + j] = gi / ljj;
    }
  }
  return true;
}

/**
 * PBH test: for each mode (one eigenvalue per real mode or complex pair), the rank deficiency n − rank[λI − A, B].
 * Eigenvalues that coincide (within the tolerance) share the deficiency: it is given to the first of them
 * and, when larger than 1, spread over the others.
 */
export function pbhDeficiencies(A: Float64Array, B: Float64Array, n: number, m: number, modes: Complex[], rtol: number, axisTol: number): number[] {
  const out = new Array<number>(modes.length).fill(0);
  if (n === 0) return out;
  const na = frob(A);
  let sb = 0;
  for (let i = 0; i < B.length; i++) sb += B[i] * B[i];
  const scale = Math.max(na, Math.sqrt(sb), 1e-300);
  const tol = rtol * scale;
  // S = A·Aᵀ + B·Bᵀ, shared by the Cholesky certificates
  const S = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let v = 0;
      for (let k = 0; k < n; k++) v += A[i * n + k] * A[j * n + k];
      for (let k = 0; k < m; k++) v += B[i * m + k] * B[j * m + k];
      S[i * n + j] = v;
      S[j * n + i] = v;
    }
  }
  const work = { re: new Float64Array(n * n), im: new Float64Array(n * n) };
  const done = new Uint8Array(modes.length);
  for (let k = 0; k < modes.length; k++) {
    if (done[k]) continue;
    const e = modes[k];
    const group = [k];
    for (let j = k + 1; j < modes.length; j++) {
      if (!done[j] && Math.hypot(modes[j].re - e.re, modes[j].im - e.im) <= Math.max(axisTol, 1e-8 * scale)) group.push(j);
    }
    for (const g of group) done[g] = 1;
    // σ_min([λI − A, B]) > τ, far above the rank tolerance, is proved by a Cholesky factorisation; only the
    // eigenvalues without that certificate need the SVD
    const tau = 1e-4 * (na + Math.sqrt(sb) + Math.hypot(e.re, e.im));
    if (group.length === 1 && clearlyFullRank(S, A, n, e, tau, work)) continue;
    const def = n - embeddedRank(A, n, B, m, e, tol);
    let left = Math.max(0, def);
    for (const g of group) {
      const d = Math.min(left, 1);
      out[g] = d;
      left -= d;
    }
    if (left > 0) out[group[0]] += left;
  }
  return out;
}

/**
 * The rank test of the modes from their PBH deficiencies. A mode stands for its algebraic multiplicity of
 * eigenvalues, but the deficiency at a repeated eigenvalue already counts every direction lost there, so a
 * real mode loses `deficiency` dimensions and a complex pair twice that. `directions(mode, deficiency)`
 * names the lost directions (empty when not available).
 */
export function rankTest(modes: Mode[], def: number[], n: number, directions: (md: Mode, d: number) => StateDirection[] = () => []): RankTest {
  const failing: RankTest['failing'] = [];
  let lost = 0;
  modes.forEach((md, k) => {
    if (def[k] > 0) {
      failing.push({ mode: md.number, re: md.re, im: md.im, deficiency: def[k], directions: directions(md, def[k]) });
      lost += def[k] * (md.im > 0 ? 2 : 1);
    }
  });
  const rank = Math.max(0, n - lost);
  return { rank, n, full: rank === n, failing };
}

/**
 * The directions lost at an eigenvalue λ: the right singular vectors of the smallest singular values of the
 * (n + k) × n matrix [λI − A; K] (K = Bᵀ with A transposed for controllability: left null vectors of
 * [λI − A, B]; K = C for observability: right null vectors of [λI − A; C]), as combinations of the named
 * states. Row-major A (n × n), K (k × n). A real λ loses `count` directions. A complex λ (a pair) loses
 * `count` complex vectors w, i.e. the real plane of Re w and Im w for each (what no input moves: the real
 * and imaginary parts of wᴴx; or what no output sees): from the null vectors [x; y] of the real form
 * [[Re M, −Im M], [Im M, Re M]] (x + iy is a complex null vector), x and y orthonormalised, 2·count
 * directions.
 */
export function lostDirections(A: Float64Array, K: Float64Array, n: number, k: number, lam: number | Complex, count: number, states: string[]): StateDirection[] {
  const l = typeof lam === 'number' ? { re: lam, im: 0 } : lam;
  const rows = n + k;
  const named = (v: ArrayLike<number>): StateDirection => {
    let norm = 0;
    for (let i = 0; i < n; i++) norm += v[i] * v[i];
    norm = Math.sqrt(norm) || 1;
    const terms = states.map((state, i) => ({ state, weight: v[i] / norm })).filter((t) => Math.abs(t.weight) >= 1e-3);
    const sign = terms.length && terms[0].weight < 0 ? -1 : 1;
    return terms.map((t) => ({ state: t.state, weight: sign * t.weight + 0 }));
  };
  if (l.im === 0) {
    const M = new Float64Array(rows * n);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) M[i * n + j] = -A[i * n + j];
      M[i * n + i] += l.re;
    }
    for (let r = 0; r < k; r++) for (let j = 0; j < n; j++) M[(n + r) * n + j] = K[r * n + j];
    return rightSingularVectors(M, rows, n).slice(0, count).map(({ v }) => named(v));
  }
  // the real form of the complex (n + k) × n matrix: 2(n + k) × 2n
  const R = 2 * rows, C2 = 2 * n;
  const M = new Float64Array(R * C2);
  const put = (i: number, j: number, re: number, im: number) => {
    M[i * C2 + j] = re;
    M[i * C2 + n + j] = -im;
    M[(rows + i) * C2 + j] = im;
    M[(rows + i) * C2 + n + j] = re;
  };
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) put(i, j, (i === j ? l.re : 0) - A[i * n + j], i === j ? l.im : 0);
  for (let r = 0; r < k; r++) for (let j = 0; j < n; j++) put(n + r, j, K[r * n + j], 0);
  // the null space of the real form has dimension 2·count; the x and y halves of its vectors span the plane(s)
  const basis: Float64Array[] = [];
  for (const { v } of rightSingularVectors(M, R, C2).slice(0, 2 * count)) {
    for (const half of [v.slice(0, n), v.slice(n, 2 * n)]) {
      const x = Float64Array.from(half);
      for (const b of basis) {
        let d = 0;
        for (let i = 0; i < n; i++) d += x[i] * b[i];
        for (let i = 0; i < n; i++) x[i] -= d * b[i];
      }
      let nx = 0;
      for (let i = 0; i < n; i++) nx += x[i] * x[i];
      nx = Math.sqrt(nx);
      if (nx < 1e-6 || basis.length >= 2 * count) continue;
      for (let i = 0; i < n; i++) x[i] /= nx;
      basis.push(x);
    }
  }
  if (basis.length === 2) {
    // one plane: turn its basis so that the first direction is the plane's nearest to one state (the state
    // with the most weight in the plane), the second at right angles to it, with no weight on that state
    const [b1, b2] = basis;
    let best = 0;
    for (let i = 1; i < n; i++) if (b1[i] ** 2 + b2[i] ** 2 > b1[best] ** 2 + b2[best] ** 2 + 1e-12) best = i;
    const c = b1[best], s2 = b2[best], h = Math.hypot(c, s2) || 1;
    const d1 = new Float64Array(n), d2 = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      d1[i] = (c * b1[i] + s2 * b2[i]) / h;
      d2[i] = (-s2 * b1[i] + c * b2[i]) / h;
    }
    return [named(d1), named(d2)];
  }
  return basis.map(named);
}

/**
 * Matrix exponential and exact step responses of linear state-space models.
 *
 * expm: scaling and squaring with diagonal Padé approximants of degree
 * 3, 5, 7, 9 or 13 chosen from the 1-norm, following N. J. Higham,
 * "The scaling and squaring method for the matrix exponential revisited",
 * SIAM J. Matrix Anal. Appl. 26(4), 2005 (Algorithm 2.3 and the θ_m of its
 * Table 2.3). Padé coefficients are generated from the closed form
 * b_j = (2m−j)! m! / ((2m)! j! (m−j)!).
 *
 * linearStepResponse: zero-order-hold discretisation through one exponential
 * of an augmented matrix (Van Loan, "Computing integrals involving the matrix
 * exponential", IEEE TAC 23(3), 1978): exp([[A, B·u], [0, 0]]·Δt) =
 * [[Φ, γ], [0, 1]] with Φ = e^{AΔt} and γ = ∫₀^Δt e^{Aτ} dτ · B·u, which is
 * exact for constant u and valid for singular A (integrators).
 */

import { luFactorInPlace, luSolveMatrixInPlace } from './flatlu';

const EPS = Number.EPSILON;

/** θ_m for m = 3, 5, 7, 9, 13 (Higham 2005, Table 2.3, double precision). */
const PADE_DEGREES = [3, 5, 7, 9] as const;
const PADE_THETA = [1.495585217958292e-2, 2.53939833006323e-1, 9.504178996162932e-1, 2.097847961257068] as const;
const THETA_13 = 5.371920351148152;

function padeCoefficients(m: number): Float64Array {
  const b = new Float64Array(m + 1);
  b[0] = 1;
  for (let j = 1; j <= m; j++) b[j] = (b[j - 1] * (m - j + 1)) / (j * (2 * m - j + 1));
  return b;
}

const PADE_COEFFS: ReadonlyMap<number, Float64Array> = new Map(
  [3, 5, 7, 9, 13].map((m) => [m, padeCoefficients(m)] as [number, Float64Array]),
);

/** C = A·B for n×n row-major matrices (i-k-j loop order). */
function matmul(a: Float64Array, b: Float64Array, n: number, c = new Float64Array(n * n)): Float64Array {
  c.fill(0);
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let k = 0; k < n; k++) {
      const aik = a[ri + k];
      if (aik === 0) continue;
      const rk = k * n;
      for (let j = 0; j < n; j++) c[ri + j] += aik * b[rk + j];
    }
  }
  return c;
}

function norm1(a: Float64Array, n: number): number {
  let best = 0;
  for (let j = 0; j < n; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += Math.abs(a[i * n + j]);
    if (s > best) best = s;
  }
  return best;
}

/** out = Σ c_k·M_k + c_I·I (all n×n). */
function combine(n: number, terms: Array<[number, Float64Array]>, cI: number): Float64Array {
  const out = new Float64Array(n * n);
  for (const [c, m] of terms) {
    if (c === 0) continue;
    for (let k = 0; k < n * n; k++) out[k] += c * m[k];
  }
  for (let i = 0; i < n; i++) out[i * n + i] += cI;
  return out;
}

/**
 * e^A for an n×n row-major matrix. Throws RangeError when the length does
 * not match or an entry is not finite.
 */
export function expm(a: Float64Array, n: number): Float64Array {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`matrix order must be a non-negative integer, got ${n}`);
  if (a.length !== n * n) throw new RangeError(`matrix has ${a.length} entries, expected ${n * n}`);
  for (let k = 0; k < a.length; k++) {
    if (!Number.isFinite(a[k])) throw new RangeError('matrix exponential of a matrix with non-finite entries');
  }
  if (n === 0) return new Float64Array(0);

  const nrm = norm1(a, n);
  let m = 13;
  for (let k = 0; k < PADE_DEGREES.length; k++) {
    if (nrm <= PADE_THETA[k]) {
      m = PADE_DEGREES[k];
      break;
    }
  }
  let s = 0;
  let A = a;
  if (m === 13 && nrm > THETA_13) {
    s = Math.max(0, Math.ceil(Math.log2(nrm / THETA_13)));
    const scale = Math.pow(2, -s);
    A = new Float64Array(n * n);
    for (let k = 0; k < n * n; k++) A[k] = a[k] * scale;
  }
  const b = PADE_COEFFS.get(m)!;

  // U = A·(odd part), V = even part of the Padé numerator p_m(A) = V + U; q_m(A) = V − U
  const A2 = matmul(A, A, n);
  let U: Float64Array;
  let V: Float64Array;
  if (m === 13) {
    const A4 = matmul(A2, A2, n);
    const A6 = matmul(A4, A2, n);
    const inner = combine(n, [[b[13], A6], [b[11], A4], [b[9], A2]], 0);
    const u1 = matmul(A6, inner, n);
    const uOdd = combine(n, [[1, u1], [b[7], A6], [b[5], A4], [b[3], A2]], b[1]);
    U = matmul(A, uOdd, n);
    const innerV = combine(n, [[b[12], A6], [b[10], A4], [b[8], A2]], 0);
    const v1 = matmul(A6, innerV, n);
    V = combine(n, [[1, v1], [b[6], A6], [b[4], A4], [b[2], A2]], b[0]);
  } else {
    // powers A^2, A^4, ... up to A^(m-1)
    const pows: Float64Array[] = [A2];
    for (let k = 4; k <= m - 1; k += 2) pows.push(matmul(pows[pows.length - 1], A2, n));
    const oddTerms: Array<[number, Float64Array]> = [];
    const evenTerms: Array<[number, Float64Array]> = [];
    for (let k = 2, idx = 0; k <= m - 1; k += 2, idx++) {
      oddTerms.push([b[k + 1], pows[idx]]);
      evenTerms.push([b[k], pows[idx]]);
    }
    U = matmul(A, combine(n, oddTerms, b[1]), n);
    V = combine(n, evenTerms, b[0]);
  }

  // solve (V − U)·R = (V + U)
  const Q = new Float64Array(n * n);
  const R = new Float64Array(n * n);
  for (let k = 0; k < n * n; k++) {
    Q[k] = V[k] - U[k];
    R[k] = V[k] + U[k];
  }
  const piv = new Int32Array(n);
  if (!luFactorInPlace(Q, n, piv)) {
    // cannot happen for ||A|| within θ_m (q_m(A) is then well conditioned); guard anyway
    throw new RangeError('matrix exponential: Padé denominator is singular');
  }
  luSolveMatrixInPlace(Q, n, piv, R, n);

  let X = R;
  let W = new Float64Array(n * n);
  for (let k = 0; k < s; k++) {
    matmul(X, X, n, W);
    const tmp = X;
    X = W;
    W = tmp;
  }
  return X;
}

export interface LinearStep {
  /** The sample times (copy of the input). */
  t: Float64Array;
  /** State x(t_k), length n each. */
  x: Float64Array[];
  /** Output y(t_k) = C x(t_k) + D u, length p each. */
  y: Float64Array[];
}

/**
 * Exact response of x' = A x + B u, y = C x + D u from x(0) = 0 to the
 * constant input vector u applied at t = 0, sampled at the nondecreasing
 * times `times` (all ≥ 0). Matrices are row-major: A n×n, B n×m, C p×n,
 * D p×m. One matrix exponential per distinct sampling interval, so a uniform
 * grid costs a single exponential of order n+1 plus one n×n matrix–vector
 * product per sample. Throws RangeError for inconsistent sizes or times.
 */
export function linearStepResponse(
  A: Float64Array,
  B: Float64Array,
  C: Float64Array,
  D: Float64Array,
  n: number,
  m: number,
  p: number,
  u: Float64Array,
  times: Float64Array,
): LinearStep {
  for (const [name, v] of [['n', n], ['m', m], ['p', p]] as Array<[string, number]>) {
    if (!Number.isInteger(v) || v < 0) throw new RangeError(`${name} must be a non-negative integer, got ${v}`);
  }
  const check = (name: string, arr: Float64Array, len: number): void => {
    if (arr.length !== len) throw new RangeError(`${name} has ${arr.length} entries, expected ${len}`);
    for (let k = 0; k < len; k++) if (!Number.isFinite(arr[k])) throw new RangeError(`${name} has a non-finite entry`);
  };
  check('A', A, n * n);
  check('B', B, n * m);
  check('C', C, p * n);
  check('D', D, p * m);
  check('u', u, m);
  for (let k = 0; k < times.length; k++) {
    const tk = times[k];
    if (!Number.isFinite(tk) || tk < 0) throw new RangeError(`sample time ${tk} must be finite and non-negative`);
    if (k > 0 && tk < times[k - 1]) throw new RangeError('sample times must be nondecreasing');
  }

  // constant parts: B·u and D·u
  const bu = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let sum = 0;
    for (let j = 0; j < m; j++) sum += B[i * m + j] * u[j];
    bu[i] = sum;
  }
  const du = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let sum = 0;
    for (let j = 0; j < m; j++) sum += D[i * m + j] * u[j];
    du[i] = sum;
  }

  const N = n + 1;
  let cachedDt = Number.NaN;
  const Phi = new Float64Array(n * n);
  const gamma = new Float64Array(n);
  const discretise = (dt: number): void => {
    const M = new Float64Array(N * N);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) M[i * N + j] = A[i * n + j] * dt;
      M[i * N + n] = bu[i] * dt;
    }
    const E = expm(M, N);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) Phi[i * n + j] = E[i * N + j];
      gamma[i] = E[i * N + n];
    }
    cachedDt = dt;
  };

  const ts = Float64Array.from(times);
  const xs: Float64Array[] = [];
  const ys: Float64Array[] = [];
  let x = new Float64Array(n);
  let xNext = new Float64Array(n);
  let tPrev = 0;
  for (let k = 0; k < ts.length; k++) {
    const tk = ts[k];
    const dt = tk - tPrev;
    if (dt > 0 && n > 0) {
      // reuse the last discretisation when dt differs only by rounding of the grid
      const noise = 8 * EPS * Math.max(Math.abs(tk), Math.abs(cachedDt) || 0);
      if (!(Math.abs(dt - cachedDt) <= noise)) discretise(dt);
      for (let i = 0; i < n; i++) {
        let sum = gamma[i];
        const ri = i * n;
        for (let j = 0; j < n; j++) sum += Phi[ri + j] * x[j];
        xNext[i] = sum;
      }
      const tmp = x;
      x = xNext;
      xNext = tmp;
    }
    tPrev = tk;
    const xk = Float64Array.from(x);
    const yk = new Float64Array(p);
    for (let i = 0; i < p; i++) {
      let sum = du[i];
      for (let j = 0; j < n; j++) sum += C[i * n + j] * xk[j];
      yk[i] = sum;
    }
    xs.push(xk);
    ys.push(yk);
  }
  return { t: ts, x: xs, y: ys };
}

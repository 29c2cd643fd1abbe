/**
 * Blocked reduction of a dense matrix to upper Hessenberg form, for eigenvalues only (the orthogonal
 * factor is not formed).
 *
 * The scheme is LAPACK's dgehrd/dlahr2 (Quintana-Ortí and van de Geijn, "Improving the performance of
 * reduction to Hessenberg form", ACM TOMS 32(2), 2006): the columns are taken in panels of nb. Within a
 * panel each column is brought up to date with the panel's earlier reflectors only, its Householder
 * reflector H_j = I − τ_j v_j v_jᵀ is formed, and the block reflector Q = H_0···H_{nb−1} = I − V T Vᵀ is
 * built up together with Y = A·V·T (one matrix–vector product with the trailing matrix per column, the
 * part that cannot be blocked). After the panel the rest of the matrix gets Qᵀ A Q as matrix–matrix
 * products: A ← A − Y Vᵀ − V W with W = Tᵀ (Vᵀ A − (Vᵀ Y) Vᵀ), so the trailing matrix is read about
 * nb + 3 times per panel instead of twice read and written per column.
 *
 * Storage is row-major Float64Array; inner loops run along rows with four terms at a time.
 */

/** Panel width. */
const NB = 32;

/**
 * Reduces the n×n row-major matrix a in place to upper Hessenberg form Qᵀ a Q (Q orthogonal, not kept);
 * entries below the subdiagonal are set to zero.
 */
export function hessenbergBlocked(a: Float64Array, n: number, nb: number = NB): void {
  if (n < 3) return;
  nb = Math.max(1, Math.min(nb, n - 2));
  const V = new Float64Array(n * nb); // V[i·nb + k]: reflector k of the panel, row i
  const G = new Float64Array((2 * nb + 4) * n); // rows 0..nb−1: Vᵀ (G[k·n + i] = V[i, k]); rows nb..2nb−1: W; 4 zero rows
  const Y = new Float64Array(n * nb); // Y[i·nb + k]
  const T = new Float64Array(nb * nb); // T[k·nb + l], upper triangular
  const M = new Float64Array(nb * nb); // Vᵀ Y
  const w = new Float64Array(nb);
  const u = new Float64Array(nb);
  const coef = new Float64Array(2 * (2 * nb + 4)); // two rows' coefficients
  for (let p = 0; p < n - 2; p += nb) {
    const b = Math.min(nb, n - 2 - p);
    V.fill(0);
    G.fill(0, 0, nb * n);
    Y.fill(0);
    T.fill(0);
    panel(a, n, p, b, nb, V, G, Y, T, w, u);
    trailing(a, n, p, b, nb, V, G, Y, T, M, coef);
  }
}

/**
 * Reduces columns p..p+b−1 (rows p+1.. of them brought up to date; rows 0..p are left for trailing()),
 * filling V, Vᵀ (in G), T and rows p+1.. of Y.
 */
function panel(
  a: Float64Array, n: number, p: number, b: number, nb: number,
  V: Float64Array, G: Float64Array, Y: Float64Array, T: Float64Array, w: Float64Array, u: Float64Array,
): void {
  for (let j = 0; j < b; j++) {
    const c = p + j;
    if (j > 0) bringColumn(a, n, p, j, nb, V, Y, T, w);
    const tau = reflector(a, n, c, j, nb, V, G);
    tColumn(n, c, j, nb, tau, V, G, T, u);
    if (tau !== 0) yColumn(a, n, p, j, nb, tau, G, Y, u);
  }
}

/** Column c = p + j, rows p+1..: the right and left updates with the panel's reflectors 0..j−1. */
function bringColumn(a: Float64Array, n: number, p: number, j: number, nb: number, V: Float64Array, Y: Float64Array, T: Float64Array, w: Float64Array): void {
  const c = p + j;
  // right: a[:, c] −= Y · V[c, :]ᵀ
  const vc = c * nb;
  for (let i = p + 1; i < n; i++) {
    const yi = i * nb;
    let s = 0;
    for (let k = 0; k < j; k++) s += Y[yi + k] * V[vc + k];
    a[i * n + c] -= s;
  }
  // left: a[:, c] ← (I − V Tᵀ Vᵀ) a[:, c]
  for (let k = 0; k < j; k++) w[k] = 0;
  for (let i = p + 1; i < n; i++) {
    const xi = a[i * n + c];
    const vi = i * nb;
    const kEnd = Math.min(j, i - p);
    for (let k = 0; k < kEnd; k++) w[k] += V[vi + k] * xi;
  }
  for (let k = j - 1; k >= 0; k--) {
    let s = 0;
    for (let l = 0; l <= k; l++) s += T[l * nb + k] * w[l];
    w[k] = s;
  }
  for (let i = p + 1; i < n; i++) {
    const vi = i * nb;
    const kEnd = Math.min(j, i - p);
    let s = 0;
    for (let k = 0; k < kEnd; k++) s += V[vi + k] * w[k];
    a[i * n + c] -= s;
  }
}

/**
 * Householder reflector for a[c+1.., c] as LAPACK's dlarfg (beta = −sign(alpha)·‖x‖, v[c+1] = 1), stored
 * as column j of V and row j of G; a[c+1, c] becomes beta and the entries below zero. Returns τ.
 */
function reflector(a: Float64Array, n: number, c: number, j: number, nb: number, V: Float64Array, G: Float64Array): number {
  const alpha = a[(c + 1) * n + c];
  let big = 0;
  for (let i = c + 2; i < n; i++) {
    const t = Math.abs(a[i * n + c]);
    if (t > big) big = t;
  }
  V[(c + 1) * nb + j] = 1;
  G[j * n + c + 1] = 1;
  if (big === 0) return 0;
  let ss = 0;
  for (let i = c + 2; i < n; i++) {
    const t = a[i * n + c] / big;
    ss += t * t;
  }
  const xnorm = big * Math.sqrt(ss);
  const nrm = Math.hypot(alpha, xnorm);
  const beta = alpha >= 0 ? -nrm : nrm;
  const scal = 1 / (alpha - beta);
  for (let i = c + 2; i < n; i++) {
    const o = i * n + c;
    const vi = a[o] * scal;
    V[i * nb + j] = vi;
    G[j * n + i] = vi;
    a[o] = 0;
  }
  a[(c + 1) * n + c] = beta;
  return (beta - alpha) / beta;
}

/** u = Vᵀ v_j over the earlier reflectors; T[:, j] = −τ T u, T[j, j] = τ. */
function tColumn(n: number, c: number, j: number, nb: number, tau: number, V: Float64Array, G: Float64Array, T: Float64Array, u: Float64Array): void {
  for (let k = 0; k < j; k++) u[k] = 0;
  const gj = j * n;
  for (let i = c + 1; i < n; i++) {
    const vj = G[gj + i];
    const vi = i * nb;
    for (let k = 0; k < j; k++) u[k] += V[vi + k] * vj;
  }
  for (let k = 0; k < j; k++) {
    let s = 0;
    for (let l = k; l < j; l++) s += T[k * nb + l] * u[l];
    T[k * nb + j] = -tau * s;
  }
  T[j * nb + j] = tau;
}

/** Y[p+1.., j] = τ (A[p+1.., c+1..] v_j − Y[:, 0..j−1] u); columns > c are still untouched. */
function yColumn(a: Float64Array, n: number, p: number, j: number, nb: number, tau: number, G: Float64Array, Y: Float64Array, u: Float64Array): void {
  const i4 = p + 1 + ((n - p - 1) % 4);
  if (i4 > p + 1) gemvRows(a, n, p + 1, i4, p + j + 1, j, nb, G, Y);
  gemv4(a, n, i4, p + j + 1, j, nb, G, Y);
  yCorrect(n, p, j, nb, tau, Y, u);
}

/**
 * Y[i, j] = A[i, c1..] · G[j, c1..] for rows i4.. (a multiple of four rows). The hot loop is the last
 * thing in the function: V8 reuses on-stack-replacement code across calls, and code after the loop that
 * had not run when it was compiled would deoptimize it on every call.
 */
function gemv4(a: Float64Array, n: number, i4: number, c1: number, j: number, nb: number, G: Float64Array, Y: Float64Array): void {
  const gj = j * n;
  for (let i = i4; i < n; i += 4) {
    const o0 = i * n, o1 = o0 + n, o2 = o1 + n, o3 = o2 + n;
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    for (let col = c1; col < n; col++) {
      const vv = G[gj + col];
      s0 += a[o0 + col] * vv;
      s1 += a[o1 + col] * vv;
      s2 += a[o2 + col] * vv;
      s3 += a[o3 + col] * vv;
    }
    Y[i * nb + j] = s0;
    Y[(i + 1) * nb + j] = s1;
    Y[(i + 2) * nb + j] = s2;
    Y[(i + 3) * nb + j] = s3;
  }
}

/** gemv4 for rows i0..i1−1 one at a time. */
function gemvRows(a: Float64Array, n: number, i0: number, i1: number, c1: number, j: number, nb: number, G: Float64Array, Y: Float64Array): void {
  const gj = j * n;
  for (let i = i0; i < i1; i++) {
    const o = i * n;
    let s = 0;
    for (let col = c1; col < n; col++) s += a[o + col] * G[gj + col];
    Y[i * nb + j] = s;
  }
}

/** Y[p+1.., j] ← τ (Y[p+1.., j] − Y[p+1.., 0..j−1] u). */
function yCorrect(n: number, p: number, j: number, nb: number, tau: number, Y: Float64Array, u: Float64Array): void {
  for (let r = p + 1; r < n; r++) {
    const yr = r * nb;
    let s = Y[yr + j];
    for (let k = 0; k < j; k++) s -= Y[yr + k] * u[k];
    Y[yr + j] = tau * s;
  }
}

/**
 * Applies the panel's Q to the rest of the matrix: Y's rows 0..p, then A ← Qᵀ A Q outside the panel.
 * Each loop nest is its own function: V8 then optimizes each with complete type feedback instead of
 * deoptimizing a large function at every loop it had not reached yet.
 */
function trailing(
  a: Float64Array, n: number, p: number, b: number, nb: number,
  V: Float64Array, G: Float64Array, Y: Float64Array, T: Float64Array, M: Float64Array, coef: Float64Array,
): void {
  topRowsY(a, n, p, b, nb, G, Y, T);
  topRowsPanel(a, n, p, b, nb, V, Y);
  const q = p + b;
  if (q >= n) return;
  const W0 = nb * n;
  G.fill(0, W0, W0 + (nb + 4) * n);
  vtA(a, n, p, b, nb, V, G);
  vtY(n, p, b, nb, V, Y, M);
  minusMVt(n, q, b, nb, G, M);
  timesTt(n, q, b, nb, G, T);
  update(a, n, p, b, nb, V, G, Y, coef);
}

/** Y[0..p, :] = A[0..p, p+1..] V T (these rows of A are still untouched). */
function topRowsY(a: Float64Array, n: number, p: number, b: number, nb: number, G: Float64Array, Y: Float64Array, T: Float64Array): void {
  const p1 = p + 1;
  for (let i = 0; i <= p; i++) {
    const o = i * n;
    const yi = i * nb;
    let k = 0;
    for (; k + 3 < b; k += 4) {
      const g0 = k * n, g1 = g0 + n, g2 = g1 + n, g3 = g2 + n;
      let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
      for (let col = p1 + k; col < n; col++) {
        const x = a[o + col];
        s0 += x * G[g0 + col];
        s1 += x * G[g1 + col];
        s2 += x * G[g2 + col];
        s3 += x * G[g3 + col];
      }
      Y[yi + k] = s0;
      Y[yi + k + 1] = s1;
      Y[yi + k + 2] = s2;
      Y[yi + k + 3] = s3;
    }
    for (; k < b; k++) {
      const g0 = k * n;
      let s = 0;
      for (let col = p1 + k; col < n; col++) s += a[o + col] * G[g0 + col];
      Y[yi + k] = s;
    }
    for (let l = b - 1; l >= 0; l--) {
      let s = 0;
      for (let m = 0; m <= l; m++) s += Y[yi + m] * T[m * nb + l];
      Y[yi + l] = s;
    }
  }
}

/** Panel columns p+1..p+b−1, rows 0..p: the right update −Y Vᵀ. */
function topRowsPanel(a: Float64Array, n: number, p: number, b: number, nb: number, V: Float64Array, Y: Float64Array): void {
  const q = p + b;
  for (let i = 0; i <= p; i++) {
    const o = i * n;
    const yi = i * nb;
    for (let col = p + 1; col < q; col++) {
      const vc = col * nb;
      const kEnd = col - p;
      let s = 0;
      for (let k = 0; k < kEnd; k++) s += Y[yi + k] * V[vc + k];
      a[o + col] -= s;
    }
  }
}

/** W = Vᵀ A[p+1.., q..] into G's rows nb.., four rows of A at a time. */
function vtA(a: Float64Array, n: number, p: number, b: number, nb: number, V: Float64Array, G: Float64Array): void {
  const p1 = p + 1, q = p + b, W0 = nb * n;
  const i4 = p1 + ((n - p1) % 4);
  if (i4 > p1) vtARows(a, n, p, b, nb, V, G, p1, i4);
  for (let i = i4; i < n; i += 4) {
    const o0 = i * n, o1 = o0 + n, o2 = o1 + n, o3 = o2 + n;
    const kEnd = Math.min(b, i + 4 - p1);
    for (let k = 0; k < kEnd; k++) {
      const v0 = V[i * nb + k], v1 = V[(i + 1) * nb + k], v2 = V[(i + 2) * nb + k], v3 = V[(i + 3) * nb + k];
      const wk = W0 + k * n;
      for (let col = q; col < n; col++) {
        G[wk + col] += v0 * a[o0 + col] + v1 * a[o1 + col] + v2 * a[o2 + col] + v3 * a[o3 + col];
      }
    }
  }
}

/** vtA's rows i0..i1−1, one at a time. */
function vtARows(a: Float64Array, n: number, p: number, b: number, nb: number, V: Float64Array, G: Float64Array, i0: number, i1: number): void {
  const q = p + b, W0 = nb * n;
  for (let i = i0; i < i1; i++) {
    const o = i * n;
    const kEnd = Math.min(b, i - p);
    for (let k = 0; k < kEnd; k++) {
      const v = V[i * nb + k];
      const wk = W0 + k * n;
      for (let col = q; col < n; col++) G[wk + col] += v * a[o + col];
    }
  }
}

/** M = Vᵀ Y over rows p+1.. */
function vtY(n: number, p: number, b: number, nb: number, V: Float64Array, Y: Float64Array, M: Float64Array): void {
  M.fill(0);
  for (let r = p + 1; r < n; r++) {
    const vr = r * nb;
    const kEnd = Math.min(b, r - p);
    for (let k = 0; k < kEnd; k++) {
      const v = V[vr + k];
      const mk = k * nb;
      for (let l = 0; l < b; l++) M[mk + l] += v * Y[vr + l];
    }
  }
}

/** W −= M Vᵀ[:, q..]. */
function minusMVt(n: number, q: number, b: number, nb: number, G: Float64Array, M: Float64Array): void {
  const W0 = nb * n;
  for (let k = 0; k < b; k++) {
    const wk = W0 + k * n;
    for (let l = 0; l < b; l++) {
      const m = M[k * nb + l];
      const gl = l * n;
      for (let col = q; col < n; col++) G[wk + col] -= m * G[gl + col];
    }
  }
}

/** W ← Tᵀ W, in place from the last row up. */
function timesTt(n: number, q: number, b: number, nb: number, G: Float64Array, T: Float64Array): void {
  const W0 = nb * n;
  for (let k = b - 1; k >= 0; k--) {
    const wk = W0 + k * n;
    const tkk = T[k * nb + k];
    for (let col = q; col < n; col++) G[wk + col] *= tkk;
    for (let l = 0; l < k; l++) {
      const t = T[l * nb + k];
      const wl = W0 + l * n;
      for (let col = q; col < n; col++) G[wk + col] += t * G[wl + col];
    }
  }
}

/**
 * A[:, q..] −= Y Vᵀ[:, q..] (all rows) + V W (rows p+1..): one pass, two rows and four terms at a time
 * (coefficients padded with zeros to a multiple of four; G has the rows for it).
 */
function update(a: Float64Array, n: number, p: number, b: number, nb: number, V: Float64Array, G: Float64Array, Y: Float64Array, coef: Float64Array): void {
  const q = p + b;
  const nk = (nb + b + 3) & ~3;
  const cb = coef.length >> 1; // second row's coefficients at cb
  let r = 0;
  if (n % 2 === 1) {
    rowCoefficients(r, p, b, nb, V, Y, coef, 0);
    rowCoefficients(-1, p, b, nb, V, Y, coef, cb);
    updatePair(a, n, q, nk, G, coef, cb, 0, 0);
    r = 1;
  }
  for (; r < n; r += 2) {
    rowCoefficients(r, p, b, nb, V, Y, coef, 0);
    rowCoefficients(r + 1, p, b, nb, V, Y, coef, cb);
    updatePair(a, n, q, nk, G, coef, cb, r * n, (r + 1) * n);
  }
}

/** coef[at..]: row r's Y entries (nb, zero from b on), then its V entries (zero above row p+1); r = −1: all zero. */
function rowCoefficients(r: number, p: number, b: number, nb: number, V: Float64Array, Y: Float64Array, coef: Float64Array, at: number): void {
  coef.fill(0, at, at + (coef.length >> 1));
  if (r < 0) return;
  for (let k = 0; k < b; k++) coef[at + k] = Y[r * nb + k];
  if (r > p) for (let k = 0; k < b; k++) coef[at + nb + k] = V[r * nb + k];
}

/** Rows at offsets o0 and o1 (o1 = o0: a zero second set of coefficients), columns q..n−1. */
function updatePair(a: Float64Array, n: number, q: number, nk: number, G: Float64Array, coef: Float64Array, cb: number, o0: number, o1: number): void {
  for (let k = 0; k < nk; k += 4) {
    const c0 = coef[k], c1 = coef[k + 1], c2 = coef[k + 2], c3 = coef[k + 3];
    const d0 = coef[cb + k], d1 = coef[cb + k + 1], d2 = coef[cb + k + 2], d3 = coef[cb + k + 3];
    if (c0 === 0 && c1 === 0 && c2 === 0 && c3 === 0 && d0 === 0 && d1 === 0 && d2 === 0 && d3 === 0) continue;
    const g0 = k * n, g1 = g0 + n, g2 = g1 + n, g3 = g2 + n;
    if (o1 === o0) {
      for (let col = q; col < n; col++) {
        a[o0 + col] -= c0 * G[g0 + col] + c1 * G[g1 + col] + c2 * G[g2 + col] + c3 * G[g3 + col];
      }
      continue;
    }
    for (let col = q; col < n; col++) {
      const x0 = G[g0 + col], x1 = G[g1 + col], x2 = G[g2 + col], x3 = G[g3 + col];
      a[o0 + col] -= c0 * x0 + c1 * x1 + c2 * x2 + c3 * x3;
      a[o1 + col] -= d0 * x0 + d1 * x1 + d2 * x2 + d3 * x3;
    }
  }
}

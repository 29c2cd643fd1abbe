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
  const G = new Float64Array(2 * nb * n); // rows 0..nb−1: Vᵀ (G[k·n + i] = V[i, k]); rows nb..2nb−1: W
  const Y = new Float64Array(n * nb); // Y[i·nb + k]
  const T = new Float64Array(nb * nb); // T[k·nb + l], upper triangular
  const M = new Float64Array(nb * nb); // Vᵀ Y
  const w = new Float64Array(nb);
  const u = new Float64Array(nb);
  const coef = new Float64Array(2 * nb);
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
    if (j > 0) {
      // right update with the earlier reflectors: a[:, c] −= Y · V[c, :]ᵀ (rows p+1..)
      const vc = c * nb;
      for (let i = p + 1; i < n; i++) {
        const yi = i * nb;
        let s = 0;
        for (let k = 0; k < j; k++) s += Y[yi + k] * V[vc + k];
        a[i * n + c] -= s;
      }
      // left update: a[:, c] ← (I − V Tᵀ Vᵀ) a[:, c]
      for (let k = 0; k < j; k++) w[k] = 0;
      for (let i = p + 1; i < n; i++) {
        const xi = a[i * n + c];
        if (xi === 0) continue;
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
    // Householder reflector for a[c+1.., c] (LAPACK dlarfg): beta = −sign(alpha)·‖x‖
    const alpha = a[(c + 1) * n + c];
    let big = 0;
    for (let i = c + 2; i < n; i++) {
      const t = Math.abs(a[i * n + c]);
      if (t > big) big = t;
    }
    let tau = 0;
    V[(c + 1) * nb + j] = 1;
    G[j * n + c + 1] = 1;
    if (big > 0) {
      let ss = 0;
      for (let i = c + 2; i < n; i++) {
        const t = a[i * n + c] / big;
        ss += t * t;
      }
      const xnorm = big * Math.sqrt(ss);
      const nrm = Math.hypot(alpha, xnorm);
      const beta = alpha >= 0 ? -nrm : nrm;
      tau = (beta - alpha) / beta;
      const scal = 1 / (alpha - beta);
      for (let i = c + 2; i < n; i++) {
        const o = i * n + c;
        const vi = a[o] * scal;
        V[i * nb + j] = vi;
        G[j * n + i] = vi;
        a[o] = 0;
      }
      a[(c + 1) * n + c] = beta;
    }
    // u = Vᵀ v_j (earlier reflectors)
    for (let k = 0; k < j; k++) u[k] = 0;
    const gj = j * n;
    for (let i = c + 1; i < n; i++) {
      const vj = G[gj + i];
      if (vj === 0) continue;
      const vi = i * nb;
      for (let k = 0; k < j; k++) u[k] += V[vi + k] * vj;
    }
    // T[:, j] = −τ T u, T[j, j] = τ
    for (let k = 0; k < j; k++) {
      let s = 0;
      for (let l = k; l < j; l++) s += T[k * nb + l] * u[l];
      T[k * nb + j] = -tau * s;
    }
    T[j * nb + j] = tau;
    if (tau === 0) continue;
    // Y[p+1.., j] = τ (A[p+1.., c+1..] v_j − Y[:, 0..j−1] u); columns > c are still untouched
    let i = p + 1;
    const c1 = c + 1;
    for (; i + 3 < n; i += 4) {
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
    for (; i < n; i++) {
      const o = i * n;
      let s = 0;
      for (let col = c1; col < n; col++) s += a[o + col] * G[gj + col];
      Y[i * nb + j] = s;
    }
    for (let r = p + 1; r < n; r++) {
      const yr = r * nb;
      let s = Y[yr + j];
      for (let k = 0; k < j; k++) s -= Y[yr + k] * u[k];
      Y[yr + j] = tau * s;
    }
  }
}

/** Applies the panel's Q to the rest of the matrix: Y's rows 0..p, then A ← Qᵀ A Q outside the panel. */
function trailing(
  a: Float64Array, n: number, p: number, b: number, nb: number,
  V: Float64Array, G: Float64Array, Y: Float64Array, T: Float64Array, M: Float64Array, coef: Float64Array,
): void {
  const p1 = p + 1;
  const q = p + b; // first column after the panel
  // Y[0..p, :] = A[0..p, p+1..] V T (these rows of A are still untouched)
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
  // panel columns p+1..q−1, rows 0..p: right update −Y Vᵀ
  for (let i = 0; i <= p; i++) {
    const o = i * n;
    const yi = i * nb;
    for (let col = p1; col < q; col++) {
      const vc = col * nb;
      const kEnd = col - p;
      let s = 0;
      for (let k = 0; k < kEnd; k++) s += Y[yi + k] * V[vc + k];
      a[o + col] -= s;
    }
  }
  if (q >= n) return;
  // W = Tᵀ (Vᵀ A[p+1.., q..] − (Vᵀ Y) Vᵀ[:, q..]) in G rows nb..nb+b−1
  const W0 = nb * n;
  G.fill(0, W0, W0 + nb * n);
  let i = p1;
  for (; i + 3 < n; i += 4) {
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
  for (; i < n; i++) {
    const o = i * n;
    const kEnd = Math.min(b, i + 1 - p1);
    for (let k = 0; k < kEnd; k++) {
      const v = V[i * nb + k];
      if (v === 0) continue;
      const wk = W0 + k * n;
      for (let col = q; col < n; col++) G[wk + col] += v * a[o + col];
    }
  }
  // M = Vᵀ Y (rows p+1..)
  M.fill(0);
  for (let r = p1; r < n; r++) {
    const vr = r * nb, yr = r * nb;
    const kEnd = Math.min(b, r - p);
    for (let k = 0; k < kEnd; k++) {
      const v = V[vr + k];
      for (let l = 0; l < b; l++) M[k * nb + l] += v * Y[yr + l];
    }
  }
  for (let k = 0; k < b; k++) {
    const wk = W0 + k * n;
    for (let l = 0; l < b; l++) {
      const m = M[k * nb + l];
      if (m === 0) continue;
      const gl = l * n;
      for (let col = q; col < n; col++) G[wk + col] -= m * G[gl + col];
    }
  }
  // W ← Tᵀ W, in place from the last row up
  for (let k = b - 1; k >= 0; k--) {
    const wk = W0 + k * n;
    const tkk = T[k * nb + k];
    for (let col = q; col < n; col++) G[wk + col] *= tkk;
    for (let l = 0; l < k; l++) {
      const t = T[l * nb + k];
      if (t === 0) continue;
      const wl = W0 + l * n;
      for (let col = q; col < n; col++) G[wk + col] += t * G[wl + col];
    }
  }
  // A[:, q..] −= Y Vᵀ[:, q..] (all rows) + V W (rows p+1..): one pass, four terms at a time
  const nk = nb + b;
  for (let r = 0; r < n; r++) {
    const o = r * n;
    for (let k = 0; k < nb; k++) coef[k] = k < b ? Y[r * nb + k] : 0;
    for (let k = 0; k < b; k++) coef[nb + k] = r >= p1 ? V[r * nb + k] : 0;
    let k = 0;
    for (; k + 3 < nk; k += 4) {
      const c0 = coef[k], c1 = coef[k + 1], c2 = coef[k + 2], c3 = coef[k + 3];
      if (c0 === 0 && c1 === 0 && c2 === 0 && c3 === 0) continue;
      const g0 = k * n, g1 = g0 + n, g2 = g1 + n, g3 = g2 + n;
      for (let col = q; col < n; col++) {
        a[o + col] -= c0 * G[g0 + col] + c1 * G[g1 + col] + c2 * G[g2 + col] + c3 * G[g3 + col];
      }
    }
    for (; k < nk; k++) {
      const c0 = coef[k];
      if (c0 === 0) continue;
      const g0 = k * n;
      for (let col = q; col < n; col++) a[o + col] -= c0 * G[g0 + col];
    }
  }
}

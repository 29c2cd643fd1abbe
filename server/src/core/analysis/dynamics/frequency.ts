/** Frequency response G(jω) by complex solves on the Hessenberg form of A, and its frequency grid. */
import type { Complex, Dynamics, LinearSystem } from './types';
import { householder, reflectCols, reflectRows } from './reflectors';

export interface FrequencyPair {
  input: string;
  output: string;
  inputIndex: number;
  outputIndex: number;
  /** 20·log10|G(jω)|; null where G is zero, not finite (ω on a pole) or below the round-off level of the solve. */
  magnitudeDb: (number | null)[];
  /** Unwrapped phase in degrees. */
  phaseDeg: (number | null)[];
}

export interface FrequencyResponse {
  /** rad per time unit, ascending. */
  omega: number[];
  unit: string;
  pairs: FrequencyPair[];
}

/**
 * Log-spaced frequencies two decades beyond the smallest and largest non-zero pole and zero magnitude
 * (1e-2 … 1e2 rad per time unit when there are none).
 */
export function frequencyGrid(dyn: Dynamics, count = 200): number[] {
  let lo = Infinity;
  let hi = 0;
  const tol = dyn.stability.tolerance;
  const add = (z: Complex) => {
    const a = Math.hypot(z.re, z.im);
    if (!(a > tol) || !Number.isFinite(a)) return;
    lo = Math.min(lo, a);
    hi = Math.max(hi, a);
  };
  dyn.eigenvalues.forEach(add);
  for (const tf of dyn.transfer) tf.zeros.forEach(add);
  if (!(hi > 0)) {
    lo = 1;
    hi = 1;
  }
  let l0 = Math.floor(Math.log10(lo) - 2 + 1e-9);
  let l1 = Math.ceil(Math.log10(hi) + 2 - 1e-9);
  if (l1 - l0 > 14) {
    // keep a sane span around the poles (zeros far out are listed but not plotted)
    let plo = Infinity;
    let phi = 0;
    for (const e of dyn.eigenvalues) {
      const a = Math.hypot(e.re, e.im);
      if (a > tol) {
        plo = Math.min(plo, a);
        phi = Math.max(phi, a);
      }
    }
    if (phi > 0) {
      l0 = Math.floor(Math.log10(plo) - 2);
      l1 = Math.max(l0 + 4, Math.ceil(Math.log10(phi) + 2));
    }
    if (l1 - l0 > 14) l1 = l0 + 14;
  }
  const N = Math.max(2, Math.floor(count));
  const out: number[] = [];
  for (let k = 0; k < N; k++) out.push(Math.pow(10, l0 + ((l1 - l0) * k) / (N - 1)));
  return out;
}

/**
 * G(jω) of every pair by solving (jωI − A)X = B at each frequency (after an orthogonal reduction of A to
 * Hessenberg form, so each frequency costs O(n²) per input); magnitude in dB, phase unwrapped along the
 * frequency axis and placed on the branch given by the poles and zeros at the lowest frequency.
 */
export function frequencyResponse(dyn: Dynamics, omega: number[]): FrequencyResponse {
  const sys = dyn.system;
  const { n, m, p } = sys;
  const W = omega.length;
  const Gre = new Float64Array(W * p * m);
  const Gim = new Float64Array(W * p * m);
  /** Round-off level of each entry: 1e-13·(Σ_k |C_ik|·max_q |X_qj| + |D_ij|) (the solve's normwise accuracy, with margin). */
  const Gnoise = new Float64Array(W * p * m);
  const bad = new Uint8Array(W);
  const hs = hessenbergSystem(sys);
  const xr = new Float64Array(n * m);
  const xi = new Float64Array(n * m);
  const xmax = new Float64Array(m);
  for (let k = 0; k < W; k++) {
    const ok = n === 0 || hs.solve(omega[k], xr, xi);
    if (!ok) {
      bad[k] = 1;
      continue;
    }
    // the solve is backward stable: its error is small against the largest entry of each column of X
    for (let j = 0; j < m; j++) {
      let mx = 0;
      for (let q = 0; q < n; q++) mx = Math.max(mx, Math.abs(xr[q * m + j]) + Math.abs(xi[q * m + j]));
      xmax[j] = mx;
    }
    for (let i = 0; i < p; i++) {
      const co = i * n;
      for (let j = 0; j < m; j++) {
        let sr = sys.D[i * m + j];
        let si = 0;
        let size = Math.abs(sr);
        for (let q = 0; q < n; q++) {
          const c = hs.C[co + q];
          if (c === 0) continue;
          sr += c * xr[q * m + j];
          si += c * xi[q * m + j];
          size += Math.abs(c) * xmax[j];
        }
        Gre[(k * p + i) * m + j] = sr;
        Gim[(k * p + i) * m + j] = si;
        Gnoise[(k * p + i) * m + j] = 1e-13 * size;
      }
    }
  }
  const pairs: FrequencyPair[] = [];
  for (const tf of dyn.transfer) {
    const i = tf.outputIndex;
    const j = tf.inputIndex;
    const mag: (number | null)[] = [];
    const ph: (number | null)[] = [];
    let prev: number | null = null;
    let offset = 0;
    let first = true;
    for (let k = 0; k < W; k++) {
      const re = Gre[(k * p + i) * m + j];
      const im = Gim[(k * p + i) * m + j];
      const a = Math.hypot(re, im);
      // below the round-off level of the solve the numbers mean nothing: leave them out
      if (bad[k] || tf.identicallyZero || !(a > Gnoise[(k * p + i) * m + j]) || !Number.isFinite(a)) {
        mag.push(null);
        ph.push(null);
        continue;
      }
      mag.push(20 * Math.log10(a));
      let phi = (Math.atan2(im, re) * 180) / Math.PI;
      if (first) {
        // branch: sum of the factor angles (each within ±180°) at this frequency
        const s = { re: 0, im: omega[k] };
        let expect = tf.gain < 0 ? -180 : 0;
        for (const z of tf.zeros) expect += (Math.atan2(s.im - z.im, s.re - z.re) * 180) / Math.PI;
        for (const q of tf.poles) expect -= (Math.atan2(s.im - q.im, s.re - q.re) * 180) / Math.PI;
        offset = 360 * Math.round((expect - phi) / 360);
        first = false;
      } else if (prev !== null) {
        const d = phi + offset - prev;
        offset -= 360 * Math.round(d / 360);
      }
      phi += offset;
      ph.push(phi);
      prev = phi;
    }
    pairs.push({ input: tf.input, output: tf.output, inputIndex: j, outputIndex: i, magnitudeDb: mag, phaseDeg: ph });
  }
  return { omega: omega.slice(), unit: `rad/${sys.timeUnit}`, pairs };
}

/**
 * A = Q H Qᵀ with H upper Hessenberg (Householder); B̂ = QᵀB, Ĉ = CQ. (jωI − H) y = b̂ is then solved by
 * Gaussian elimination with partial pivoting between adjacent rows (the subdiagonal is the only entry
 * below the diagonal), O(n²) per right-hand side.
 */
function hessenbergSystem(sys: LinearSystem) {
  const { n, m, p } = sys;
  const H = Float64Array.from(sys.A);
  const Bh = Float64Array.from(sys.B);
  const Ch = Float64Array.from(sys.C);
  const x = new Float64Array(n);
  const v = new Float64Array(n);
  for (let k = 0; k + 2 < n; k++) {
    const L = n - k - 1;
    for (let i = 0; i < L; i++) x[i] = H[(k + 1 + i) * n + k];
    const { f } = householder(x, L, v);
    if (f === 0) continue;
    const off = k + 1;
    reflectRows(H, n, v, L, off, f); // H ← Qₖ H Qₖ
    reflectCols(H, n, n, v, L, off, f);
    reflectRows(Bh, m, v, L, off, f); // B̂ ← Qₖ B̂
    reflectCols(Ch, p, n, v, L, off, f); // Ĉ ← Ĉ Qₖ
    for (let i = 2; i <= L; i++) H[(k + i) * n + k] = 0;
  }
  const Mr = new Float64Array(n * n);
  const Mi = new Float64Array(n * n);
  /** Solves (jωI − H) X = B̂ for all inputs (X n×m, row-major); false when singular. */
  const solve = (w: number, xr: Float64Array, xi: Float64Array): boolean => {
    for (let k = 0; k < n * n; k++) {
      Mr[k] = -H[k];
      Mi[k] = 0;
    }
    for (let i = 0; i < n; i++) Mi[i * n + i] = w;
    xr.set(Bh);
    xi.fill(0);
    for (let k = 0; k < n; k++) {
      // pivot between rows k and k+1 (the only candidates in a Hessenberg matrix)
      if (k + 1 < n) {
        const a = Math.abs(Mr[k * n + k]) + Math.abs(Mi[k * n + k]);
        const b = Math.abs(Mr[(k + 1) * n + k]) + Math.abs(Mi[(k + 1) * n + k]);
        if (b > a) {
          for (let c = k; c < n; c++) {
            let t = Mr[k * n + c];
            Mr[k * n + c] = Mr[(k + 1) * n + c];
            Mr[(k + 1) * n + c] = t;
            t = Mi[k * n + c];
            Mi[k * n + c] = Mi[(k + 1) * n + c];
            Mi[(k + 1) * n + c] = t;
          }
          for (let j = 0; j < m; j++) {
            let t = xr[k * m + j];
            xr[k * m + j] = xr[(k + 1) * m + j];
            xr[(k + 1) * m + j] = t;
            t = xi[k * m + j];
            xi[k * m + j] = xi[(k + 1) * m + j];
            xi[(k + 1) * m + j] = t;
          }
        }
      }
      const pr = Mr[k * n + k];
      const pi = Mi[k * n + k];
      const pm = pr * pr + pi * pi;
      if (!(pm > 0) || !Number.isFinite(pm)) return false;
      if (k + 1 < n) {
        const r = (k + 1) * n;
        const lr0 = Mr[r + k];
        const li0 = Mi[r + k];
        if (lr0 !== 0 || li0 !== 0) {
          const lr = (lr0 * pr + li0 * pi) / pm;
          const li = (li0 * pr - lr0 * pi) / pm;
          for (let c = k; c < n; c++) {
            const ur = Mr[k * n + c];
            const ui = Mi[k * n + c];
            Mr[r + c] -= lr * ur - li * ui;
            Mi[r + c] -= lr * ui + li * ur;
          }
          for (let j = 0; j < m; j++) {
            const yr = xr[k * m + j];
            const yi = xi[k * m + j];
            xr[(k + 1) * m + j] -= lr * yr - li * yi;
            xi[(k + 1) * m + j] -= lr * yi + li * yr;
          }
        }
      }
    }
    for (let k = n - 1; k >= 0; k--) {
      const ro = k * n;
      const pr = Mr[ro + k];
      const pi = Mi[ro + k];
      const pm = pr * pr + pi * pi;
      for (let j = 0; j < m; j++) {
        let sr = xr[k * m + j];
        let si = xi[k * m + j];
        for (let c = k + 1; c < n; c++) {
          const ur = Mr[ro + c];
          const ui = Mi[ro + c];
          if (ur === 0 && ui === 0) continue;
          const vr = xr[c * m + j];
          const vi = xi[c * m + j];
          sr -= ur * vr - ui * vi;
          si -= ur * vi + ui * vr;
        }
        const qr = (sr * pr + si * pi) / pm;
        const qi = (si * pr - sr * pi) / pm;
        if (!Number.isFinite(qr) || !Number.isFinite(qi)) return false;
        xr[k * m + j] = qr;
        xi[k * m + j] = qi;
      }
    }
    return true;
  };
  return { solve, C: Ch };
}

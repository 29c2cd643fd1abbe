import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { expm as mathjsExpm, matrix as mathjsMatrix } from 'mathjs';
import { expm, linearStepResponse } from '../server/src/core/numeric/expm';

/** Deterministic pseudo-random numbers in [-1, 1) (LCG), so the tests are reproducible. */
function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return (s / 2 ** 32) * 2 - 1;
  };
}

function randomMatrix(n: number, scale: number, seed: number): Float64Array {
  const r = rng(seed);
  return Float64Array.from({ length: n * n }, () => r() * scale);
}

function matmul(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const c = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < n; k++)
      for (let j = 0; j < n; j++) c[i * n + j] += a[i * n + k] * b[k * n + j];
  return c;
}

function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

function maxAbs(a: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]));
  return m;
}

/** Taylor series Σ A^k/k! with many terms — the definition of e^A; accurate in double precision for small ‖A‖. */
function taylorExp(a: Float64Array, n: number, terms = 60): Float64Array {
  const out = new Float64Array(n * n);
  let term = new Float64Array(n * n);
  for (let i = 0; i < n; i++) term[i * n + i] = 1;
  for (let k = 0; k < terms; k++) {
    for (let i = 0; i < n * n; i++) out[i] += term[i];
    term = matmul(term, a, n).map((v) => v / (k + 1));
  }
  return out;
}

function toRows(a: Float64Array, n: number): number[][] {
  return Array.from({ length: n }, (_, i) => Array.from(a.subarray(i * n, (i + 1) * n)));
}

describe('expm', () => {
  it('of a diagonal matrix is the diagonal of exponentials', () => {
    // e^diag(d) = diag(e^d) (common practice)
    const d = [-30, -1, 0, 0.5, 4, 12];
    const n = d.length;
    const a = new Float64Array(n * n);
    d.forEach((v, i) => (a[i * n + i] = v));
    const e = expm(a, n);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        if (i === j) expect(Math.abs(e[i * n + j] - Math.exp(d[i]))).toBeLessThan(1e-13 * Math.exp(d[i]));
        else expect(e[i * n + j]).toBe(0);
      }
    }
  });

  it('of a nilpotent matrix is the finite polynomial I + N + N²/2 + N³/6', () => {
    // N⁴ = 0 for a strictly upper triangular 4×4 N, so the series terminates (common practice)
    const n = 4;
    const N = Float64Array.from([0, 2, -1, 3, 0, 0, 4, 1, 0, 0, 0, -2, 0, 0, 0, 0]);
    const N2 = matmul(N, N, n);
    const N3 = matmul(N2, N, n);
    const ref = new Float64Array(n * n);
    for (let i = 0; i < n * n; i++) ref[i] = N[i] + N2[i] / 2 + N3[i] / 6 + (i % (n + 1) === 0 ? 1 : 0);
    expect(maxAbsDiff(expm(N, n), ref)).toBeLessThan(1e-13 * maxAbs(ref));
  });

  it('of the rotation generator [[0,-w],[w,0]] is the rotation matrix', () => {
    // e^{[[0,-w],[w,0]]} = [[cos w, -sin w],[sin w, cos w]] (common practice)
    for (const w of [1e-3, 0.1, 1, 2.5, 10, 100]) {
      const e = expm(Float64Array.from([0, -w, w, 0]), 2);
      const ref = [Math.cos(w), -Math.sin(w), Math.sin(w), Math.cos(w)];
      // accuracy of scaling and squaring degrades like ‖A‖·ε (Higham 2005)
      expect(maxAbsDiff(e, ref)).toBeLessThan(1e-14 * Math.max(1, w) * 10);
    }
  });

  it('matches the Taylor series for small norms (Padé degrees 3, 5, 7, 9, 13 without squaring)', () => {
    // the definition e^A = Σ A^k/k! converges quickly for ‖A‖ ≤ 5 (common practice)
    const n = 6;
    for (const [k, scale] of [0.001, 0.03, 0.12, 0.3, 0.8].entries()) {
      const a = randomMatrix(n, scale, 11 + k);
      const ref = taylorExp(a, n);
      expect(maxAbsDiff(expm(a, n), ref)).toBeLessThan(1e-14 * maxAbs(ref));
    }
  });

  it('matches the eigen decomposition of ml-matrix for a symmetric matrix of large norm (scaling path)', () => {
    // e^A = V diag(e^λ) Vᵀ for symmetric A (common practice); reference decomposition by ml-matrix
    const n = 8;
    const r = rng(5);
    const s = new Float64Array(n * n);
    for (let i = 0; i < n; i++)
      for (let j = 0; j <= i; j++) {
        const v = r() * 40;
        s[i * n + j] = v;
        s[j * n + i] = v;
      }
    for (let i = 0; i < n; i++) s[i * n + i] -= 60; // eigenvalues spread around −60 with ‖A‖₁ ≈ 200
    const evd = new EigenvalueDecomposition(new Matrix(toRows(s, n)), { assumeSymmetric: true });
    const V = evd.eigenvectorMatrix;
    const D = Matrix.diag(evd.realEigenvalues.map(Math.exp));
    const ref = V.mmul(D).mmul(V.transpose()).to1DArray();
    const e = expm(s, n);
    expect(maxAbsDiff(e, ref)).toBeLessThan(1e-10 * maxAbs(ref));
  });

  it('matches mathjs.expm for nonsymmetric matrices of moderate and large norm', () => {
    // reference library: mathjs (independent Padé implementation)
    const n = 7;
    for (const [k, scale] of [0.5, 3, 12].entries()) {
      const a = randomMatrix(n, scale, 101 + k);
      const ref = (mathjsExpm(mathjsMatrix(toRows(a, n))).toArray() as number[][]).flat();
      expect(maxAbsDiff(expm(a, n), ref)).toBeLessThan(1e-9 * maxAbs(ref));
    }
  });

  it('satisfies e^A · e^{-A} = I', () => {
    // A and −A commute, so e^A e^{−A} = e^0 = I (common practice)
    const n = 10;
    for (const [k, scale] of [0.05, 0.5, 2].entries()) {
      const a = randomMatrix(n, scale, 201 + k);
      const neg = a.map((v) => -v);
      const prod = matmul(expm(a, n), expm(neg, n), n);
      const I = new Float64Array(n * n);
      for (let i = 0; i < n; i++) I[i * n + i] = 1;
      expect(maxAbsDiff(prod, I)).toBeLessThan(1e-11);
    }
  });

  it('handles the empty and 1×1 cases and rejects bad input', () => {
    expect(expm(new Float64Array(0), 0).length).toBe(0);
    expect(expm(Float64Array.from([-2.5]), 1)[0]).toBeCloseTo(Math.exp(-2.5), 15);
    expect(() => expm(new Float64Array(3), 2)).toThrow(RangeError);
    expect(() => expm(Float64Array.from([Number.NaN]), 1)).toThrow(RangeError);
  });
});

describe('linearStepResponse', () => {
  const grid = (dt: number, count: number): Float64Array => Float64Array.from({ length: count }, (_, k) => k * dt);

  it('first-order lag K/(τs+1) gives K(1 − e^(−t/τ))', () => {
    // closed form of the first-order step response (Ogata, Modern Control Engineering, Sect. 5-2)
    const K = 2.5;
    const tau = 3;
    const times = grid(0.05, 401);
    const r = linearStepResponse(
      Float64Array.from([-1 / tau]),
      Float64Array.from([K / tau]),
      Float64Array.from([1]),
      Float64Array.from([0]),
      1,
      1,
      1,
      Float64Array.from([1]),
      times,
    );
    expect(r.t.length).toBe(times.length);
    for (let k = 0; k < times.length; k++) {
      expect(Math.abs(r.y[k][0] - K * (1 - Math.exp(-times[k] / tau)))).toBeLessThan(1e-12);
    }
  });

  it('a pure integrator gives a ramp and a double integrator a parabola (singular A)', () => {
    // 1/s → u·t and 1/s² → u·t²/2 (common practice)
    const times = grid(0.1, 101);
    const u = 0.7;
    const single = linearStepResponse(
      Float64Array.from([0]),
      Float64Array.from([1]),
      Float64Array.from([1]),
      Float64Array.from([0]),
      1,
      1,
      1,
      Float64Array.from([u]),
      times,
    );
    const dbl = linearStepResponse(
      Float64Array.from([0, 1, 0, 0]),
      Float64Array.from([0, 1]),
      Float64Array.from([1, 0]),
      Float64Array.from([0]),
      2,
      1,
      1,
      Float64Array.from([u]),
      times,
    );
    for (let k = 0; k < times.length; k++) {
      const t = times[k];
      expect(Math.abs(single.y[k][0] - u * t)).toBeLessThan(1e-12 * Math.max(1, t));
      expect(Math.abs(dbl.y[k][0] - (u * t * t) / 2)).toBeLessThan(1e-11 * Math.max(1, t * t));
      expect(Math.abs(dbl.x[k][1] - u * t)).toBeLessThan(1e-12 * Math.max(1, t));
    }
  });

  it('a second-order underdamped system has the textbook overshoot, peak time and waveform', () => {
    // ωn²/(s² + 2ζωn s + ωn²): overshoot Mp = exp(−ζπ/√(1−ζ²)), peak time tp = π/(ωn√(1−ζ²)),
    // y(t) = 1 − e^{−ζωn t}(cos ωd t + ζ/√(1−ζ²) sin ωd t) (Ogata, Modern Control Engineering, Sect. 5-3)
    const zeta = 0.3;
    const wn = 4;
    const wd = wn * Math.sqrt(1 - zeta * zeta);
    const dt = 1e-3;
    const times = grid(dt, 5001);
    const r = linearStepResponse(
      Float64Array.from([0, 1, -wn * wn, -2 * zeta * wn]),
      Float64Array.from([0, wn * wn]),
      Float64Array.from([1, 0]),
      Float64Array.from([0]),
      2,
      1,
      1,
      Float64Array.from([1]),
      times,
    );
    let peak = -Infinity;
    let tPeak = 0;
    for (let k = 0; k < times.length; k++) {
      const t = times[k];
      const y = r.y[k][0];
      const exact = 1 - Math.exp(-zeta * wn * t) * (Math.cos(wd * t) + (zeta / Math.sqrt(1 - zeta * zeta)) * Math.sin(wd * t));
      expect(Math.abs(y - exact)).toBeLessThan(1e-11);
      if (y > peak) {
        peak = y;
        tPeak = t;
      }
    }
    const Mp = Math.exp((-zeta * Math.PI) / Math.sqrt(1 - zeta * zeta));
    const tp = Math.PI / wd;
    // sampling tolerance: the sampled maximum is within O(dt²) of the peak value and dt/2 of its time
    expect(Math.abs(peak - 1 - Mp)).toBeLessThan(1e-5);
    expect(Math.abs(tPeak - tp)).toBeLessThanOrEqual(dt / 2 + 1e-12);
  });

  it('handles feedthrough, several inputs and outputs, and non-uniform sample times', () => {
    // two decoupled lags 1/(s+1) and 3/(2s+1) with D = [[0.5, 0],[0, -1]] and u = (2, 1);
    // closed forms y1 = 0.5·2 + 2(1 − e^{−t}), y2 = −1 + 3(1 − e^{−t/2}) (common practice)
    const A = Float64Array.from([-1, 0, 0, -0.5]);
    const B = Float64Array.from([1, 0, 0, 1.5]);
    const C = Float64Array.from([1, 0, 0, 1]);
    const D = Float64Array.from([0.5, 0, 0, -1]);
    const times = Float64Array.from([0, 0, 0.01, 0.3, 0.31, 1, 2.5, 2.5, 7, 20]);
    const r = linearStepResponse(A, B, C, D, 2, 2, 2, Float64Array.from([2, 1]), times);
    for (let k = 0; k < times.length; k++) {
      const t = times[k];
      expect(Math.abs(r.y[k][0] - (1 + 2 * (1 - Math.exp(-t))))).toBeLessThan(1e-12);
      expect(Math.abs(r.y[k][1] - (-1 + 3 * (1 - Math.exp(-t / 2))))).toBeLessThan(1e-12);
    }
    expect(r.y[0][0]).toBe(1); // D·u at t = 0, state still zero
  });

  it('agrees with the eigen solution of ml-matrix for a stiff 12-state chain over a long uniform grid', () => {
    // x(t) = V diag((e^{λt} − 1)/λ) Vᵀ B u for symmetric A (common practice), reference eigen decomposition by ml-matrix
    const n = 12;
    const A = new Float64Array(n * n);
    for (let i = 0; i < n; i++) {
      A[i * n + i] = -Math.pow(10, 2 - (4 * i) / (n - 1));
      if (i + 1 < n) {
        A[i * n + i + 1] = 0.2 * Math.sqrt(-A[i * n + i] * Math.pow(10, 2 - (4 * (i + 1)) / (n - 1)));
        A[(i + 1) * n + i] = A[i * n + i + 1];
      }
    }
    const B = Float64Array.from({ length: n }, (_, i) => (i === 0 ? 1 : 0));
    const C = Float64Array.from({ length: n }, (_, i) => (i === n - 1 ? 1 : 0));
    const times = grid(0.5, 2001);
    const r = linearStepResponse(A, B, C, Float64Array.from([0]), n, 1, 1, Float64Array.from([1]), times);
    const evd = new EigenvalueDecomposition(new Matrix(toRows(A, n)), { assumeSymmetric: true });
    const V = evd.eigenvectorMatrix;
    const vtb = V.transpose().mmul(Matrix.columnVector(Array.from(B)));
    for (const k of [1, 10, 200, 1000, 2000]) {
      const t = times[k];
      const g = Matrix.columnVector(evd.realEigenvalues.map((l, i) => (Math.expm1(l * t) / l) * vtb.get(i, 0)));
      const ref = V.mmul(g);
      for (let i = 0; i < n; i++) expect(Math.abs(r.x[k][i] - ref.get(i, 0))).toBeLessThan(1e-10);
    }
  });

  it('rejects inconsistent sizes and unordered or negative times', () => {
    const one = Float64Array.from([1]);
    expect(() => linearStepResponse(one, one, one, one, 2, 1, 1, one, Float64Array.from([0]))).toThrow(RangeError);
    expect(() => linearStepResponse(one, one, one, one, 1, 1, 1, one, Float64Array.from([1, 0.5]))).toThrow(RangeError);
    expect(() => linearStepResponse(one, one, one, one, 1, 1, 1, one, Float64Array.from([-1]))).toThrow(RangeError);
  });
});

/**
 * Rodas4 with a sparse Jacobian (numeric/stiffMatrix.ts, numeric/patternLU.ts): the iteration matrix
 * factorised sparse, its pivot order kept from step to step and from one integration to the next.
 * Checked against the matrix exponential of the linear problem (an independent route: the exact
 * solution x(t) = x∞ + e^{At}(x0 − x∞)) and against the dense route of the same method.
 */
import { describe, expect, it } from 'vitest';
import { integrateStiff, stiffMatrix, type OdeProblem, type SparseJacobian } from '../server/src/core/numeric/ode';
import { expm } from '../server/src/core/numeric/expm';

/**
 * A chain of N masses joined by springs (stiffness k, cubic stiffening k3) and dampers c, the first
 * pushed by a constant force: state (x_1 … x_N, v_1 … v_N), 2N components.
 */
function chain(N: number, k3: number): { p: OdeProblem; sj: SparseJacobian } {
  const n = 2 * N;
  const k = 400;
  const c = 6;
  const spring = (d: number) => k * d + k3 * d * d * d;
  const dspring = (d: number) => k + 3 * k3 * d * d;
  const f = (_t: number, y: Float64Array, d: Float64Array): boolean => {
    for (let i = 0; i < N; i++) {
      d[i] = y[N + i];
      const left = spring(y[i] - (i > 0 ? y[i - 1] : 0));
      const right = i < N - 1 ? spring(y[i + 1] - y[i]) : 0;
      const vl = y[N + i] - (i > 0 ? y[N + i - 1] : 0);
      const vr = i < N - 1 ? y[N + i + 1] - y[N + i] : 0;
      d[N + i] = -left + right - c * vl + c * vr + (i === 0 ? 20 : 0);
    }
    return true;
  };
  // pattern: row i (x_i') → column N+i; row N+i → x_{i−1}, x_i, x_{i+1}, v_{i−1}, v_i, v_{i+1}
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [];
  for (let i = 0; i < N; i++) {
    cols.push(N + i);
    rowPtr[i + 1] = cols.length;
  }
  for (let i = 0; i < N; i++) {
    for (const j of [i - 1, i, i + 1]) if (j >= 0 && j < N) cols.push(j);
    for (const j of [i - 1, i, i + 1]) if (j >= 0 && j < N) cols.push(N + j);
    rowPtr[N + i + 1] = cols.length;
  }
  const colIdx = Int32Array.from(cols);
  const values = (_t: number, y: Float64Array, vals: Float64Array): boolean => {
    for (let i = 0; i < N; i++) vals[rowPtr[i]] = 1;
    for (let i = 0; i < N; i++) {
      const dl = dspring(y[i] - (i > 0 ? y[i - 1] : 0));
      const dr = i < N - 1 ? dspring(y[i + 1] - y[i]) : 0;
      let p = rowPtr[N + i];
      if (i > 0) vals[p++] = dl; // x_{i−1}
      vals[p++] = -dl - dr; // x_i
      if (i < N - 1) vals[p++] = dr; // x_{i+1}
      const cl = c;
      const cr = i < N - 1 ? c : 0;
      if (i > 0) vals[p++] = cl;
      vals[p++] = -cl - cr;
      if (i < N - 1) vals[p++] = cr;
    }
    return true;
  };
  const sj: SparseJacobian = { rowPtr, colIdx, values };
  const jac = (t: number, y: Float64Array, J: Float64Array): boolean => {
    const vals = new Float64Array(rowPtr[n]);
    values(t, y, vals);
    J.fill(0);
    for (let i = 0; i < n; i++) for (let q = rowPtr[i]; q < rowPtr[i + 1]; q++) J[i * n + colIdx[q]] = vals[q];
    return true;
  };
  return { p: { n, f, jac, autonomous: true }, sj };
}

const times = Float64Array.from({ length: 41 }, (_, i) => i * 0.5);

describe('integrateStiff with a sparse Jacobian', () => {
  it('follows the exact solution of the linear chain (matrix exponential) like the dense route', () => {
    const N = 20;
    const n = 2 * N;
    const { p, sj } = chain(N, 0);
    const o = { t0: 0, t1: 20, x0: new Float64Array(n), rtol: 1e-8, atol: 1e-10, outputTimes: times };
    const sparse = integrateStiff({ ...p, jac: undefined, sparseJac: sj }, o);
    const dense = integrateStiff(p, o);
    expect(sparse.status).toBe('ok');
    expect(dense.status).toBe('ok');
    // exact: A from the Jacobian, x∞ = −A⁻¹ b with b = f(0); x(t) = x∞ + e^{At}(x0 − x∞), via the augmented
    // exponential exp([[A, b], [0, 0]] t) whose last column is ∫e^{As}ds·b
    const A = new Float64Array(n * n);
    p.jac!(0, new Float64Array(n), A);
    const b = new Float64Array(n);
    p.f(0, new Float64Array(n), b);
    let worst = 0;
    let worstDense = 0;
    let scale = 0;
    for (let q = 1; q < times.length; q++) {
      const M = new Float64Array((n + 1) * (n + 1));
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) M[i * (n + 1) + j] = A[i * n + j] * times[q];
        M[i * (n + 1) + n] = b[i] * times[q];
      }
      const E = expm(M, n + 1);
      for (let i = 0; i < n; i++) {
        const exact = E[i * (n + 1) + n];
        scale = Math.max(scale, Math.abs(exact));
        worst = Math.max(worst, Math.abs(sparse.x[q][i] - exact));
        worstDense = Math.max(worstDense, Math.abs(sparse.x[q][i] - dense.x[q][i]));
      }
    }
    expect(worst / scale).toBeLessThan(1e-6);
    // the same method: the two routes differ by round-off and what it does to the step sizes
    expect(worstDense / scale).toBeLessThan(1e-9);
    expect(sparse.stats.steps).toBe(dense.stats.steps);
  });

  it('keeps its iteration matrix from one integration to the next (p.matrix) with the same results', () => {
    const N = 25;
    const n = 2 * N;
    const { p, sj } = chain(N, 4e4);
    const x0 = new Float64Array(n);
    const o = { t0: 0, t1: 20, x0, rtol: 1e-6, atol: 1e-9, outputTimes: times };
    const fresh = integrateStiff({ ...p, jac: undefined, sparseJac: sj }, o);
    const matrix = stiffMatrix(n, sj);
    expect(matrix.sparse).toBe(true);
    const first = integrateStiff({ ...p, jac: undefined, sparseJac: sj, matrix }, o);
    const again = integrateStiff({ ...p, jac: undefined, sparseJac: sj, matrix }, o);
    const dense = integrateStiff(p, o);
    for (const r of [fresh, first, again, dense]) expect(r.status).toBe('ok');
    let scale = 0;
    for (const x of dense.x) for (const v of x) scale = Math.max(scale, Math.abs(v));
    for (const r of [first, again, dense]) {
      for (let q = 0; q < times.length; q++) for (let i = 0; i < n; i++) expect(Math.abs(r.x[q][i] - fresh.x[q][i])).toBeLessThan(1e-8 * scale);
    }
  });
});

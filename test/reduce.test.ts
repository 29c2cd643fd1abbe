/**
 * Smaller models by balanced truncation (server/src/core/numeric/balancedTruncation.ts, Lyapunov equations
 * by Bartels–Stewart in numeric/lyapunov.ts).
 *
 * Outside references: the Gramians against `scipy.linalg.solve_continuous_lyapunov` (which solves
 * A·X + X·Aᴴ = Q, so it is called with −B·Bᵀ); the a-priori bound ‖G − G_r‖∞ ≤ 2·Σ(discarded σ) (Glover,
 * Int. J. Control 39(6), 1984; Enns 1984). Independent routes: the Lyapunov residual to 1e-10 relative; the
 * H∞ error measured on a frequency grid by evaluating both transfer matrices; a reduced model of full order
 * has the same frequency response; an unstable mode is kept exactly; the Gramians' Cholesky factors
 * computed directly (Hammarling 1982) reproduce the Bartels–Stewart Gramians and scipy's.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { linearSystem, evaluateTransfer } from '../server/src/core/analysis/dynamics';
import { balancedTruncation, suggestOrder } from '../server/src/core/numeric/balancedTruncation';
import type { StateSpace } from '../server/src/core/numeric/discretize';
import { eigenvalues } from '../server/src/core/numeric/eigen';
import { lyapunovResidual, solveLyapunov } from '../server/src/core/numeric/lyapunov';
import { lyapunovFactor } from '../server/src/core/numeric/lyapunovFactor';
import { tankChain } from '../bench/models';
import { solve } from './helpers/model';
import { PYTHON_WITH_SCIPY, runScipy, SCIPY_REQUIRED } from './helpers/scipy';

function chain(n: number): StateSpace {
  const sys = linearSystem(solve(tankChain(n)).lin);
  return { n: sys.n, m: sys.m, p: sys.p, A: sys.A, B: sys.B, C: sys.C, D: sys.D };
}

/** Largest singular value of G(jω) − G_r(jω) over a log grid (complex p×m matrix as the real 2p×2m one). */
function hinfError(full: StateSpace, red: StateSpace, wmin: number, wmax: number, count: number): number {
  let worst = 0;
  for (let k = 0; k < count; k++) {
    const w = wmin * Math.pow(wmax / wmin, k / (count - 1));
    const g = evaluateTransfer(full, { re: 0, im: w });
    const h = evaluateTransfer(red, { re: 0, im: w });
    // SISO here: the modulus of the difference
    worst = Math.max(worst, Math.hypot(g.re[0] - h.re[0], g.im[0] - h.im[0]));
  }
  return worst;
}

describe('Lyapunov equations (Bartels–Stewart)', () => {
  const sys = chain(20);
  const n = sys.n;
  const bbt = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) bbt[i * n + j] = sys.B[i] * sys.B[j];
  const P = solveLyapunov({ rows: n, cols: n, data: sys.A }, { rows: n, cols: n, data: bbt })!;
  it('satisfies A·P + P·Aᵀ + B·Bᵀ = 0 to 1e-10 relative', () => {
    expect(lyapunovResidual({ rows: n, cols: n, data: sys.A }, P, { rows: n, cols: n, data: bbt })).toBeLessThan(1e-10);
  });
  describe('equals scipy.linalg.solve_continuous_lyapunov', () => {
    if (!PYTHON_WITH_SCIPY && !SCIPY_REQUIRED) {
      it.skip('needs python3 with numpy and scipy', () => {});
      return;
    }
    let ref: number[][] = [];
    beforeAll(() => {
      ref = runScipy<number[][]>(
        `n = inp['n']; A = np.array(inp['A']).reshape(n, n); Q = np.array(inp['Q']).reshape(n, n)
print(json.dumps(scipy.linalg.solve_continuous_lyapunov(A, -Q).tolist()))`,
        { n, A: Array.from(sys.A), Q: Array.from(bbt) },
      );
    });
    it('controllability Gramian of a 20-tank chain, entrywise to 1e-9 of its largest entry', () => {
      let scale = 0;
      for (const r of ref) for (const v of r) scale = Math.max(scale, Math.abs(v));
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(Math.abs(P.data[i * n + j] - ref[i][j])).toBeLessThan(1e-9 * scale);
    });
  });
});

/** A chain of k masses joined by springs and dampers to their neighbours and the wall (invented numbers): complex modes, two inputs, two outputs. */
function springChain(k: number): StateSpace {
  const n = 2 * k;
  const A = new Float64Array(n * n);
  for (let i = 0; i < k; i++) {
    const mass = 1 + 0.3 * i;
    A[(2 * i) * n + 2 * i + 1] = 1; // position' = velocity
    const spring = (j: number, kk: number, c: number) => {
      A[(2 * i + 1) * n + 2 * i] -= kk / mass;
      A[(2 * i + 1) * n + 2 * i + 1] -= c / mass;
      if (j >= 0 && j < k) {
        A[(2 * i + 1) * n + 2 * j] += kk / mass;
        A[(2 * i + 1) * n + 2 * j + 1] += c / mass;
      }
    };
    spring(i - 1, 4 + i, 0.05);
    spring(i + 1, 3, 0.02);
  }
  const B = new Float64Array(n * 2);
  B[1 * 2 + 0] = 1; // force on the first mass
  B[(n - 1) * 2 + 1] = 0.5; // force on the last
  const C = new Float64Array(2 * n);
  C[0 * n + 0] = 1; // first position
  C[1 * n + n - 2] = 1; // last position
  return { n, m: 2, p: 2, A, B, C, D: new Float64Array(4) };
}

describe('Cholesky factors of the Gramians computed directly (Hammarling 1982)', () => {
  const cases = [
    { name: '20-tank chain (real eigenvalues)', sys: chain(20) },
    { name: 'spring-mass chain of 6 (complex pairs, 2 inputs)', sys: springChain(6) },
  ];
  const gramOf = (l: Float64Array, n: number) => {
    const g = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) { let v = 0; for (let k = 0; k < n; k++) v += l[i * n + k] * l[j * n + k]; g[i * n + j] = v; }
    return g;
  };
  for (const { name, sys } of cases) {
    it(`${name}: L·Lᵀ satisfies A·P + P·Aᵀ + B·Bᵀ = 0 to 1e-10 relative and equals the Bartels–Stewart Gramian`, () => {
      const { n, m } = sys;
      const L = lyapunovFactor(sys.A, sys.B, n, m)!;
      expect(L).toBeDefined();
      const P = gramOf(L, n);
      const bbt = new Float64Array(n * n);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < m; k++) bbt[i * n + j] += sys.B[i * m + k] * sys.B[j * m + k];
      const A = { rows: n, cols: n, data: sys.A };
      expect(lyapunovResidual(A, { rows: n, cols: n, data: P }, { rows: n, cols: n, data: bbt })).toBeLessThan(1e-10);
      const bs = solveLyapunov(A, { rows: n, cols: n, data: bbt })!;
      let scale = 0, diff = 0;
      for (let k = 0; k < n * n; k++) { scale = Math.max(scale, Math.abs(bs.data[k])); diff = Math.max(diff, Math.abs(bs.data[k] - P[k])); }
      expect(diff).toBeLessThan(1e-9 * scale);
    });
  }
  describe('equal scipy.linalg.solve_continuous_lyapunov (controllability and observability Gramians)', () => {
    if (!PYTHON_WITH_SCIPY && !SCIPY_REQUIRED) {
      it.skip('needs python3 with numpy and scipy', () => {});
      return;
    }
    let ref: number[][][][] = [];
    beforeAll(() => {
      // computed with python3: scipy.linalg.solve_continuous_lyapunov(A, -B·Bᵀ) and (Aᵀ, −Cᵀ·C)
      ref = runScipy<number[][][][]>(
        `res = []
for c in inp:
    n, m, p = c['n'], c['m'], c['p']
    A = np.array(c['A']).reshape(n, n); B = np.array(c['B']).reshape(n, m); C = np.array(c['C']).reshape(p, n)
    res.append([scipy.linalg.solve_continuous_lyapunov(A, -B @ B.T).tolist(), scipy.linalg.solve_continuous_lyapunov(A.T, -C.T @ C).tolist()])
print(json.dumps(res))`,
        cases.map(({ sys }) => ({ n: sys.n, m: sys.m, p: sys.p, A: Array.from(sys.A), B: Array.from(sys.B), C: Array.from(sys.C) })),
      );
    });
    cases.forEach(({ name, sys }, idx) => {
      it(name, () => {
        const { n, m, p } = sys;
        const at = new Float64Array(n * n);
        const ct = new Float64Array(n * p);
        for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) at[i * n + j] = sys.A[j * n + i];
        for (let i = 0; i < p; i++) for (let j = 0; j < n; j++) ct[j * p + i] = sys.C[i * n + j];
        const grams = [gramOf(lyapunovFactor(sys.A, sys.B, n, m)!, n), gramOf(lyapunovFactor(at, ct, n, p)!, n)];
        grams.forEach((g, w) => {
          let scale = 0;
          for (const r of ref[idx][w]) for (const v of r) scale = Math.max(scale, Math.abs(v));
          for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(Math.abs(g[i * n + j] - ref[idx][w][i][j])).toBeLessThan(1e-9 * scale);
        });
      });
    });
  });
});

describe('balanced truncation', () => {
  it('a 200-state tank chain reduced to 10 states: the H∞ error on a frequency grid is below the bound', () => {
    // This chain's Hankel values fall to about 1e-8·σ₁ by σ₁₁: below the floor (√ε·σ₁) of factors taken
    // from the Gramians' eigendecompositions, so the factors are computed directly (Hammarling 1982).
    const sys = chain(200);
    const bt = balancedTruncation(sys, { order: 10 })!;
    expect(bt).toBeDefined();
    expect(bt.kept).toBe(10);
    expect(bt.reduced.n).toBe(10);
    // the Hankel values of a diffusion-like chain decay geometrically; past the √ε floor they keep falling
    expect(bt.hankel[12] / bt.hankel[0]).toBeLessThan(1e-9);
    expect(bt.residual.controllability).toBeLessThan(1e-10);
    expect(bt.residual.observability).toBeLessThan(1e-10);
    // Hankel singular values descend and are non-negative
    for (let i = 1; i < bt.hankel.length; i++) expect(bt.hankel[i]).toBeLessThanOrEqual(bt.hankel[i - 1] * (1 + 1e-12));
    const eig = eigenvalues({ rows: sys.n, cols: sys.n, data: sys.A });
    let slow = Infinity, fast = 0;
    for (let i = 0; i < sys.n; i++) {
      slow = Math.min(slow, Math.abs(eig.re[i]));
      fast = Math.max(fast, Math.hypot(eig.re[i], eig.im[i]));
    }
    const err = hinfError(sys, bt.reduced, slow / 100, fast * 100, 150);
    expect(err).toBeGreaterThan(0);
    expect(err).toBeLessThanOrEqual(bt.bound * (1 + 1e-9));
    // the bound is not vacuous: the lower bound σ_{r+1} ≤ ‖G − G_r‖∞ (Glover 1984) holds on the grid within 10 %
    expect(err).toBeGreaterThanOrEqual(0.9 * bt.hankel[10]);
  });
  it('keeping every state reproduces the frequency response', () => {
    const sys = chain(8);
    const bt = balancedTruncation(sys, { order: 8 })!;
    const dc = Math.abs(evaluateTransfer(sys, { re: 0, im: 0 }).re[0]);
    for (const w of [0, 1e-4, 1e-2, 1]) {
      const g = evaluateTransfer(sys, { re: 0, im: w });
      const h = evaluateTransfer(bt.reduced, { re: 0, im: w });
      expect(Math.hypot(g.re[0] - h.re[0], g.im[0] - h.im[0])).toBeLessThan(1e-9 * dc);
    }
  });
  it('keeps an unstable mode exactly (split off first)', () => {
    // two stable lags in series plus an unstable first-order mode at +0.5, all driven by u, summed at y
    const A = Float64Array.from([-1, 0, 0, 1, -3, 0, 0, 0, 0.5]);
    const B = Float64Array.from([1, 0, 1]);
    const C = Float64Array.from([0, 1, 1]);
    const sys: StateSpace = { n: 3, m: 1, p: 1, A, B, C, D: new Float64Array(1) };
    const bt = balancedTruncation(sys, { order: 1 })!;
    expect(bt.unstable).toBe(1);
    expect(bt.reduced.n).toBe(2);
    const e = eigenvalues({ rows: 2, cols: 2, data: bt.reduced.A });
    expect(Math.max(e.re[0], e.re[1])).toBeCloseTo(0.5, 12);
  });
  it('suggests the smallest order whose bound meets the tolerance', () => {
    expect(suggestOrder([1, 0.1, 0.01, 0.001], 0.03)).toBe(2); // 2·(0.01+0.001) = 0.022 ≤ 0.03
    expect(suggestOrder([1, 0.1, 0.01, 0.001], 0.001)).toBe(4);
    expect(suggestOrder([1, 0.1, 0.01, 0.001], 3)).toBe(0);
  });
});

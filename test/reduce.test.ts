/**
 * Smaller models by balanced truncation (server/src/core/numeric/balancedTruncation.ts, Lyapunov equations
 * by Bartels–Stewart in numeric/lyapunov.ts).
 *
 * Outside references: the Gramians against `scipy.linalg.solve_continuous_lyapunov` (which solves
 * A·X + X·Aᴴ = Q, so it is called with −B·Bᵀ); the a-priori bound ‖G − G_r‖∞ ≤ 2·Σ(discarded σ) (Glover,
 * Int. J. Control 39(6), 1984; Enns 1984). Independent routes: the Lyapunov residual to 1e-10 relative; the
 * H∞ error measured on a frequency grid by evaluating both transfer matrices; a reduced model of full order
 * has the same frequency response; an unstable mode is kept exactly.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { linearSystem, evaluateTransfer } from '../server/src/core/analysis/dynamics';
import { balancedTruncation, suggestOrder } from '../server/src/core/numeric/balancedTruncation';
import type { StateSpace } from '../server/src/core/numeric/discretize';
import { eigenvalues } from '../server/src/core/numeric/eigen';
import { lyapunovResidual, solveLyapunov } from '../server/src/core/numeric/lyapunov';
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

describe('balanced truncation', () => {
  it('a 200-state tank chain reduced to 6 states: the H∞ error on a frequency grid is below the bound', () => {
    // Order 6, not 10: this chain's Hankel values fall to 1e-8·σ₁ by σ₁₁, the floor (√ε·σ₁) of Gramian
    // factors taken from eigendecompositions; order 10 needs factors computed directly (Hammarling 1982).
    const sys = chain(200);
    const bt = balancedTruncation(sys, { order: 6 })!;
    expect(bt).toBeDefined();
    expect(bt.kept).toBe(6);
    expect(bt.reduced.n).toBe(6);
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
    expect(err).toBeGreaterThanOrEqual(0.9 * bt.hankel[6]);
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

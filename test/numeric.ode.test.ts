import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import {
  integrateNonstiff,
  integrateStiff,
  type OdeOptions,
  type OdeProblem,
  type OdeSolution,
} from '../server/src/core/numeric/ode';

type Integrator = (p: OdeProblem, o: OdeOptions) => OdeSolution;
const BOTH: Array<[string, Integrator]> = [
  ['stiff (Rodas4)', integrateStiff],
  ['nonstiff (Dormand–Prince)', integrateNonstiff],
];

const last = (s: OdeSolution): Float64Array => s.x[s.x.length - 1];
const relErr = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

// Robertson's chemical kinetics, the classic stiff test problem
// (Hairer & Wanner, Solving ODEs II, Sect. IV.1, eq. (1.3)).
function robertson(withJac: boolean): OdeProblem {
  const p: OdeProblem = {
    n: 3,
    f(_t, y, d) {
      d[0] = -0.04 * y[0] + 1e4 * y[1] * y[2];
      d[2] = 3e7 * y[1] * y[1];
      d[1] = -d[0] - d[2];
      return true;
    },
  };
  if (withJac) {
    p.jac = (_t, y, J) => {
      J[0] = -0.04;
      J[1] = 1e4 * y[2];
      J[2] = 1e4 * y[1];
      J[6] = 0;
      J[7] = 6e7 * y[1];
      J[8] = 0;
      J[3] = -J[0] - J[6];
      J[4] = -J[1] - J[7];
      J[5] = -J[2] - J[8];
      return true;
    };
  }
  return p;
}

// Reference values of the Robertson problem at t = 40, from memory of the
// Hairer–Wanner test set (also listed in the IVP test set of Mazzia et al.):
// y(40) = (0.7158270687, 9.185534765e-6, 0.2841637457).
const ROBERTSON_40 = [0.7158270687, 9.185534765e-6, 0.2841637457];

describe('integrateStiff on Robertson kinetics', () => {
  it('matches the published values at t = 40, conserves mass, and reaches t = 1e5 in a bounded number of steps', () => {
    const times = Float64Array.from([0, 0.4, 4, 40, 400, 4000, 4e4, 1e5]);
    const sol = integrateStiff(robertson(false), {
      t0: 0,
      t1: 1e5,
      x0: Float64Array.from([1, 0, 0]),
      rtol: 1e-8,
      atol: Float64Array.from([1e-12, 1e-16, 1e-12]),
      outputTimes: times,
    });
    expect(sol.status).toBe('ok');
    expect(Array.from(sol.t)).toEqual(Array.from(times));
    const y40 = sol.x[3];
    // reference: Hairer–Wanner test set values (from memory), compared at 1e-6 relative
    for (let i = 0; i < 3; i++) expect(relErr(y40[i], ROBERTSON_40[i])).toBeLessThan(1e-6);
    // y1 + y2 + y3 = 1 is an exact linear invariant of the model (the rates sum to zero)
    for (const x of sol.x) expect(Math.abs(x[0] + x[1] + x[2] - 1)).toBeLessThan(1e-12);
    // bounded work: a stiff method needs O(10^3) steps here, an explicit one O(10^8)
    expect(sol.stats.steps).toBeLessThan(3000);
    expect(sol.stats.luDecomps).toBeGreaterThanOrEqual(sol.stats.steps);
    expect(sol.stats.jEvals).toBe(sol.stats.steps);
  });

  it('conserves mass at every accepted step and keeps the step count small at ordinary tolerances', () => {
    const sol = integrateStiff(robertson(true), {
      t0: 0,
      t1: 1e5,
      x0: Float64Array.from([1, 0, 0]),
      rtol: 1e-6,
      atol: Float64Array.from([1e-10, 1e-14, 1e-10]),
    });
    expect(sol.status).toBe('ok');
    expect(sol.t[0]).toBe(0);
    expect(sol.t[sol.t.length - 1]).toBe(1e5);
    for (let k = 1; k < sol.t.length; k++) expect(sol.t[k]).toBeGreaterThan(sol.t[k - 1]);
    // linear invariant (common practice: Rosenbrock stages preserve linear invariants)
    for (const x of sol.x) expect(Math.abs(x[0] + x[1] + x[2] - 1)).toBeLessThan(1e-12);
    expect(sol.x.length).toBe(sol.stats.steps + 1);
    expect(sol.stats.steps).toBeLessThan(1000);
  });

  it('reaches t = 1e11 with the analytic and with the difference Jacobian', () => {
    // Reference y1(1e11) = 2.0833401497e-8 (IVP test set, from memory); it also follows from the
    // quasi-steady state for large t: y2 ≈ 4e-6·y1, so y1' ≈ -4.8e-4·y1², y1 ≈ 1/(4.8e-4·t) = 2.0833e-8.
    for (const withJac of [true, false]) {
      const sol = integrateStiff(robertson(withJac), {
        t0: 0,
        t1: 1e11,
        x0: Float64Array.from([1, 0, 0]),
        rtol: 1e-8,
        atol: 1e-14,
      });
      expect(sol.status).toBe('ok');
      const y = last(sol);
      expect(relErr(y[0], 2.0833401497e-8)).toBeLessThan(1e-4);
      expect(relErr(y[1], 8.3333607703e-14)).toBeLessThan(1e-4);
      expect(Math.abs(y[0] + y[1] + y[2] - 1)).toBeLessThan(1e-12);
      expect(sol.stats.steps).toBeLessThan(3000);
      if (withJac) expect(sol.stats.fEvals).toBeLessThan(8 * sol.stats.steps + 50);
    }
  });
});

describe('simple closed-form problems', () => {
  for (const [name, integ] of BOTH) {
    it(`${name}: x' = -k x follows exp(-k t) at steps and output times`, () => {
      // closed form: x(t) = x0·exp(-k t) (common practice)
      const k = 3;
      const p: OdeProblem = {
        n: 1,
        f(_t, x, d) {
          d[0] = -k * x[0];
          return true;
        },
      };
      const free = integ(p, { t0: 0, t1: 4, x0: Float64Array.from([2]), rtol: 1e-9, atol: 1e-12 });
      expect(free.status).toBe('ok');
      for (let i = 0; i < free.t.length; i++) {
        expect(Math.abs(free.x[i][0] - 2 * Math.exp(-k * free.t[i]))).toBeLessThan(1e-8);
      }
      const times = Float64Array.from({ length: 401 }, (_, i) => i * 0.01);
      const dense = integ(p, { t0: 0, t1: 4, x0: Float64Array.from([2]), rtol: 1e-9, atol: 1e-12, outputTimes: times });
      expect(dense.t.length).toBe(401);
      for (let i = 0; i < times.length; i++) {
        expect(Math.abs(dense.x[i][0] - 2 * Math.exp(-k * times[i]))).toBeLessThan(1e-8);
      }
    });

    it(`${name}: harmonic oscillator stays on sin/cos over five periods`, () => {
      // x'' = -w² x, x(0) = 1, x'(0) = 0  →  x = cos(w t), x' = -w sin(w t) (common practice)
      const w = 2;
      const p: OdeProblem = {
        n: 2,
        f(_t, x, d) {
          d[0] = x[1];
          d[1] = -w * w * x[0];
          return true;
        },
      };
      const T = (2 * Math.PI) / w;
      const times = Float64Array.from({ length: 1001 }, (_, i) => (i * 5 * T) / 1000);
      const sol = integ(p, {
        t0: 0,
        t1: 5 * T,
        x0: Float64Array.from([1, 0]),
        rtol: 1e-10,
        atol: 1e-12,
        outputTimes: times,
      });
      expect(sol.status).toBe('ok');
      let worst = 0;
      for (let i = 0; i < times.length; i++) {
        const t = times[i];
        worst = Math.max(worst, Math.abs(sol.x[i][0] - Math.cos(w * t)), Math.abs(sol.x[i][1] + w * Math.sin(w * t)));
      }
      expect(worst).toBeLessThan(1e-6);
    });

    it(`${name}: non-autonomous x' = -x + t matches t - 1 + (x0 + 1)e^(-t)`, () => {
      // closed form by the integrating factor (common practice)
      const p: OdeProblem = {
        n: 1,
        f(t, x, d) {
          d[0] = -x[0] + t;
          return true;
        },
      };
      const sol = integ(p, { t0: 0, t1: 5, x0: Float64Array.from([0.5]), rtol: 1e-9, atol: 1e-12 });
      expect(sol.status).toBe('ok');
      for (let i = 0; i < sol.t.length; i++) {
        const t = sol.t[i];
        expect(Math.abs(sol.x[i][0] - (t - 1 + 1.5 * Math.exp(-t)))).toBeLessThan(1e-8);
      }
    });
  }
});

describe('stiff Van der Pol oscillator, mu = 1000', () => {
  it('runs in a modest number of steps and has the relaxation period of the asymptotic theory', () => {
    const mu = 1000;
    const p: OdeProblem = {
      n: 2,
      f(_t, y, d) {
        d[0] = y[1];
        d[1] = mu * (1 - y[0] * y[0]) * y[1] - y[0];
        return true;
      },
    };
    const t1 = 3500;
    const times = Float64Array.from({ length: 7001 }, (_, i) => i * 0.5);
    const sol = integrateStiff(p, { t0: 0, t1, x0: Float64Array.from([2, 0]), rtol: 1e-6, atol: 1e-6, outputTimes: times });
    expect(sol.status).toBe('ok');
    expect(sol.stats.steps).toBeLessThan(3000);
    // the limit cycle has amplitude ≈ 2 (common practice for the relaxation oscillator)
    for (const x of sol.x) expect(Math.abs(x[0])).toBeLessThan(2.05);
    const downCrossings: number[] = [];
    for (let k = 1; k < sol.t.length; k++) {
      const a = sol.x[k - 1][0];
      const b = sol.x[k][0];
      if (a > 0 && b <= 0) downCrossings.push(sol.t[k - 1] + ((sol.t[k] - sol.t[k - 1]) * a) / (a - b));
    }
    expect(downCrossings.length).toBeGreaterThanOrEqual(2);
    const period = downCrossings[1] - downCrossings[0];
    // Relaxation period T ≈ (3 − 2 ln 2)·μ + 3·a·μ^(-1/3), a ≈ 2.338 the first Airy zero magnitude
    // (asymptotic theory of the Van der Pol oscillator, e.g. Strogatz, Nonlinear Dynamics and Chaos,
    // Sect. 7.5 for the leading term; the correction term from memory).
    const asym = (3 - 2 * Math.log(2)) * mu + 3 * 2.338 * Math.pow(mu, -1 / 3);
    expect(relErr(period, asym)).toBeLessThan(2e-3);
  });
});

describe('a linear chain with time constants from 1 ms to 1000 s', () => {
  it('matches the eigen-decomposition solution from ml-matrix', () => {
    // symmetric negative definite tridiagonal A with diagonal spread over six decades
    const n = 20;
    const A = new Float64Array(n * n);
    for (let i = 0; i < n; i++) {
      const rate = Math.pow(10, 3 - (6 * i) / (n - 1)); // 1e3 ... 1e-3
      A[i * n + i] = -rate;
      if (i + 1 < n) {
        const c = 0.3 * Math.sqrt(rate * Math.pow(10, 3 - (6 * (i + 1)) / (n - 1)));
        A[i * n + i + 1] = c;
        A[(i + 1) * n + i] = c;
      }
    }
    const b = Float64Array.from({ length: n }, (_, i) => 1 + (i % 3));
    const p: OdeProblem = {
      n,
      f(_t, x, d) {
        for (let i = 0; i < n; i++) {
          let s = b[i];
          for (let j = Math.max(0, i - 1); j <= Math.min(n - 1, i + 1); j++) s += A[i * n + j] * x[j];
          d[i] = s;
        }
        return true;
      },
    };
    const times = Float64Array.from([0, 1e-3, 1e-1, 10, 1000, 5000]);
    const sol = integrateStiff(p, {
      t0: 0,
      t1: 5000,
      x0: new Float64Array(n),
      rtol: 1e-9,
      atol: 1e-12,
      outputTimes: times,
    });
    expect(sol.status).toBe('ok');
    // reference: x(t) = V diag((e^{λt} − 1)/λ) Vᵀ b, from ml-matrix's symmetric eigen decomposition
    const rows = Array.from({ length: n }, (_, i) => Array.from(A.subarray(i * n, (i + 1) * n)));
    const evd = new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true });
    const lam = evd.realEigenvalues;
    const V = evd.eigenvectorMatrix;
    const vtb = V.transpose().mmul(Matrix.columnVector(Array.from(b)));
    for (let k = 0; k < times.length; k++) {
      const t = times[k];
      const g = Matrix.columnVector(lam.map((l, i) => (Math.expm1(l * t) / l) * vtb.get(i, 0)));
      const ref = V.mmul(g);
      for (let i = 0; i < n; i++) {
        const r = ref.get(i, 0);
        expect(Math.abs(sol.x[k][i] - r)).toBeLessThan(1e-6 * Math.max(1, Math.abs(r)));
      }
    }
    // ~130 steps per decade of time at rtol 1e-9 for an order-4 method
    expect(sol.stats.steps).toBeLessThan(1500);
  });
});

describe('failures end with a status, never an exception', () => {
  // Tank with a square-root outflow and an extra pump drawing 0.1: x' = -sqrt(x) - 0.1, x(0) = 1.
  // With s = sqrt(x): ds/dt = -(s + b)/(2s), so the tank is empty at t* = 2(s0 - b ln((s0 + b)/b))
  // = 2(1 - 0.1 ln 11) (separation of variables; the model is undefined for x < 0).
  const tEmpty = 2 * (1 - 0.1 * Math.log(11));
  const tank: OdeProblem = {
    n: 1,
    f(_t, x, d) {
      if (x[0] < 0) return false;
      d[0] = -Math.sqrt(x[0]) - 0.1;
      return true;
    },
  };
  for (const [name, integ] of BOTH) {
    it(`${name}: a tank pumped beyond empty stops with status 'domain' near the emptying time`, () => {
      let sol: OdeSolution | undefined;
      expect(() => {
        sol = integ(tank, { t0: 0, t1: 5, x0: Float64Array.from([1]) });
      }).not.toThrow();
      expect(sol!.status).toBe('domain');
      expect(sol!.message).toMatch(/domain at t = 1\.52/);
      const tLast = sol!.t[sol!.t.length - 1];
      expect(Math.abs(tLast - tEmpty)).toBeLessThan(1e-4);
      expect(last(sol!)[0]).toBeGreaterThanOrEqual(0);
    });

    it(`${name}: output times are truncated at the failure`, () => {
      const times = Float64Array.from({ length: 51 }, (_, i) => i * 0.1);
      const sol = integ(tank, { t0: 0, t1: 5, x0: Float64Array.from([1]), outputTimes: times });
      expect(sol.status).toBe('domain');
      expect(sol.t.length).toBe(16); // 0, 0.1, ..., 1.5 < t* ≈ 1.5204
      expect(sol.t[15]).toBeCloseTo(1.5, 12);
    });

    it(`${name}: an initial state outside the domain is reported`, () => {
      const sol = integ(tank, { t0: 0, t1: 1, x0: Float64Array.from([-1]) });
      expect(sol.status).toBe('domain');
      expect(sol.message).toMatch(/initial state/);
      expect(sol.t.length).toBe(1);
    });

    it(`${name}: a solution that blows up (x' = x², x(0) = 1, x = 1/(1 - t)) stops near t = 1`, () => {
      // closed form by separation of variables (common practice)
      const p: OdeProblem = {
        n: 1,
        f(_t, x, d) {
          d[0] = x[0] * x[0];
          return true;
        },
      };
      const sol = integ(p, { t0: 0, t1: 2, x0: Float64Array.from([1]) });
      expect(['stepTooSmall', 'domain']).toContain(sol.status);
      expect(sol.message).toBeTruthy();
      expect(Math.abs(sol.t[sol.t.length - 1] - 1)).toBeLessThan(1e-3);
    });

    it(`${name}: the step budget ends with status 'maxSteps'`, () => {
      const p: OdeProblem = {
        n: 2,
        f(_t, x, d) {
          d[0] = x[1];
          d[1] = -x[0];
          return true;
        },
      };
      const sol = integ(p, { t0: 0, t1: 1000, x0: Float64Array.from([1, 0]), maxSteps: 20, rtol: 1e-10 });
      expect(sol.status).toBe('maxSteps');
      expect(sol.message).toMatch(/20 step attempts/);
      expect(sol.stats.steps + sol.stats.rejected).toBe(20);
      expect(sol.t[sol.t.length - 1]).toBeLessThan(1000);
    });
  }

  it('stiff: an analytic Jacobian that reports a domain failure ends the run', () => {
    const p: OdeProblem = {
      n: 1,
      f(_t, x, d) {
        d[0] = -x[0];
        return true;
      },
      jac(t, _x, J) {
        J[0] = -1;
        return t < 0.5;
      },
    };
    const sol = integrateStiff(p, { t0: 0, t1: 2, x0: Float64Array.from([1]) });
    expect(sol.status).toBe('domain');
    expect(sol.t[sol.t.length - 1]).toBeGreaterThanOrEqual(0.5);
  });

  it('malformed options are programming errors (RangeError)', () => {
    const p: OdeProblem = {
      n: 2,
      f(_t, x, d) {
        d.set(x);
        return true;
      },
    };
    expect(() => integrateStiff(p, { t0: 0, t1: 1, x0: Float64Array.from([1]) })).toThrow(RangeError);
    expect(() =>
      integrateNonstiff(p, { t0: 0, t1: 1, x0: Float64Array.from([1, 0]), outputTimes: Float64Array.from([0.5, 0.2]) }),
    ).toThrow(RangeError);
    expect(() => integrateNonstiff(p, { t0: 1, t1: 0, x0: Float64Array.from([1, 0]) })).toThrow(RangeError);
  });
});

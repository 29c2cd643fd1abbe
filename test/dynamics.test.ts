/**
 * Dynamics at a point (server/src/core/analysis/dynamics/): modes, stability, gains, transfer functions, zeros,
 * controllability/observability and frequency responses, checked against textbook closed forms, an
 * independent Routh–Hurwitz array, the shared reference eigenvalues, and independent solves with ml-matrix.
 */
import * as fs from 'fs';
import * as path from 'path';
import fc from 'fast-check';
import { Matrix, solve as mlSolve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import {
  analyzeDynamics, evaluateFactored, frequencyGrid, frequencyResponse, linearSystem, polyEval, type Complex, type LinearSystem,
} from '../server/src/core/analysis/dynamics';
import { linearStepResponse } from '../server/src/core/numeric/expm';
import { dedent, expectClose, solve } from './helpers/model';

const ROOT = path.resolve(__dirname, '..');
const REFERENCE = path.resolve(ROOT, '..', 'shared', 'reference');

/** A LinearSystem from nested arrays (for hand-made test systems). */
function system(A: number[][], B: number[][], C: number[][], D?: number[][]): LinearSystem {
  const n = A.length;
  const m = B[0]?.length ?? 0;
  const p = C.length;
  const flat = (x: number[][]) => Float64Array.from(x.flat());
  return {
    n, m, p, A: flat(A), B: flat(B), C: flat(C), D: D ? flat(D) : new Float64Array(p * m),
    states: A.map((_, i) => `x${i + 1}`), inputs: Array.from({ length: m }, (_, j) => `u${j + 1}`), outputs: C.map((_, i) => `y${i + 1}`),
    stateUnits: A.map(() => ''), inputUnits: Array.from({ length: m }, () => ''), outputUnits: C.map(() => ''), timeUnit: 's', outputsAreStates: false,
  };
}

/** G(jω) by an independent real solve with ml-matrix: [[−A, −ωI], [ωI, −A]]·[xr; xi] = [b; 0]. */
function mlFrequency(sys: LinearSystem, w: number, i: number, j: number): Complex {
  const { n, m } = sys;
  const M = Matrix.zeros(2 * n, 2 * n);
  const rhs = Matrix.zeros(2 * n, 1);
  for (let r = 0; r < n; r++) {
    for (let c = 0; c < n; c++) {
      M.set(r, c, -sys.A[r * n + c]);
      M.set(n + r, n + c, -sys.A[r * n + c]);
    }
    M.set(r, n + r, -w);
    M.set(n + r, r, w);
    rhs.set(r, 0, sys.B[r * m + j]);
  }
  const x = mlSolve(M, rhs);
  let re = sys.D[i * m + j];
  let im = 0;
  for (let k = 0; k < n; k++) {
    re += sys.C[i * n + k] * x.get(k, 0);
    im += sys.C[i * n + k] * x.get(n + k, 0);
  }
  return { re, im };
}

describe('first-order lag (Ogata, Modern Control Engineering, frequency response of 1/(Ts+1))', () => {
  const s = solve(dedent(`
    const tau = 4 [s]
    const k = 2.5
    input u
    state y
    output yo = y
    tau*y' = -y + k*u
    point p:
      u = 1
      y ~ 1
  `));
  const dyn = analyzeDynamics(s.lin);
  it('has one real mode with τ = 4 s and DC gain k', () => {
    expect(dyn.modes).toHaveLength(1);
    expect(dyn.modes[0].kind).toBe('real');
    expectClose(dyn.modes[0].timeConstant!, 4, 1e-12);
    expectClose(dyn.dcGain.gain[0][0]!, 2.5, 1e-12);
    expect(dyn.stability.verdict).toBe('stable');
  });
  it('is 3.01 dB down with −45° phase at ω = 1/τ', () => {
    // common practice: |1/(j+1)| = 1/√2 → −3.0103 dB; arg = −45°
    const fr = frequencyResponse(dyn, [0.25]);
    expectClose(fr.pairs[0].magnitudeDb[0]! - 20 * Math.log10(2.5), -3.0103, 1e-4);
    expectClose(fr.pairs[0].phaseDeg[0]!, -45, 1e-9);
  });
  it('rolls off at −20 dB per decade two decades above the corner', () => {
    // Ogata: slope of a first-order lag above the corner frequency is −20 dB/decade
    const fr = frequencyResponse(dyn, [25, 250]);
    expectClose(fr.pairs[0].magnitudeDb[0]! - fr.pairs[0].magnitudeDb[1]!, 20, 1e-3);
  });
});

describe('second-order system (Ogata, Modern Control Engineering, transient response specifications)', () => {
  const wn = 3;
  const zeta = 0.2;
  const s = solve(dedent(`
    const wn = ${wn} [1/s]
    const zeta = ${zeta}
    input u
    state x
    output xo = x
    x'' + 2*zeta*wn*x' + wn^2*x = wn^2*u
    point p:
      u = 0
      x ~ 0
  `));
  const dyn = analyzeDynamics(s.lin);
  it('finds ωn and ζ of the complex pair', () => {
    expect(dyn.modes).toHaveLength(1);
    expect(dyn.modes[0].kind).toBe('oscillatory');
    expectClose(dyn.modes[0].naturalFrequency!, wn, 1e-12);
    expectClose(dyn.modes[0].dampingRatio!, zeta, 1e-12);
    expectClose(dyn.modes[0].period!, (2 * Math.PI) / (wn * Math.sqrt(1 - zeta * zeta)), 1e-12);
  });
  it('overshoots by exp(−ζπ/√(1−ζ²)) at t_p = π/(ωn√(1−ζ²))', () => {
    const tp = Math.PI / (wn * Math.sqrt(1 - zeta * zeta));
    const mp = Math.exp((-zeta * Math.PI) / Math.sqrt(1 - zeta * zeta));
    const N = 20001;
    const T = 3 * tp;
    const times = Float64Array.from({ length: N }, (_, k) => (T * k) / (N - 1));
    const sys = dyn.system;
    const r = linearStepResponse(sys.A, sys.B, sys.C, sys.D, sys.n, sys.m, sys.p, Float64Array.of(1), times);
    let best = 0;
    for (let k = 1; k < N; k++) if (r.y[k][0] > r.y[best][0]) best = k;
    const dc = dyn.dcGain.gain[0][0]!;
    expectClose(dc, 1, 1e-12);
    expectClose((r.y[best][0] - dc) / dc, mp, 1e-6);
    expectClose(times[best], tp, 1e-3); // grid spacing T/20000
  });
});

/** Routh array first column of a polynomial a0 s^n + … + an (a0 > 0). */
function routhFirstColumn(a: number[]): number[] {
  const n = a.length - 1;
  const w = Math.ceil((n + 1) / 2) + 1;
  const rows: number[][] = [];
  rows.push(Array.from({ length: w }, (_, k) => a[2 * k] ?? 0));
  rows.push(Array.from({ length: w }, (_, k) => a[2 * k + 1] ?? 0));
  for (let r = 2; r <= n; r++) {
    const p = rows[r - 2];
    const q = rows[r - 1];
    rows.push(Array.from({ length: w }, (_, k) => (k + 1 < w ? (q[0] * p[k + 1] - p[0] * q[k + 1]) / q[0] : 0)));
  }
  return rows.map((r) => r[0]);
}

/** Companion matrix of a monic polynomial s^n + c1 s^(n−1) + … + cn. */
function companion(c: number[]): number[][] {
  const n = c.length;
  return Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i < n - 1 ? (j === i + 1 ? 1 : 0) : -c[n - 1 - j])));
}

describe('Routh–Hurwitz criterion (Routh 1877; Ogata, ch. 5) agrees with the stability verdict', () => {
  it('on random polynomials of degree 2 to 7', () => {
    let stable = 0;
    let unstable = 0;
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 7 }),
        // uniform in [−1, 4] (fc.double favours extreme values, which here would only give degenerate polynomials)
        fc.array(fc.integer({ min: 0, max: 1_000_000 }).map((k) => -1 + (5 * k) / 1_000_000), { minLength: 7, maxLength: 7 }),
        fc.boolean(),
        (n, raw, fromRoots) => {
          let c: number[];
          if (fromRoots) {
            // a polynomial with roots in the left half-plane, then maybe one flipped: both classes occur
            const roots: Complex[] = [];
            for (let k = 0; roots.length < n; k++) {
              const re = -(0.1 + Math.abs(raw[k % 7]));
              if (roots.length + 2 <= n && raw[(k + 3) % 7] > 1.5) {
                roots.push({ re, im: 0.5 + raw[(k + 1) % 7] }, { re, im: -(0.5 + raw[(k + 1) % 7]) });
              } else roots.push({ re, im: 0 });
            }
            if (raw[6] < 0.5) roots[0] = { re: -roots[0].re, im: roots[0].im };
            if (raw[6] < 0.5 && roots[0].im !== 0) roots[1] = { re: roots[0].re, im: -roots[0].im };
            let re = [1];
            let im = [0];
            for (const z of roots) {
              const nr = [...re, 0];
              const ni = [...im, 0];
              for (let i = 0; i < re.length; i++) {
                nr[i + 1] -= z.re * re[i] - z.im * im[i];
                ni[i + 1] -= z.re * im[i] + z.im * re[i];
              }
              re = nr;
              im = ni;
            }
            c = re.slice(1);
          } else c = raw.slice(0, n);
          const col = routhFirstColumn([1, ...c]);
          const scale = Math.max(...col.map(Math.abs));
          // skip polynomials on (or numerically at) the stability boundary: a zero in the first column
          if (col.some((x) => !Number.isFinite(x) || Math.abs(x) < 1e-6 * scale)) return;
          const routhStable = col.every((x) => x > 0);
          const B = Array.from({ length: n }, (_, i) => [i === n - 1 ? 1 : 0]);
          const C = [Array.from({ length: n }, (_, i) => (i === 0 ? 1 : 0))];
          const dyn = analyzeDynamics(system(companion(c), B, C));
          if (routhStable) stable++;
          else unstable++;
          expect(dyn.stability.verdict).toBe(routhStable ? 'stable' : 'unstable');
        },
      ),
      { seed: 20240611, numRuns: 300 },
    );
    expect(stable).toBeGreaterThan(20);
    expect(unstable).toBeGreaterThan(20);
  });
});

describe('eigenvalues of the shared reference models (../shared/reference/NAME.json, computed with SymPy/NumPy)', () => {
  const names = fs.existsSync(REFERENCE) ? fs.readdirSync(REFERENCE).filter((f) => f.endsWith('.json')).map((f) => f.replace(/\.json$/, '')) : [];
  it('finds the reference files', () => expect(names.length).toBeGreaterThan(0));
  for (const name of names) {
    it(name, () => {
      const ref = JSON.parse(fs.readFileSync(path.join(REFERENCE, `${name}.json`), 'utf8')) as { point: string; eig: [number, number][] };
      const a = analyze(fs.readFileSync(path.join(REFERENCE, 'models', `${name}.poise`), 'utf8'));
      const lin = a.linear(ref.point)!;
      expect(lin.ok).toBe(true);
      const dyn = analyzeDynamics(lin);
      const got = [...dyn.eigenvalues].sort((p, q) => p.re - q.re || p.im - q.im);
      const want = ref.eig.map(([re, im]) => ({ re, im })).sort((p, q) => p.re - q.re || p.im - q.im);
      expect(got).toHaveLength(want.length);
      const scale = Math.max(...want.map((w) => Math.hypot(w.re, w.im)));
      got.forEach((g, k) => {
        // README: agreement to a relative 1e-6 (relative to the spectral radius for parts near zero)
        expect(Math.abs(g.re - want[k].re)).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(want[k].re), 1e-6 * scale));
        expect(Math.abs(g.im - want[k].im)).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(want[k].im), 1e-6 * scale));
      });
    });
  }
  it('swing: ωn² = g·cos θ0/L and decay rate b/(2mL²) (README; Strogatz, Nonlinear Dynamics and Chaos, ch. 6)', () => {
    const a = analyze(fs.readFileSync(path.join(REFERENCE, 'models', 'swing.poise'), 'utf8'));
    const dyn = analyzeDynamics(a.linear('gust')!);
    const th0 = a.values(a.point('gust')!).find((v) => v.name === 'ang')!.value;
    const md = dyn.modes[0];
    expectClose(md.naturalFrequency! ** 2, (9.81 * Math.cos(th0)) / 0.8, 1e-9);
    expectClose(-md.re, 0.4 / (2 * 3 * 0.8 * 0.8), 1e-9);
  });
  it('fishery: a centre ±i·√(a·c) is marginal, an undamped oscillation (Strogatz, ch. 6)', () => {
    const a = analyze(fs.readFileSync(path.join(REFERENCE, 'models', 'fishery.poise'), 'utf8'));
    const dyn = analyzeDynamics(a.linear('managed')!);
    expect(dyn.stability.verdict).toBe('marginal');
    expect(dyn.modes[0].kind).toBe('undamped');
    expectClose(dyn.modes[0].im, Math.sqrt((1.1 - 0.1) * 0.4), 1e-9);
  });
  it('drain: τ = 2·A·h0/q0 (Seborg et al., Process Dynamics and Control, liquid-level linearisation)', () => {
    const a = analyze(fs.readFileSync(path.join(REFERENCE, 'models', 'drain.poise'), 'utf8'));
    const dyn = analyzeDynamics(a.linear('normal')!);
    const h0 = a.values(a.point('normal')!).find((v) => v.name === 'level')!.value;
    expectClose(dyn.modes[0].timeConstant!, (2 * 1.5 * h0) / 0.004, 1e-9);
  });
});

describe('internal cross-checks', () => {
  const models = ['buffer_tank.poise', 'glasshouse_loop.poise', 'jacketed_reactor.poise', 'valve_network.poise', 'belt_drive.poise', 'gantry_crane.poise'];
  const load = (f: string) => analyze(fs.readFileSync(path.join(ROOT, 'examples', f), 'utf8'));

  it('DC gain equals the steady-state change of the linear step response (stable models)', () => {
    for (const f of models) {
      const a = load(f);
      const point = a.pointNames.find((p) => analyzeDynamics(a.linear(p)!).stability.verdict === 'stable');
      if (!point) continue;
      const dyn = analyzeDynamics(a.linear(point)!);
      const sys = dyn.system;
      const tau = Math.max(...dyn.modes.map((m) => m.timeConstant!));
      for (let j = 0; j < sys.m; j++) {
        const u = new Float64Array(sys.m);
        u[j] = 1;
        // 60 time constants: e^-60 of the transient is left
        const r = linearStepResponse(sys.A, sys.B, sys.C, sys.D, sys.n, sys.m, sys.p, u, Float64Array.of(0, 60 * tau));
        for (let i = 0; i < sys.p; i++) expectClose(r.y[1][i], dyn.dcGain.gain[i][j]!, 1e-8, 1e-12, `${f} ${sys.inputs[j]}→${sys.outputs[i]}`);
      }
    }
  });

  it('transfer function evaluation equals the (jωI − A) solve', () => {
    for (const f of models) {
      const a = load(f);
      for (const point of a.pointNames) {
        const dyn = analyzeDynamics(a.linear(point)!);
        const om = frequencyGrid(dyn, 9);
        const fr = frequencyResponse(dyn, om);
        for (const tf of dyn.transfer) {
          const pair = fr.pairs.find((p) => p.inputIndex === tf.inputIndex && p.outputIndex === tf.outputIndex)!;
          om.forEach((w, k) => {
            const ref = mlFrequency(dyn.system, w, tf.outputIndex, tf.inputIndex);
            const mag = Math.hypot(ref.re, ref.im);
            if (mag === 0) return;
            const fac = evaluateFactored(tf, { re: 0, im: w });
            const num = polyEval(tf.num, { re: 0, im: w });
            const den = polyEval(tf.den, { re: 0, im: w });
            const dd = den.re * den.re + den.im * den.im;
            const rat = { re: (num.re * den.re + num.im * den.im) / dd, im: (num.im * den.re - num.re * den.im) / dd };
            const what = `${f} ${point} ${tf.input}→${tf.output} ω=${w}`;
            expect(Math.hypot(fac.re - ref.re, fac.im - ref.im) / mag, what).toBeLessThan(1e-7);
            expect(Math.hypot(rat.re - ref.re, rat.im - ref.im) / mag, what).toBeLessThan(1e-6);
            expectClose(pair.magnitudeDb[k]!, 20 * Math.log10(mag), 0, 1e-9, what);
            const d = (((pair.phaseDeg[k]! - (Math.atan2(ref.im, ref.re) * 180) / Math.PI) % 360) + 360) % 360;
            expect(Math.min(d, 360 - d), what).toBeLessThan(1e-5);
          });
        }
      }
    }
  });

  it('phase is continuous along ω (unwrapped)', () => {
    const dyn = analyzeDynamics(load('gantry_crane.poise').linear()!);
    const fr = frequencyResponse(dyn, frequencyGrid(dyn, 400));
    for (const p of fr.pairs) for (let k = 1; k < p.phaseDeg.length; k++) expect(Math.abs(p.phaseDeg[k]! - p.phaseDeg[k - 1]!)).toBeLessThan(120);
  });
});

describe('zeros, cancellations and rank tests on hand-made systems', () => {
  it('parallel lags a/(s+1) + b/(s+3) have the zero −(3a+b)/(a+b) (partial fractions, common practice)', () => {
    for (const [a, b] of [[0.5, 0.5], [-1, 2], [2, -1]]) {
      const dyn = analyzeDynamics(system([[-1, 0], [0, -3]], [[1], [1]], [[a, b]]));
      const tf = dyn.transfer[0];
      expect(tf.zeros).toHaveLength(1);
      expectClose(tf.zeros[0].re, -(3 * a + b) / (a + b), 1e-10);
      expectClose(tf.gain, a + b, 1e-10);
    }
  });
  it('(s+3)/((s+1)(s+2)(s+4)): relative degree 2, zero at −3 (cascade worked by hand)', () => {
    // x1' = −x1 + u, x2' = x1 − 2x2, x3' = x2 + x1 − 4x3, y = x3 → X3 = (1/(s+2) + 1)/((s+1)(s+4)) U
    const dyn = analyzeDynamics(system([[-1, 0, 0], [1, -2, 0], [1, 1, -4]], [[1], [0], [0]], [[0, 0, 1]]));
    const tf = dyn.transfer[0];
    expect(tf.relativeDegree).toBe(2);
    expect(tf.zeros).toHaveLength(1);
    expectClose(tf.zeros[0].re, -3, 1e-10);
    expect(tf.poles.map((p) => p.re).sort((x, y) => x - y)).toEqual([-4, -2, -1].map((v) => expect.closeTo(v, 9)));
    expectClose(tf.gain, 1, 1e-10);
    expect(tf.num.map((x) => Number(x.toFixed(10)))).toEqual([1, 3]);
    expect(tf.den.map((x) => Number(x.toFixed(10)))).toEqual([1, 7, 14, 8]);
  });
  it('direct feedthrough: d + c·b/(s − a) = d·(s − a + c·b/d)/(s − a) has its zero at a − c·b/d (algebra, common practice)', () => {
    const dyn = analyzeDynamics(system([[-2]], [[3]], [[1.5]], [[0.5]]));
    expectClose(dyn.transfer[0].zeros[0].re, -2 - (1.5 * 3) / 0.5, 1e-10);
    expectClose(dyn.transfer[0].dcGain!, 0.5 + (1.5 * 3) / 2, 1e-12);
  });
  it('an uncontrollable and an unobservable mode are named by the PBH test (Hautus 1969; Kailath, Linear Systems)', () => {
    // x1 driven and seen; x2 not driven but seen; x3 driven but not seen
    const dyn = analyzeDynamics(system([[-1, 0, 0], [0, -2, 0], [0, 0, -5]], [[1], [0], [1]], [[1, 1, 0]]));
    expect(dyn.controllability.rank).toBe(2);
    expect(dyn.observability.rank).toBe(2);
    const byRe = (re: number) => dyn.modes.find((m) => Math.abs(m.re - re) < 1e-12)!;
    expect(byRe(-2).controllable).toBe(false);
    expect(byRe(-2).observable).toBe(true);
    expect(byRe(-5).controllable).toBe(true);
    expect(byRe(-5).observable).toBe(false);
    expect(byRe(-1).controllable && byRe(-1).observable).toBe(true);
    expect(dyn.controllability.failing.map((f) => f.mode)).toEqual([byRe(-2).number]);
    // the transfer function keeps only the mode that is both: 1/(s+1)
    const tf = dyn.transfer[0];
    expect(tf.order).toBe(1);
    expect(tf.cancelled).toBe(2);
    expectClose(tf.poles[0].re, -1, 1e-12);
  });
  it('a coupled mode that only a rotated input misses (PBH on a non-diagonal A)', () => {
    // A = T·diag(−1, −3)·T⁻¹ with T = [[1, 1], [1, −1]]; b along the first eigenvector: the −3 mode is not reached
    const A = [[-2, 1], [1, -2]];
    const dyn = analyzeDynamics(system(A, [[1], [1]], [[1, 0]]));
    expect(dyn.controllability.rank).toBe(1);
    const m3 = dyn.modes.find((m) => Math.abs(m.re + 3) < 1e-9)!;
    expect(m3.controllable).toBe(false);
    expect(dyn.transfer[0].order).toBe(1);
  });
  it('participation factors: a decoupled mode lives entirely in its own state (Pérez-Arriaga, Verghese & Schweppe 1982)', () => {
    const dyn = analyzeDynamics(system([[-1, 0.5], [0, -4]], [[1], [1]], [[1, 1]]));
    for (const m of dyn.modes) {
      const sum = m.participation.reduce((s, p) => s + p.factor, 0);
      expectClose(sum, 1, 1e-12);
    }
    // for a triangular A the participation factors are the identity: p_ik = δ_ik (v and w triangular)
    const slow = dyn.modes.find((m) => Math.abs(m.re + 1) < 1e-12)!;
    expect(slow.dominant).toEqual(['x1']);
    expectClose(slow.participation[0].factor, 1, 1e-12);
  });
});

describe('integrators and singular A', () => {
  it('the gantry crane drifts at F/b per unit force (damped mass under constant force, common practice)', () => {
    const a = analyze(fs.readFileSync(path.join(ROOT, 'examples', 'gantry_crane.poise'), 'utf8'));
    const dyn = analyzeDynamics(a.linear()!);
    expect(dyn.stability.verdict).toBe('marginal');
    expect(dyn.modes.filter((m) => m.kind === 'integrator')).toHaveLength(1);
    expect(dyn.dcGain.method).toBe('per-pair');
    const force = dyn.dcGain.integrating.find((x) => x.input === 'force')!;
    // 1 kN on a trolley with 900 N·s/m rolling friction: 1000/900 m/s; the load follows it
    expectClose(force.rate!, 1000 / 900, 1e-9);
    const wind = dyn.dcGain.integrating.find((x) => x.input === 'wind')!;
    expectClose(wind.rate!, 1 / 900, 1e-9);
  });
  it('a double integrator is unstable, two independent integrators are marginal (Jordan form, common practice)', () => {
    expect(analyzeDynamics(system([[0, 1], [0, 0]], [[0], [1]], [[1, 0]])).stability.verdict).toBe('unstable');
    expect(analyzeDynamics(system([[0, 0], [0, 0]], [[1], [1]], [[1, 0]])).stability.verdict).toBe('marginal');
  });
  it('a pair that does not see the integrator keeps an ordinary gain (worked by hand: G = [[1/s, 0], [0, 1/(s+1)]])', () => {
    // x1' = u1 (integrator), x2' = −x2 + u2; y1 = x1, y2 = x2
    const dyn = analyzeDynamics(system([[0, 0], [0, -1]], [[1, 0], [0, 1]], [[1, 0], [0, 1]]));
    expect(dyn.dcGain.gain[1][1]).toBeCloseTo(1, 12);
    expect(dyn.dcGain.gain[1][0]).toBe(0);
    expect(dyn.dcGain.gain[0][0]).toBeNull();
    expect(dyn.dcGain.integrating).toEqual([expect.objectContaining({ input: 'u1', output: 'y1', order: 1, rate: expect.closeTo(1, 12) })]);
  });
  it('a model without outputs uses its states as outputs', () => {
    const a = analyze(fs.readFileSync(path.join(REFERENCE, 'models', 'relax.poise'), 'utf8'));
    const sys = linearSystem(a.linear('rest')!);
    expect(sys.outputsAreStates).toBe(true);
    expect(sys.outputs).toEqual(['v', 'w']);
    // relax: trace μ(1 − v0²) > 0 → unstable (Strogatz, ch. 7)
    expect(analyzeDynamics(sys).stability.verdict).toBe('unstable');
  });
});

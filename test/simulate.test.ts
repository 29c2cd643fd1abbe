/**
 * The nonlinear model in time (server/src/core/analysis/simulate.ts): step responses from an operating point,
 * checked against closed forms, against the exact linear response (expm) where the model is linear in the
 * stepped input, against Taylor's theorem (the nonlinear–linear difference falls with the square of the
 * step), against finite differences (the analytic Jacobian), and for domain failures.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze, type Analysis } from '../server/src/core/pipeline/analysis';
import { analyzeDynamics, linearSystem } from '../server/src/core/analysis/dynamics';
import { linearStepResponse } from '../server/src/core/numeric/expm';
import { createSimulator, Simulator } from '../server/src/core/analysis/simulate';
import { dedent, expectClose } from './helpers/model';

const ROOT = path.resolve(__dirname, '..');
const example = (f: string) => analyze(fs.readFileSync(path.join(ROOT, 'examples', f), 'utf8'));
const reference = (f: string) => analyze(fs.readFileSync(path.resolve(ROOT, '..', 'shared', 'reference', 'models', f), 'utf8'));

/** Linear step response (declared units, model time) of output/state `i` for input j stepped by s. */
function linearResponse(a: Analysis, point: string, j: number, s: number, times: number[]): number[][] {
  const sys = linearSystem(a.linear(point)!);
  const u = new Float64Array(sys.m);
  u[j] = s;
  const r = linearStepResponse(sys.A, sys.B, sys.C, sys.D, sys.n, sys.m, sys.p, u, Float64Array.from(times));
  return Array.from({ length: sys.p }, (_, i) => r.y.map((y) => y[i]));
}

const grid = (T: number, n = 101) => Array.from({ length: n }, (_, k) => (T * k) / (n - 1));
const maxAbs = (x: number[]) => x.reduce((m, v) => Math.max(m, Math.abs(v)), 0);

describe('closed forms and linear models', () => {
  it('first-order lag: y = k·Δu·(1 − e^(−t/τ)) (closed form of τy′ = −y + ku)', () => {
    const a = analyze(dedent(`
      time [min]
      const tau = 3 [min]
      const k = 2 [K/kW]
      input q [kW]
      state y [K]
      output yo [K] = y
      tau*y' = -y + k*q
      point p:
        q = 5 [kW]
        y ~ 1 [K]
    `));
    const sim = createSimulator(a, 'p')!;
    const times = grid(15);
    const r = sim.step({ du: [0.5], times, rtol: 1e-9 });
    expect(r.status).toBe('ok');
    times.forEach((t, k) => expectClose(r.outputs[0][k], 2 * 0.5 * (1 - Math.exp(-t / 3)), 0, 1e-7, `t = ${t} min`));
  });

  it('glasshouse loop (min, kW, degC, L/min): a power step equals the exact linear response (the model is linear in power)', () => {
    const a = example('glasshouse_loop.poise');
    const sim = createSimulator(a, 'night')!;
    const dyn = analyzeDynamics(a.linear('night')!);
    const times = grid(dyn.horizon.value);
    const j = dyn.system.inputs.indexOf('power');
    const du = [0, 0];
    du[j] = 2;
    const r = sim.step({ du, times, rtol: 1e-9 });
    expect(r.status).toBe('ok');
    const lin = linearResponse(a, 'night', j, 2, times);
    const scale = maxAbs(lin[0]);
    r.outputs[0].forEach((y, k) => expectClose(y, lin[0][k], 0, 1e-6 * scale, `tret at ${times[k]} min`));
    // and the states (twater, tair), deviations in K = degC
    const sysStates = linearStepResponse(dyn.system.A, dyn.system.B, dyn.system.C, dyn.system.D, dyn.system.n, dyn.system.m, dyn.system.p, Float64Array.from(du), Float64Array.from(times));
    r.states[0].forEach((x, k) => expectClose(x, sysStates.x[k][0], 0, 1e-6 * maxAbs(r.states[0]), 'twater'));
  });

  it('with no step the point stays put (the drift at the point is removed)', () => {
    for (const [a, p] of [[example('valve_network.poise'), 'design'], [example('gantry_crane.poise'), 'parked_in_wind'], [example('jacketed_reactor.poise'), 'hold_350']] as const) {
      const sim = createSimulator(a, p)!;
      const r = sim.step({ du: new Array(a.lowered.inputs.length).fill(0), horizon: 100, samples: 11 });
      expect(r.status).toBe('ok');
      for (const s of [...r.states, ...r.outputs]) expect(maxAbs(s)).toBeLessThan(1e-9);
    }
  });

  it('a static model (no states) responds at once: y = (u0 + Δu)² − u0²', () => {
    const a = analyze(dedent(`
      input u
      var y
      output yo = y
      y = u^2
      point p:
        u = 2
    `));
    const sim = createSimulator(a, 'p')!;
    const r = sim.step({ du: [0.5], horizon: 1, samples: 3 });
    expect(r.status).toBe('ok');
    for (const v of r.outputs[0]) expectClose(v, 2.5 ** 2 - 4, 1e-12);
  });
});

describe('the nonlinear response approaches the linear one as the step shrinks (Taylor: the error is O(Δu²))', () => {
  const cases: [string, Analysis, string, string][] = [
    ['buffer tank (√ outflow)', example('buffer_tank.poise'), 'dry_day', 'inflow'],
    ['valve network (algebraic loop)', example('valve_network.poise'), 'design', 'lift'],
    ['swinging lamp (second order, sin)', reference('swing.poise'), 'gust', 'torque'],
  ];
  for (const [name, a, point, input] of cases) {
    it(name, () => {
      const sim = createSimulator(a, point)!;
      const dyn = analyzeDynamics(a.linear(point)!);
      const j = dyn.system.inputs.indexOf(input);
      const op = a.values(a.point(point)!).find((v) => v.name === input)!.value;
      const times = grid(dyn.horizon.value, 81);
      const steps = [0.04, 0.02, 0.01, 0.005].map((f) => f * op);
      const errs = steps.map((s) => {
        const du = new Array(dyn.system.m).fill(0);
        du[j] = s;
        const r = sim.step({ du, times, rtol: 1e-10 });
        expect(r.status).toBe('ok');
        const lin = linearResponse(a, point, j, s, times);
        const ys = dyn.system.outputsAreStates ? r.states : r.outputs;
        let e = 0;
        ys.forEach((y, i) => y.forEach((v, k) => (e = Math.max(e, Math.abs(v - lin[i][k])))));
        return e;
      });
      // least-squares slope of log(error) against log(step)
      const X = steps.map(Math.log);
      const Y = errs.map(Math.log);
      const mx = X.reduce((s, v) => s + v, 0) / X.length;
      const my = Y.reduce((s, v) => s + v, 0) / Y.length;
      const slope = X.reduce((s, v, k) => s + (v - mx) * (Y[k] - my), 0) / X.reduce((s, v) => s + (v - mx) ** 2, 0);
      expect(slope, `errors ${errs.map((e) => e.toExponential(2)).join(', ')}`).toBeGreaterThan(1.7);
      expect(slope).toBeLessThan(2.3);
    });
  }
});

describe('analytic Jacobian of f', () => {
  const check = (a: Analysis, point: string, xiDecl: (name: string) => number, du: number[]) => {
    const sim = createSimulator(a, point)!;
    const lm = a.lowered;
    const n = lm.stateComponents.length;
    const scale = lm.stateComponents.map((id) => lm.slots[id].scale);
    const xi = Float64Array.from(lm.stateComponents, (id, i) => xiDecl(lm.slots[id].name) * scale[i]);
    const J = sim.jacobian(xi, du)!;
    expect(J).toBeDefined();
    // central differences (common practice), step 1e-6 of the state's unit
    for (let j = 0; j < n; j++) {
      const h = 1e-6 * scale[j];
      const xp = Float64Array.from(xi);
      const xm = Float64Array.from(xi);
      xp[j] += h;
      xm[j] -= h;
      const fp = sim.derivative(xp, du)!;
      const fm = sim.derivative(xm, du)!;
      for (let i = 0; i < n; i++) {
        const fd = (fp[i] - fm[i]) / (2 * h);
        let rowScale = 0;
        for (let k = 0; k < n; k++) rowScale = Math.max(rowScale, Math.abs(J[i * n + k]) * scale[k]);
        expectClose(J[i * n + j] * scale[j], fd * scale[j], 0, 1e-6 * rowScale, `∂f${i}/∂x${j}`);
      }
    }
    return { sim, J, scale };
  };

  it('gantry crane (coupled second order, sin/cos) away from the point equals central differences', () => {
    const a = example('gantry_crane.poise');
    check(a, 'parked_in_wind', (s) => ({ pos: 0.5, "pos'": 0.2, swing: 0.05, "swing'": -0.03 })[s] ?? 0, [0.3, 50]);
  });
  it('valve network (algebraic loop) equals central differences', () => {
    check(example('valve_network.poise'), 'design', () => 0.3, [0.05]);
  });
  it('at the point it is the linear model A (declared units, model time)', () => {
    const a = example('glasshouse_loop.poise');
    const { J, scale } = check(a, 'night', () => 0, [0, 0]);
    const lin = a.linear('night')!;
    const n = lin.n;
    const ts = a.lowered.timeScale; // seconds per minute
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expectClose((J[i * n + j] * scale[j] * ts) / scale[i], lin.A[i * n + j], 1e-9, 1e-15);
  });
});

describe('domain failures are reported, never thrown', () => {
  it('a pump drawing more than the inflow empties the tank: status "domain", the √ and the level named', () => {
    const a = analyze(dedent(`
      const area = 2 [m^2]
      const cv = 0.004 [m^2.5/s]
      input inflow [L/s]
      input draw [L/s]
      state level [m]
      var spill [L/s]
      output level_cm [cm] = level
      area*level' = inflow - spill - draw
      spill = cv*sqrt(level)
      point p:
        inflow = 3 [L/s]
        draw = 1 [L/s]
        level ~ 0.2 [m]
    `));
    const sim = createSimulator(a, 'p')!;
    const r = sim.step({ du: [0, 4], horizon: 5000, samples: 101 });
    expect(r.status).toBe('domain');
    expect(r.message).toMatch(/square root/);
    expect(r.message).toMatch(/level fell below zero/);
    expect(r.reached).toBeLessThan(5000);
    // it empties in about level·area/(net outflow) = 0.25 m·2 m²/(2 L/s) ≈ 250 s (mass balance; spill only helps)
    expect(r.reached).toBeLessThan(260);
    expect(r.t.length).toBeGreaterThan(1);
  });
  it('buffer tank: an inflow step to below zero ends in the domain, the report keeps the part before', () => {
    const a = example('buffer_tank.poise');
    const sim = createSimulator(a, 'dry_day')!;
    const r = sim.step({ du: [-2, 0], horizon: 14000, samples: 41 });
    expect(r.status).toBe('domain');
    expect(r.message).toMatch(/outflow = opening\*cv\*sqrt\(level\)/);
    expect(r.outputs[0].length).toBe(r.t.length);
  });
  it('an unstable model grows with the linear one at first (belt drive, slow point)', () => {
    const a = example('belt_drive.poise');
    const sim = createSimulator(a, 'slow')!;
    const dyn = analyzeDynamics(a.linear('slow')!);
    const times = grid(dyn.horizon.value / 3, 41);
    const r = sim.step({ du: [0.0005], times, rtol: 1e-9 });
    expect(r.status).toBe('ok');
    const lin = linearResponse(a, 'slow', 0, 0.0005, times);
    const sc = maxAbs(lin[0]);
    r.states[0].forEach((x, k) => expectClose(x, lin[0][k], 0, 2e-3 * sc));
  });
  it('a Simulator on a point that does not solve says so', () => {
    const a = example('buffer_tank.poise');
    const sol = a.point('dry_day')!;
    const bad = Float64Array.from(sol.values);
    bad[a.lowered.stateComponents[0]] = -1; // a negative level: √ of a negative at the start
    const sim = new Simulator(a.lowered, a.structure.unknowns, bad, 'dry_day');
    const r = sim.step({ du: [0.1, 0], horizon: 10, samples: 3 });
    expect(r.status).toBe('failed');
    expect(r.message).toMatch(/cannot be solved at the operating point/);
  });
});

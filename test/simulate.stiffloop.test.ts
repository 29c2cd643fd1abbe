/**
 * A stiff exponential algebraic loop in the nonlinear step response (server/src/core/analysis/simulate.ts):
 * our own diode clamp — a source Vs through R into a node held by a diode (Shockley's law
 * i = Is·(exp(vd/nVt) − 1), common practice) that charges a capacitor through R2. The node voltage vd and
 * the diode current i are algebraic unknowns in a loop with the exponential; a step of Vs moves them at
 * t = 0 by many thermal voltages, which plain Newton from the old point overshoots (exp of tens).
 *
 * Checked against SciPy (solve_ivp, Radau, rtol 1e-10, of the reduced ODE with vd from brentq at each
 * evaluation), computed at test time by /usr/bin/python3 (skipped with a message without SciPy), and by an
 * independent route inside the tests: the same simulator at a much tighter tolerance, and, for the small
 * step, the linear model's prediction (Taylor: the difference is second order in the step).
 */
import * as fs from 'fs';
import { spawnSync } from 'child_process';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { buildReport } from '../server/src/core/analysis/report';
import { createSimulator } from '../server/src/core/analysis/simulate';
import { dedent } from './helpers/model';

const R = 1000;
const R2 = 10000;
const C = 10e-6;
const Is = 1e-14;
const nVt = 0.02585;
const text = dedent(`
  time [ms]
  const R = 1 [kohm]
  const R2 = 10 [kohm]
  const C = 10 [uF]
  const Is = 1e-14 [A]
  const nVt = 25.85 [mV]
  input Vs [V]
  state vc [V]
  var i [mA]
  var vd [V]
  output vout [V] = vc
  C*vc' = (vd - vc)/R2
  (Vs - vd)/R = i + (vd - vc)/R2
  i = Is*(exp(vd/nVt) - 1)
  point on:
    Vs = 5 [V]
    vc ~ 0.5 [V]
    i ~ 1 [mA]
    vd ~ 0.6 [V]
`);

const py = '/usr/bin/python3';
const probe = fs.existsSync(py) ? spawnSync(py, ['-c', 'import scipy.integrate, scipy.optimize'], { encoding: 'utf8' }) : undefined;
const haveScipy = probe?.status === 0;

/** vc deviation (V) at the times (ms) after a step dv of Vs from 5 V, by SciPy's Radau on the reduced ODE. */
function scipyStep(vc0: number, dv: number, times: number[]): number[] {
  const script = `
import json, sys, math
from scipy.integrate import solve_ivp
from scipy.optimize import brentq
R, R2, C, Is, nVt = ${R}, ${R2}, ${C}, ${Is}, ${nVt}
Vs = 5 + (${dv})
vc0 = ${vc0}
def vd_of(vc):
    g = lambda vd: (Vs - vd)/R - Is*math.expm1(vd/nVt) - (vd - vc)/R2
    return brentq(g, -50.0, 2.0, xtol=1e-15, rtol=1e-15)
def f(t, y):  # t in ms
    return [(vd_of(y[0]) - y[0])/(R2*C)*1e-3]
ts = json.loads(sys.stdin.read())
s = solve_ivp(f, (0, ts[-1]), [vc0], method='Radau', t_eval=ts, rtol=1e-10, atol=1e-13)
print(json.dumps([v - vc0 for v in s.y[0]]))
`;
  const r = spawnSync(py, ['-c', script], { input: JSON.stringify(times), encoding: 'utf8' });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout) as number[];
}

const maxAbs = (x: number[]) => x.reduce((m, v) => Math.max(m, Math.abs(v)), 0);

describe('stiff exponential algebraic loop (diode clamp)', () => {
  const a = analyze(text);
  const vc0 = a.values(a.point('on')!).find((v) => v.name === 'vc')!.value;

  for (const dv of [0.2, -0.2, 1, -1, 3, -3]) {
    it(`the report's nonlinear step of ${dv} V runs (no false "out of domain") and agrees with a tight simulation`, () => {
      const r = buildReport(a, 'on', { steps: { Vs: dv }, validity: false, samples: 41 });
      const s = r.steps[0];
      expect(s.message ?? '').not.toMatch(/domain/);
      expect(s.status).toBe('ok');
      const nl = s.outputs[0].nonlinear;
      expect(nl).toHaveLength(41);
      // independent route: the simulator again at rtol 1e-10
      const tight = createSimulator(a, 'on')!.step({ du: [dv], times: s.t, rtol: 1e-10 });
      expect(tight.status).toBe('ok');
      const scale = maxAbs(tight.outputs[0]);
      expect(scale).toBeGreaterThan(0);
      nl.forEach((v, k) => expect(Math.abs(v - tight.outputs[0][k])).toBeLessThanOrEqual(1e-3 * scale));
      if (Math.abs(dv) === 0.2) {
        // Taylor: the linear prediction is within a few percent for a step of 4 % of the operating value
        expect(s.error!).toBeLessThan(0.05);
      }
    });
  }

  if (!haveScipy) it.skip('SciPy comparison needs Debian python3-scipy (apt-get install -y python3-scipy)', () => {});
  else {
    it('the nonlinear responses agree with SciPy Radau on the reduced ODE (rtol 1e-10) to 1e-4 of the change', () => {
      for (const dv of [0.2, -0.2, 1, -3]) {
        const r = buildReport(a, 'on', { steps: { Vs: dv }, validity: false, samples: 21 });
        const s = r.steps[0];
        const ref = scipyStep(vc0, dv, s.t);
        const scale = maxAbs(ref);
        s.outputs[0].nonlinear.forEach((v, k) => expect(Math.abs(v - ref[k]), `dv ${dv}, t ${s.t[k]}`).toBeLessThanOrEqual(1e-4 * scale));
      }
    });
  }

  it('the validity search meets no false domain failure: every sample simulates', () => {
    const r = buildReport(a, 'on', { validity: true, samples: 41 });
    const v = r.validity![0];
    expect(v.samples.length).toBeGreaterThan(3);
    for (const smp of v.samples) expect(smp.status).toBe('ok');
    expect(v.up!.limitedBy).not.toBe('domain');
    expect(v.down!.limitedBy).not.toBe('domain');
  });

  it('the loop through a series resistance (i and vd solved together) takes steps of ±3 V and ±4.9 V', () => {
    // the diode in series with Rd across the capacitor: the loop is i = Is·(exp(vd/nVt) − 1), vd = vc − Rd·i
    const b = analyze(dedent(`
      time [ms]
      const R = 1 [kohm]
      const C = 10 [uF]
      const Rd = 20 [ohm]
      const Is = 2.5e-9 [A]
      const nVt = 51.7 [mV]
      input Vs [V]
      state vc [V]
      var i [mA]
      var vd [V]
      output vout [V] = vc
      C*vc' = (Vs - vc)/R - i
      i = Is*(exp(vd/nVt) - 1)
      vd = vc - Rd*i
      point on:
        Vs = 5 [V]
        vc ~ 1 [V]
        i ~ 1 [mA]
        vd ~ 0.6 [V]
    `));
    for (const dv of [3, -3, -4.9]) {
      const s = buildReport(b, 'on', { steps: { Vs: dv }, validity: false, samples: 41 }).steps[0];
      expect(s.status, s.message).toBe('ok');
      const tight = createSimulator(b, 'on')!.step({ du: [dv], times: s.t, rtol: 1e-10 });
      const scale = maxAbs(tight.outputs[0]);
      s.outputs[0].nonlinear.forEach((v, k) => expect(Math.abs(v - tight.outputs[0][k])).toBeLessThanOrEqual(1e-3 * scale));
    }
  });

  it('a real domain failure is still reported as one (sqrt of a state driven below zero)', () => {
    const b = analyze(dedent(`
      const area = 2 [m^2]
      const cv = 0.01 [m^2.5/s]
      input q [m^3/s]
      state h [m]
      var out [m^3/s]
      area*h' = q - out
      out = cv*sqrt(h)
      point p:
        q = 0.01 [m^3/s]
        h ~ 1 [m]
    `));
    const r = createSimulator(b, 'p')!.step({ du: [-0.5], horizon: 2000, samples: 11 });
    expect(r.status).toBe('domain');
  });
});

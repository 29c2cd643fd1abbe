/**
 * Published facts about linearised models, each checked on a small model written here (with numbers of
 * our own, different from the shared reference models). Each check names its source beside it.
 */
import { describe, expect, it } from 'vitest';
import { dedent, expectClose, solve } from './helpers/model';

const G = 9.81;

describe('tank with square-root outflow', () => {
  // Seborg, Edgar, Mellichamp & Doyle, Process Dynamics and Control (liquid-level linearisation example):
  // A·h' = q_in − k·√h linearised at h0 has the time constant τ = 2·A·h0/q0 and gain 2·h0/q0.
  const area = 2.4; // m²
  const k = 0.012; // m^2.5/s
  const q0 = 0.015; // m³/s
  const text = dedent(`
    const area = ${area} [m^2]
    const k = ${k} [m^2.5/s]
    input qin [m^3/s]
    state h [m]
    var qout [m^3/s]
    area*h' = qin - qout
    qout = k*sqrt(h)
    point run:
      qin = ${q0} [m^3/s]
      h ~ 2 [m]
  `);
  it('has τ = 2·A·h0/q0 and the steady level (q0/k)²', () => {
    const s = solve(text);
    const h0 = (q0 / k) ** 2; // steady state: q0 = k·√h0
    expectClose(s.value('h'), h0, 1e-9);
    const tau = (2 * area * h0) / q0;
    expectClose(s.A('h', 'h'), -1 / tau, 1e-9);
    expectClose(s.B('h', 'qin'), 1 / area, 1e-9);
    // steady-state gain −B/A = τ/area = 2·h0/q0 (same source)
    expectClose(-s.B('h', 'qin') / s.A('h', 'h'), (2 * h0) / q0, 1e-9);
  });
});

describe('pendulum about an offset equilibrium', () => {
  // Any undergraduate dynamics text (also Strogatz, Nonlinear Dynamics and Chaos, ch. 6):
  // m·L²·θ'' + b·θ' + m·g·L·sin θ = τ linearised at θ0: ωn² = g·cos θ0 / L, damping term b/(m·L²).
  const m = 1.8;
  const L = 1.2;
  const b = 0.25;
  const tau = 3;
  const text = dedent(`
    const m = ${m} [kg]
    const len = ${L} [m]
    const b = ${b} [N*m*s/rad]
    const g = ${G} [m/s^2]
    input torque [N*m]
    state th [rad]
    m*len^2*th'' + b*th' + m*g*len*sin(th) = torque
    point held:
      torque = ${tau} [N*m]
      th ~ 0.1 [rad]
  `);
  it('has ωn² = g·cos θ0/L and damping b/(m·L²)', () => {
    const s = solve(text);
    const th0 = Math.asin(tau / (m * G * L)); // statics: m·g·L·sin θ0 = τ
    expectClose(s.value('th'), th0, 1e-9);
    const wn2 = (G * Math.cos(th0)) / L;
    expectClose(s.A("th'", 'th'), -wn2, 1e-9);
    expectClose(s.A("th'", "th'"), -b / (m * L * L), 1e-9);
    expectClose(s.A('th', "th'"), 1, 1e-12);
    expectClose(s.B("th'", 'torque'), 1 / (m * L * L), 1e-9);
    // eigenvalues of λ² + 2ζωn·λ + ωn² (same source): −b/(2mL²) ± i·√(ωn² − (b/(2mL²))²)
    const sig = b / (2 * m * L * L);
    const wd = Math.sqrt(wn2 - sig * sig);
    const e = s.eig();
    expect(e.length).toBe(2);
    for (const x of e) {
      expectClose(x.re, -sig, 1e-9);
      expectClose(Math.abs(x.im), wd, 1e-9);
    }
  });
});

describe('Lotka–Volterra predator and prey', () => {
  // Strogatz, Nonlinear Dynamics and Chaos, ch. 6: x' = a·x − b·x·y, y' = d·x·y − c·y has the coexistence
  // point (c/d, a/b), a centre with eigenvalues ±i·√(a·c).
  const a = 0.8;
  const bb = 0.05;
  const c = 0.6;
  const d = 0.02;
  const text = dedent(`
    time [day]
    const a = ${a} [1/day]
    const b = ${bb} [1/day]
    const c = ${c} [1/day]
    const d = ${d} [1/day]
    state hares, lynx
    hares' = a*hares - b*hares*lynx
    lynx' = d*hares*lynx - c*lynx
    point coexist:
      hares ~ 20
      lynx ~ 10
  `);
  it('is a centre with eigenvalues ±i·√(a·c) at (c/d, a/b)', () => {
    const s = solve(text);
    expectClose(s.value('hares'), c / d, 1e-9);
    expectClose(s.value('lynx'), a / bb, 1e-9);
    const e = s.eig();
    expect(e.length).toBe(2);
    for (const x of e) {
      expect(Math.abs(x.re)).toBeLessThan(1e-12);
      expectClose(Math.abs(x.im), Math.sqrt(a * c), 1e-9);
    }
    // time in days: the entries are per day (trace 0, determinant a·c)
    expectClose(s.A('hares', 'lynx') * s.A('lynx', 'hares'), -a * c, 1e-9);
  });
});

describe('Van der Pol oscillator', () => {
  // Strogatz, Nonlinear Dynamics and Chaos, ch. 7: x'' − μ(1 − x²)x' + x = u has the rest point x0 = u,
  // where the Jacobian has trace μ(1 − x0²) and determinant 1; positive trace means unstable.
  const mu = 2;
  const text = dedent(`
    const mu = ${mu}
    input u
    state x
    x'' - mu*(1 - x^2)*x' + x = u
    point inside:
      u = 0.5
    point outside:
      u = 1.5
  `);
  it.each([
    ['inside', 0.5],
    ['outside', 1.5],
  ])('trace at point %s is μ(1 − u²)', (point, u) => {
    const s = solve(text, point);
    expectClose(s.value('x'), u, 1e-12);
    const trace = s.A('x', 'x') + s.A("x'", "x'");
    expectClose(trace, mu * (1 - u * u), 1e-9);
    const det = s.A('x', 'x') * s.A("x'", "x'") - s.A('x', "x'") * s.A("x'", 'x');
    expectClose(det, 1, 1e-9);
    const maxRe = Math.max(...s.eig().map((e) => e.re));
    // positive trace: an eigenvalue in the right half plane (same source)
    expect(Math.sign(maxRe)).toBe(Math.sign(mu * (1 - u * u)));
  });
});

describe('temperatures: offset for values, none for changes', () => {
  // SI Brochure, 9th ed. (2019), 2.3.1: t/°C = T/K − 273.15, so a change of 1 °C equals a change of 1 K.
  // NIST Special Publication 811 (2008), appendix B: t/°F = (9/5)·t/°C + 32, a change of 1 °F is 5/9 K.
  const cap = 8000; // J/K
  const ua = 25; // W/K
  const tamb = 20; // °C
  const q = 500; // W
  const text = dedent(`
    const cap = ${cap} [J/K]
    const ua = ${ua} [W/K]
    const tamb = ${tamb} [degC]
    input heat [W]
    state temp [degC]
    output temp_k [K] = temp
    output temp_f [degF] = temp
    cap*temp' = heat - ua*(temp - tamb)
    point on:
      heat = ${q} [W]
      temp ~ 30 [degC]
  `);
  it('converts values with the offset and deviations without', () => {
    const s = solve(text);
    const t0 = tamb + q / ua; // steady state: heat = ua·(T − Tamb), a temperature difference
    expectClose(s.value('temp'), t0, 1e-9);
    expectClose(s.value('temp_k'), t0 + 273.15, 1e-12);
    expectClose(s.value('temp_f'), (9 / 5) * t0 + 32, 1e-12);
    expectClose(s.C('temp_k', 'temp'), 1, 1e-12);
    expectClose(s.C('temp_f', 'temp'), 9 / 5, 1e-12);
    expectClose(s.A('temp', 'temp'), -ua / cap, 1e-12);
    expectClose(s.B('temp', 'heat'), 1 / cap, 1e-12);
  });
});

describe('the radian is dimensionless', () => {
  // SI Brochure, 9th ed. (2019), table 4: rad = m/m = 1, so kg·m²·rad/s² balances N·m; 1° = π/180 rad.
  const J = 0.35; // kg·m²
  const k = 12; // N·m/rad
  const tq = 1.5; // N·m
  const model = (angleUnit: string) => dedent(`
    const inertia = ${J} [kg*m^2]
    const spring = ${k} [N*m/rad]
    const friction = 0.4 [N*m*s/rad]
    input torque [N*m]
    state ang [${angleUnit}]
    inertia*ang'' = torque - spring*ang - friction*ang'
    point p:
      torque = ${tq} [N*m]
  `);
  it('accepts kg·m²·rad/s² = N·m and gives the same dynamics in rad and deg', () => {
    const r = solve(model('rad'));
    const d = solve(model('deg'));
    expectClose(r.value('ang'), tq / k, 1e-9);
    expectClose(d.value('ang'), (tq / k) * (180 / Math.PI), 1e-9);
    // A is unit-free per state ratio; B scales with the angle unit
    expectClose(r.A("ang'", 'ang'), -k / J, 1e-9);
    expectClose(d.A("ang'", 'ang'), -k / J, 1e-9);
    expectClose(r.B("ang'", 'torque'), 1 / J, 1e-9);
    expectClose(d.B("ang'", 'torque'), (1 / J) * (180 / Math.PI), 1e-9);
  });
});

describe('minutes, litres and kilowatts in A and B', () => {
  // Hand computation (unit factors: 1 kW = 1 kJ/s = 60 kJ/min; 1 kg/L water; time in minutes):
  //   vol' = fin − kout·vol            steady: vol0 = fin/kout = 12/0.05 = 240 L
  //   ρ·cp·vol·T' = ρ·cp·fin·(Tin − T) + P
  //                                     steady: T0 − Tin = P/(ρ·cp·fin) = 20 kW / (1·4.2 kJ/(kg·K)·12 L/min)
  //                                           = 20 kJ/s / (50.4 kJ/(K·min)) = 20·60/50.4 K = 23.8095 K, T0 = 38.8095 °C
  //   A[vol,vol] = −kout = −0.05 /min;  B[vol,fin] = 1 (L/min per L/min)
  //   A[T,T] = −fin/vol0 = −12/240 = −0.05 /min;  A[T,vol] = −(ρcp·fin·(Tin−T0) + P)/(ρcp·vol0²) = 0 at steady state
  //   B[T,fin] = (Tin − T0)/vol0 = −23.8095/240 = −0.0992063 K/L = (°C/min) per (L/min)
  //   B[T,P] = 1/(ρ·cp·vol0) = 1/(1·4.2·240) K/kJ = 1/1008 K/kJ, times 60 kJ/min per kW = 0.0595238 (°C/min)/kW
  const text = dedent(`
    time [min]
    const kout = 0.05 [1/min]
    const rho = 1 [kg/L]
    const cp = 4.2 [kJ/(kg*K)]
    const tin = 15 [degC]
    input fin [L/min]
    input power [kW]
    state vol [L]
    state temp [degC]
    vol' = fin - kout*vol
    rho*cp*vol*temp' = rho*cp*fin*(tin - temp) + power
    point run:
      fin = 12 [L/min]
      power = 20 [kW]
      vol ~ 100 [L]
      temp ~ 20 [degC]
  `);
  it('matches the hand computation', () => {
    const s = solve(text);
    expectClose(s.value('vol'), 240, 1e-9);
    expectClose(s.value('temp'), 15 + (20 * 60) / 50.4, 1e-9);
    expectClose(s.A('vol', 'vol'), -0.05, 1e-9);
    expectClose(s.B('vol', 'fin'), 1, 1e-9);
    expect(Math.abs(s.B('vol', 'power'))).toBe(0);
    expectClose(s.A('temp', 'temp'), -0.05, 1e-9);
    expect(Math.abs(s.A('temp', 'vol'))).toBeLessThan(1e-12);
    expectClose(s.B('temp', 'fin'), -((20 * 60) / 50.4) / 240, 1e-9);
    expectClose(s.B('temp', 'power'), 60 / 1008, 1e-9);
    expect(s.lin.timeUnit).toBe('min');
  });
});

/**
 * Steady-state structure (issue 9 §2): at a point every derivative is zero, so the point's equations are
 * the residuals with every derivative set to 0 and folded, and their incidence decides which equation
 * determines which unknown. Mechanical trims with a free coordinate fixed in the point (a cart with a
 * pendulum, a coasting van with body pitch, a rotor with a spring-loaded slider) are checked
 *  - against a hand count of equations and unknowns (in the comments),
 *  - against the root of the steady-state equation computed with mpmath.findroot at 40 digits (the
 *    command is in each comment),
 *  - and against an independent linearization: the equations of motion written again here in plain
 *    JavaScript from our own Lagrangian derivation (in the comments), the accelerations solved by our
 *    own elimination (M(q)·q'' = −f), and A and B by central finite differences.
 * The models are our own invented scenarios.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { steadyModel } from '../server/src/core/model/steady';
import * as E from '../server/src/core/algebra/expr';
import { check } from './helpers/check';
import { dedent, expectClose, solve, type Solved } from './helpers/model';

/** g(q, q', q'', u) = 0, one residual per coordinate, linear in q'' (Lagrange's equations). */
type Mech = (q: number[], qd: number[], qdd: number[], u: number[]) => number[];

/** Dense solve by Gaussian elimination with partial pivoting (small systems of the test). */
function dense(Min: number[][], bin: number[]): number[] {
  const n = bin.length;
  const M = Min.map((r) => r.slice());
  const b = bin.slice();
  for (let k = 0; k < n; k++) {
    let p = k;
    for (let i = k + 1; i < n; i++) if (Math.abs(M[i][k]) > Math.abs(M[p][k])) p = i;
    [M[k], M[p]] = [M[p], M[k]];
    [b[k], b[p]] = [b[p], b[k]];
    for (let i = k + 1; i < n; i++) {
      const f = M[i][k] / M[k][k];
      for (let j = k; j < n; j++) M[i][j] -= f * M[k][j];
      b[i] -= f * b[k];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i];
    for (let j = i + 1; j < n; j++) s -= M[i][j] * x[j];
    x[i] = s / M[i][i];
  }
  return x;
}

/**
 * A and B of x' = f(x, u) with x = (q1, q1', q2, q2', …) (Poise's order of state components for
 * second-order states declared in the order of q), by central differences; q'' from M·q'' = −g(q, q', 0, u)
 * with M's columns g(q, q', e_j, u) − g(q, q', 0, u) (exact, g being linear in q'').
 */
function fdLinear(g: Mech, q0: number[], u0: number[]): { A: number[][]; B: number[][] } {
  const n = q0.length;
  const acc = (q: number[], qd: number[], u: number[]) => {
    const zero = new Array<number>(n).fill(0);
    const g0 = g(q, qd, zero, u);
    const M = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    for (let j = 0; j < n; j++) {
      const e = zero.slice();
      e[j] = 1;
      const gj = g(q, qd, e, u);
      for (let i = 0; i < n; i++) M[i][j] = gj[i] - g0[i];
    }
    return dense(M, g0.map((v) => -v));
  };
  const f = (x: number[], u: number[]) => {
    const q = x.filter((_, i) => i % 2 === 0);
    const qd = x.filter((_, i) => i % 2 === 1);
    const a = acc(q, qd, u);
    return x.map((_, i) => (i % 2 === 0 ? qd[i >> 1] : a[i >> 1]));
  };
  const x0 = q0.flatMap((q) => [q, 0]);
  const col = (plus: () => number[], minus: () => number[], h: number) => {
    const fp = plus();
    const fm = minus();
    return fp.map((v, i) => (v - fm[i]) / (2 * h));
  };
  const A: number[][] = x0.map(() => []);
  x0.forEach((xj, j) => {
    const h = 1e-6 * Math.max(1, Math.abs(xj));
    const c = col(() => f(x0.map((v, k) => (k === j ? v + h : v)), u0), () => f(x0.map((v, k) => (k === j ? v - h : v)), u0), h);
    c.forEach((v, i) => (A[i][j] = v));
  });
  const B: number[][] = x0.map(() => []);
  u0.forEach((uj, j) => {
    const h = 1e-6 * Math.max(1, Math.abs(uj));
    const c = col(() => f(x0, u0.map((v, k) => (k === j ? v + h : v))), () => f(x0, u0.map((v, k) => (k === j ? v - h : v))), h);
    c.forEach((v, i) => (B[i][j] = v));
  });
  return { A, B };
}

/** Poise's A and B against the finite-difference ones (entries by name; absolute floor for zeros). */
function expectLinear(s: Solved, coords: string[], inputs: string[], ref: { A: number[][]; B: number[][] }): void {
  const names = coords.flatMap((q) => [q, q + "'"]);
  expect(s.lin.states).toEqual(names);
  let scale = 0;
  for (const r of ref.A) for (const v of r) scale = Math.max(scale, Math.abs(v));
  names.forEach((r, i) => names.forEach((c, j) => expectClose(s.A(r, c), ref.A[i][j], 1e-6, 1e-7 * scale, `A[${r}, ${c}]`)));
  let bscale = 0;
  for (const r of ref.B) for (const v of r) bscale = Math.max(bscale, Math.abs(v));
  names.forEach((r, i) => inputs.forEach((c, j) => expectClose(s.B(r, c), ref.B[i][j], 1e-6, 1e-7 * bscale, `B[${r}, ${c}]`)));
}

// ---------------------------------------------------------------- cart with a pendulum

// Cart (mass Mc, position p) with a pendulum (point mass m on a massless rod l, angle th from hanging
// down). Our derivation: bob at (p + l·sin th, −l·cos th); T = ½(Mc+m)p'² + m·l·cos th·p'·th' + ½m·l²·th'²,
// V = −m·g·l·cos th. Lagrange:
//   (Mc+m)·p'' + m·l·cos th·th'' − m·l·sin th·th'² = F
//   m·l·cos th·p'' + m·l²·th'' + m·g·l·sin th = 0
const CART = dedent(`
  const Mc = 1.5 [kg]
  const m = 0.3 [kg]
  const l = 0.6 [m]
  const g = 9.81 [m/s^2]
  input F [N]
  state p [m]
  state th [rad]
  (Mc + m)*p'' + m*l*cos(th)*th'' - m*l*sin(th)*th'^2 = F
  m*l*cos(th)*p'' + m*l^2*th'' + m*g*l*sin(th) = 0
  point upright:
    p = 2 [m]
    F = 0 [N]
    th ~ 3 [rad]
`);
const cartJs = (Mc: number, m: number, l: number, g: number): Mech => ([, th], [, thd], [pdd, thdd], [F]) => [
  (Mc + m) * pdd + m * l * Math.cos(th) * thdd - m * l * Math.sin(th) * thd * thd - F,
  m * l * Math.cos(th) * pdd + m * l * l * thdd + m * g * l * Math.sin(th),
];

describe('cart with a pendulum, cart position fixed', () => {
  // Hand count at the point: unknowns {th} (p and F fixed; p', th', p'', th'' are zero). With every
  // derivative zero the first equation reads 0 = F — no unknown left: a consistency check, which holds
  // for F = 0 — and the second reads m·g·l·sin th = 0: one equation for th. 1 equation, 1 unknown.
  // (The structural incidence of the full first equation holds th, which made it 2 for 1 before.)
  it('solves the trim: th = π (upright), the first equation a check that holds', () => {
    const s = solve(CART);
    expectClose(s.value('th'), Math.PI, 1e-14); // sin th = 0 nearest the guess 3: th = π
    expect(s.value('p')).toBe(2);
    expect(s.sol.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  });
  it('its linear model matches finite differences of the equations of motion', () => {
    const s = solve(CART);
    expectLinear(s, ['p', 'th'], ['F'], fdLinear(cartJs(1.5, 0.3, 0.6, 9.81), [2, Math.PI], [0]));
    // by hand at th = π (cos = −1): p'' = m·g/Mc·Δth + F/Mc, th'' = (Mc+m)·g/(Mc·l)·Δth + F/(Mc·l)
    expectClose(s.A("th'", 'th'), (1.8 * 9.81) / (1.5 * 0.6), 1e-9);
    expectClose(s.A("p'", 'th'), (0.3 * 9.81) / 1.5, 1e-9);
    expectClose(s.B("th'", 'F'), 1 / (1.5 * 0.6), 1e-9);
  });
  it('a violated check is reported on its equation: F = 3 N cannot hold the cart still', () => {
    // with every derivative zero the first equation reads 0 = F; F = 3 leaves the residual 0 − 3 = −3
    check(CART.replace('F = 0 [N]', 'F = 3 [N]').replace('(Mc + m)*p', '⟦(Mc + m)*p').replace("th'^2 = F", "th'^2 = F⟧"), [
      { code: 'P508', message: ['does not hold', 'residual -3.000e+0', 'with every derivative zero it reads F = 0'] },
    ]);
  });
  it('a position left free is named as what no equation determines', () => {
    // p ~ guess: unknowns {p, th}; p appears in no steady-state equation (only p'' does), so it is the
    // unknown left over: 1 equation (m·g·l·sin th = 0) for 2 unknowns, one check (0 = F).
    const { diagnostics } = check(CART.replace('p = 2 [m]', 'p ~ 2 [m]').replace('point upright', 'point ⟦upright⟧'), [
      { code: 'P501', message: ['1 equation(s) for 2 unknown(s)', 'no equation determines "p"', '1 equation(s) with no unknown at this point are checks'] },
    ]);
    expect(diagnostics[0].message).not.toMatch(/"th"/);
    expect((diagnostics[0].data as { missing: string[] }).missing).toEqual(['p']);
  });
});

// ---------------------------------------------------------------- coasting van with body pitch

// Van (mass m, position x) whose body pitches by th about a pivot h below its centre of mass, with a
// torsional suspension kp, cp; rolling drag b·x'; an aerodynamic pitching moment Ma. Our derivation:
// centre of mass at (x + h·sin th, h·cos th); T = ½m·x'² + m·h·cos th·x'·th' + ½(I + m·h²)·th'²,
// V = m·g·h·cos th + ½kp·th². Lagrange (the x'·th' terms of the second equation cancel):
//   m·x'' + m·h·cos th·th'' − m·h·sin th·th'² = F − b·x'
//   m·h·cos th·x'' + (I + m·h²)·th'' + cp·th' + kp·th − m·g·h·sin th = Ma
const VAN = dedent(`
  const m = 1800 [kg]
  const I = 2400 [kg*m^2]
  const h = 0.55 [m]
  const kp = 180000 [N*m/rad]
  const cp = 9000 [N*m*s/rad]
  const b = 40 [N*s/m]
  const g = 9.81 [m/s^2]
  input F [N]
  input Ma [N*m]
  state x [m]
  state th [rad]
  m*x'' + m*h*cos(th)*th'' - m*h*sin(th)*th'^2 = F - b*x'
  m*h*cos(th)*x'' + (I + m*h^2)*th'' + cp*th' + kp*th - m*g*h*sin(th) = Ma
  point coasting:
    x = 120 [m]
    F = 0 [N]
    Ma = 2500 [N*m]
    th ~ 0.02 [rad]
`);
const vanJs: Mech = ([, th], [xd, thd], [xdd, thdd], [F, Ma]) => {
  const [m, I, h, kp, cp, b, g] = [1800, 2400, 0.55, 180000, 9000, 40, 9.81];
  return [
    m * xdd + m * h * Math.cos(th) * thdd - m * h * Math.sin(th) * thd * thd - F + b * xd,
    m * h * Math.cos(th) * xdd + (I + m * h * h) * thdd + cp * thd + kp * th - m * g * h * Math.sin(th) - Ma,
  ];
};

describe('coasting van with body pitch, position fixed', () => {
  // Hand count: unknowns {th}; steady equations: 0 = F (check, holds for F = 0) and
  // kp·th − m·g·h·sin th = Ma (for th). 1 equation, 1 unknown.
  it('solves the pitch angle; the force balance is a check', () => {
    const s = solve(VAN);
    // mpmath (mp.dps = 40): findroot(lambda t: 180000*t - 1800*mpf('9.81')*mpf('0.55')*sin(t) - 2500, 0.02)
    expectClose(s.value('th'), 0.01468097229528429144733063398430478276652, 1e-14);
  });
  it('its linear model matches finite differences of the equations of motion', () => {
    const s = solve(VAN);
    expectLinear(s, ['x', 'th'], ['F', 'Ma'], fdLinear(vanJs, [120, s.value('th')], [0, 2500]));
  });
  it('a drive with its own equations over-determines the force: P501 names those equations and what to free', () => {
    // The force comes from a motor: i = (V − ke·x')/R and Fd = kf·i. Hand count: unknowns {th, i, Fd};
    // steady equations: −Fd = 0 {Fd}, pitch {th}, i − V/R = 0 {i}, Fd − kf·i = 0 {Fd, i}: 4 for 3, and the
    // three equations in {i, Fd} over-determine them (a parked van cannot have its motor powered: free V).
    const text = VAN.replace('input F [N]', 'input V [V]\nvar i [A]\nvar Fd [N]\nconst kf = 60 [N/A]\nconst ke = 0.9 [V*s/m]\nconst R = 0.05 [ohm]')
      .replace('= F - b*x\'', '= Fd - b*x\'\ni = (V - ke*x\')/R\nFd = kf*i').replace('F = 0 [N]', 'V = 12 [V]').replace('point coasting', 'point ⟦coasting⟧');
    const { diagnostics } = check(text, [
      { code: 'P501', message: ['4 equation(s) for 3 unknown(s)', 'Free 1 fixed value', '"V"', 'every derivative zero: Fd = 0', 'determine only "i", "Fd"'] },
    ]);
    expect(diagnostics[0].message).not.toMatch(/"th"|"Ma"/);
    expect((diagnostics[0].data as { free: string[] }).free).toEqual(['V']);
  });
});

// ---------------------------------------------------------------- rotor with a free angle

// Rotor (inertia J0, angle phi, no restoring torque: its angle is free) carrying a slider of mass ms at
// radius r on a hardening spring k·(r − r0) + k3·(r − r0)³, damper c, radial actuator force Fr, drive
// torque T, bearing friction bf. Our derivation (horizontal plane): T = ½ms·(r'² + r²·phi'²) + ½J0·phi'².
//   ms·r'' − ms·r·phi'² + c·r' + k·(r − r0) + k3·(r − r0)³ = Fr
//   (J0 + ms·r²)·phi'' + 2·ms·r·r'·phi' + bf·phi' = T
const ROTOR = dedent(`
  const J0 = 0.8 [kg*m^2]
  const ms = 2.5 [kg]
  const r0 = 0.3 [m]
  const k = 900 [N/m]
  const k3 = 4e5 [N/m^3]
  const c = 15 [N*s/m]
  const bf = 0.05 [N*m*s/rad]
  input T [N*m]
  input Fr [N]
  state phi [rad]
  state r [m]
  ms*r'' - ms*r*phi'^2 + c*r' + k*(r - r0) + k3*(r - r0)^3 = Fr
  (J0 + ms*r^2)*phi'' + 2*ms*r*r'*phi' + bf*phi' = T
  point parked:
    phi = 1.2 [rad]
    T = 0 [N*m]
    Fr = 60 [N]
    r ~ 0.35 [m]
`);
const rotorJs: Mech = ([, r], [phid, rd], [phidd, rdd], [T, Fr]) => {
  const [J0, ms, r0, k, k3, c, bf] = [0.8, 2.5, 0.3, 900, 4e5, 15, 0.05];
  return [
    (J0 + ms * r * r) * phidd + 2 * ms * r * rd * phid + bf * phid - T,
    ms * rdd - ms * r * phid * phid + c * rd + k * (r - r0) + k3 * (r - r0) ** 3 - Fr,
  ];
};

describe('rotor with a free angle and a spring-loaded slider, angle fixed', () => {
  // Hand count: unknowns {r}; steady equations: k·(r − r0) + k3·(r − r0)³ = Fr {r} and 0 = T (a check;
  // r only multiplies phi'' and r'·phi' there). 1 equation, 1 unknown.
  it('solves the slider radius; the torque balance is a check', () => {
    const s = solve(ROTOR);
    // mpmath (mp.dps = 40): findroot(lambda d: 900*d + 400000*d**3 - 60, 0.05) + mpf('0.3')
    expectClose(s.value('r'), 0.3394270634489422673989816973069304621683, 1e-14);
    expect(s.value('phi')).toBe(1.2);
  });
  it('its linear model matches finite differences (the free angle gives an eigenvalue 0)', () => {
    const s = solve(ROTOR);
    expectLinear(s, ['phi', 'r'], ['T', 'Fr'], fdLinear(rotorJs, [1.2, s.value('r')], [0, 60]));
    expect(s.eig().some((e) => e.re === 0 && e.im === 0)).toBe(true);
  });
});

// ---------------------------------------------------------------- the general rule

describe('every derivative set to zero, of any order, inside nonlinear functions', () => {
  const text = dedent(`
    input u
    state z
    state q
    var y
    z''' + exp(z'')*q*sin(z') + tanh(q*z'')*y + 2*z'' + 3*z' + z = u
    q' = -q + y + sqrt(1 + z'^2)*cos(z'*q)*u - 2*abs(z'')^1.5*q
    y = u - q*z''*log(2 + y^2) + z'^3/(1 + q^2)
    point p:
      u = 0.5
  `);
  it('folds each residual: exp(0) = 1, sin(0) = 0, tanh(0) = 0, sqrt(1) = 1, cos(0) = 1', () => {
    const a = analyze(text);
    const lm = a.lowered;
    const sm = steadyModel(lm);
    const name = (id: number) => lm.slots[id].name;
    const slotsOf = (r: number) => [...E.slots(sm.equations[r].residual)].map(name).sort();
    // by hand: z − u = 0; q' = … reads 0 = −q + y + u; y = u
    expect(slotsOf(0)).toEqual(['u', 'z']);
    expect(slotsOf(1)).toEqual(['q', 'u', 'y']);
    expect(slotsOf(2)).toEqual(['u', 'y']);
    const v = new Float64Array(lm.slots.length);
    const at = (vals: Record<string, number>) => {
      for (const s of lm.slots) v[s.id] = vals[s.name] ?? 0;
      return [0, 1, 2].map((r) => E.evaluate(sm.equations[r].residual, v));
    };
    expect(at({ z: 0.7, u: 0.2, q: 1.9, y: 0.4 })).toEqual([0.7 - 0.2, 1.9 - 0.4 - 0.2, 0.4 - 0.2].map((x) => expect.closeTo(x, 15)));
    expect(steadyModel(lm)).toBe(sm); // cached per model
  });
  it('the point solves to the hand values z = u, y = u, q = 2u', () => {
    const a = analyze(text);
    const sol = a.point('p')!;
    expect(sol.ok).toBe(true);
    const v = new Map(a.values(sol).map((x) => [x.name, x.value]));
    expectClose(v.get('z')!, 0.5, 1e-15);
    expectClose(v.get('y')!, 0.5, 1e-15);
    expectClose(v.get('q')!, 1, 1e-15);
  });
});

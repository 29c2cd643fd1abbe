/**
 * Index reduction of constrained models (server/src/core/model/indexReduction.ts: Pantelides' algorithm;
 * model/dummyDerivatives.ts: the dummy-derivative method; pipeline/dynamicModel.ts): the linear model of a
 * model written with a constraint between states equals that of the same mechanism written without it.
 *
 * Outside references (classical mechanics, common practice): a simple pendulum of length L has small
 * oscillations λ = ±i·√(g/L) about the hanging equilibrium and λ = ±√(g/L) about the upright one; a mass on
 * a curve with curvature radius R at its lowest point oscillates there like a pendulum of length R; bodies
 * joined rigidly move as one body of the summed mass; two tanks whose levels are tied move as one tank of
 * the summed area. Numbers from numpy where stated. Independent routes inside: the same mechanism written
 * in an angle or as one body (no constraint) and analysed by Poise; the nonlinear simulation of the
 * reduced model against the linear prediction.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import * as E from '../server/src/core/algebra/expr';
import { analyze, type Analysis } from '../server/src/core/pipeline/analysis';
import { linearEigen } from '../server/src/core/present/format';
import { runSweep } from '../server/src/core/analysis/sweep';
import { pointLenses } from '../server/src/core/services/lenses';
import { linearizeEdit } from '../server/src/core/services/linearBlock';
import { sweepHtml } from '../server/src/core/present/sweepHtml';
import { linearSystem } from '../server/src/core/analysis/dynamics';
import { linearStepResponse } from '../server/src/core/numeric/expm';
import { createSimulator } from '../server/src/core/analysis/simulate';
import { buildReport } from '../server/src/core/analysis/report';
import { hover } from '../server/src/core/services/hover';
import { dedent, expectClose } from './helpers/model';
import { EXAMPLES, runCli } from './helpers/cli';

type Eig = { re: number; im: number };
const byParts = (e: Eig[]) => e.slice().sort((a, b) => a.re - b.re || a.im - b.im);
function expectEigen(got: Eig[], want: Eig[], tol = 1e-9, what = '') {
  expect(got.length, what).toBe(want.length);
  const g = byParts(got);
  const w = byParts(want);
  g.forEach((x, i) => {
    expectClose(x.re, w[i].re, tol, tol, `${what} re[${i}]`);
    expectClose(x.im, w[i].im, tol, tol, `${what} im[${i}]`);
  });
}
const errors = (a: Analysis) => a.allDiagnostics().filter((d) => d.severity === 'error');

/** Pendulum in Cartesian coordinates, first-order form, rod pull F unknown; an optional push along x. */
const cartesian = (g = 9.81, L = 2) => dedent(`
  const g = ${g} [m/s^2]
  const L = ${L} [m]
  const m = 3 [kg]
  input side [N]
  state x, y [m]
  state vx, vy [m/s]
  var F [N]
  output rod [m] = sqrt(x^2 + y^2)
  output xo [m] = x
  x' = vx
  y' = vy
  m*vx' = side - F*x/L
  m*vy' = -F*y/L - m*g
  x^2 + y^2 = L^2
  point hanging:
    side = 0 [N]
    y ~ -2 [m]
    F ~ 30 [N]
  point upright:
    side = 0 [N]
    y ~ 2 [m]
    F ~ -30 [N]
`);

describe('Cartesian pendulum (index 3) against the angle form', () => {
  const g = 9.81;
  const L = 2;
  const w = Math.sqrt(g / L); // 2.2147234590350102 (python3: math.sqrt(9.81/2))
  const a = analyze(cartesian(g, L));

  it('reduces the index: Pantelides differentiates the constraint twice and x\' = vx, y\' = vy once (P407), no errors', () => {
    expect(errors(a)).toEqual([]);
    expect(a.indexPlan?.index).toBe(3); // index of the Cartesian pendulum: 3 (common practice)
    const p407 = a.diagnostics.filter((d) => d.code === 'P407');
    expect(p407.map((d) => a.text.slice(d.span.start, d.span.end))).toEqual(["x' = vx", "y' = vy", 'x^2 + y^2 = L^2']);
    expect(p407[2].message).toContain('twice');
    expect(a.diagnostics.some((d) => d.code === 'P406')).toBe(false);
  });

  it('hanging: λ = ±i·√(g/L) (classical mechanics); states x, vx; y and vy follow from the constraint', () => {
    const lin = a.linear('hanging')!;
    expect(lin.ok).toBe(true);
    expect(lin.states).toEqual(['x', 'vx']);
    expect(lin.reduction?.constrained).toEqual(['y', 'vy']);
    expectEigen(linearEigen(lin), [{ re: 0, im: w }, { re: 0, im: -w }], 1e-12, 'hanging');
    const info = lin.diagnostics.find((d) => d.code === 'P409')!;
    expect(info.message).toContain('"x", "vx"');
  });

  it('upright: λ = ±√(g/L) (classical mechanics)', () => {
    const lin = a.linear('upright')!;
    expect(lin.ok).toBe(true);
    expect(a.point('upright')!.values[a.lowered.slotOf(a.bound.symbols.get('y')!)]).toBeCloseTo(L, 12);
    expectEigen(linearEigen(lin), [{ re: w, im: 0 }, { re: -w, im: 0 }], 1e-12, 'upright');
  });

  it('equals the angle form th\'\' = -(g/L)·sin(th) analysed by Poise (independent route), both points', () => {
    const ang = analyze(dedent(`
      const g = 9.81 [m/s^2]
      const L = 2 [m]
      state th [rad]
      L*th'' = -g*sin(th)
      point hanging:
        th ~ 0.01
      point upright:
        th ~ 3.1
    `));
    for (const p of ['hanging', 'upright']) expectEigen(linearEigen(a.linear(p)!), linearEigen(ang.linear(p)!), 1e-12, p);
  });

  it('the point satisfies the original and the differentiated constraints', () => {
    const sol = a.point('hanging')!;
    const dm = a.dynamicsAt(sol.values);
    expect(dm.failure).toBeUndefined();
    const eqs = dm.model.equations;
    expect(eqs.length).toBe(a.lowered.equations.length + 4); // x'=vx', y'=vy' once, the constraint twice
    for (const eq of eqs) expect(Math.abs(E.evaluate(eq.residual, dm.values)), eq.label).toBeLessThan(1e-12);
  });

  it('second-order form (x\'\' written, pull λ): the same eigenvalues and states x, x\'', () => {
    const b = analyze(dedent(`
      const g = 9.81 [m/s^2]
      const L = 2 [m]
      state x, y [m]
      var lam [1/s^2]
      x'' = -lam*x
      y'' = -lam*y - g
      x^2 + y^2 = L^2
      point hanging:
        y ~ -2 [m]
        lam ~ 5 [1/s^2]
    `));
    expect(errors(b)).toEqual([]);
    const lin = b.linear('hanging')!;
    expect(lin.states).toEqual(['x', "x'"]);
    expectEigen(linearEigen(lin), [{ re: 0, im: w }, { re: 0, im: -w }], 1e-12);
  });

  it('nonlinear simulation of the reduced model follows the linear prediction for a small push; the rod keeps its length', () => {
    // independent route: Rodas4 on the index-1 model (all original and differentiated equations) against
    // the exact linear step response; the difference is second order in the step
    const lin = a.linear('hanging')!;
    const sys = linearSystem(lin);
    const sim = createSimulator(a, 'hanging')!;
    expect(sim.problem).toBeUndefined();
    const times = Array.from({ length: 61 }, (_, k) => (6 * k) / 60);
    const diff = (s: number) => {
      const r = sim.step({ du: [s], horizon: 6, times, rtol: 1e-10 });
      expect(r.status).toBe('ok');
      const u = new Float64Array([s]);
      const l = linearStepResponse(sys.A, sys.B, sys.C, sys.D, sys.n, sys.m, sys.p, u, Float64Array.from(times));
      const xo = lin.outputs.indexOf('xo');
      const rod = lin.outputs.indexOf('rod');
      let dmax = 0;
      let ymax = 0;
      let rodDrift = 0;
      times.forEach((_, k) => {
        dmax = Math.max(dmax, Math.abs(r.outputs[xo][k] - l.y[k][xo]));
        ymax = Math.max(ymax, Math.abs(l.y[k][xo]));
        rodDrift = Math.max(rodDrift, Math.abs(r.outputs[rod][k]));
      });
      expect(rodDrift).toBeLessThan(1e-9); // x² + y² = L² holds along the nonlinear path
      return { rel: dmax / ymax, ymax };
    };
    const small = diff(0.3); // 0.3 N on 3 kg: ~1 cm of swing
    const half = diff(0.15);
    expect(small.ymax).toBeGreaterThan(1e-3);
    expect(small.rel).toBeLessThan(1e-2);
    // Taylor, with the symmetry x ↔ −x of a push on a hanging pendulum: the response is odd in the push, so
    // the second-order term vanishes and halving the step quarters the relative difference (about)
    expect(half.rel / small.rel).toBeGreaterThan(0.15);
    expect(half.rel / small.rel).toBeLessThan(0.35);
  });

  it('the report names the reduction and compares linear and nonlinear steps on the reduced model', () => {
    const r = buildReport(a, 'hanging', { samples: 41 });
    expect(r.ok).toBe(true);
    expect(r.indexReduction?.states).toEqual(['x', 'vx']);
    expect(r.steps.length).toBeGreaterThan(0);
  });
});

describe('a gantry trolley with its load in x/y coordinates equals examples/gantry_crane.poise (angle form)', () => {
  it('same eigenvalues at parked_in_wind (hook damping off in both)', () => {
    const angleText = fs.readFileSync(path.join(EXAMPLES, 'gantry_crane.poise'), 'utf8').replace(/const bsw\s*=\s*400/, 'const bsw = 0');
    const angle = analyze(angleText);
    const xy = analyze(dedent(`
      const mt    = 1200 [kg]
      const ml    = 3500 [kg]
      const rope  = 7.5 [m]
      const g     = 9.81 [m/s^2]
      const btr   = 900 [N*s/m]
      input force [kN]
      input wind [N]
      state pos [m]
      state lx, ly [m]
      var pull [N]
      mt*pos'' = force + pull*(lx - pos)/rope - btr*pos'
      ml*lx'' = wind - pull*(lx - pos)/rope
      ml*ly'' = -pull*ly/rope - ml*g
      (lx - pos)^2 + ly^2 = rope^2
      point parked_in_wind:
        pos = 12 [m]
        wind = 800 [N]
        force ~ 0 [kN]
        lx ~ 12.2 [m]
        ly ~ -7.5 [m]
        pull ~ 34000 [N]
    `));
    expect(errors(xy)).toEqual([]);
    const la = angle.linear('parked_in_wind')!;
    const lx = xy.linear('parked_in_wind')!;
    expect(lx.ok).toBe(true);
    expect(lx.states).toEqual(['pos', "pos'", 'lx', "lx'"]);
    expectEigen(linearEigen(lx), linearEigen(la), 1e-9);
  });
});

describe('rigid two-mass pair equals the single combined mass', () => {
  // m1 = 2 kg and m2 = 3 kg joined by a rigid link (link force f unknown), spring 50 N/m and damper
  // 4 N·s/m to ground: (m1 + m2)·s² + 4·s + 50 = 0, roots -0.4 ± 3.13687743i (numpy.roots([5, 4, 50]))
  const pair = analyze(dedent(`
    const m1 = 2 [kg]
    const m2 = 3 [kg]
    const k = 50 [N/m]
    const c = 4 [N*s/m]
    input F [N]
    state x1, x2 [m]
    var f [N]
    output pos [m] = x2
    m1*x1'' = F - f - k*x1
    m2*x2'' = f - c*x2'
    x1 = x2
    point rest:
      F = 10 [N]
      f ~ 1 [N]
  `));
  const single = analyze(dedent(`
    const m1 = 2 [kg]
    const m2 = 3 [kg]
    const k = 50 [N/m]
    const c = 4 [N*s/m]
    input F [N]
    state x [m]
    output pos [m] = x
    (m1 + m2)*x'' = F - k*x - c*x'
    point rest:
      F = 10 [N]
  `));

  it('eigenvalues -0.4 ± 3.13687743i (numpy) and those of the single mass', () => {
    expect(errors(pair)).toEqual([]);
    const lin = pair.linear('rest')!;
    expect(lin.ok).toBe(true);
    expect(lin.n).toBe(2);
    expectEigen(linearEigen(lin), [{ re: -0.4, im: 3.13687743 }, { re: -0.4, im: -3.13687743 }], 1e-8);
    expectEigen(linearEigen(lin), linearEigen(single.linear('rest')!), 1e-12);
  });

  it('the same step response F → pos (exact linear responses of both) and DC gain 1/k = 0.02 m/N', () => {
    const times = Float64Array.from({ length: 21 }, (_, k) => k * 0.25);
    const resp = (a: Analysis) => {
      const s = linearSystem(a.linear('rest')!);
      return linearStepResponse(s.A, s.B, s.C, s.D, s.n, s.m, s.p, new Float64Array([1]), times).y.map((y) => y[0]);
    };
    const rp = resp(pair);
    const rs = resp(single);
    rp.forEach((v, i) => expectClose(v, rs[i], 1e-12, 1e-12, `t = ${times[i]}`));
    expectClose(rp[rp.length - 1], 0.02, 0.2, 0, 'towards 1/k'); // 5 s: not yet settled (τ = 2.5 s)
    const x1 = pair.point('rest')!.values[pair.lowered.slotOf(pair.bound.symbols.get('x1')!)];
    expectClose(x1, 10 / 50, 1e-12, 0, 'static deflection F/k');
  });
});

describe('tank pair tied by an incompressible constraint (index 2) equals one tank of the summed area', () => {
  // two tanks joined by a short wide duct: the levels stay equal, the duct flow q is unknown.
  // One tank of area A1 + A2 = 2 m² with outflow k·√h: at qin = 0.03 m³/s, h = (qin/k)² = 2.25 m,
  // λ = −k/(2·√h·(A1 + A2)) = −1/300 1/s and B = 1/(A1 + A2) = 0.5 1/m² (python3 arithmetic)
  const a = analyze(dedent(`
    const A1 = 1.2 [m^2]
    const A2 = 0.8 [m^2]
    const k = 0.02 [m^2.5/s]
    input qin [m^3/s]
    state h1, h2 [m]
    var q [m^3/s]
    A1*h1' = qin - q
    A2*h2' = q - k*sqrt(h2)
    h1 = h2
    point fed:
      qin = 0.03 [m^3/s]
      q ~ 0.01 [m^3/s]
  `));
  it('index 2: the tie is differentiated once; one state', () => {
    expect(errors(a)).toEqual([]);
    expect(a.indexPlan?.index).toBe(2);
    expect(a.indexPlan?.differentiated.map((d) => [a.lowered.equations[d.equation].label, d.times])).toEqual([['h1 = h2', 1]]);
    const lin = a.linear('fed')!;
    expect(lin.ok).toBe(true);
    expect(lin.n).toBe(1);
    expectClose(lin.A[0], -1 / 300, 1e-12, 0, 'A');
    expectClose(lin.B[0], 0.5, 1e-12, 0, 'B');
    const h = a.point('fed')!.values[a.lowered.slotOf(a.bound.symbols.get('h2')!)];
    expectClose(h, 2.25, 1e-12, 0, 'level');
  });
});

describe('state selection across a sweep', () => {
  // a pendulum pushed sideways by a steady force: it hangs at angle atan(side/(m·g)) and swings with
  // ω² = √(g² + (side/m)²)/L (the pendulum in the effective gravity; classical mechanics)
  const text = cartesian() + '\n' + dedent(`
    sweep gentle from hanging:
      vary side = 0 to 60 [N] steps 6
    sweep hard from hanging:
      vary side = 0 to 600 [N] steps 6
  `);
  const a = analyze(text);
  const omega = (side: number) => Math.sqrt(Math.sqrt(9.81 ** 2 + (side / 3) ** 2) / 2);

  it('up to 64° the states stay x, vx (no P412); eigenvalues follow ω² = √(g² + (F/m)²)/L', () => {
    const r = runSweep(a, { name: 'gentle', point: 'hanging', vary: 'side', from: 0, to: 60, steps: 6 });
    expect(r.points.length).toBe(7);
    for (const p of r.points) {
      expect(p.states).toEqual(['x', 'vx']);
      expectEigen(p.eigenvalues, [{ re: 0, im: omega(p.value) }, { re: 0, im: -omega(p.value) }], 1e-9, `side = ${p.value}`);
    }
    expect(r.diagnostics.filter((d) => d.code === 'P412')).toEqual([]);
  });

  it('towards horizontal (87°) the states change once to y, vy, reported by P412; the eigenvalues stay right', () => {
    const r = runSweep(a, { name: 'hard', point: 'hanging', vary: 'side', from: 0, to: 600, steps: 6 });
    expect(r.points.length).toBe(7);
    const changes = r.diagnostics.filter((d) => d.code === 'P412');
    expect(changes.length).toBe(1);
    expect(changes[0].message).toContain('from x, vx to y, vy');
    for (const p of r.points) expectEigen(p.eigenvalues, [{ re: 0, im: omega(p.value) }, { re: 0, im: -omega(p.value) }], 1e-9, `side = ${p.value}`);
    // kept while well-conditioned: x, vx at 100 N (73.6°), though |x| > |y| there already
    expect(r.points[1].states).toEqual(['x', 'vx']);
    expect(r.points[r.points.length - 1].states).toEqual(['y', 'vy']);
  });
});

describe('what is not reduced, and inputs in constraints', () => {
  it('an unbalanced model keeps its structure errors (no reduction)', () => {
    const a = analyze(dedent(`
      state x, y [m]
      x' = y
      x^2 + y^2 = 1 [m^2]
      x + y = 1 [m]
    `));
    expect(a.indexPlan).toBeUndefined();
    expect(a.diagnostics.some((d) => d.code === 'P401')).toBe(true);
  });

  it('a structurally singular model keeps its errors: two constraints on one free state', () => {
    const a = analyze(dedent(`
      input u
      state x
      var z, w
      x' = z + w
      x = u
      x = 2*u
    `));
    expect(a.indexPlan).toBeUndefined();
    expect(a.canSolve).toBe(false);
    expect(errors(a).length).toBeGreaterThan(0);
  });

  it('a constraint that holds an input: reduced, with the warning that the input\'s rate is taken as zero (P410)', () => {
    const a = analyze(dedent(`
      input u [m]
      state x [m]
      var z [m/s]
      x' = z
      x = u
      point p:
        u = 1 [m]
    `));
    const w = a.diagnostics.find((d) => d.code === 'P410')!;
    expect(w.severity).toBe('warning');
    expect(a.text.slice(w.span.start, w.span.end)).toBe('x = u');
    expect(w.message).toContain('"u"');
    const lin = a.linear('p')!;
    expect(lin.ok).toBe(true);
    expect(lin.n).toBe(0);
  });
});

describe('CLI: linearize and report of the example', () => {
  it('linearize prints the reduction and the states; JSON carries indexReduction; check shows P407 as information', () => {
    const file = path.join(EXAMPLES, 'dip_rail_shuttle.poise');
    const t = runCli(['linearize', file, '--point', 'resting']);
    expect(t.code).toBe(0);
    expect(t.stdout).toContain('Index reduction (the model as written has index 3');
    expect(t.stdout).toContain('states: x, vx');
    // a mass on a dip of curvature radius R: ω² = g/R = 3.924 1/s², damping drag/mass = 0.75 1/s
    expect(t.stdout).toContain('Δvx\' = -3.924*Δx - 0.75*Δvx + 0.125*Δpush');
    const j = JSON.parse(runCli(['linearize', file, '--point', 'held', '--format', 'json']).stdout);
    expect(j.indexReduction.states).toEqual(['x', 'vx']);
    expect(j.indexReduction.differentiated).toEqual([{ label: "x' = vx", times: 1 }, { label: "y' = vy", times: 1 }, { label: 'y = x^2/(2*rdip)', times: 2 }]);
    const c = runCli(['check', file]);
    expect(c.code).toBe(0);
    expect(c.stdout.trim()).toBe(`${file}: ok`); // information is not a problem
    const cj = JSON.parse(runCli(['check', file, '--format', 'json']).stdout);
    expect(cj.files[0].diagnostics.filter((d: { code: string }) => d.code === 'P407').map((d: { line: number }) => d.line)).toEqual([15, 16, 19]);
  });
});

describe('editor: the point hover names the chosen states', () => {
  it('hover on a point of the example shows the states and the differentiated equations', () => {
    const text = fs.readFileSync(path.join(EXAMPLES, 'dip_rail_shuttle.poise'), 'utf8');
    const a = analyze(text);
    const h = hover(a, text.indexOf('point held:') + 'point h'.length)!;
    expect(h).toBeDefined();
    const md = JSON.stringify(h);
    expect(md).toContain('Index 3 model, reduced: states `x`, `vx`');
    expect(md).toContain('`y = x^2/(2*rdip)` twice');
    // the same information as a diagnostic at the point header
    const info = a.allDiagnostics().find((d) => d.code === 'P409' && text.slice(d.span.start, d.span.end) === 'held')!;
    expect(info.severity).toBe('info');
  });
});

describe('the example: a carriage on a parabolic rail (bead on a wire) against Lagrange\'s equations', () => {
  // With x as the one coordinate of y = x²/(2R): kinetic energy ½·m·(1 + (x/R)²)·ẋ², potential m·g·y − push·x,
  // drag on both velocity components: generalised damping drag·(1 + (x/R)²)·ẋ. About the equilibrium
  // x₀ = push·R/(m·g): ẍ = −g/(R·(1 + s²))·Δx − (drag/m)·ẋ + Δpush/(m·(1 + s²)), s = x₀/R (derived by hand
  // from Lagrange's equations; classical mechanics)
  const a = analyze(fs.readFileSync(path.join(EXAMPLES, 'dip_rail_shuttle.poise'), 'utf8'));
  for (const [point, push] of [['resting', 0], ['held', 20]] as const) {
    it(`${point}: A and B equal the one-coordinate model`, () => {
      const m = 8, R = 2.5, g = 9.81, drag = 6;
      const s = (push * R) / (m * g) / R;
      const lin = a.linear(point)!;
      expect(lin.states).toEqual(['x', 'vx']);
      const A = Array.from(lin.A);
      expectClose(A[0], 0, 0, 1e-14, 'A11');
      expectClose(A[1], 1, 1e-14, 0, 'A12');
      expectClose(A[2], -g / (R * (1 + s * s)), 1e-12, 0, 'A21');
      expectClose(A[3], -drag / m, 1e-12, 0, 'A22');
      expectClose(lin.B[1], 1 / (m * (1 + s * s)), 1e-12, 0, 'B2');
    });
  }
});

describe('index of a chain of integrators with its end held (structural index = chain length + 1)', () => {
  // x1' = x2, …, x(n−1)' = xn, xn' = z, x1 = u: the constraint is differentiated n times to reach z, so the
  // index is n + 1 (common practice: each differentiation exposes one more derivative)
  const chain = (n: number) => {
    const lines = [`input u`, `state ${Array.from({ length: n }, (_, i) => `x${i + 1}`).join(', ')}`, 'var z'];
    for (let i = 1; i < n; i++) lines.push(`x${i}' = x${i + 1}`);
    lines.push(`x${n}' = z`, 'x1 = u', 'point p:', '  u = 1');
    return analyze(lines.join('\n'));
  };
  it('n = 4: index 5, the constraint differentiated 4 times; the linear model is static', () => {
    const a = chain(4);
    expect(errors(a)).toEqual([]);
    expect(a.indexPlan?.index).toBe(5);
    expect(a.indexPlan?.c[a.lowered.equations.findIndex((e) => e.label === 'x1 = u')]).toBe(4);
    const lin = a.linear('p')!;
    expect(lin.ok).toBe(true);
    expect(lin.n).toBe(0);
  });
  it('n = 14: more than 12 differentiations: P408 says what to change', () => {
    const a = chain(14);
    const d = a.diagnostics.find((x) => x.code === 'P408')!;
    expect(d.severity).toBe('error');
    expect(d.message).toContain('more than 12 times');
    expect(d.message).toContain('Write the constraint');
    expect(a.canSolve).toBe(false);
  });
});

describe('editor: the lens and the generated block name the reduction', () => {
  const text = fs.readFileSync(path.join(EXAMPLES, 'dip_rail_shuttle.poise'), 'utf8');
  it('the Linearize lens names the states chosen at the point and the differentiated equations', () => {
    const lenses = pointLenses(analyze(text));
    for (const l of lenses) expect(l.linearize.title).toBe('Linearize · index 3 reduced: states x, vx; differentiated "x\' = vx", "y\' = vy", "y = x^2/(2*rdip)" twice');
  });
  it('the generated block says the same in comments, and stays up to date after it is written', () => {
    const a = analyze(text);
    const e = linearizeEdit(a, 'held');
    expect(e.ok).toBe(true);
    if (!e.ok) return;
    expect(e.edit.newText).toContain('# index reduction (the model has index 3): states x, vx; y, vy follow from the constraints');
    expect(e.edit.newText).toContain('# differentiated: "x\' = vx" once, "y\' = vy" once, "y = x^2/(2*rdip)" twice');
    const written = text.slice(0, e.edit.span.start) + e.edit.newText + text.slice(e.edit.span.end);
    const b = analyze(written);
    expect(b.allDiagnostics().filter((d) => d.severity === 'error' || d.code === 'P601')).toEqual([]);
    const again = linearizeEdit(b, 'held');
    expect(again.ok && written.slice(again.edit.span.start, again.edit.span.end) === again.edit.newText).toBe(true);
    expect(pointLenses(b).find((l) => l.point === 'held')!.linearize.title).toMatch(/^Linearize \(block up to date\) · index 3 reduced: states x, vx/);
  });
});

describe('the sweep page reports the states and their change', () => {
  const text = cartesian() + '\n' + dedent(`
    sweep hard from hanging:
      vary side = 0 to 600 [N] steps 6
  `);
  it('names the states at the first value and the change (P412) on the page', () => {
    const r = runSweep(analyze(text), { name: 'hard', point: 'hanging', vary: 'side', from: 0, to: 600, steps: 6 });
    const html = sweepHtml(r, { title: 'pendulum' });
    expect(html).toContain('Index reduction: the states are x, vx at the first value.');
    expect(html).toMatch(/the states change from x, vx to y, vy at/);
    const gentle = sweepHtml(runSweep(analyze(text), { point: 'hanging', vary: 'side', from: 0, to: 60, steps: 6 }), { title: 'pendulum' });
    expect(gentle).toContain('Index reduction: the states are x, vx all along the sweep.');
  });
});

describe('a fold of a constrained model is located on its steady-state equations (the same with or without reduction)', () => {
  // a pendulum pushed along its path (a force `push` tangent to the circle): it hangs at sin θ = push/(m·g),
  // so no steady state exists beyond push = m·g = 29.43 N (θ = 90°), a fold; about each steady state
  // θ'' = push/(m·L) − (g/L)·sin θ gives ω² = (g/L)·cos θ (classical mechanics, derived by hand)
  const text = dedent(`
    const g = 9.81 [m/s^2]
    const L = 2 [m]
    const m = 3 [kg]
    input push [N]
    state x, y [m]
    state vx, vy [m/s]
    var F [N]
    output xo [m] = x
    x' = vx
    y' = vy
    m*vx' = -push*y/L - F*x/L
    m*vy' = push*x/L - F*y/L - m*g
    x^2 + y^2 = L^2
    point hanging:
      push = 0 [N]
      y ~ -2 [m]
      F ~ 30 [N]
  `);
  it('stops at the fold push = m·g, with the eigenvalues of the reduced model on the way', () => {
    const a = analyze(text);
    expect(a.indexPlan?.index).toBe(3);
    const r = runSweep(a, { point: 'hanging', vary: 'push', from: 0, to: 40, steps: 8 });
    expect(r.stop?.kind).toBe('fold');
    expectClose(r.stop!.at, 3 * 9.81, 1e-6, 0, 'fold');
    for (const p of r.points) {
      const cos = Math.sqrt(1 - (p.value / (3 * 9.81)) ** 2);
      const w = Math.sqrt((9.81 / 2) * cos);
      expectEigen(p.eigenvalues, [{ re: 0, im: w }, { re: 0, im: -w }], 1e-8, `push = ${p.value}`);
      expect(p.states).toBeDefined();
    }
  });
});

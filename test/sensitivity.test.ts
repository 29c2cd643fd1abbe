/**
 * Sensitivities of the modes and gains to the constants (server/src/core/analysis/sensitivity/).
 *
 * Outside references:
 * - The Torricelli tank (area·h' = q − o·cv·√h) has, by hand from its equations (common practice for a
 *   draining tank), h₀ = (q/(o·cv))², λ = −(o·cv)²/(2·area·q) and the level gain dh₀/dq = 2q/(o·cv)²: a 1 %
 *   larger cv moves λ by +2 % in magnitude and the gain by −2 %; a 1 % larger area moves λ by −1 %.
 * - SciPy (`scipy.linalg.eig(A, left=True, right=True)`, run at test time) gives the eigenvalue derivative
 *   vlᴴ·dA·vr/(vlᴴ·vr) from its own eigenvectors, and NumPy (`numpy.linalg.eigvals`) the eigenvalues of the
 *   re-solved models A(p ± h), whose central difference must agree.
 * Independent route: central differences of points re-solved by Newton's method at p ± h (evaluateAt),
 * for every eigenvalue and gain of every example model.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { assignment } from './helpers/assignment';
import { evaluateAt, pointDerivatives, sensitivities, sensitivityReport } from '../server/src/core/analysis/sensitivity';
import { linearSystem } from '../server/src/core/analysis/dynamics';
import { solvePoint } from '../server/src/core/solve/pointSolver';
import { linearize } from '../server/src/core/solve/linearizer';
import { dedent, expectClose } from './helpers/model';
import { PYTHON_WITH_SCIPY, runScipy, SCIPY_REQUIRED } from './helpers/scipy';
import { analyzeFile, exampleModels } from './helpers/examples';

/**
 * Every example with a linear model at its first point: constrained models (their reduction at the point),
 * tables read from a CSV file beside the model (analysed through the disk, as the command does) and the
 * 60-pool canal, whose many close eigenvalues are paired with the re-solved models' by an optimal
 * assignment (helpers/assignment.ts) rather than by sorting.
 */
const load = (file: string) => analyzeFile(file);
const EXAMPLES = exampleModels().map((m) => `examples/${m.name}`).filter((f) => {
  const a = load(f);
  const lin = a.pointNames.length ? a.linear(a.pointNames[0]) : undefined;
  return !!lin && lin.ok;
});

describe('the examples checked', () => {
  it('include a constrained model, a table from a file and a model above 40 states', () => {
    expect(EXAMPLES).toContain('examples/dip_rail_shuttle.poise');
    expect(EXAMPLES).toContain('examples/valve_datasheet.poise');
    expect(EXAMPLES).toContain('examples/canal_pools.poise');
  });
});

describe('a constrained model', () => {
  it('gets the sensitivities of its reduction at the point: the carriage on a rail of curvature radius R', () => {
    // at the bottom of the dip (push = 0) the carriage swings like a pendulum of length R with viscous drag:
    // λ² + (drag/mass)·λ + g/R = 0 (classical mechanics), so ∂λ/∂g = (1/R)/(−(2λ + drag/mass)) and
    // ∂λ/∂R = (g/R²)/(2λ + drag/mass) — by hand from the characteristic equation
    const a = load('examples/dip_rail_shuttle.poise');
    expect(a.indexPlan).toBeDefined();
    const s = sensitivities(a, 'resting');
    expect(s.ok, s.problem).toBe(true);
    const mass = 8, R = 2.5, g = 9.81, drag = 6;
    const lam = { re: -drag / (2 * mass), im: Math.sqrt(g / R - (drag / (2 * mass)) ** 2) };
    const m = s.modes[0];
    expectClose(m.eigenvalue.re, lam.re, 1e-12);
    expectClose(Math.abs(m.eigenvalue.im), lam.im, 1e-12);
    // 2λ + drag/mass = 2i·Im λ (upper member)
    const den = { re: 0, im: 2 * Math.abs(m.eigenvalue.im) };
    const div = (x: number, z: { re: number; im: number }) => ({ re: (x * z.re) / (z.re ** 2 + z.im ** 2), im: (-x * z.im) / (z.re ** 2 + z.im ** 2) });
    const k = (n: string) => s.parameters.findIndex((p) => p.name === n);
    const dg = div(-1 / R, den), dR = div(g / R ** 2, den);
    const sign = Math.sign(m.eigenvalue.im);
    expectClose(m.d[k('g')].re, dg.re, 1e-9, 1e-12);
    expectClose(m.d[k('g')].im * sign, dg.im, 1e-9);
    expectClose(m.d[k('rdip')].im * sign, dR.im, 1e-9);
  });
});

describe('a cascade: the 60-pool canal', () => {
  it('has real eigenvalues, each moving as −λ/area with the first pool\'s area (by hand: λ_i = −q\'(h_i)/(area·(1 + 0.02·i)) and the depths do not depend on the area)', () => {
    // A is lower bidiagonal (each weir's flow depends on its own pool): its eigenvalues are the diagonal
    // entries; the whole matrix's eigenvectors are far too ill-conditioned for wᴴ·dA·v, each 1×1 block's are exact
    const a = load('examples/canal_pools.poise');
    const s = sensitivities(a);
    expect(s.ok).toBe(true);
    expect(s.modes.length).toBe(60);
    const k = s.parameters.findIndex((p) => p.name === 'area');
    for (const m of s.modes) {
      expect(m.eigenvalue.im).toBe(0);
      expect(m.condition).toBeLessThan(1 + 1e-12);
      expectClose(m.d[k].re, -m.eigenvalue.re / 400, 1e-9);
    }
  });
});

const TANK = dedent(`
  const area = 3.2 [m^2]
  const cv = 0.0045 [m^2.5/s]
  input inflow [L/s]
  input opening
  state level [m]
  var outflow [L/s]
  output level_cm [cm] = level
  area*level' = inflow - outflow
  outflow = opening*cv*sqrt(level)
  point p:
    inflow = 1.5 [L/s]
    opening = 0.4
    level ~ 0.5 [m]
`);

describe('closed form of the draining tank', () => {
  it('gives the pole and gain sensitivities of λ = −(o·cv)²/(2·area·q)', () => {
    const a = analyze(TANK);
    const s = sensitivities(a);
    expect(s.ok).toBe(true);
    const q = 1.5e-3, o = 0.4, cv = 0.0045, area = 3.2;
    const lam = -((o * cv) ** 2) / (2 * area * q);
    expectClose(s.modes[0].eigenvalue.re, lam, 1e-12);
    const k = (n: string) => s.parameters.findIndex((p) => p.name === n);
    // ∂λ/∂cv = 2λ/cv, ∂λ/∂area = −λ/area (per declared unit: m^2.5/s and m^2)
    expectClose(s.modes[0].d[k('cv')].re, (2 * lam) / cv, 1e-10);
    expectClose(s.modes[0].d[k('area')].re, -lam / area, 1e-10);
    expect(s.modes[0].d[k('cv')].im).toBe(0);
    // level gain in cm per L/s: 2q/(o cv)² m per m³/s = that × 100 cm / 1000 (L/s)
    const g = s.gains.find((x) => x.output === 'level_cm' && x.input === 'inflow')!;
    const G = ((2 * q) / (o * cv) ** 2) * 0.1;
    expectClose(g.value, G, 1e-12);
    expectClose(g.d[k('cv')], (-2 * G) / cv, 1e-10);
    expect(Math.abs(g.d[k('area')])).toBeLessThan(1e-9 * G); // the area does not change the steady state
    // the ranked table: cv first, +2 % in |λ| (time constant −2 %), then area
    const r = sensitivityReport(a);
    expect(r.ranked[0].effects.map((e) => e.parameter)).toEqual(['cv', 'area']);
    expectClose(r.ranked[0].effects[0].timeConstantPercent!, -2, 1e-10);
    expectClose(r.ranked[0].effects[1].timeConstantPercent!, 1, 1e-10);
  });

  it('follows the operating point through a constant that a point value is written with', () => {
    // the level is fixed by a constant (h0) and the inflow is solved: λ = −o·cv/(2·area·√h0)
    const a = analyze(dedent(`
      const area = 2 [m^2]
      const cv = 0.01 [m^2.5/s]
      const h0 = 0.8 [m]
      input inflow [m^3/s]
      state level [m]
      area*level' = inflow - 0.5*cv*sqrt(level)
      point p:
        level = h0
        inflow ~ 0.001 [m^3/s]
    `));
    const s = sensitivities(a);
    const k = s.parameters.findIndex((p) => p.name === 'h0');
    const lam = (-0.5 * 0.01) / (2 * 2 * Math.sqrt(0.8));
    expectClose(s.modes[0].eigenvalue.re, lam, 1e-12);
    expectClose(s.modes[0].d[k].re, -lam / (2 * 0.8), 1e-8); // ∂λ/∂h0 = −λ/(2 h0)
  });
});

/** Central difference of re-solved points: (q(p + h) − q(p − h))/2h per declared unit. */
function centralCheck(file: string) {
  const a = load(file);
  const s = sensitivities(a);
  expect(s.ok, `${file}: ${s.problem}`).toBe(true);
  const sol = a.point()!;
  let worstEig = 0, worstGain = 0;
  const rho = Math.max(...s.modes.map((m) => Math.hypot(m.eigenvalue.re, m.eigenvalue.im)));
  s.parameters.forEach((p, k) => {
    const h = 1e-5 * Math.abs(sol.values[p.slot]);
    const at = (dv: number) => evaluateAt(a, s.point, new Map([[p.slot, sol.values[p.slot] + dv]]));
    const up = at(h), dn = at(-h);
    expect(up.ok && dn.ok, `${file}: ${p.name} ± h re-solves`).toBe(true);
    // each mode paired with the perturbed eigenvalues by an optimal assignment on the distance to it
    const pair = (es: { re: number; im: number }[]) => {
      const upper = es.filter((e) => e.im >= 0);
      const col = assignment(s.modes.map((m) => upper.map((e) => Math.hypot(e.re - m.eigenvalue.re, e.im - m.eigenvalue.im))));
      return col.map((c) => upper[c]);
    };
    const U = pair(up.eigenvalues), D = pair(dn.eigenvalues);
    s.modes.forEach((m, j) => {
      const fd = { re: ((U[j].re - D[j].re) / (2 * h)) * p.scale, im: ((U[j].im - D[j].im) / (2 * h)) * p.scale };
      // relative to |λ|/|p|, the size of a relative sensitivity of one (an integrator: to 10⁻⁶·ρ(A))
      const size = Math.max(Math.hypot(m.eigenvalue.re, m.eigenvalue.im), 1e-6 * rho) / Math.abs(p.value);
      worstEig = Math.max(worstEig, Math.hypot(fd.re - m.d[k].re, fd.im - m.d[k].im) / size);
    });
    // gains relative to the largest gain of their output (a structurally zero gain is rounding noise)
    s.gains.forEach((g, j) => {
      const row = Math.max(...s.gains.filter((x) => x.output === g.output).map((x) => Math.abs(x.value)));
      const fd = ((up.gains![j] - dn.gains![j]) / (2 * h)) * p.scale;
      if (row === 0) return expect(fd === 0 && g.d[k] === 0).toBe(true);
      worstGain = Math.max(worstGain, Math.abs(fd - g.d[k]) / (row / Math.abs(p.value)));
    });
  });
  return { worstEig, worstGain, s };
}

describe('central differences of re-solved points', () => {
  for (const file of EXAMPLES) {
    it(`${file}: every eigenvalue and gain`, () => {
      const { worstEig, worstGain, s } = centralCheck(file);
      expect(s.parameters.length).toBeGreaterThan(0);
      // the central difference itself is good to about h² ≈ 1e-10 and rounding/h ≈ 1e-11 relative
      expect(worstEig).toBeLessThan(1e-6);
      expect(worstGain).toBeLessThan(1e-6);
    });
  }
});

describe('eigenvectors of large models by sparse inverse iteration', () => {
  it('give the same derivatives as the dense QR route on every example', () => {
    for (const file of EXAMPLES) {
      const a = load(file);
      const dense = sensitivities(a);
      // the band LU (numeric/bandLU.ts) on these small matrices, and the general sparse LU
      const sparse = sensitivities(a, undefined, undefined, { sparseEigenvectors: true });
      const general = sensitivities(a, undefined, undefined, { sparseEigenvectors: 'lu' });
      expect(sparse.ok, file).toBe(true);
      expect(general.ok, file).toBe(true);
      const rho = Math.max(...dense.modes.map((m) => Math.hypot(m.eigenvalue.re, m.eigenvalue.im)));
      for (const [route, other] of [['band', sparse], ['sparse LU', general]] as const) dense.modes.forEach((m, j) => {
        const o = other.modes[j];
        dense.parameters.forEach((p, k) => {
          const size = (Math.max(Math.hypot(m.eigenvalue.re, m.eigenvalue.im), 1e-6 * rho) / Math.abs(p.value));
          expect(Math.hypot(o.d[k].re - m.d[k].re, o.d[k].im - m.d[k].im) / size, `${route}: ${file} mode ${j + 1} ${p.name}`).toBeLessThan(1e-7);
        });
      });
      dense.modes.forEach((m, j) => {
        const o = sparse.modes[j];
        expectClose(o.eigenvalue.re, m.eigenvalue.re, 1e-9, 1e-12 * rho, `${file} λ${j + 1}`);
        dense.parameters.forEach((p, k) => {
          const size = (Math.max(Math.hypot(m.eigenvalue.re, m.eigenvalue.im), 1e-6 * rho) / Math.abs(p.value));
          expect(Math.hypot(o.d[k].re - m.d[k].re, o.d[k].im - m.d[k].im) / size, `${file} mode ${j + 1} ${p.name}`).toBeLessThan(1e-7);
        });
      });
    }
  });
});

describe('against SciPy and NumPy', () => {
  if (!PYTHON_WITH_SCIPY && !SCIPY_REQUIRED) {
    it.skip('needs python3 with numpy and scipy (apt-get install -y python3-numpy python3-scipy)', () => {});
    return;
  }
  it('eigenvalue derivatives from scipy.linalg.eig(left=True) and numpy eigenvalues of re-solved models', () => {
    const cases = EXAMPLES.map((file) => {
      const a = load(file);
      const s = sensitivities(a);
      const pd = pointDerivatives(a);
      const sys = linearSystem(pd.lin!);
      const sol = a.point()!;
      const n = sys.n;
      const params = pd.derivatives.map((d, k) => {
        const dA = new Array<number>(n * n).fill(0);
        d.dA.vals.forEach((v, t) => (dA[d.dA.rows[t] * n + d.dA.cols[t]] = v * d.parameter.scale));
        const h = 1e-5 * Math.abs(sol.values[d.parameter.slot]);
        const Aat = (dv: number) => linearAt(a, s.point, new Map([[d.parameter.slot, sol.values[d.parameter.slot] + dv]]));
        return { dA, up: Aat(h), dn: Aat(-h), h: h / d.parameter.scale, pv: Math.abs(d.parameter.value), ours: s.modes.map((m) => [m.d[k].re, m.d[k].im]) };
      });
      return { file, n, A: Array.from(sys.A), lam: s.modes.map((m) => [m.eigenvalue.re, m.eigenvalue.im]), params };
    });
    const out = runScipy<{ file: string; formula: number; numpy: number }[]>(`
res = []
for c in inp:
    n = c['n']; A = np.array(c['A']).reshape(n, n)
    w, vl, vr = scipy.linalg.eig(A, left=True, right=True)
    rho = max(abs(w))
    worst_f = 0.0; worst_n = 0.0
    for p in c['params']:
        dA = np.array(p['dA']).reshape(n, n)
        eu = np.linalg.eigvals(np.array(p['up']).reshape(n, n)); ed = np.linalg.eigvals(np.array(p['dn']).reshape(n, n))
        for (lr, li), (dr, di) in zip(c['lam'], p['ours']):
            lam = complex(lr, li); ours = complex(dr, di)
            k = int(np.argmin(abs(w - lam)))
            ref = (vl[:, k].conj() @ dA @ vr[:, k]) / (vl[:, k].conj() @ vr[:, k])
            size = max(abs(lam), 1e-6 * rho)
            worst_f = max(worst_f, abs(ref - ours) * p['pv'] / size)
            ku = int(np.argmin(abs(eu - lam))); kd = int(np.argmin(abs(ed - lam)))
            fd = (eu[ku] - ed[kd]) / (2 * p['h'])
            worst_n = max(worst_n, abs(fd - ours) * abs(p['h']) / (1e-5 * size))
    res.append({'file': c['file'], 'formula': worst_f, 'numpy': worst_n})
print(json.dumps(res))
`, cases);
    expect(out.length).toBe(EXAMPLES.length);
    for (const r of out) {
      // relative to |λ|/|p|: the same derivative from SciPy's eigenvectors (measured: 1e-11 or less)
      expect(r.formula, `${r.file} formula`).toBeLessThan(1e-9);
      // the difference of NumPy's eigenvalues of the re-solved models, relative to |λ|/|p| (measured: 4e-7 at most, the
      // truncation of the central difference on the Arrhenius reactor)
      expect(r.numpy, `${r.file} numpy`).toBeLessThan(1e-6);
    }
  });
});

/** A (dense, declared units) of the point re-solved with the constants `ov` (SI, by slot). */
function linearAt(a: ReturnType<typeof analyze>, point: string, ov: Map<number, number>): number[] {
  const block = a.pointBlock(point)!;
  const sol = solvePoint(a.bound, a.lowered, block, { overrides: ov, start: a.point(point)!.values });
  // a constrained model: its reduction, in the states chosen at the nominal point
  const dm = a.indexPlan ? a.dynamicsAt(sol.values, a.dynamicsAt(a.point(point)!.values).selection!.dummies) : undefined;
  const lin = dm ? linearize(dm.model, dm.unknowns, dm.values, sol.name, block.name.span) : linearize(a.lowered, a.structure.unknowns, sol.values, sol.name, block.name.span);
  return Array.from(linearSystem(lin).A);
}

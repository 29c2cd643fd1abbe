/**
 * Models written from docs/language.md alone, as a new user would, of the kinds issue 11 names (invented
 * demo data, in test/fixtures/trial/ and examples/tray_column.poise): a 20-tray column with constant relative volatility, a 50-cell
 * counter-current exchanger, eight vessels from a small parts library folder on one header, a line of ten
 * conveyors built from a part with a saturating drive, a 3 × 4-zone floor, and a booster pump whose curve
 * comes from a data-sheet CSV. Each is checked against something outside the tool and by an independent
 * route inside it:
 * - outside: the ε-NTU relation of a counterflow exchanger, the overall component balance of a column,
 *   Torricelli-type orifice laws by substitution, SciPy's PchipInterpolator for the data-sheet table;
 * - inside: the family model against the same model written out flat by a generator here, the expanded view
 *   read back (same A, B, C, D), and the nonlinear simulation of a small step against the linear prediction.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze, type Analysis } from '../server/src/core/pipeline/analysis';
import { expandedModelText } from '../server/src/core/present/modelText';
import { linearSystem } from '../server/src/core/analysis/dynamics';
import { linearStepResponse } from '../server/src/core/numeric/expm';
import { createSimulator } from '../server/src/core/analysis/simulate';
import { analyzeFile } from './helpers/examples';
import { expectClose } from './helpers/model';
import { PYTHON_WITH_SCIPY, runScipy, SCIPY_REQUIRED } from './helpers/scipy';

const DIR = path.join(__dirname, 'fixtures', 'trial');
const file = (name: string) => path.join(DIR, name);
const valuesOf = (a: Analysis, point?: string) => {
  const sol = a.point(point)!;
  expect(sol.ok, `${point}: ${sol.diagnostics.map((d) => d.message).join('; ')}`).toBe(true);
  return new Map(a.values(sol).map((v) => [v.name, v.value]));
};
const errors = (a: Analysis) => a.allDiagnostics().filter((d) => d.severity !== 'info');

/** The expanded view read back (beside the model, for its files) gives the same A, B, C, D to the last digit. */
function expandedRoundTrip(f: string, point?: string): void {
  const a = analyzeFile(f);
  expect(errors(a)).toEqual([]);
  const b = analyzeFile(f, expandedModelText(a));
  expect(errors(b)).toEqual([]);
  const la = a.linear(point)!;
  const lb = b.linear(point)!;
  expect(lb.states).toEqual(la.states);
  expect(lb.inputs).toEqual(la.inputs);
  for (const m of ['A', 'B', 'C', 'D'] as const) expect(Array.from(lb[m]), m).toEqual(Array.from(la[m]));
}

/** A small step of input j simulated on the nonlinear model, against the linear model's step response. */
function simulationMatchesLinear(a: Analysis, point: string, j: number, du: number, horizon: number, rel: number): void {
  const sys = linearSystem(a.linear(point)!);
  const times = Array.from({ length: 21 }, (_, k) => (horizon * k) / 20);
  const u = new Float64Array(sys.m);
  u[j] = du;
  const lin = linearStepResponse(sys.A, sys.B, sys.C, sys.D, sys.n, sys.m, sys.p, u, Float64Array.from(times));
  const sim = createSimulator(a, point)!;
  const dus = new Array(sys.m).fill(0);
  dus[j] = du;
  const r = sim.step({ du: dus, times, rtol: 1e-9 });
  expect(r.status, r.message).toBe('ok');
  for (let i = 0; i < sys.p; i++) {
    const scale = Math.max(...lin.y.map((y) => Math.abs(y[i])));
    if (scale === 0) continue;
    times.forEach((t, k) => expectClose(r.outputs[i][k], lin.y[k][i], 0, rel * scale, `output ${i} at t = ${t}`));
  }
}

describe('counter-current exchanger in n cells (exchanger.poise)', () => {
  const text = fs.readFileSync(file('exchanger.poise'), 'utf8');
  const withCells = (n: number) => analyze(text.replace('const n = 50', `const n = ${n}`));
  // ε-NTU relation of a counterflow exchanger (Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
  // the ε-NTU table; from memory): ε = (1 − e^(−NTU(1−Cr)))/(1 − Cr·e^(−NTU(1−Cr))), NTU = UA/Cmin
  const wh = 8, wc = 10, ua = 12, thIn = 80, tcIn = 15;
  const cmin = Math.min(wh, wc), cr = cmin / Math.max(wh, wc), ntu = ua / cmin;
  const eps = (1 - Math.exp(-ntu * (1 - cr))) / (1 - cr * Math.exp(-ntu * (1 - cr)));
  const duty = eps * cmin * (thIn - tcIn); // 330.86 kW

  it('the duty approaches the continuous exchanger\'s, the error falling as 1/n (upwind cells)', () => {
    const err = [25, 50, 100].map((n) => Math.abs(valuesOf(withCells(n), 'design').get('duty')! - duty) / duty);
    expect(err[1]).toBeLessThan(0.015); // 50 cells: 1.1 %
    // first-order scheme: halving the cell size halves the error (ratios measured: about 2)
    expect(err[0] / err[1]).toBeGreaterThan(1.8);
    expect(err[0] / err[1]).toBeLessThan(2.2);
    expect(err[1] / err[2]).toBeGreaterThan(1.8);
    expect(err[1] / err[2]).toBeLessThan(2.2);
  });

  it('the family model equals the same exchanger written out cell by cell (n = 6), to the last digit', () => {
    const n = 6;
    const lines = [
      'time [min]', 'const ua = 12 [kW/K]', 'const cap_h = 40 [kJ/K]', 'const cap_c = 60 [kJ/K]', 'const wh = 8 [kW/K]', 'const wc = 10 [kW/K]',
      'input th_in [degC]', 'input tc_in [degC]',
      `state ${Array.from({ length: n }, (_, k) => `th[${k + 1}]`).join(', ')} [degC]`,
      `state ${Array.from({ length: n }, (_, k) => `tc[${k + 1}]`).join(', ')} [degC]`,
      `output th_out [degC] = th[${n}]`, 'output tc_out [degC] = tc[1]', `output duty [kW] = wh*(th_in - th[${n}])`,
    ];
    for (let i = 1; i <= n; i++) lines.push(`(cap_h/${n})*th[${i}]' = wh*(${i === 1 ? 'th_in' : `th[${i - 1}]`} - th[${i}]) - (ua/${n})*(th[${i}] - tc[${i}])`);
    for (let i = 1; i <= n; i++) lines.push(`(cap_c/${n})*tc[${i}]' = wc*(${i === n ? 'tc_in' : `tc[${i + 1}]`} - tc[${i}]) + (ua/${n})*(th[${i}] - tc[${i}])`);
    lines.push('point design:', '  th_in = 80 [degC]', '  tc_in = 15 [degC]', ...Array.from({ length: n }, (_, k) => `  th[${k + 1}] ~ 50 [degC]`), ...Array.from({ length: n }, (_, k) => `  tc[${k + 1}] ~ 40 [degC]`), '');
    const flat = analyze(lines.join('\n'));
    expect(errors(flat)).toEqual([]);
    const fam = withCells(n);
    const lf = flat.linear('design')!;
    const lm = fam.linear('design')!;
    expect(lf.states).toEqual(lm.states);
    for (const m of ['A', 'B', 'C', 'D'] as const) expect(Array.from(lf[m]), m).toEqual(Array.from(lm[m]));
    const vf = valuesOf(flat, 'design');
    const vm = valuesOf(fam, 'design');
    for (const [k, v] of vf) expect(vm.get(k), k).toBe(v);
  });

  it('the expanded view reads back to the same A, B, C, D', () => expandedRoundTrip(file('exchanger.poise'), 'design'));

  it('a step of the hot inlet: simulation equals the linear prediction (the model is linear in temperatures)', () => {
    simulationMatchesLinear(analyzeFile(file('exchanger.poise')), 'design', 0, 2, 0.3, 1e-6);
  });
});

describe('20-tray column, constant relative volatility (examples/tray_column.poise)', () => {
  const column = path.join(__dirname, '..', 'examples', 'tray_column.poise');
  const a = analyzeFile(column);

  it('checks clean and holds the overall light-component balance F·zf = D·x_top + B·x_bot (common practice)', () => {
    expect(errors(a)).toEqual([]);
    const v = valuesOf(a, 'design');
    expectClose(v.get('dist')! * v.get('x_top')! + v.get('bottoms')! * v.get('x_bot')!, 1 * 0.5, 1e-12);
    // each tray in equilibrium: y = αx/(1 + (α − 1)x), α = 2.4 (the law as written, by substitution)
    for (let i = 1; i <= 20; i++) expectClose(v.get(`y[${i}]`)!, (2.4 * v.get(`x[${i}]`)!) / (1 + 1.4 * v.get(`x[${i}]`)!), 1e-13);
  });

  it('the expanded view reads back to the same A, B, C, D (the size constants kept as comments)', () => {
    expandedRoundTrip(column, 'design');
    expect(expandedModelText(a)).toContain('# const nf = 9');
  });

  it('a small reflux step: simulation equals the linear prediction', () => {
    // 1e-5 kmol/min against 2.7: the nonlinear response differs from the linear one by the square of the step
    simulationMatchesLinear(a, 'design', 2, 1e-5, 2000, 2e-3);
  });
});

describe('eight vessels on a header, from the parts library folder lib/ (eight_vessels/plant.poise)', () => {
  const f = file('eight_vessels/plant.poise');
  const a = analyzeFile(f);

  it('reads the two library files and checks clean; each vessel passes its fill flow (by substitution)', () => {
    expect(a.documents.list.map((d) => path.basename(d.uri))).toEqual(['plant.poise', 'vessel.poise', 'inlet.poise']);
    expect(errors(a)).toEqual([]);
    const v = valuesOf(a, 'normal');
    const p = v.get('p_header')!; // kPa
    let total = 0;
    for (let i = 1; i <= 8; i++) {
      const h = v.get(`v[${i}].level`)!;
      const fill = 2e-4 * 0.6 * Math.sqrt((p - 9.79 * h) / 100); // kv·opening·√(Δp/1 bar), m³/s
      expectClose(fill, 3e-4 * Math.sqrt(h), 1e-12, 0, `vessel ${i}`); // the orifice: c_out·√h
      total += fill;
    }
    expectClose(total, 1.5e-3 * Math.sqrt((300 - p) / 100), 1e-12); // the supply restriction carries all eight
  });

  it('the expanded view (every part under its instance\'s name) reads back to the same A, B, C, D', () => expandedRoundTrip(f, 'normal'));

  it('a small step of the valve command: simulation equals the linear prediction', () => {
    simulationMatchesLinear(a, 'normal', 0, 1e-5, 8000, 2e-3);
  });
});

describe('a line of ten conveyors with saturating drives (conveyors.poise)', () => {
  const a = analyzeFile(file('conveyors.poise'));

  it('each belt carries the ore at its speed: load = ore·length/speed; held at the top speed when asked for more', () => {
    expect(errors(a)).toEqual([]);
    const lengths = [25, 25, 30, 30, 40, 40, 30, 30, 25, 25];
    const run = valuesOf(a, 'running');
    const flat = valuesOf(a, 'flat_out');
    lengths.forEach((l, k) => {
      expectClose(run.get(`b[${k + 1}].load`)!, (40 * l) / 2, 1e-12); // cmd 2 m/s inside the limits
      expectClose(flat.get(`b[${k + 1}].load`)!, (40 * l) / 2.5, 1e-12); // cmd 3 m/s held at v_max = 2.5
    });
    // beyond the clamp the command has no effect: its column of B is zero
    const lin = a.linear('flat_out')!;
    const j = lin.inputs.indexOf('cmd');
    for (let i = 0; i < lin.n; i++) expect(lin.B[i * lin.m + j]).toBe(0);
  });

  it('the expanded view reads back to the same A, B, C, D', () => expandedRoundTrip(file('conveyors.poise'), 'running'));

  it('a small speed step: simulation equals the linear prediction', () => simulationMatchesLinear(a, 'running', 1, 1e-5, 200, 2e-3));
});

describe('a 3 × 4-zone floor (building.poise): two indices in one each block, conditions on the indices', () => {
  const a = analyzeFile(file('building.poise'));

  it('the heat put in leaves through the facades (energy balance, by hand)', () => {
    expect(errors(a)).toEqual([]);
    const v = valuesOf(a, 'winter');
    let out = 0;
    let put = 0;
    for (let k = 1; k <= 12; k++) {
      out += 0.08 * v.get(`faces[${k}]`)! * (v.get(`t[${k}]`)! - -5);
      put += v.get(`heat[${k}]`)!;
    }
    expectClose(out, put, 1e-12);
    expect(put).toBeCloseTo(4 * 6 * (0.6 + 0.4 + 0.6), 12);
    // corners have two outside faces, the ends of the middle row one, the middle zones none
    expect([1, 2, 5, 6].map((k) => v.get(`faces[${k}]`))).toEqual([2, 1, 1, 0]);
  });

  it('the expanded view reads back to the same A, B, C, D', () => expandedRoundTrip(file('building.poise'), 'winter'));
});

describe('booster pump with its data-sheet curve in a CSV file (booster/booster.poise)', () => {
  const f = file('booster/booster.poise');
  const a = analyzeFile(f);

  it('checks clean (a unit with a power of a group: m/(m^3/h)^2)', () => expect(errors(a)).toEqual([]));

  if (!PYTHON_WITH_SCIPY && !SCIPY_REQUIRED) {
    it.skip('needs python3 with numpy and scipy', () => {});
  } else {
    it('the pump head at the solved flow is SciPy\'s PchipInterpolator through the data sheet', () => {
      const v = valuesOf(a, 'day');
      const q = v.get('q')!;
      const ref = runScipy<number[]>(`
from scipy.interpolate import PchipInterpolator
p = PchipInterpolator([0, 10, 20, 30, 40, 50], [42, 41, 38.5, 34, 27.5, 19])
print(json.dumps([float(p(inp['q']))]))
`, { q });
      expectClose(v.get('head_pump')!, ref[0], 1e-12);
    });
  }

  it('the expanded view reads back to the same A, B, C, D (the table file read beside it)', () => expandedRoundTrip(f, 'day'));

  it('a small step of the draw: simulation equals the linear prediction', () => simulationMatchesLinear(a, 'day', 1, 1e-4, 20000, 2e-3));
});

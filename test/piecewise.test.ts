/**
 * Piecewise laws and lookup tables (docs/language.md, "Piecewise laws", "Lookup tables"): comparisons,
 * and/or/not, choose(…), clamp, tables inline or from a CSV file beside the model, their diagnostics, and
 * the one-sided slopes at a switch, a clamp limit or a breakpoint.
 *
 * Outside references: tables read into a model against `numpy.interp` (linear; the slope of the interval
 * `numpy.searchsorted` finds) and SciPy's `PchipInterpolator` with its `derivative()` (monotone cubic,
 * Fritsch & Carlson 1980), run live with python3 at 1,000 random points — values at the point and the D
 * entries of the linear model, which carry the slopes the linear model uses. Independent routes inside the
 * tests: linear-model entries against central differences of the nonlinear model solved at nearby points,
 * and one-sided difference quotients at a breakpoint against the slopes the warning prints.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { analyze, analyzeDocuments } from '../server/src/core/pipeline/analysis';
import { memoryHost } from '../server/src/core/sources';
import { exprText } from '../server/src/core/present/modelText';
import { parse } from '../server/src/core/syntax/parser';
import type * as A from '../server/src/core/syntax/ast';
import { besideDocument } from '../server/src/core/semantics/tables';
import { check } from './helpers/check';
import { dedent, solve } from './helpers/model';
import { PYTHON_WITH_SCIPY, runScipy, SCIPY_REQUIRED } from './helpers/scipy';

const exprOf = (src: string): A.Expr => (parse(`x = ${src}\n`).file.statements[0] as A.EquationStmt).rhs;

describe('conditions in the syntax', () => {
  it('binds comparisons below + and −, and below or (a + b < c and not d >= e or f <= g)', () => {
    // printed with the parentheses the structure needs: the and/or tree made visible by a grouping test
    const e = exprOf('choose(a + b < c and not d >= e or f <= g, 1, 2)') as A.CallExpr;
    const c = e.args[0] as A.BinaryExpr;
    expect(c.op).toBe('or');
    expect((c.left as A.BinaryExpr).op).toBe('and');
    const and = c.left as A.BinaryExpr;
    expect((and.left as A.BinaryExpr).op).toBe('<');
    expect(((and.left as A.BinaryExpr).left as A.BinaryExpr).op).toBe('+');
    expect(and.right.kind === 'unary' && and.right.op).toBe('not');
    expect(exprText(e)).toBe('choose(a + b < c and not d >= e or f <= g, 1, 2)');
    expect(exprText(exprOf('choose(not (a < b or c > d), 1, 2)'))).toBe('choose(not (a < b or c > d), 1, 2)');
  });

  it('keeps and, or, not and table usable as names', () => {
    const a = analyze(dedent(`
      input and, or
      var not, table
      not = and - or
      table = 2*not
      point p:
        and = 3
        or = 1
    `));
    expect(a.diagnostics).toEqual([]);
    const s = a.point('p')!;
    expect(s.ok).toBe(true);
    expect(a.values(s).find((v) => v.name === 'table')!.value).toBe(4);
  });

  it('a line ending in a comparison continues on the next', () => {
    const e = exprOf('choose(x <\n  1, 2, 3)') as A.CallExpr;
    expect((e.args[0] as A.BinaryExpr).op).toBe('<');
  });

  it('resolves a file beside the model for paths and URIs', () => {
    expect(besideDocument('/plant/valve.poise', 'cv.csv')).toBe('/plant/cv.csv');
    expect(besideDocument('/plant/models/valve.poise', '../data/./cv.csv')).toBe('/plant/data/cv.csv');
    expect(besideDocument('file:///c%3A/plant/valve.poise', 'cv.csv')).toBe('file:///c%3A/plant/cv.csv');
    expect(besideDocument('C:\\plant\\valve.poise', 'cv.csv')).toBe('C:\\plant\\cv.csv');
    expect(besideDocument('/plant/valve.poise', '/data/cv.csv')).toBe('/data/cv.csv');
  });
});

describe('choose and clamp at a point', () => {
  // a spill weir: no spill below the crest, a linear law above (an invented scenario)
  const weir = (u: number) => dedent(`
    input inflow [L/s]
    state h [m]
    var spill [L/s]
    const crest = 0.8 [m]
    2 [m^2]*h' = inflow - spill - 1.5 [L/(s*m)]*h
    spill = choose(h > crest, 40 [L/(s*m)]*(h - crest), 0 [L/s])
    point p:
      inflow = ${u} [L/s]
      h ~ 0.5 [m]
  `);

  it('solves on the branch the point lies on (both ways of the crest)', () => {
    // below the crest h = inflow/1.5; above, inflow = 40 (h − 0.8) + 1.5 h (hand algebra)
    expect(solve(weir(0.9)).value('h')).toBeCloseTo(0.9 / 1.5, 12);
    expect(solve(weir(4)).value('h')).toBeCloseTo((4 + 32) / 41.5, 12);
  });

  it('the linear model on each branch equals central differences of the solved nonlinear model', () => {
    for (const u of [0.9, 4]) {
      const s = solve(weir(u));
      const d = 1e-4;
      const fd = (solve(weir(u + d)).value('h') - solve(weir(u - d)).value('h')) / (2 * d);
      // steady gain dh/dinflow = −B/A
      expect(-s.B('h', 'inflow') / s.A('h', 'h')).toBeCloseTo(fd, 7);
    }
  });

  it('clamp holds a value within its limits and its slope is 0 beyond them', () => {
    const m = (u: number) => dedent(`
      input cmd
      output act = clamp(2*cmd, -1, 1)
      point p:
        cmd = ${u}
    `);
    expect(solve(m(0.3)).value('act')).toBeCloseTo(0.6, 14);
    expect(solve(m(0.3)).D('act', 'cmd')).toBe(2);
    expect(solve(m(0.9)).value('act')).toBe(1);
    expect(solve(m(0.9)).D('act', 'cmd')).toBe(0);
    expect(solve(m(-3)).value('act')).toBe(-1);
  });

  it('several cases: the first whose condition holds, else the last value', () => {
    const m = (u: number) => dedent(`
      input x
      output band = choose(x < 1, 10, x < 2 and not x < 1.5, 20, x >= 3 or x < -5, 30, 40)
      point p:
        x = ${u}
    `);
    for (const [x, want] of [[0, 10], [1.2, 40], [1.7, 20], [2.5, 40], [3, 30], [-9, 10]] as const) expect(solve(m(x)).value('band')).toBe(want);
  });
});

describe('piecewise diagnostics, each at its exact range', () => {
  it('a condition where a value is expected, a value where a condition is expected', () => {
    check(`
      input u [m]
      var y [m]
      y = u*⟦(u > 1 [m])⟧
      output z [m] = choose(⟦u⟧, u, 2 [m])
      point p:
        u = 2 [m]
    `, [{ code: 'P320', message: ['comparison ">"', 'choose'] }, { code: 'P321' }], { ignore: ['P501', 'P503'] });
  });

  it('units: comparison sides, the values of choose and clamp, a table\'s argument', () => {
    check(`
      input u [m]
      input w [kg]
      table k [m] to [1/s]:
        0  1
        2  3
      output a [m] = choose(⟦u > w⟧, u, 1 [m])
      output b [m] = choose(u > 1 [m], u, ⟦w⟧)
      output c [m] = clamp(u, 0 [m], ⟦w⟧)
      output d [1/s] = k(⟦w⟧)
      point p:
        u = 1 [m]
        w = 1 [kg]
    `, [
      { code: 'P322', message: ['m', 'kg'] },
      { code: 'P307', message: ['choose'] },
      { code: 'P307', message: ['clamp'] },
      { code: 'P323', message: ['[m]', 'kg'] },
    ]);
  });

  it('calls: a table takes one argument, choose an odd number, a table is no value', () => {
    check(`
      input u
      table k [1] to [1]:
        0  1
        2  3
      output a = ⟦k(u, u)⟧
      output b = ⟦choose(u > 1, u)⟧
      output c = ⟦k⟧ + u
      point p:
        u = 1
    `, [{ code: 'P240' }, { code: 'P241' }, { code: 'P242' }], { ignore: ['P501', 'P503'] });
  });

  it('a table\'s rows: increasing breakpoints, two numbers a row', () => {
    check(`
      input u
      table k [1] to [1]:
        0  1
        2 ⟦x⟧
        3  4
        ⟦1  5⟧
      output a = k(u)
      point p:
        u = 1
    `, [{ code: 'P101', message: ['a number'] }, { code: 'P132', message: ['increase strictly'] }], { ignore: ['P501', 'P503', 'P504'] });
  });

  it('a table in a constant: P510 says to use a var', () => {
    check(`
      input u
      table k [1] to [1]:
        0  1
        2  3
      const c = ⟦k(1)⟧
      output y = c*u
      point p:
        u = 1
    `, [{ code: 'P510', message: ['declare a var'] }]);
  });

  it('a name declared twice (table and var)', () => {
    check(`
      input u
      table k [1] to [1]:
        0  1
        2  3
      var ⟦k⟧
      k = u
      point p:
        u = 1
    `, [{ code: 'P243' }], { ignore: ['P242', 'P401', 'P406', 'P501', 'P503'] });
  });
});

describe('tables from a CSV file beside the model, read through the source host', () => {
  const model = dedent(`
    input opening [%]
    output flow [m^3/h] = cv(opening)
    table cv [%] to [m^3/h] monotone from "data/cv.csv"
    point p:
      opening = 30 [%]
  `);
  const csv = '# invented data sheet\nopening,cv\n0,0\n20,1.2\n40,3.1\n60,6.4\n80,11\n100,16\n';

  it('reads the file at its address beside the model', () => {
    const a = analyzeDocuments(memoryHost({ '/plant/valve.poise': model, '/plant/data/cv.csv': csv }), '/plant/valve.poise')!;
    expect(a.allDiagnostics()).toEqual([]);
    const s = a.point('p')!;
    // PchipInterpolator([0,20,40,60,80,100], [0,1.2,3.1,6.4,11,16])(30) = 2.0324286600496277, computed with
    // python3 -c "from scipy.interpolate import PchipInterpolator as P; print(repr(float(P([0,20,40,60,80,100],[0,1.2,3.1,6.4,11,16])(30))))"
    expect(a.values(s).find((v) => v.name === 'flow')!.value).toBeCloseTo(2.0324286600496277, 12);
  });

  it('a missing file and a bad line are errors on the file name', () => {
    const { text, ranges } = { text: model, ranges: [model.indexOf('"data/cv.csv"')] };
    const missing = analyzeDocuments(memoryHost({ '/plant/valve.poise': text }), '/plant/valve.poise')!;
    const d = missing.diagnostics.find((x) => x.code === 'P133')!;
    expect(d.span).toEqual({ start: ranges[0], end: ranges[0] + '"data/cv.csv"'.length });
    expect(d.message).toContain('/plant/data/cv.csv');
    const bad = analyzeDocuments(memoryHost({ '/plant/valve.poise': text, '/plant/data/cv.csv': 'x,y\n0,0\n20,one\n' }), '/plant/valve.poise')!;
    const b = bad.diagnostics.find((x) => x.code === 'P134')!;
    expect(b.message).toContain('Line 3');
    expect(b.span.start).toBe(ranges[0]);
  });
});

describe('points on a breakpoint, a switch or a limit, and outside a table', () => {
  const valve = (opening: number, strict = false) => dedent(`
    input opening [%]
    output flow [m^3/h] = cv(opening)
    table cv [%] to [m^3/h] linear ${strict ? 'strict' : 'hold'}:
      0    0
      20   1.2
      40   3.1
      60   6.4
    point p:
      opening = ${opening} [%]
  `);

  it('on a breakpoint: the one-sided slopes (equal to one-sided difference quotients) and the mean the linear model takes', () => {
    const a = analyze(valve(40));
    const s = a.point('p')!;
    const d = s.diagnostics.find((x) => x.code === 'P505')!;
    // secants of the table: (3.1 − 1.2)/20 = 0.095 below, (6.4 − 3.1)/20 = 0.165 above; mean 0.13
    expect(d.message).toContain('breakpoint 40 %');
    expect(d.message).toContain('slope 0.095 below and 0.165 above');
    expect(d.message).toContain('mean of the two, 0.13');
    expect(a.linear('p')!.D[0]).toBeCloseTo(0.13, 14);
    // independent route: one-sided difference quotients of the solved model
    const f = (x: number) => solve(valve(x)).value('flow');
    expect((f(40) - f(39.999)) / 0.001).toBeCloseTo(0.095, 9);
    expect((f(40.001) - f(40)) / 0.001).toBeCloseTo(0.165, 9);
  });

  it('outside the breakpoints: a warning naming the table and the value (hold), an error (strict)', () => {
    const hold = analyze(valve(75)).point('p')!;
    const w = hold.diagnostics.find((x) => x.code === 'P520')!;
    expect(w.severity).toBe('warning');
    expect(w.message).toContain('table "cv" is read at 75 %, outside its breakpoints 0 % … 60 %');
    expect(w.message).toContain('holds its end value 6.4 m^3/h');
    expect(hold.ok).toBe(true);
    const strict = analyze(valve(75, true)).point('p')!;
    expect(strict.diagnostics.find((x) => x.code === 'P521')!.severity).toBe('error');
    expect(strict.ok).toBe(false);
  });

  it('at a switch of choose: the slopes on each side along the variable, and the side the linear model takes', () => {
    const text = dedent(`
      input q [m^3/h]
      output lim [m^3/h] = choose(q > 5 [m^3/h], 2*q - 5 [m^3/h], q)
      point p:
        q = 5 [m^3/h]
    `);
    const a = analyze(text);
    const d = a.point('p')!.diagnostics.find((x) => x.code === 'P505')!;
    expect(text.slice(d.span.start, d.span.end)).toBe('q > 5 [m^3/h]');
    expect(d.message).toContain('along q: slope 1 below 5 m^3/h and 2 above');
    expect(d.message).toContain('the linear model takes the one below');
    expect(a.linear('p')!.D[0]).toBe(1);
  });

  it('at a clamp limit: the slopes and the side taken', () => {
    const text = dedent(`
      input cmd
      output act = clamp(cmd, 0, 1)
      point p:
        cmd = 1
    `);
    const a = analyze(text);
    const d = a.point('p')!.diagnostics.find((x) => x.code === 'P505')!;
    expect(text.slice(d.span.start, d.span.end)).toBe('clamp(cmd, 0, 1)');
    expect(d.message).toContain('along cmd: slope 1 below 1 and 0 above');
    expect(d.message).toContain('takes the one below');
    expect(a.linear('p')!.D[0]).toBe(1);
  });
});

describe('tables in a model against NumPy and SciPy at 1,000 random points, values and linear-model slopes', () => {
  // invented data sheets: a valve's flow coefficient (uneven breakpoints) and a pump's falling head curve
  const SHEETS = [
    { x: [0, 8, 15, 30, 45, 70, 100], y: [0, 0.35, 0.9, 2.6, 5.1, 10.8, 17.5], xu: '%', yu: 'm^3/h' },
    { x: [0, 4, 9, 15, 22, 30], y: [38, 37.6, 35.9, 32.1, 25.7, 16.2], xu: 'm^3/h', yu: 'm' },
  ];
  let seed = 20261205;
  const rnd = (): number => {
    seed = (seed * 48271) % 2147483647;
    return seed / 2147483647;
  };
  const N = 1000;
  const points = SHEETS.map((t) => Array.from({ length: N }, () => t.x[0] + (t.x[t.x.length - 1] - t.x[0]) * rnd()));

  /** One model: N inputs, N outputs y_k = tab(u_k); values and D's diagonal are the table and its slope. */
  const model = (k: number, kind: 'linear' | 'monotone'): string => {
    const t = SHEETS[k];
    const L = [`table tab [${t.xu}] to [${t.yu}] ${kind}:`, ...t.x.map((x, i) => `  ${x}  ${t.y[i]}`), `input u[1..${N}] [${t.xu}]`];
    L.push(`each i in 1..${N}: output y[i] [${t.yu}] = tab(u[i])`);
    L.push('point p:', `  u = {${points[k].map((v) => v.toPrecision(17)).join(', ')}} [${t.xu}]`);
    return L.join('\n') + '\n';
  };

  if (!PYTHON_WITH_SCIPY && !SCIPY_REQUIRED) {
    it.skip('needs python3 with numpy and scipy', () => {});
    return;
  }
  let ref: { lin: number[]; linSlope: number[]; pchip: number[]; pchipSlope: number[] }[] = [];
  beforeAll(() => {
    ref = runScipy(
      `from scipy.interpolate import PchipInterpolator
out = []
for t, q in zip(inp['sheets'], inp['points']):
    x = np.array(t['x'], dtype=float); y = np.array(t['y'], dtype=float); q = np.array([float(repr(v)) for v in q])
    k = np.clip(np.searchsorted(x, q, side='right') - 1, 0, len(x) - 2)
    p = PchipInterpolator(x, y)
    out.append({'lin': np.interp(q, x, y).tolist(), 'linSlope': ((y[k + 1] - y[k]) / (x[k + 1] - x[k])).tolist(),
                'pchip': p(q).tolist(), 'pchipSlope': p.derivative()(q).tolist()})
print(json.dumps(out))`,
      // the points as the model text writes them (17 digits)
      { sheets: SHEETS, points: points.map((ps) => ps.map((v) => Number(v.toPrecision(17)))) },
    );
  });
  SHEETS.forEach((t, k) => {
    for (const kind of ['linear', 'monotone'] as const) {
      it(`${kind} table in [${t.xu}] → [${t.yu}]: values at the point and D entries`, () => {
        const a = analyze(model(k, kind), { warnUnused: false });
        expect(a.diagnostics).toEqual([]);
        const s = a.point('p')!;
        expect(s.ok).toBe(true);
        const lin = a.linear('p')!;
        const values = new Map(a.values(s).map((v) => [v.name, v.value]));
        const want = kind === 'linear' ? ref[k].lin : ref[k].pchip;
        const slope = kind === 'linear' ? ref[k].linSlope : ref[k].pchipSlope;
        const scale = Math.max(...t.y.map(Math.abs));
        for (let i = 0; i < N; i++) {
          // unit conversions to SI and back (% and m^3/h) cost a few ulps
          expect(Math.abs(values.get(`y[${i + 1}]`)! - want[i])).toBeLessThan(1e-12 * scale);
          const row = lin.outputs.indexOf(`y[${i + 1}]`);
          const col = lin.inputs.indexOf(`u[${i + 1}]`);
          expect(Math.abs(lin.D[row * lin.inputs.length + col] - slope[i])).toBeLessThan(1e-10 * (1 + Math.abs(slope[i])));
        }
      });
    }
  });
});

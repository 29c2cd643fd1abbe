/**
 * Symbolic coefficients (server/src/core/analysis/symbolic.ts) and `poise linearize --symbolic`.
 *
 * Outside checks:
 * - every formula, printed as text and evaluated by mathjs (an independent expression evaluator) with the
 *   symbols' values, equals the numeric coefficient (rel 1e-9) for every shared reference model and example;
 * - for the reference models the same numbers match ../shared/reference/NAME.json (computed outside this
 *   project with SymPy/NumPy, see ../shared/reference/README.md; agreement rel 1e-6 as the README states);
 * - drain: the linearised time constant of a tank with sqrt outflow is tau = 2*A*h0/q0 (Seborg, Edgar,
 *   Mellichamp & Doyle, Process Dynamics and Control); swing: omega_n^2 = g*cos(theta0)/L and damping
 *   b/(m*L^2) (any undergraduate dynamics text) — checked on the formulas' values and their shape.
 */
import * as fs from 'fs';
import { evaluate as mathEvaluate } from 'mathjs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze, type Analysis, analyzeDocuments } from '../server/src/core/pipeline/analysis';
import { cliSources } from '../server/src/cli/sourceHost';
import { main, type Io } from '../server/src/cli/main';
import { formatSymbolic, printFormula, symbolicCoefficient, symbolicEquations, symbolicLinear, type SymbolicLinear } from '../server/src/core/analysis/symbolic';
import { EXAMPLES } from './helpers/cli';
import { expectClose } from './helpers/model';
import { entryByName, matrixNames, readReferenceFile, referenceModels, REFERENCE_MODELS, rowByName } from './helpers/reference';
import { exampleModels } from './helpers/examples';

const models: { file: string; ref?: string }[] = [
  ...referenceModels().map(({ file, ref }) => ({ file, ref })),
  ...exampleModels().map((m) => ({ file: m.file })),
];

/** Evaluates a formula's printed text with mathjs, the symbols bound to their values. */
function evalText(s: SymbolicLinear, text: string): number {
  const scope: Record<string, number> = {};
  // element names of families (th[3]) are not mathjs identifiers: bind them under plain aliases
  const aliased = [...s.symbols].sort((a, b) => b.name.length - a.name.length);
  aliased.forEach((x, k) => {
    if (/[[\].]/.test(x.name)) {
      const alias = `elem__${k}`;
      text = text.split(x.name).join(alias);
      scope[alias] = x.value;
    } else scope[x.name] = x.value;
  });
  const v = mathEvaluate(text, scope) as unknown;
  if (typeof v !== 'number') throw new Error(`mathjs gave ${String(v)} for ${text}`);
  return v;
}

function each(s: SymbolicLinear, f: (m: 'A' | 'B' | 'C' | 'D', i: number, j: number, text: string | undefined, value: number) => void) {
  const lin = s.lin;
  const dims = { A: [lin.n, lin.n], B: [lin.n, lin.m], C: [lin.p, lin.n], D: [lin.p, lin.m] } as const;
  for (const m of ['A', 'B', 'C', 'D'] as const) {
    const [r, c] = dims[m];
    for (let i = 0; i < r; i++) {
      for (let j = 0; j < c; j++) {
        const e = s[m][i * c + j];
        f(m, i, j, e.formula ? printFormula(e.formula, { name: (id) => s.names.get(id)! }) : undefined, e.value);
      }
    }
  }
}

describe('formulas equal the numbers', () => {
  for (const { file, ref } of models) {
    const a = analyzeDocuments(cliSources(file, fs.readFileSync(file, 'utf8')), file)!; // files beside the model (tables) read too
    for (const point of a.pointNames) {
      it(`${path.basename(file)} at ${point}`, () => {
        const s = symbolicLinear(a, point)!;
        expect(s).toBeDefined();
        expect(s.tooLarge).toBe(0);
        const lin = a.linear(point)!;
        let rowScale = 0;
        each(s, (_m, _i, _j, _t, v) => (rowScale = Math.max(rowScale, Math.abs(v))));
        each(s, (m, i, j, text, value) => {
          expect(text, `${m}[${i}][${j}] has a formula`).toBeDefined();
          const numeric = lin[m][i * (m === 'A' || m === 'C' ? lin.n : lin.m) + j];
          expect(value).toBe(numeric);
          // evaluated independently by mathjs from the printed text; absolute floor for entries that cancel to 0
          expectClose(evalText(s, text!), numeric, 1e-9, 1e-13 * rowScale, `${path.basename(file)} ${m}[${i}][${j}] = ${text}`);
          // simplified: no 0*x or 1*x terms (an element's operating value is written x[1]0: not a 0 factor)
          expect(text).not.toMatch(/(^|[^\w.\]])[01]\*/);
        });
        if (ref) {
          // against the reference linear model computed outside the project (README: rel 1e-6), by name
          const R = readReferenceFile(ref);
          each(s, (m, i, j, text) => {
            const [lr, lc] = matrixNames(lin, m);
            const want = entryByName(R, m, lr[i], lc[j]);
            const scale = Math.max(...rowByName(R, m, lr[i]).map(Math.abs), 1e-300);
            expectClose(evalText(s, text!), want, 1e-6, 1e-9 * scale, `${path.basename(ref)} ${m} ${lr[i]}/${lc[j]}`);
          });
        }
      });
    }
  }
});

function load(name: string, dir = EXAMPLES): Analysis {
  const file = path.join(dir, name);
  return analyzeDocuments(cliSources(file, fs.readFileSync(file, 'utf8')), file)!;
}

describe('shape of the formulas', () => {
  it('drain: the coefficient is −1/tau with tau = 2*A*h0/q0 (Seborg et al.)', () => {
    const a = load('drain.poise', REFERENCE_MODELS);
    const c = symbolicCoefficient(a, 'normal', "level'", 'level')!;
    expect(c.matrix).toBe('A');
    expect(c.unit).toBe('1/s');
    expect(c.formula).toMatch(/level0/);
    const h0 = c.symbols.find((x) => x.name === 'level0')!.value;
    const sol = a.point('normal')!;
    const q0 = a.values(sol).find((v) => v.name === 'drain')!.value / 1000; // L/s → m^3/s
    expectClose(c.value, -1 / ((2 * 1.5 * h0) / q0), 1e-9, 0, 'A = −q0/(2*A*h0)');
    const s = symbolicLinear(a, 'normal')!;
    expect(evalText(s, c.formula!)).toBeCloseTo(c.value, 12);
  });

  it('swing: g*cos(ang0)/len and damp/(mass*len^2) appear as such', () => {
    const a = load('swing.poise', REFERENCE_MODELS);
    const k = symbolicCoefficient(a, 'gust', "ang''", 'ang')!;
    expect(k.formula).toBe('-g*cos(ang0)/len'); // omega_n^2 = g*cos(theta0)/L (dynamics texts)
    const d = symbolicCoefficient(a, 'gust', "ang''", "ang'")!;
    expect(d.formula).toBe('-damp/(mass*len^2)'); // b/(m*L^2)
    expect(d.unit).toBe('1/s');
  });

  it('buffer tank: the deviation equation reads like the hand derivation', () => {
    const a = load('buffer_tank.poise');
    const eqs = symbolicEquations(symbolicLinear(a, 'dry_day')!);
    // d(cv*opening*sqrt(h))/dh = cv*opening/(2*sqrt(h)) (derivative of sqrt: common practice); inflow in L/s → 1/1000
    expect(eqs[0].text).toBe("Δlevel' = -(opening0*cv/(2*sqrt(level0)*area))*Δlevel + (1/(1000*area))*Δinflow - (cv*sqrt(level0)/area)*Δopening");
    expect(eqs[1].text).toBe('Δlevel_cm = 100*Δlevel'); // 1 m = 100 cm
  });

  it('keeps the number and says so when a formula is too large', () => {
    const a = load('gantry_crane.poise');
    const s = symbolicLinear(a, 'parked_in_wind', { maxNodes: 12 })!;
    expect(s.tooLarge).toBeGreaterThan(0);
    const lin = a.linear('parked_in_wind')!;
    s.A.forEach((e, k) => expect(e.value).toBe(lin.A[k]));
    const text = formatSymbolic(s);
    expect(text).toMatch(/too large/);
    // the numbers shown for the dropped formulas are the numeric coefficients (5 significant digits by default here)
    expect(text).toMatch(/Δpos'' = /);
  });

  it('names operating values NAME0, NAME_0 after a digit, and avoids clashes', () => {
    const a = analyze("const level0 = 1\ninput q1\nstate level\nlevel' = q1 - level0*sqrt(level)\npoint p:\n  q1 = 1\n  level ~ 1\n");
    const s = symbolicLinear(a, 'p')!;
    const names = s.symbols.map((x) => x.name).sort();
    expect(names).toContain('level_00');
    expect(names).toContain('level0');
    const eq = symbolicEquations(s)[0].text;
    expect(eq).toMatch(/level0\/\(2\*sqrt\(level_00\)\)/);
  });
});

describe('poise linearize --symbolic', () => {
  it('prints the units assumed, the symbols and the equations', async () => {
    const io: Io & { stdout: string } = { stdout: '', out(s) { io.stdout += s + '\n'; }, err() {} };
    const code = await main(['linearize', path.join(EXAMPLES, 'buffer_tank.poise'), '--point', 'dry_day', '--symbolic'], io);
    expect(code).toBe(0);
    expect(io.stdout).toMatch(/declared units/);
    expect(io.stdout).toMatch(/level0 += 0\.694444 \[m\]/); // h0 = (q/(opening*cv))^2 = (0.0015/(0.4*0.0045))^2 (Torricelli outflow, common practice)
    expect(io.stdout).toMatch(/Δlevel' = -\(opening0\*cv/);
  });
});

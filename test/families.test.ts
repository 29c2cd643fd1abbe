/**
 * Indexed families (server/src/core/semantics/elaborate.ts): declarations over an index range, elements,
 * each blocks, reductions, lists, and their diagnostics.
 *
 * Checks:
 * - A chain of N tanks written with families equals the same chain written out flat, to the last digit
 *   (A, B, C, D and the point), for N = 3 and 100 — an independent route: the flat text is generated
 *   separately (bench/models.ts).
 * - A heated pipe cut into N cells (method of lines, first-order upwind cells; W. E. Schiesser, The
 *   Numerical Method of Lines, Academic Press 1991): the steady temperature profile matches the analytic
 *   solution of the continuous problem, T(x) = Tw + (Tin − Tw)·exp(−x/ℓ) with ℓ = ṁ·cp/(U·P) (the
 *   exponential approach of a fluid to a constant wall temperature; any heat-transfer text, e.g. Incropera &
 *   DeWitt, Fundamentals of Heat and Mass Transfer, internal flow with constant surface temperature), and
 *   the error falls as 1/N as the first-order scheme predicts.
 * - The expanded text (`poise expand`) reads back to the same model.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { modelText } from '../server/src/core/present/modelText';
import { tankChainFamily, tankChainFlatElements } from '../bench/models';
import { dedent, solve } from './helpers/model';
import { unmark } from './helpers/check';

describe('a family model equals the same model written flat', () => {
  for (const n of [3, 100]) {
    it(`tank chain, N = ${n}: point and A, B, C, D identical to the last digit`, () => {
      const fam = solve(tankChainFamily(n));
      const flat = solve(tankChainFlatElements(n));
      expect(fam.lin.states).toEqual(flat.lin.states);
      expect(fam.lin.inputs).toEqual(flat.lin.inputs);
      expect(fam.lin.outputs).toEqual(flat.lin.outputs);
      expect(fam.lin.states[0]).toBe('h[1]');
      for (const m of ['A', 'B', 'C', 'D'] as const) expect(Array.from(fam.lin[m])).toEqual(Array.from(flat.lin[m]));
      for (let i = 1; i <= n; i++) expect(fam.value(`h[${i}]`)).toBe(flat.value(`h[${i}]`));
      // exact steady state of the chain: every link drops (qin/k)² = 1 m, the last tank holds 1 m
      expect(fam.value(`h[${n}]`)).toBeCloseTo(1, 12);
      expect(fam.value('h[1]')).toBeCloseTo(n, 9);
    });
  }
});

/** A pipe of length L cut into n cells, fluid heated by a wall at tw. */
function pipe(n: number): string {
  return dedent(`
    const n = ${n}
    const len = 12 [m]
    const mdot = 0.4 [kg/s]
    const cp = 4180 [J/(kg*K)]
    const ua = 95 [W/(m*K)]           # heat transfer per metre of pipe and kelvin
    const rho_a = 3.1 [kg/m]          # fluid mass per metre of pipe
    const tw = 360 [K]
    input tin [K]
    state t[1..n] [K]
    output t_out [K] = t[n]
    rho_a*(len/n)*cp*t[1]' = mdot*cp*(tin - t[1]) + ua*(len/n)*(tw - t[1])
    each i in 2..n:
      rho_a*(len/n)*cp*t[i]' = mdot*cp*(t[i-1] - t[i]) + ua*(len/n)*(tw - t[i])
    point warmup:
      tin = 290 [K]
      t ~ 320 [K]
  `);
}

describe('a heated pipe by the method of lines', () => {
  const ell = (0.4 * 4180) / 95; // ℓ = ṁ·cp/(U·P) in m
  const exact = (x: number): number => 360 + (290 - 360) * Math.exp(-x / ell);
  const errAt = (n: number): number => {
    const s = solve(pipe(n));
    return Math.abs(s.value(`t[${n}]`) - exact(12));
  };
  it('the outlet temperature converges to the analytic profile, error ∝ 1/N (first-order cells)', () => {
    const e = [20, 40, 80, 160].map(errAt);
    for (let k = 1; k < e.length; k++) {
      const ratio = e[k - 1] / e[k];
      expect(ratio).toBeGreaterThan(1.8);
      expect(ratio).toBeLessThan(2.2);
    }
    expect(e[3]).toBeLessThan(0.06);
  });
  it('every cell holds its discrete steady state t_i = (t_{i−1} + κ·tw)/(1 + κ), κ = U·P·Δx/(ṁ·cp)', () => {
    const n = 40;
    const s = solve(pipe(n));
    const kappa = (95 * (12 / n)) / (0.4 * 4180);
    let prev = 290;
    for (let i = 1; i <= n; i++) {
      const expected = (prev + kappa * 360) / (1 + kappa);
      expect(s.value(`t[${i}]`)).toBeCloseTo(expected, 8);
      prev = expected;
    }
  });
});

describe('families in point blocks', () => {
  const base = dedent(`
    const n = 3
    const c = 2 [1/s]
    input u [1/s]
    state x[1..n]
    each i in 1..n: x[i]' = u*i - c*x[i]
    point p:
      u = 1
  `);
  it('one value for every element, a list, and single elements', () => {
    const all = solve(base + '  x ~ 5\n');
    expect([1, 2, 3].map((i) => all.value(`x[${i}]`))).toEqual([0.5, 1, 1.5]);
    const fixedOne = solve(base.replace('u = 1', 'x[2] = 3') + '  u ~ 1\n  x ~ {1, 2, 3}\n');
    expect(fixedOne.value('u')).toBeCloseTo(3, 12);
    expect(fixedOne.value('x[3]')).toBeCloseTo(4.5, 12);
  });
  it('an index name used as a number inside an each block', () => {
    const s = solve(base + '  x ~ 1\n');
    expect(s.value('x[3]')).toBeCloseTo(1.5, 12); // u*i/c with i = 3
  });
});

describe('diagnostics of families, each with its exact range', () => {
  const cases: [string, string][] = [
    ['index outside the family', "const n = 3\nstate x[1..n]\nx[1]' = -x[1]\nx[2]' = -x[2]\nx[3]' = -x[⟦4⟧]\n  # P233"],
    ['an index on a name that is no family', "state x\nstate y[1..2]\nx' = -⟦x[1]⟧\neach i in 1..2: y[i]' = -y[i]\n  # P232"],
    ['a family used without an element', "state y[1..2]\neach i in 1..2: y[i]' = -⟦y⟧\n  # P234"],
    ['a size that is not a whole-number constant', "const n = 2.5\nstate y[1..⟦n⟧]\n  # P230"],
    ['a size with a unit', "const m3 = 3 [m]\nstate y[1..⟦m3⟧]\n  # P230"],
    ['an empty range', "state y⟦[3..1]⟧\n  # P236"],
    ['a list of the wrong length', "const a[1..3] = ⟦{1, 2}⟧\n  # P237"],
  ];
  for (const [name, src] of cases) {
    it(name, () => {
      const code = /# (P\d+)/.exec(src)![1];
      const { text, ranges } = unmark(src.replace(/\n {2}# P\d+$/, '\n'));
      const a = analyze(text);
      const got = a.diagnostics.filter((d) => d.code === code);
      expect(got.map((d) => [d.span.start, d.span.end]), a.diagnostics.map((d) => `${d.code} ${d.span.start}-${d.span.end} ${d.message}`).join('\n')).toEqual([[ranges[0].start, ranges[0].end]]);
      expect(got[0].severity).toBe('error');
    });
  }
  it('an element left without its equation is named', () => {
    const a = analyze("const n = 3\nstate y[1..n]\neach i in 1..n-1: y[i]' = -y[i]\n");
    const msgs = a.diagnostics.map((d) => d.message).join('\n');
    expect(msgs).toMatch(/y\[3\]/);
  });
});

describe('the expanded view', () => {
  for (const n of [3, 12]) {
    it(`reads back to the same model (chain of ${n})`, () => {
      const a = analyze(tankChainFamily(n));
      const text = modelText(a.parsed.file);
      expect(text).toMatch(/^state h\[1\], h\[2\]/m);
      const b = analyze(text);
      expect(b.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
      expect(modelText(b.parsed.file)).toBe(text);
      expect(Array.from(b.linear()!.A)).toEqual(Array.from(a.linear()!.A));
    });
  }
});

describe('the cell-by-cell exchanger example', () => {
  it('conserves energy: total duty = hot stream loss = cold stream gain (first law, common practice)', () => {
    const s = solve(require('fs').readFileSync(require('path').join(__dirname, '..', 'examples', 'exchanger_cells.poise'), 'utf8'));
    const cp = 4186;
    const hotLoss = 0.3 * cp * (85 - s.value('th[12]'));
    const coldGain = 0.35 * cp * (s.value('tc[1]') - 12);
    const total = s.value('total_duty') * 1000;
    expect(Math.abs(hotLoss - total)).toBeLessThan(1e-8 * total);
    expect(Math.abs(coldGain - total)).toBeLessThan(1e-8 * total);
    expect(s.lin.states).toContain('th[12]');
    expect(s.lin.n).toBe(24);
  });
});

describe('poise expand', () => {
  it('prints the flat model of the exchanger example, which reads back to the same linear model', async () => {
    const { runCli, ensureBuilt, EXAMPLES } = await import('./helpers/cli');
    ensureBuilt();
    const file = require('path').join(EXAMPLES, 'exchanger_cells.poise');
    const r = runCli(['expand', file]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^state th\[1\], th\[2\]/m);
    const back = analyze(r.stdout);
    expect(back.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const orig = analyze(require('fs').readFileSync(file, 'utf8'));
    expect(Array.from(back.linear()!.A)).toEqual(Array.from(orig.linear()!.A));
  });
});

/**
 * Tolerance bands on constants (syntax, checks), Latin hypercube sampling and the bands of poles, gains
 * and the stability verdict (server/src/core/analysis/sensitivity/, `poise sensitivity`).
 *
 * Outside references: for x' = (a − b)·x with a uniform over 1 ± 10 % and b = 1.02, the probability of
 * instability is P(a > 1.02) = (1.1 − 1.02)/0.2 = 0.4 (uniform distribution, closed form); the 95 % Wilson
 * score interval from SciPy (`scipy.stats.binomtest(k, n).proportion_ci(method='wilson')`, scipy 1.17,
 * values pasted below). Independent route: every sample's eigenvalues against the first-order prediction
 * λ₀ + Σ ∂λ/∂p·Δp (the error is second order in the tolerance).
 */
import * as fs from 'fs';
import * as path from 'path';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { evaluateChunk, latinHypercube, samplePlan, sensitivities, sensitivityReport, wilson, withSamples } from '../server/src/core/analysis/sensitivity';
import { formatSensitivityText } from '../server/src/core/present/sensitivityText';
import { sensitivityPage } from '../server/src/core/present/sensitivityHtml';
import { dedent, expectClose } from './helpers/model';
import { ensureBuilt, EXAMPLES, runCli, scratchDir } from './helpers/cli';

const codes = (text: string) => analyze(text).diagnostics.map((d) => d.code);

describe('tolerance syntax', () => {
  it('reads ± and +/- with a percentage or a unit, and converts the band to SI', () => {
    const a = analyze(dedent(`
      const area = 3.2 [m^2] ± 5 %
      const cv = 4.5 [L/s] +/- 0.5 [L/s]
      const t0 = 20 [degC] ± 2 [K]
      const eff = 0.8 ± 0.05
      input q [L/s]
      state h [m]
      area*h' = q - cv*sqrt(h/1 [m]) + 0*(t0 - t0)/1 [K]*eff*1 [L/s]
      point p:
        q = 2 [L/s]
    `));
    const t = new Map(a.tolerances.tolerances.map((x) => [x.name, x]));
    expectClose(t.get('area')!.halfWidthSI, 0.16, 1e-14);
    expect(t.get('area')!.percent).toBe(5);
    expectClose(t.get('cv')!.halfWidthSI, 0.5e-3, 1e-14);
    expect(t.get('cv')!.text).toBe('+/- 0.5 [L/s]');
    expectClose(t.get('t0')!.halfWidthSI, 2, 1e-14); // a difference: no offset
    expectClose(t.get('eff')!.halfWidthSI, 0.05, 1e-14);
    expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  });

  it('refuses bands that cannot be one, with their own codes', () => {
    expect(codes('const a = 2 [m]\nconst b = 2*a ± 1 %')).toContain('P650');
    expect(codes('const a = 2 [m] ± a')).toContain('P651');
    expect(codes('const a = 2 [m] ± 3 [m] %')).toContain('P651');
    expect(codes('const a = 2 [m] ± 3 [s]')).toContain('P652');
    expect(codes('const a = 2 [m] ± 3')).toContain('P652');
    expect(codes('const a = 2 [m] ± -3 [m]')).toContain('P653');
    // a band cut short is a syntax error, not a crash
    expect(codes('const a = 2 [m] ±')).toContain('P101');
    expect(codes('const a = 2 [m] ± 5 % 7')).toContain('P101');
    // "%" and "±" mean nothing in an equation
    expect(codes('const a = 2\nstate x\nx\' = a % x')).toContain('P101');
  });
});

describe('Latin hypercube', () => {
  it('puts one sample in each of the N strata of every constant, the same for the same seed', () => {
    const N = 50, k = 3;
    const u = latinHypercube(k, N, 7);
    for (let j = 0; j < k; j++) {
      const strata = new Set<number>();
      for (let i = 0; i < N; i++) strata.add(Math.floor(u[i * k + j] * N));
      expect(strata.size).toBe(N);
    }
    expect(latinHypercube(k, N, 7)).toEqual(u);
    expect(latinHypercube(k, N, 8)).not.toEqual(u);
  });
});

describe('bands', () => {
  const GROW = dedent(`
    const a = 1 [1/s] ± 10 %
    const b = 1.02 [1/s]
    input u
    state x
    x' = (a - b)*x + u*1 [1/s]
    point p:
      u = 0
  `);

  it('counts the unstable share of samples: P(a > b) = 0.4 for a uniform over its band', () => {
    const a = analyze(GROW);
    const plan = samplePlan(a, 'p', 1000, 3);
    const r = withSamples(sensitivityReport(a, 'p'), plan, evaluateChunk(a, plan, 0, plan.count));
    // one sample per stratum of width 0.2/1000: 400 strata lie above 1.02 (± the one that straddles it)
    expect(Math.abs(r.sampled!.unstable - 400)).toBeLessThanOrEqual(1);
    expect(r.sampled!.failed).toBe(0);
    expect(r.firstOrder!.verdict).toMatch(/reaches the imaginary axis/); // nominally stable, λ = −0.02, band up to +0.08
    expect(r.firstOrder!.modes[0].crossesAxis).toBe(true);
    expectClose(r.firstOrder!.modes[0].re[1], 0.08, 1e-12); // −0.02 + 0.1
  });

  it('has sample eigenvalues within second order of the first-order prediction', () => {
    /** Largest error of the first-order prediction relative to how far the eigenvalue moved, bands divided by `div`. */
    const worstFor = (div: number): number => {
      const text = fs.readFileSync(path.join(EXAMPLES, 'wax_melter.poise'), 'utf8').replace(/± ([\d.]+)( %)?/g, (_, v, pc) => `± ${Number(v) / div}${pc ?? ''}`);
      const a = analyze(text);
      const s = sensitivities(a);
      const plan = samplePlan(a, undefined, 40, 11);
      const res = evaluateChunk(a, plan, 0, plan.count);
      const idx = plan.constants.map((c) => s.parameters.findIndex((p) => p.slot === c.slot));
      let worst = 0;
      for (const x of res) {
        expect(x.ok).toBe(true);
        for (const m of s.modes) {
          let re = m.eigenvalue.re, im = m.eigenvalue.im;
          plan.constants.forEach((c, j) => {
            const dp = (x.values[j] - c.centerSI) / s.parameters[idx[j]].scale;
            re += m.d[idx[j]].re * dp;
            im += m.d[idx[j]].im * dp;
          });
          const near = Math.min(...x.eigenvalues.map((e) => Math.hypot(e.re - re, e.im - im)));
          const moved = Math.min(...x.eigenvalues.map((e) => Math.hypot(e.re - m.eigenvalue.re, e.im - m.eigenvalue.im)));
          worst = Math.max(worst, near / Math.max(moved, 1e-300));
        }
      }
      return worst;
    };
    const w1 = worstFor(100), w2 = worstFor(1000);
    // the relative error of a first-order prediction shrinks with the band (second-order remainder)
    expect(w1).toBeLessThan(0.05);
    expect(w2).toBeLessThan(w1 / 5);
  });

  it('gives the Wilson interval SciPy gives', () => {
    // scipy.stats.binomtest(3, 40).proportion_ci(method='wilson') = (0.025836025774588198, 0.19864233524310543)
    const [lo, hi] = wilson(3, 40);
    expectClose(lo, 0.025836025774588198, 1e-12);
    expectClose(hi, 0.19864233524310543, 1e-12);
    expect(wilson(0, 10)[0]).toBe(0);
  });

  it('renders the table, the bands and the pole cloud', () => {
    const a = analyze(GROW);
    const plan = samplePlan(a, 'p', 100, 3);
    const r = withSamples(sensitivityReport(a, 'p'), plan, evaluateChunk(a, plan, 0, plan.count));
    const text = formatSensitivityText(r);
    expect(text).toContain('Mode 1: λ = -0.02 1/s');
    expect(text).toMatch(/a\s+\+0\.01 1\/s/);
    expect(text).toMatch(/100 Latin hypercube samples \(seed 3\): 4\d of 100 unstable/);
    const html = sensitivityPage(r, 'grow.poise');
    expect(html).toContain('Pole cloud');
    expect(html).toContain('<svg');
  });
});

describe('poise sensitivity', () => {
  beforeAll(() => ensureBuilt(), 600_000);
  it('gives the same samples on one worker and on two', () => {
    const file = path.join(EXAMPLES, 'wax_melter.poise');
    const one = runCli(['sensitivity', file, '--samples', '60', '--seed', '5', '--workers', '1', '--format', 'json']);
    const two = runCli(['sensitivity', file, '--samples', '60', '--seed', '5', '--workers', '2', '--format', 'json']);
    expect(one.code, one.stderr).toBe(0);
    expect(two.code, two.stderr).toBe(0);
    const a = JSON.parse(one.stdout), b = JSON.parse(two.stdout);
    expect(a.schema).toBe('poise-sensitivity/1');
    expect(b.sampled).toEqual(a.sampled);
    expect(a.sampled.count).toBe(60);
    const dir = scratchDir('sens');
    const html = path.join(dir, 'wax.html');
    const t = runCli(['sensitivity', file, '--samples', '20', '--html', html]);
    expect(t.code, t.stderr).toBe(0);
    expect(t.stdout).toContain('Stability, 20 Latin hypercube samples');
    expect(fs.readFileSync(html, 'utf8')).toContain('Pole cloud');
  });
});

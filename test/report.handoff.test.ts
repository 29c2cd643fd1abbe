/**
 * The report's hand-off sections (analysis/report.ts with ReportOptions.sample / .reduce, rendered by
 * present/handoffReport.ts) on the two examples made for them: the sampled level loop of a water tower and
 * the 60-pool canal. Outside facts: under a hold each continuous eigenvalue s maps to z = e^{sT}
 * (Franklin, Powell & Workman, Digital Control of Dynamic Systems, ch. 4); the balanced-truncation error
 * obeys σ_{r+1} ≤ ‖G − G_r‖∞ ≤ 2·Σ_{i>r} σ_i (Glover, Int. J. Control 39(6), 1984). Independent routes: the
 * report's own continuous eigenvalues, and both transfer functions evaluated on a frequency grid.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { buildReport } from '../server/src/core/analysis/report';
import { evaluateTransfer, linearSystem } from '../server/src/core/analysis/dynamics';
import { renderReportHtml } from '../server/src/core/present/reportHtml';
import { formatReportText } from '../server/src/core/present/reportText';
import { EXAMPLES } from './helpers/cli';

const load = (f: string) => analyze(fs.readFileSync(path.join(EXAMPLES, f), 'utf8'));

describe('sampled-data section (tower_level_loop)', () => {
  const a = load('tower_level_loop.poise');
  const T = 0.25; // min, the model's time unit
  const data = buildReport(a, 'morning', { validity: false, samples: 21, sample: { every: T, hold: 'zoh', delay: 0.3 } });
  it('poles map from the report\'s own eigenvalues by z = e^{sT}; the held inputs sit at z = 0', () => {
    expect(data.ok).toBe(true);
    const s = data.sampled!;
    expect(s.sampleTime).toEqual({ value: T, unit: 'min' });
    expect(s.states).toEqual(['flow', 'level', 'meas', 'speed@prev', 'draw@prev']);
    for (const e of data.eigenvalues) {
      const z = { re: Math.exp(e.re * T) * Math.cos(e.im * T), im: Math.exp(e.re * T) * Math.sin(e.im * T) };
      expect(Math.min(...s.poles.map((p) => Math.hypot(p.z.re - z.re, p.z.im - z.im)))).toBeLessThan(1e-12);
    }
    expect(s.poles.filter((p) => p.s === null).map((p) => p.magnitude)).toEqual([0, 0]);
    expect(s.verdict).toBe('stable');
    // plain data: survives JSON
    expect(JSON.parse(JSON.stringify(data)).sampled.A).toEqual(s.A);
  });
  it('the page has the section with its z-plane chart and the text names T and the hold', () => {
    const html = renderReportHtml(data);
    expect(html).toContain('<section id="sampled">');
    expect(html).toMatch(/id="zplane-\d+-clip"/);
    expect(html).toContain('href="#sampled"');
    const text = formatReportText(data);
    expect(text).toMatch(/Sampled-data model: zero-order hold, T = 0\.25 min, input delay 0\.3·T; stable/);
    expect(text).toMatch(/from s = -0\.005625 1\/min/);
  });
  it('no section unless asked for', () => {
    const plain = buildReport(a, 'morning', { validity: false, samples: 21 });
    expect(plain.sampled).toBeUndefined();
    expect(renderReportHtml(plain)).not.toContain('id="sampled"');
  });
});

describe('smaller-model section (canal_pools, 60 states)', () => {
  const a = load('canal_pools.poise');
  const data = buildReport(a, 'summer', { validity: false, samples: 21, frequencies: 20, reduce: { order: 8 } });
  it('the reduced model\'s error on a frequency grid lies between σ9 and the bound 2·Σ(discarded σ)', () => {
    const r = data.reduced!;
    expect(r.fullOrder).toBe(60);
    expect(r.order).toBe(8);
    expect(r.bound).toBeCloseTo(2 * r.hankel.slice(8).reduce((x, y) => x + y, 0), 12);
    const full = linearSystem(a.linear('summer')!);
    const red = { n: r.order, m: full.m, p: full.p, A: Float64Array.from(r.A.flat()), B: Float64Array.from(r.B.flat()), C: Float64Array.from(r.C.flat()), D: Float64Array.from(r.D.flat()) };
    let worst = 0;
    for (let k = 0; k < 300; k++) {
      const w = 1e-6 * Math.pow(1e6, k / 299); // rad/s: two decades below the slowest pole to far above the fastest
      const g = evaluateTransfer(full, { re: 0, im: w });
      const h = evaluateTransfer(red, { re: 0, im: w });
      // 2 inputs × 1 output: the largest singular value of a 1×2 row is its Euclidean length
      let s2 = 0;
      for (let j = 0; j < full.m; j++) s2 += (g.re[j] - h.re[j]) ** 2 + (g.im[j] - h.im[j]) ** 2;
      worst = Math.max(worst, Math.sqrt(s2));
    }
    expect(worst).toBeLessThanOrEqual(r.bound);
    expect(worst).toBeGreaterThanOrEqual(0.9 * r.hankel[8]);
  });
  it('the page has the Hankel chart; the text the bound and the suggested order', () => {
    const html = renderReportHtml(data);
    expect(html).toContain('<section id="reduced">');
    expect(html).toMatch(/id="hankel-\d+-clip"/);
    const text = formatReportText(data);
    expect(text).toMatch(/Smaller model \(balanced truncation\): 8 of 60 states \(8 balanced\); error bound 2·Σ\(discarded σ\) = [0-9.e-]+; order suggested for 0\.001·σ1: \d+/);
  });
});

describe('Hankel values at the rounding level are not drawn', () => {
  // twin identical tanks fed in parallel, the output their summed level: the difference of the levels is
  // neither moved by the input nor seen at the output, so its Hankel singular value is exactly 0 (a
  // minimal realisation has one state; common practice) and what is computed is rounding, below n·ε·σ₁
  const a = analyze([
    'const area = 2 [m^2]',
    'const k = 0.01 [m^2/s]',
    'input q [m^3/s]',
    'state h1, h2 [m]',
    'output total [m] = h1 + h2',
    "area*h1' = q/2 - k*h1",
    "area*h2' = q/2 - k*h2",
    'point p:',
    '  q = 0.01 [m^3/s]',
    '',
  ].join('\n'));
  const data = buildReport(a, 'p', { validity: false, samples: 21, reduce: {} });
  it('draws σ₁ only and says one value below n·ε·σ₁ is left out', () => {
    const r = data.reduced!;
    expect(r.hankel.length).toBe(2);
    expect(r.hankel[1]).toBeLessThan(2 * 2.220446049250313e-16 * r.hankel[0]);
    const html = renderReportHtml(data);
    expect(html).toContain('1 Hankel singular value below n·ε·σ<sub>1</sub>');
    expect(html).toContain('is not drawn');
  });
});

/**
 * Wording and look in Poise's own words (issue 10, section 2): empty matrices, the deviation header, the
 * transfer-function notation, the pole–zero map's equal aspect, the sweep colour ramp from the palette,
 * simplified units, sweep CSV and DC-gain units, the report JSON's schema tag, the caution line, one
 * spelling, and no named control-numerics routines in the docs.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { formatMatrix, LINEAR_CAUTION } from '../server/src/core/present/format';
import { EXPORT_FORMATS, exportLinear } from '../server/src/core/present/exports';
import { buildReport } from '../server/src/core/analysis/report';
import { renderReportHtml } from '../server/src/core/present/reportHtml';
import { formatReportText } from '../server/src/core/present/reportText';
import type { TransferFunction } from '../server/src/core/analysis/dynamics';
import { factoredText, polynomialText, superscript, transferLines } from '../server/src/core/analysis/transferText';
import { runSweep } from '../server/src/core/analysis/sweep';
import { sweepCsv } from '../server/src/core/present/sweepCsv';
import { formatSweepText } from '../server/src/core/present/sweepText';
import { sweepHtml, SEQ_LIGHT, SEQ_DARK } from '../server/src/core/present/sweepHtml';
import { PALETTE } from '../server/src/core/present/svgCharts';
import { simplifyUnitText } from '../server/src/core/semantics/simplifyUnit';
import { parseUnit, dimsEqual } from '../server/src/core/semantics/units';
import { EXAMPLES, ROOT } from './helpers/cli';
import { parseCsv } from './helpers/csv';

const ex = (f: string) => analyze(fs.readFileSync(path.join(EXAMPLES, f), 'utf8'));

describe('empty matrices and the deviation header', () => {
  it('say why a matrix is empty, in words', () => {
    const e = new Float64Array(0);
    expect(formatMatrix('C', e, 0, 1, [], ['Δx'])).toBe('C (0×1): empty — the model declares no outputs');
    expect(formatMatrix('B', e, 2, 0, ['Δx', 'Δy'], [])).toBe('B (2×0): empty — the model declares no inputs');
    expect(formatMatrix('D', e, 0, 0, [], [])).toBe('D (0×0): empty — the model declares no outputs and no inputs');
    expect(formatMatrix('C', e, 0, 1, [], ['Δx'])).not.toMatch(/\[\]/);
  });
});

/** A transfer function with the given roots (the fields the notation reads). */
function tf(gain: number, zeros: { re: number; im: number }[], poles: { re: number; im: number }[], num: number[], den: number[]): TransferFunction {
  return { input: 'u', output: 'y', inputIndex: 0, outputIndex: 0, num, den, poles, zeros, gain, order: poles.length, relativeDegree: poles.length - zeros.length, cancelled: 0, identicallyZero: false, dcGain: null, checkError: 0, unit: '' } as TransferFunction;
}

describe('transfer-function notation', () => {
  it('factored first with · and superscripts; repeated factors once with a power', () => {
    // G(s) = 0.75·(s + 2) / (s·(s + 1)²·(s² + 0.4·s + 4.04)); denominator coefficients by numpy:
    // np.poly([0, -1, -1, -0.2+2j, -0.2-2j]).real = [1, 2.4, 5.84, 8.48, 4.04, 0]
    const den = [1, 2.4, 5.84, 8.48, 4.04, 0];
    const g = tf(0.75, [{ re: -2, im: 0 }], [{ re: 0, im: 0 }, { re: -1, im: 0 }, { re: -1 + 1e-9, im: 0 }, { re: -0.2, im: 2 }, { re: -0.2, im: -2 }], [0.75, 1.5], den);
    expect(factoredText(g)).toBe('0.75·(s + 2) / (s·(s + 1)²·(s² + 0.4·s + 4.04))');
    expect(polynomialText(g)).toBe('(0.75·s + 1.5) / (s⁵ + 2.4·s⁴ + 5.84·s³ + 8.48·s² + 4.04·s)');
    // independent route: the expanded factors (by hand: (s + 1)² = s² + 2s + 1, times s² + 0.4s + 4.04, times s)
    const mul = (a: number[], b: number[]) => a.reduce((acc, x, i) => (b.forEach((y, j) => (acc[i + j] += x * y)), acc), new Array(a.length + b.length - 1).fill(0));
    const hand = mul(mul(mul([1, 0], [1, 1]), [1, 1]), [1, 0.4, 4.04]);
    hand.forEach((c, k) => expect(Math.abs(c - den[k])).toBeLessThan(1e-12));
    const lines = transferLines(g);
    expect(lines.factored).toBe(factoredText(g));
    expect(lines.polynomial).toBeDefined();
  });

  it('no repeated line when both forms read the same (a first-order lag)', () => {
    const lag = tf(0.03125, [], [{ re: -0.0003375, im: 0 }], [0.03125], [1, 0.0003375]);
    expect(transferLines(lag)).toEqual({ factored: '0.03125 / (s + 0.0003375)' });
    expect(superscript(12)).toBe('¹²');
  });

  it('the report text uses it: factored form first, no "s^" and no repeated line', () => {
    const a = ex('buffer_tank.poise');
    const text = formatReportText(buildReport(a, 'dry_day', { validity: false }));
    expect(text).toMatch(/inflow → level_cm: 0\.03125 \/ \(s \+ 0\.0003375\)/);
    expect(text).not.toMatch(/= \(0\.03125\)/);
    expect(text).not.toMatch(/s\^\d/);
    const crane = formatReportText(buildReport(ex('gantry_crane.poise'), 'parked_in_wind', { validity: false }));
    expect(crane).toMatch(/force → load_x: [-0-9.e]+·\(s² [+-] [0-9.]+·s \+ [0-9.]+\) \/ \(s·\(s \+ [0-9.]+\)·\(s² \+ [0-9.]+·s \+ [0-9.]+\)\)/);
    expect(crane).toMatch(/^ {6}= \([^)]*s²[^)]*\) \/ \(s⁴ \+/m);
  });
});

describe('the text report\'s horizon carries its unit', () => {
  it('"over 14810 s (5 × the slowest time constant of 2963 s)" for the buffer tank', () => {
    // τ = 2·A·h0/q0 (Seborg et al., liquid-level linearization): 2·3.2 m²·0.694444 m / 1.5e-3 m³/s = 2963 s
    const r = buildReport(ex('buffer_tank.poise'), 'dry_day', { validity: false });
    expect(r.horizon!.unit).toBe('s');
    const tau = (2 * 3.2 * ((1.5e-3 / (0.4 * 0.0045)) ** 2)) / 1.5e-3;
    expect(Math.abs(r.horizon!.value - 5 * tau) / (5 * tau)).toBeLessThan(1e-6);
    expect(formatReportText(r)).toMatch(/^Step responses over 14810 s \(5 × the slowest time constant of 2963 s\):$/m);
    // minutes in the glasshouse model
    const g = buildReport(ex('glasshouse_loop.poise'), 'night', { validity: false });
    expect(formatReportText(g)).toMatch(/^Step responses over [0-9.]+ min \(5 × the slowest time constant of [0-9.]+ min\):$/m);
  });
});

describe('report wording and look', () => {
  const data = buildReport(ex('gantry_crane.poise'), 'parked_in_wind', { validity: false });
  const html = renderReportHtml(data);

  it('participation, not "lives in"; report JSON says "schema"', () => {
    expect(formatReportText(data)).toMatch(/; participation: /);
    expect(formatReportText(data)).not.toMatch(/lives in/);
    expect(html).toMatch(/<th>participation<\/th>/);
    expect(html).not.toMatch(/lives in/);
    const j = JSON.parse(JSON.stringify(data));
    expect(j.schema).toBe('poise-report/1');
    expect(j).not.toHaveProperty('format');
  });

  it('the pole–zero map has one unit on both axes (linear and signed-log axes)', () => {
    const tank = buildReport(ex('buffer_tank.poise'), 'dry_day', { validity: false });
    const kinds: string[] = [];
    for (const d0 of [data, tank]) {
      const page = renderReportHtml(d0);
      const svg = /<svg class="plot"[^>]*aria-label="Pole–zero map"[^>]*>/.exec(page)![0];
      const d = (k: string) => new RegExp(`data-${k}="([^"]+)"`).exec(svg)![1];
      const n = (k: string) => Number(d(k));
      // the chart's own axis transform (svgCharts.ts): linear, or sign(v)·log10(1 + |v|/c)
      const t = (axis: 'x' | 'y', v: number) => (d(`${axis}k`) === 'symlog' ? Math.sign(v) * Math.log10(1 + Math.abs(v) / n(`${axis}c`)) : v);
      kinds.push(d('xk'));
      const perX = (n('r') - n('l')) / (t('x', n('x1')) - t('x', n('x0')));
      const perY = (n('b') - n('t')) / (t('y', n('y1')) - t('y', n('y0')));
      expect(Math.abs(perX - perY) / perX).toBeLessThan(1e-9);
      for (const e of d0.eigenvalues) {
        expect(e.re).toBeGreaterThanOrEqual(n('x0'));
        expect(e.re).toBeLessThanOrEqual(n('x1'));
        expect(e.im).toBeGreaterThanOrEqual(n('y0'));
        expect(e.im).toBeLessThanOrEqual(n('y1'));
      }
    }
    expect(kinds.sort()).toEqual(['lin', 'symlog']);
  });
});

describe('sweeps', () => {
  const a = ex('buffer_tank.poise');
  const r = runSweep(a, { point: 'dry_day', vary: 'inflow', from: 1, to: 2, steps: 4 });

  it('CSV: the swept variable is not repeated; DC gains carry their units', () => {
    const rows = parseCsv(sweepCsv(r));
    const head = rows[0];
    expect(head[0]).toBe('inflow [L/s]');
    expect(head.filter((h) => /^inflow\b/.test(h))).toEqual(['inflow [L/s]']);
    expect(head).toContain('gain level_cm/inflow [cm/(L/s)]');
    expect(head).toContain('gain level_cm/opening [cm]');
    for (const row of rows.slice(1)) expect(row).toHaveLength(head.length);
    // the gain itself, by the Torricelli tank at inflow q: Δh/Δq = 2h/q (Seborg et al., liquid level),
    // h = (q/(opening·cv))², in cm per L/s: 2·h[cm]/q[L/s]
    const j = head.indexOf('gain level_cm/inflow [cm/(L/s)]');
    for (const row of rows.slice(1)) {
      const q = Number(row[0]);
      const hcm = 100 * ((q * 1e-3) / (0.4 * 0.0045)) ** 2;
      expect(Math.abs(Number(row[j]) - (2 * hcm) / q) / ((2 * hcm) / q)).toBeLessThan(1e-6);
    }
  });

  it('text and chart axis: DC gains with units; the largest real part is not called a margin', () => {
    expect(formatSweepText(r)).toMatch(/DC gains at 1: level_cm\/inflow [0-9.]+ cm\/\(L\/s\)/);
    const html = sweepHtml(r);
    expect(html).toContain('Δlevel_cm/Δinflow [cm/(L/s)]');
    expect(html).toContain('Largest real part (decay rate)');
    expect(html).not.toMatch(/[Ss]tability margin/);
  });

  it('the colour ramp of swept values comes from Poise\'s palette', () => {
    expect(SEQ_LIGHT[0]).toBe(PALETTE.light.head);
    expect(SEQ_LIGHT[SEQ_LIGHT.length - 1]).toBe(PALETTE.light.cline);
    expect(SEQ_DARK[SEQ_DARK.length - 1]).toBe(PALETTE.dark.warn);
    // dark → light in the light theme (relative luminance, WCAG 2.x formula)
    const lum = (h: string) => {
      const [r1, g1, b1] = [1, 3, 5].map((k) => parseInt(h.slice(k, k + 2), 16) / 255).map((c) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
      return 0.2126 * r1 + 0.7152 * g1 + 0.0722 * b1;
    };
    for (let i = 1; i < SEQ_LIGHT.length; i++) expect(lum(SEQ_LIGHT[i])).toBeGreaterThan(lum(SEQ_LIGHT[i - 1]));
    const html = sweepHtml(r);
    for (const c of SEQ_LIGHT) expect(html).toContain(c);
    for (const old of ['#2b1a66', '#e8c21c', '#8f7be0', '#f5d94a']) expect(html).not.toContain(old);
  });
});

describe('units in exports', () => {
  it('simplifies composed unit text, keeping the dimension and the scale', () => {
    const cases: [string, string][] = [
      ['m/(s*(m/s))', ''],
      ['m/s/s', 'm/s^2'],
      ['(m/s)/(s*m)', '1/s^2'],
      ['rad/(s*(rad/s))', ''],
      ['cm/(L/s)', 'cm/(L/s)'],
      ['degC/(min*kW)', 'degC/(min*kW)'],
      ['1/s', '1/s'],
    ];
    for (const [from, to] of cases) {
      expect(simplifyUnitText(from), from).toBe(to);
      // independent route: both texts read by the unit parser have the same dimension and scale
      const a = parseUnit(from);
      const b = to ? parseUnit(to) : parseUnit('1');
      if (typeof a === 'string' || typeof b === 'string') throw new Error(`unit not read: ${from} / ${to}`);
      expect(dimsEqual(a.dims, b.dims), from).toBe(true);
      expect(Math.abs(a.scale - b.scale) / b.scale, from).toBeLessThan(1e-12);
    }
  });

  it('CSV and Markdown of the crane carry no unsimplified units', () => {
    const a = ex('gantry_crane.poise');
    const csv = exportLinear(a, 'parked_in_wind', 'csv');
    expect(csv).not.toContain('m/(s*(m/s))');
    expect(csv).toMatch(/^A,pos,pos',1,$/m); // d(pos)/dt per pos' [m/s]: dimensionless
    expect(csv).toMatch(/^A,pos',pos,0,1\/s\^2$/m);
    const md = exportLinear(a, 'parked_in_wind', 'markdown');
    expect(md).not.toMatch(/\/s\/s/);
    expect(md).toContain("Δpos'' [m/s^2]");
  });
});

describe('the caution line', () => {
  const a = ex('buffer_tank.poise');
  it('is one short line, in the linearize text and in every export (a comment where the format has them)', () => {
    expect(LINEAR_CAUTION.length).toBeLessThan(140);
    expect(LINEAR_CAUTION).toMatch(/only near this operating point/);
    expect(LINEAR_CAUTION).toMatch(/licensed engineering practice and the local codes/);
    const mark: Record<string, RegExp> = {
      json: /"caution": "Caution: valid only/,
      csv: /^caution,valid only/m,
      markdown: /^> Caution: /m,
      latex: /^% Caution: /m,
      numpy: /^# Caution: /m,
    };
    for (const f of EXPORT_FORMATS) expect(exportLinear(a, 'dry_day', f), f).toMatch(mark[f]);
  });
});

describe('one spelling, no named routines', () => {
  const files = (dir: string): string[] => fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(path.join(dir, e.name)) : [path.join(dir, e.name)]));
  const texts = [...files(path.join(ROOT, 'server', 'src')), ...files(path.join(ROOT, 'client', 'src')), ...files(path.join(ROOT, 'docs')), path.join(ROOT, 'README.md')]
    .filter((f) => /\.(ts|md)$/.test(f))
    .map((f) => ({ f, s: fs.readFileSync(f, 'utf8') }));
  it('linearize / linearization (with a z) in the code, docs and README', () => {
    for (const { f, s } of texts) expect(s, f).not.toMatch(/lineari[s]/i);
  });
  it('balancing is described by its method and paper, not by a library routine', () => {
    for (const { f, s } of texts) expect(s, f).not.toMatch(/SLICOT|TB01ID|izamax/);
    expect(fs.readFileSync(path.join(ROOT, 'docs', 'dynamics.md'), 'utf8')).toMatch(/Parlett & Reinsch/);
  });
  it('the deviation header reads Δv = v − v₀', () => {
    for (const { f, s } of texts) expect(s, f).not.toMatch(/x − x at the point/);
    const golden = fs.readFileSync(path.join(ROOT, 'test', 'golden', 'linearize', 'buffer_tank.dry_day.txt'), 'utf8');
    expect(golden).toContain('Deviation equations (Δv = v − v₀; v₀: the value at the point):');
  });
});

describe('empty matrices in the exports', () => {
  it('say why in Markdown, LaTeX and NumPy (the belt drive declares no outputs)', () => {
    const a = ex('belt_drive.poise');
    const md = exportLinear(a, 'slow', 'markdown');
    expect(md).toContain('**C** (0×2): empty — the model declares no outputs');
    expect(md).not.toContain('(empty)');
    expect(exportLinear(a, 'slow', 'latex')).toContain('% C (0×2): empty — the model declares no outputs');
    expect(exportLinear(a, 'slow', 'numpy')).toMatch(/# C \(0×2\): empty — the model declares no outputs\nC = np\.zeros\(\(0, 2\)\)/);
  });
});

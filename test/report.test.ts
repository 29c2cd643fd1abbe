/**
 * The dynamics report (server/src/core/analysis/report.ts, present/reportHtml.ts) and `poise report`: plain JSON data, the
 * validity range (checked again here by direct simulation, independently of the bisection), domain
 * problems, the standalone page (no network, cautions, content security policy) and the command on every
 * example and every shared reference model.
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { linearSystem } from '../server/src/core/analysis/dynamics';
import { linearStepResponse } from '../server/src/core/numeric/expm';
import { buildReport, CAUTIONS, type ReportData } from '../server/src/core/analysis/report';
import { renderReportHtml } from '../server/src/core/present/reportHtml';
import { formatReportText } from '../server/src/core/present/reportText';
import { createSimulator } from '../server/src/core/analysis/simulate';
import { ensureBuilt, EXAMPLES, REFERENCE, runCliAsync, scratchDir } from './helpers/cli';
import { startSession, uriOf, type Session } from './lsp/session';
import { analyzeFile, exampleModels } from './helpers/examples';

const read = (f: string) => fs.readFileSync(f, 'utf8');
const tank = () => analyze(read(path.join(EXAMPLES, 'buffer_tank.poise')));

describe('report data', () => {
  let r: ReportData;
  beforeAll(() => {
    r = buildReport(tank(), 'dry_day', { title: 'buffer_tank.poise' });
  });

  it('is plain JSON (survives a round trip unchanged)', () => {
    expect(r.ok).toBe(true);
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
  });

  it('has every section', () => {
    expect(r.values.map((v) => v.name)).toEqual(expect.arrayContaining(['level', 'inflow', 'opening', 'outflow', 'level_cm']));
    expect(r.modes).toHaveLength(1);
    expect(r.stability!.verdict).toBe('stable');
    expect(r.transfer).toHaveLength(2);
    expect(r.frequency!.omega).toHaveLength(200);
    expect(r.frequency!.pairs).toHaveLength(2);
    expect(r.steps).toHaveLength(2);
    expect(r.validity).toHaveLength(2);
    expect(r.cautions).toEqual(CAUTIONS);
  });

  it('frequencies reach two decades beyond the pole (1/τ = 3.375e-4 rad/s here)', () => {
    const w = r.frequency!.omega;
    expect(w[0]).toBeLessThanOrEqual(3.375e-4 / 100);
    expect(w[w.length - 1]).toBeGreaterThanOrEqual(3.375e-4 * 100);
  });

  it('the validity range of the buffer tank is finite and positive in both directions', () => {
    for (const v of r.validity!) {
      for (const lim of [v.up!, v.down!]) {
        expect(lim.limitedBy).toBe('tolerance');
        expect(lim.step).toBeGreaterThan(0);
        expect(Number.isFinite(lim.step)).toBe(true);
        expect(lim.firstInvalid!).toBeGreaterThan(lim.step);
        expect(lim.firstInvalid! / lim.step).toBeLessThan(1.05);
        const op = Math.abs(v.operatingValue);
        expectCloseRel(lim.percent, (100 * lim.step) / op, 1e-12);
      }
    }
  });

  it('the limits hold when checked by direct simulation: within tolerance just inside, beyond just outside', () => {
    const a = tank();
    const sim = createSimulator(a, 'dry_day')!;
    const sys = linearSystem(a.linear('dry_day')!);
    const T = r.horizon!.value;
    const times = Array.from({ length: 241 }, (_, k) => (T * k) / 240);
    const error = (j: number, s: number) => {
      const du = [0, 0];
      du[j] = s;
      const nl = sim.step({ du, times, rtol: 1e-9 });
      expect(nl.status).toBe('ok');
      const lin = linearStepResponse(sys.A, sys.B, sys.C, sys.D, sys.n, sys.m, sys.p, Float64Array.from(du), Float64Array.from(times));
      let dev = 0;
      let mx = 0;
      nl.outputs[0].forEach((y, k) => {
        dev = Math.max(dev, Math.abs(y - lin.y[k][0]));
        mx = Math.max(mx, Math.abs(y));
      });
      return dev / mx;
    };
    r.validity!.forEach((v, j) => {
      for (const [lim, sign] of [[v.up!, 1], [v.down!, -1]] as const) {
        expect(error(j, sign * lim.step * 0.97), `${v.input} ${sign > 0 ? 'up' : 'down'} inside`).toBeLessThanOrEqual(v.tolerance);
        expect(error(j, sign * lim.firstInvalid! * 1.03), `${v.input} ${sign > 0 ? 'up' : 'down'} outside`).toBeGreaterThan(v.tolerance);
      }
    });
  });

  it('the plotted step is 10 % of the operating value unless given, and its error flag agrees with the tolerance', () => {
    for (const s of r.steps) {
      expectCloseRel(s.step, 0.1 * s.operatingValue, 1e-12);
      expect(s.withinTolerance).toBe(s.error! <= r.tolerance);
      expect(s.outputs[0].nonlinear).toHaveLength(s.t.length);
      expect(s.outputs[0].linear).toHaveLength(s.t.length);
    }
  });

  it('a tighter tolerance gives a narrower range', () => {
    const tight = buildReport(tank(), 'dry_day', { tolerance: 0.01 });
    r.validity!.forEach((v, j) => {
      expect(tight.validity![j].up!.step).toBeLessThan(v.up!.step);
      expect(tight.validity![j].down!.step).toBeLessThan(v.down!.step);
    });
  });

  it('a step that empties the tank is reported as a domain problem, and the search treats it as invalid', () => {
    const d = buildReport(tank(), 'dry_day', { steps: { inflow: -2 }, validity: false });
    const s = d.steps.find((x) => x.input === 'inflow')!;
    expect(s.status).toBe('domain');
    expect(s.message).toMatch(/out of its domain/);
    expect(s.message).toMatch(/level fell below zero/);
    expect(s.withinTolerance).toBeNull();
    const html = renderReportHtml(d);
    expect(html).toContain('out of domain');
    // a laminar tank (linear in the level) with a √ of the level on the side: the linear model is exact until
    // the level crosses zero, which a draw step above 1 L/s makes it do (equilibrium 0.1 m·(1 − Δdraw/1 L/s))
    const a = analyze(`
const area = 2 [m^2]
const r = 100 [s/m^2]
input draw [L/s]
state level [m]
var spill [L/s]
var speed [m^0.5]
output level_cm [cm] = level
area*level' = 3 [L/s] - spill - draw
spill = level/r
speed = sqrt(level)
point p:
  draw = 2 [L/s]
  level ~ 0.1 [m]
`);
    const dv = buildReport(a, 'p');
    const up = dv.validity![0].up!;
    expect(up.limitedBy).toBe('domain');
    // within the 1000 s horizon (5τ, τ = area·r = 200 s) the level reaches zero once Δdraw > 1/(1 − e^−5) L/s
    // (the bisection brackets the limit to 4 %)
    expect(up.firstInvalid!).toBeGreaterThan(0.99);
    expect(up.step).toBeLessThan(1.0068);
    expect(up.step).toBeGreaterThan(1.0068 / 1.05);
    expect(dv.validity![0].down!.limitedBy).toBe('search limit');
    expect(up.domainMessage).toMatch(/square root/);
  });

  it('a point that cannot be solved gives a report that says why', () => {
    const a = analyze('input u\nstate x\nx\' = -x + u\npoint p:\n  x = 1\n  u = 5\n');
    const d = buildReport(a, 'p');
    expect(d.ok).toBe(false);
    expect(d.problems.length).toBeGreaterThan(0);
    expect(renderReportHtml(d)).toContain('No report');
    expect(buildReport(a, 'nope').problems[0]).toMatch(/no point named "nope"/);
  });

  it('the text summary names the verdict, gains, transfer functions and validity range', () => {
    const t = formatReportText(r);
    expect(t).toMatch(/Stability: stable/);
    expect(t).toMatch(/Δlevel_cm \/ Δinflow: 92\.59 cm\/\(L\/s\)/); // 1/(A·dq/dh) = 2h/q → 2·0.6944/1.5 m per L/s
    expect(t).toMatch(/inflow → level_cm: 0\.03125 \/ \(s \+ 0\.0003375\)/);
    expect(t).toMatch(/Validity range/);
    for (const c of CAUTIONS) expect(t).toContain(c);
  });
});

describe('the page', () => {
  const data = buildReport(tank(), 'dry_day', { title: 'buffer_tank.poise', validity: false });
  const html = renderReportHtml(data);

  it('is one standalone document that loads nothing from outside', () => {
    expect(html.startsWith('<!DOCTYPE html>')).toBe(true);
    expect(html).not.toMatch(/\bsrc\s*=/i);
    expect(html).not.toMatch(/https?:\/\//i);
    expect(html).not.toMatch(/@import|url\((?!#)/i); // url(#id) is a local clip path
    expect(html).toMatch(/<meta http-equiv="Content-Security-Policy" content="default-src &#39;none&#39;/);
  });

  it('carries the cautions', () => {
    for (const c of CAUTIONS) expect(html).toContain(c.replace(/'/g, '&#39;'));
  });

  it('follows the theme: prefers-color-scheme and the VS Code body classes and variables', () => {
    expect(html).toContain('@media (prefers-color-scheme:dark)');
    expect(html).toContain('body.vscode-dark');
    expect(html).toContain('var(--vscode-editor-background');
  });

  it('uses classes, never style attributes (a strict policy blocks those)', () => {
    expect(html).not.toMatch(/\sstyle="/);
  });

  it('has a plot per section with labelled axes', () => {
    const svgs = html.match(/<svg class="plot"[\s\S]*?<\/svg>/g) ?? [];
    // pole–zero map, 2 pairs × (magnitude + phase), 2 step responses
    expect(svgs.length).toBe(1 + 4 + 2);
    for (const s of svgs) {
      expect(s).toMatch(/<path class="series[^"]*" d="M[^"]+"/);
      expect(s).toMatch(/class="axis-label"[^>]*>[^<]+</);
    }
    expect(html).toContain('angular frequency ω [rad/s]');
    expect(html).toContain('time [s]');
  });

  it('the webview variant puts nonces on its style and script and in its policy', () => {
    const w = renderReportHtml(data, { nonce: 'n0nc3', cspSource: 'vscode-resource:' });
    expect(w).toContain('<style nonce="n0nc3">');
    expect(w).toContain('<script nonce="n0nc3">');
    expect(w).toMatch(/script-src &#39;nonce-n0nc3&#39;/);
    expect(w).toMatch(/style-src vscode-resource: &#39;nonce-n0nc3&#39;/);
    expect(w).not.toMatch(/unsafe-inline/);
  });

  it('escapes model-provided text', () => {
    const d = { ...data, title: '<img onerror=x>' };
    expect(renderReportHtml(d)).not.toContain('<img onerror');
  });
});

describe('poise report (the command)', () => {
  beforeAll(() => ensureBuilt(), 300_000);

  const models: string[] = [
    ...exampleModels().map((m) => m.file),
    ...(fs.existsSync(path.join(REFERENCE, 'models')) ? fs.readdirSync(path.join(REFERENCE, 'models')).filter((f) => f.endsWith('.poise')).map((f) => path.join(REFERENCE, 'models', f)) : []),
  ];

  it('writes the page for every point of every example and shared reference model', async () => {
    expect(models.length).toBeGreaterThanOrEqual(12);
    const dir = scratchDir('report');
    try {
      const jobs: [string, string][] = [];
      for (const f of models) for (const p of analyzeFile(f).pointNames) jobs.push([f, p]);
      // two at a time (two cores)
      for (let k = 0; k < jobs.length; k += 2) {
        await Promise.all(
          jobs.slice(k, k + 2).map(async ([f, p]) => {
            const out = path.join(dir, `${path.basename(f, '.poise')}-${p}.html`);
            const r = await runCliAsync(['report', f, '--point', p, '--html', out]);
            expect(r.code, `${f} ${p}: ${r.stderr}`).toBe(0);
            expect(r.stdout).toContain(`report of point "${p}"`);
            const page = read(out);
            expect(page.startsWith('<!DOCTYPE html>')).toBe(true);
            expect(page).toContain('<svg class="plot"');
            expect(page).toContain(CAUTIONS[0]);
          }),
        );
      }
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }, 180_000);

  it('--format json, --step with a percentage and --tolerance', async () => {
    const r = await runCliAsync(['report', path.join(EXAMPLES, 'buffer_tank.poise'), '--point', 'dry_day', '--format', 'json', '--step', 'inflow=5%', '--step', 'opening=-0.02', '--tolerance', '2']);
    expect(r.code, r.stderr).toBe(0);
    const d = JSON.parse(r.stdout) as ReportData;
    expect(d.schema).toBe('poise-report/1');
    expect(d.tolerance).toBe(0.02);
    expectCloseRel(d.steps.find((s) => s.input === 'inflow')!.step, 0.075, 1e-12);
    expectCloseRel(d.steps.find((s) => s.input === 'opening')!.step, -0.02, 1e-12);
  });

  it('says what is wrong with bad options', async () => {
    const f = path.join(EXAMPLES, 'buffer_tank.poise');
    const bad = await runCliAsync(['report', f, '--point', 'dry_day', '--step', 'nope=1']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/"nope" is not an input/);
    const tol = await runCliAsync(['report', f, '--point', 'dry_day', '--tolerance', '0']);
    expect(tol.code).toBe(2);
    const two = await runCliAsync(['report', f]);
    expect(two.code).toBe(1);
    expect(two.stderr).toMatch(/choose one with --point/);
  });
});

describe('poise/report in the language server (the page the editor shows)', () => {
  let s: Session;
  beforeAll(async () => {
    s = await startSession({ settings: { digits: 4, activePoint: '', warnUnused: true } });
  }, 300_000);
  afterAll(async () => {
    await s?.shutdown();
  });

  it('answers {uri, point} with the page and a title', async () => {
    const uri = uriOf('buffer_tank.poise');
    await s.open(uri, read(path.join(EXAMPLES, 'buffer_tank.poise')));
    const r = await s.request<{ html: string; title: string }>('poise/report', { uri, point: 'cloudburst' });
    expect(r.title).toBe('Report: cloudburst');
    expect(r.html.startsWith('<!DOCTYPE html>')).toBe(true);
    expect(r.html).toContain('point <span class="mono">cloudburst</span>');
    expect(r.html).toContain('<svg class="plot"');
    // no nonce of its own: the client stamps its nonce on the inline script
    expect(r.html).toContain('<script>');
    const first = await s.request<{ html: string; title: string }>('poise/report', { uri });
    expect(first.title).toBe('Report: dry_day');
  }, 60_000);

  it('says what is wrong instead of failing silently', async () => {
    const uri = uriOf('buffer_tank2.poise');
    await s.open(uri, read(path.join(EXAMPLES, 'buffer_tank.poise')));
    await expect(s.request('poise/report', { uri, point: 'nope' })).rejects.toThrow(/no point named "nope"/);
    await expect(s.request('poise/report', { uri: uriOf('not-open.poise'), point: 'p' })).rejects.toThrow(/not open/);
  }, 60_000);
});

function expectCloseRel(a: number, b: number, rel: number): void {
  expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.abs(b));
}

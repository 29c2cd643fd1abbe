/**
 * The `poise` command line (issue 2, section 4): output formats, exit codes, error messages and golden
 * outputs. Most cases call `main(argv, io)` in-process (fast); a few run the built `bin/poise.js` as a
 * real process to check what a shell sees (exit status, stdout/stderr, no stack trace).
 *
 * Golden files: test/golden/linearize/*.txt; rewrite with `POISE_UPDATE_GOLDEN=1 npx vitest run` and
 * review the diff (see test/helpers/golden.ts).
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { main } from '../server/src/cli/main';
import { ensureBuilt, EXAMPLES, runCli, scratchDir } from './helpers/cli';
import { expectGolden } from './helpers/golden';
import { dedent } from './helpers/model';
import { exampleModels } from './helpers/examples';

async function run(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(argv, { out: (s) => (out += s.endsWith('\n') ? s : s + '\n'), err: (s) => (err += s.endsWith('\n') ? s : s + '\n') });
  return { code, out, err };
}

const DIAG_LINE = /^(.+):(\d+):(\d+): (error|warning|info) (P\d{3}): (.+)$/;
const STACK = /\n\s+at .+[:(]\d+:\d+/;

let dir = '';
const file = (name: string, text: string) => {
  const p = path.join(dir, name);
  fs.writeFileSync(p, dedent(text));
  return p;
};
beforeAll(() => {
  dir = scratchDir('cli');
});
afterAll(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});

const examples = exampleModels().map((m) => m.name); // subfolders too (feed_header/plant.poise)
const ex = (f: string) => path.join(EXAMPLES, f);

describe('poise check', () => {
  it('says "FILE: ok" for each clean file (nothing with --quiet) and exits 0', async () => {
    const r = await run('check', ...examples.map(ex));
    expect(r).toEqual({ code: 0, out: examples.map((f) => `${ex(f)}: ok\n`).join(''), err: '' });
    expect(await run('check', '--quiet', ...examples.map(ex))).toEqual({ code: 0, out: '', err: '' });
  });

  it('prints path:line:col: severity CODE: message for each problem, exit 1 on errors', async () => {
    const f = file('bad.poise', `
      input u
      state x
      const spare = 2
      x' = -x + u + zz
      point p:
        u = 1
    `);
    const r = await run('check', f);
    expect(r.code).toBe(1);
    const lines = r.out.trimEnd().split('\n');
    for (const l of lines) expect(l).toMatch(DIAG_LINE);
    // "zz" starts at line 4, column 15 (1-based) of the file written above
    expect(lines).toContain(`${f}:4:15: error P201: Unknown name "zz": declare it (const, input, state, var or output) or fix the spelling.`);
    expect(lines.some((l) => l.startsWith(`${f}:3:7: warning P203: `))).toBe(true);
    // sorted by position
    const pos = lines.map((l) => DIAG_LINE.exec(l)!).map((m) => Number(m[2]) * 1000 + Number(m[3]));
    expect(pos).toEqual([...pos].sort((a, b) => a - b));
  });

  it('exits 0 when there are only warnings, and checks several files', async () => {
    const f = file('warn.poise', `
      const spare = 2
      input u
      state x
      x' = -x + u
      point p:
        u = 1
    `);
    const r = await run('check', f, ex('buffer_tank.poise'));
    expect(r.code).toBe(0);
    expect(r.out.trimEnd().split('\n')).toEqual([`${f}:1:7: warning P203: Constant "spare" is declared but never used: use it in an equation or remove it.`, `${ex('buffer_tank.poise')}: ok`]);
  });

  it('reports point problems (found by solving) too', async () => {
    const f = file('nosol.poise', `
      input u
      state x
      x' = -x*x - u
      point p:
        u = 1
    `);
    const r = await run('check', f);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(new RegExp(`^${f.replace(/[.\\/]/g, '\\$&')}:4:7: error P503: `));
  });
});

describe('poise solve', () => {
  it('prints every variable at the point with its unit', async () => {
    const r = await run('solve', ex('buffer_tank.poise'), '--point', 'dry_day');
    expect(r.code).toBe(0);
    expect(r.err).toBe('');
    const a = analyze(fs.readFileSync(ex('buffer_tank.poise'), 'utf8'));
    for (const s of [...a.bound.inputs, ...a.bound.states, ...a.bound.vars, ...a.bound.outputs]) {
      const unit = s.unit ? ` [${s.unit.text}]` : '';
      expect(r.out, s.name).toMatch(new RegExp(`^\\s+${s.name}\\s+[-0-9.e]+${unit.replace(/[[\]^/*]/g, '\\$&')}`, 'm'));
    }
    // Torricelli outflow q = opening·cv·√h: h = (1.5e-3 m³/s / (0.4 · 0.0045 m^2.5/s))² = 0.694444 m
    expect(r.out).toMatch(/^\s+level\s+0\.694444 \[m\]$/m);
    expect(r.out).toMatch(/^\s+level_cm\s+69\.4444 \[cm\]$/m);
    expect(r.out).toMatch(/^\s+inflow\s+1\.5 \[L\/s\]\s+\(fixed\)$/m);
  });

  it('takes the only point without --point', async () => {
    const r = await run('solve', ex('jacketed_reactor.poise'));
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^Point hold_350/);
    expect(r.out).toMatch(/^\s+tjacket\s+[0-9.]+ \[K\]$/m);
  });
});

describe('errors: one clear line on stderr, non-zero exit, no stack trace', () => {
  const cases: [string, () => string[], RegExp][] = [
    ['missing file', () => ['solve', path.join(dir, 'nope.poise')], /cannot read .*nope\.poise: no such file/],
    ['a folder', () => ['linearize', dir], /is a folder/],
    ['unknown point', () => ['solve', ex('buffer_tank.poise'), '--point', 'wet'], /no point named "wet".*"dry_day", "cloudburst"/],
    ['several points without --point', () => ['linearize', ex('buffer_tank.poise')], /2 points \(dry_day, cloudburst\); choose one with --point/],
    ['unknown command', () => ['frobnicate', ex('buffer_tank.poise')], /unknown command "frobnicate"/],
    ['unknown format', () => ['linearize', ex('gantry_crane.poise'), '--format', 'yaml'], /--format of "poise linearize" takes text, json, .* or numpy, not "yaml"/],
    ['option without value', () => ['solve', ex('buffer_tank.poise'), '--point'], /--point needs a value/],
    ['no file', () => ['solve'], /takes one model file/],
  ];
  it.each(cases)('%s', async (_, argv, msg) => {
    const r = await run(...argv());
    expect(r.code).toBeGreaterThan(0);
    expect(r.out).toBe('');
    expect(r.err.trimEnd().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(msg);
    expect(r.err).not.toMatch(STACK);
  });

  it('model errors go to stderr as diagnostics, exit 1', async () => {
    const f = file('broken.poise', `
      input u
      state x
      x' = -x + u +
      point p:
        u = 1
    `);
    const r = await run('linearize', f);
    expect(r.code).toBe(1);
    expect(r.out).toBe('');
    const lines = r.err.trimEnd().split('\n');
    expect(lines.length).toBeGreaterThan(0);
    for (const l of lines) expect(l).toMatch(DIAG_LINE);
    expect(r.err).not.toMatch(STACK);
  });

  it('a point that does not solve: its diagnostic on stderr, exit 1', async () => {
    const f = file('nosolve.poise', `
      input u
      state x
      x' = -x*x - u
      point p:
        u = 1
    `);
    const r = await run('solve', f);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/:4:7: error P503: Point "p" has no real solution/);
  });
});

describe('poise linearize formats', () => {
  it('json: the documented fields, names in matrix order, values in declared units', async () => {
    const r = await run('linearize', ex('glasshouse_loop.poise'), '--format', 'json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    for (const k of ['point', 'values', 'states', 'inputs', 'outputs', 'A', 'B', 'C', 'D', 'eigenvalues']) expect(j, k).toHaveProperty(k);
    expect(j.point).toBe('night');
    expect(j.states).toEqual(['twater', 'tpipe', 'tair']);
    expect(j.inputs).toEqual(['power', 'flow']);
    expect(j.outputs).toEqual(['tret']);
    expect(j.values.tair).toEqual({ value: 18, unit: 'degC' });
    expect(j.A).toHaveLength(3);
    expect(j.A[0]).toHaveLength(3);
    expect(j.B[0]).toHaveLength(2);
    expect(j.C).toHaveLength(1);
    expect(j.D[0]).toHaveLength(2);
    for (const e of j.eigenvalues) expect(Object.keys(e).sort()).toEqual(['im', 're']);
    // heat balance of the air at steady state: qpipe = uglass·(tair − tout) = 0.75 kW/K · 14 K = 10.5 kW,
    // and the boiler supplies it: power = qpipe
    expect(j.values.qpipe.value).toBeCloseTo(10.5, 10);
    expect(j.values.power).toEqual({ value: expect.closeTo(10.5, 10), unit: 'kW' });
    // the pump flow enters the heat balance: the loop carries qloop = ρ·cw·F·(twater − tpipe) = 10.5 kW,
    // so twater − tpipe = 10.5 kW / (1 kg/L · 4.18 kJ/(kg·K) · 120 L/min) = 10.5·60/(4.18·120) K = 1.25598 K
    // (hand computation), and the flow column of B is not zero:
    // ∂twater'/∂F = −(twater − tpipe)/vboiler = −1.25598/600 K/L, ∂tpipe'/∂F = +1.25598/250 K/L
    const dT = (10.5 * 60) / (4.18 * 120);
    expect(j.values.twater.value - j.values.tpipe.value).toBeCloseTo(dT, 9);
    const f = j.inputs.indexOf('flow');
    expect(Math.abs(j.B[0][f] + dT / 600) / (dT / 600)).toBeLessThan(1e-9);
    expect(Math.abs(j.B[1][f] - dT / 250) / (dT / 250)).toBeLessThan(1e-9);
    // steady-state heat balance (an independent route): with the firing fixed, all of it leaves through
    // the glass, so tair does not depend on the flow and Δtair/Δpower = 1/uglass; the DC gain of tret is
    // 1/uglass + 1/upipe for power and 0 for flow: −C·A⁻¹·B + D solved here by Cramer's rule
    const A = j.A as number[][];
    const det3 = (m: number[][]) => m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1]) - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0]) + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
    const solve = (b: number[]) => [0, 1, 2].map((k) => det3(A.map((row, i) => row.map((v, c) => (c === k ? b[i] : v)))) / det3(A));
    const dc = (col: number) => -solve(j.B.map((row: number[]) => row[col]))[1]; // tret = tpipe
    expect(Math.abs(dc(j.inputs.indexOf('power')) - (1 / 0.75 + 1 / 0.9)) / (1 / 0.75 + 1 / 0.9)).toBeLessThan(1e-9);
    expect(Math.abs(dc(f))).toBeLessThan(1e-12);
  });

  it('markdown: a heading naming the point and tables of A, B, C, D with Δ names', async () => {
    const r = await run('linearize', ex('glasshouse_loop.poise'), '--format', 'markdown');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^## .*`night`/);
    for (const m of ['A', 'B', 'C', 'D']) expect(r.out).toMatch(new RegExp(`^\\*\\*${m}\\*\\*`, 'm'));
    // the A row of twater: [−k, k, 0] with k = ρ·cw·F/(ρ·vboiler·cw) = F/vboiler = 120 L/min / 600 L
    // = 0.2 /min (hand computation)
    const row = r.out.split('\n').find((l) => /^\| Δtwater'?( \[[^\]]*\])? \|/.test(l) && l.split('|').length === 6);
    expect(row, 'A row of Δtwater').toBeDefined();
    const [a11, a12, a13] = row!.split('|').slice(2, 5).map((c) => Number(c.trim()));
    const k = 120 / 600;
    expect(Math.abs(a11 + k) / k).toBeLessThan(1e-4);
    expect(Math.abs(a12 - k) / k).toBeLessThan(1e-4);
    expect(a13).toBe(0);
  });

  it('text is the default and names the time unit', async () => {
    const a = await run('linearize', ex('glasshouse_loop.poise'));
    const b = await run('linearize', ex('glasshouse_loop.poise'), '--format', 'text');
    expect(a).toEqual(b);
    expect(a.out).toMatch(/^Point night \(time in min\)/);
    expect(a.out).toMatch(/^Eigenvalues \[1\/min\]: /m);
  });
});

describe('golden linearize text output of every example', () => {
  const jobs = examples.flatMap((f) => analyze(fs.readFileSync(ex(f), 'utf8')).pointNames.map((p) => ({ f, p })));
  it.each(jobs)('$f @ $p', async ({ f, p }) => {
    const r = await run('linearize', ex(f), '--point', p);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expectGolden(`linearize/${f.replace(/\.poise$/, '')}.${p}.txt`, r.out);
  });
});

describe('the built command as a real process', () => {
  beforeAll(() => ensureBuilt());

  it('check: exit status 1 and diagnostics on stdout', () => {
    const f = file('proc_bad.poise', `
      input u
      state x
      x' = -x + u + zz
      point p:
        u = 1
    `);
    const r = runCli(['check', f]);
    expect(r.code).toBe(1);
    expect(r.stdout.trimEnd().split('\n')).toEqual([`${f}:3:15: error P201: Unknown name "zz": declare it (const, input, state, var or output) or fix the spelling.`]);
    expect(r.stderr).toBe('');
  });

  it('a missing file: one line on stderr, non-zero status, no stack trace', () => {
    const r = runCli(['linearize', path.join(dir, 'missing.poise'), '--format', 'json']);
    expect(r.code).not.toBe(0);
    expect(r.stdout).toBe('');
    expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
    expect(r.stderr).not.toMatch(STACK);
  });

  it('linearize --format json prints parseable JSON and exits 0', () => {
    const r = runCli(['linearize', ex('valve_network.poise'), '--format', 'json']);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe('');
    expect(JSON.parse(r.stdout).point).toBe('design');
  });
});

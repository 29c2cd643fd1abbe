/**
 * Sweeps (server/src/core/analysis/sweep.ts) and `poise sweep` (server/src/cli/sweep.ts).
 *
 * Outside checks, each named beside its assertion:
 * - belt drive (examples/belt_drive.poise): mass*x'' + damp*x' + stiff*x = press*(muk + (mus−muk)*exp(−slip/vref)),
 *   slip = belt − x'. At a steady state x' = 0, so slip = belt, and the linearised damping is
 *   c(belt) = damp − press*(mus−muk)/vref*exp(−belt/vref) (derivative of an exponential: common practice).
 *   A mass–spring–damper has eigenvalues −c/(2m) ± i*sqrt(k/m − (c/2m)^2) (common practice), so the pair
 *   crosses the imaginary axis where c = 0: belt* = vref*ln(press*(mus−muk)/(damp*vref)), at ω = sqrt(stiff/mass).
 * - fold: x' = u − x^2 has steady states x = ±sqrt(u) only for u ≥ 0, eigenvalue −2*sqrt(u) on the upper branch
 *   (saddle-node normal form, Strogatz, Nonlinear Dynamics and Chaos, ch. 3).
 * - fold with a jump elsewhere: x' = u + x − x^3; the lower branch ends at u = 2/(3*sqrt(3)), where
 *   d(x^3 − x)/dx = 0 at x = −1/sqrt(3) (imperfect bifurcation, Strogatz ch. 3).
 * - real eigenvalue through zero: x' = (r − 1)*x − x^3, the origin has eigenvalue r − 1 (supercritical
 *   pitchfork normal form shifted by 1, Strogatz ch. 3).
 * - 50 tanks in series with sqrt outflow: each tank's linearised eigenvalue is −k^2/(2*area_i*q) at throughput q
 *   (tau = 2*A*h0/q0 with q0 = k*sqrt(h0): Seborg, Edgar, Mellichamp & Doyle, Process Dynamics and Control).
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { linearEigen } from '../server/src/core/present/format';
import { declaredSweeps, runSweep, sweepValues, type SweepResult } from '../server/src/core/analysis/sweep';
import { sweepCsv } from '../server/src/core/present/sweepCsv';
import { sweepJson } from '../server/src/core/present/sweepJson';
import { varyRequest } from '../server/src/cli/vary';
import { main, type Io } from '../server/src/cli/main';
import { sweepHtml } from '../server/src/core/present/sweepHtml';
import { EXAMPLES, scratchDir } from './helpers/cli';
import { dedent, expectClose } from './helpers/model';

const beltFile = path.join(EXAMPLES, 'belt_drive.poise');
const beltText = fs.readFileSync(beltFile, 'utf8');

// constants of examples/belt_drive.poise, read from the file so the check follows the model
function beltConst(name: string): number {
  const m = new RegExp(`^const ${name}\\s*=\\s*([0-9.eE+-]+)`, 'm').exec(beltText);
  if (!m) throw new Error(`no const ${name} in belt_drive.poise`);
  return Number(m[1]);
}
const mass = beltConst('mass');
const stiff = beltConst('stiff');
const damp = beltConst('damp');
const press = beltConst('press');
const mus = beltConst('mus');
const muk = beltConst('muk');
const vref = beltConst('vref');
/** Linearised damping of the belt drive at belt speed v (SI). */
const cEff = (v: number) => damp - (press * (mus - muk)) / vref * Math.exp(-v / vref);

/** Eigenvalues of the belt drive solved and linearised from scratch at one belt speed (a point written anew). */
function beltEigenAt(belt: number) {
  const text = beltText.replace(/belt = 0\.3 \[m\/s\]/, `belt = ${belt} [m/s]`);
  expect(text).not.toBe(beltText);
  const a = analyze(text);
  const lin = a.linear('slow');
  if (!lin || !lin.ok) throw new Error(`belt = ${belt}: no linear model`);
  return linearEigen(lin);
}

function capture(): Io & { stdout: string; stderr: string } {
  const io = { stdout: '', stderr: '', out(s: string) { io.stdout += s.endsWith('\n') ? s : s + '\n'; }, err(s: string) { io.stderr += s.endsWith('\n') ? s : s + '\n'; } };
  return io;
}

describe('belt drive sweep', () => {
  const a = analyze(beltText);
  const decl = declaredSweeps(a);
  const spec = decl[0].spec!;
  const r = runSweep(a, spec);

  it('runs the declared sweep over every value', () => {
    expect(decl.map((d) => d.diagnostics.length)).toEqual([0]);
    expect(spec).toMatchObject({ point: 'slow', vary: 'belt', from: 0.05, to: 3, steps: 60, log: false }); // as written in the file
    expect(r.complete).toBe(true);
    expect(r.stop).toBeUndefined();
    expect(r.points.map((p) => p.value)).toEqual(sweepValues(spec));
    expect(r.points.length).toBe(61);
  });

  it('finds one stability change by bisection: a complex pair at the closed-form belt speed', () => {
    expect(r.crossings.length).toBe(1);
    const c = r.crossings[0];
    expect(c.kind).toBe('complex');
    expect(c.before).toBe('unstable');
    expect(c.after).toBe('stable');
    expect(c.bisections).toBeGreaterThan(10);
    // c(belt*) = 0 → belt* = vref*ln(press*(mus−muk)/(damp*vref)) (derivative of an exponential: common practice)
    const closed = vref * Math.log((press * (mus - muk)) / (damp * vref));
    expectClose(c.at, closed, 1e-8, 0, 'crossing belt speed');
    expect(c.upper - c.lower).toBeLessThan(1e-8);
    // undamped oscillator at the crossing: ω = sqrt(k/m) (common practice)
    expectClose(c.frequency!, Math.sqrt(stiff / mass), 1e-7, 0, 'crossing frequency');
    expect(c.message).toMatch(/complex pair crosses the imaginary axis/);
  });

  it('agrees with solving and linearising point by point, and just either side of the crossing', () => {
    for (const k of [0, 17, 34, 35, 60]) {
      const p = r.points[k];
      const fresh = beltEigenAt(p.value);
      expect(p.eigenvalues.length).toBe(fresh.length);
      p.eigenvalues.forEach((e, i) => {
        expectClose(e.re, fresh[i].re, 1e-8, 1e-9, `Re λ at belt ${p.value}`);
        expectClose(e.im, fresh[i].im, 1e-8, 1e-9, `Im λ at belt ${p.value}`);
      });
      // Re λ = −c/(2m) for a mass–spring–damper (common practice); x is in mm but eigenvalues do not depend on units
      expectClose(p.eigenvalues[0].re, -cEff(p.value) / (2 * mass), 1e-8, 1e-12, `Re λ closed form at ${p.value}`);
    }
    const c = r.crossings[0];
    const below = beltEigenAt(c.at - 1e-6);
    const above = beltEigenAt(c.at + 1e-6);
    expect(Math.max(...below.map((e) => e.re))).toBeGreaterThan(0);
    expect(Math.max(...above.map((e) => e.re))).toBeLessThan(0);
  });

  it('reports modes and DC gains per point', () => {
    const p = r.points[60];
    expect(p.modes.length).toBe(1); // one complex pair listed once
    const m = p.modes[0];
    // ζ = c/(2*sqrt(k*m)) for a mass–spring–damper (common practice); τ = 1/|Re λ| = 2m/c
    expectClose(m.dampingRatio!, cEff(3) / (2 * Math.sqrt(stiff * mass)), 1e-7, 0, 'damping ratio');
    expectClose(m.timeConstant!, (2 * mass) / cEff(3), 1e-7, 0, 'time constant');
    // static deflection per belt speed: stiff*Δx = ∂fric/∂belt*Δbelt; ∂fric/∂slip = −press*(mus−muk)/vref*exp(−slip/vref); x in mm
    const gain = (1000 * (-(press * (mus - muk)) / vref) * Math.exp(-3 / vref)) / stiff;
    expect(r.gainRows).toEqual(['x', "x'"]);
    expectClose(p.dcGain![0][0], gain, 1e-9, 0, 'DC gain x/belt');
    expect(Math.abs(p.dcGain![1][0])).toBeLessThan(1e-12);
  });

  it('writes CSV and JSON that carry the same numbers', () => {
    const csv = sweepCsv(r).trim().split('\n');
    expect(csv.length).toBe(62);
    const head = csv[0].split(',');
    const iRe = head.indexOf('eig1_re [1/s]');
    const iBelt = head.indexOf('belt [m/s]');
    expect(iRe).toBeGreaterThan(0);
    expect(iBelt).toBe(0);
    csv.slice(1).forEach((line, k) => {
      const cells = line.split(',');
      expect(Number(cells[iBelt])).toBe(r.points[k].value);
      expect(Number(cells[iRe])).toBe(r.points[k].eigenvalues[0].re);
    });
    const j = JSON.parse(JSON.stringify(sweepJson(r))) as SweepResult & { schema: string };
    expect(j.schema).toBe('poise-sweep/2');
    expect(j.crossings[0].at).toBe(r.crossings[0].at);
    expect(j.points[10].values).toEqual(r.points[10].values);
    // one concept, one name: the damping ratio is `dampingRatio` as in the report's modes (schema /2)
    const pair = (j.points[10].modes as unknown as Record<string, unknown>[]).find((m) => (m.im as number) > 0)!;
    expect(pair).toHaveProperty('dampingRatio');
    expect(pair).not.toHaveProperty('damping');
    const ev = j.points[10].eigenvalues.find((e) => e.im > 0)!;
    expect(pair.dampingRatio).toBeCloseTo(-ev.re / Math.hypot(ev.re, ev.im), 12); // ζ = −Re λ/|λ| (common practice)
  });
});

describe('folds and other stability changes', () => {
  it('stops cleanly at a fold hit on the grid (x\' = u − x^2, u from 1 to −1)', () => {
    const a = analyze(dedent(`
      input u
      state x
      x' = u - x^2
      point p:
        u = 1
        x ~ 1
    `));
    const r = runSweep(a, { point: 'p', vary: 'u', from: 1, to: -1, steps: 20 });
    expect(r.complete).toBe(false);
    expect(r.stop?.kind).toBe('fold');
    expect(Math.abs(r.stop!.at)).toBeLessThan(1e-9); // saddle-node at u = 0 (Strogatz ch. 3)
    expect(r.points.length).toBe(11); // u = 1, 0.9, …, 0
    for (const p of r.points) {
      expect(p.value).toBeGreaterThanOrEqual(0);
      // eigenvalue −2*sqrt(u) on the upper branch (Strogatz ch. 3)
      expectClose(p.eigenvalues[0].re, -2 * Math.sqrt(p.value), 1e-7, 1e-7, `λ at u = ${p.value}`);
    }
    expect(r.stop!.message).toMatch(/fold/);
    const html = sweepHtml(r);
    expect(html).toMatch(/stopped at a fold/);
    expect(html).toMatch(/<svg/);
  });

  it('locates a fold between grid values by bisection', () => {
    const a = analyze('input u\nstate x\nx\' = u - x^2\npoint p:\n  u = 1\n  x ~ 1\n');
    const r = runSweep(a, { point: 'p', vary: 'u', from: 1, to: -1, steps: 7 });
    expect(r.stop?.kind).toBe('fold');
    expect(Math.abs(r.stop!.at)).toBeLessThan(1e-8); // u = 0 (Strogatz ch. 3)
    expect(r.points.length).toBe(4);
  });

  it('does not jump to the far branch past a fold (x\' = u + x − x^3)', () => {
    const a = analyze('input u\nstate x\nx\' = u + x - x^3\npoint p:\n  u = -1\n  x ~ -1.3\n');
    const r = runSweep(a, { point: 'p', vary: 'u', from: -1, to: 1, steps: 10 });
    expect(r.stop?.kind).toBe('fold');
    // the lower branch ends at u = 2/(3*sqrt(3)) (Strogatz ch. 3)
    expectClose(r.stop!.at, 2 / (3 * Math.sqrt(3)), 1e-8, 0, 'fold');
    expect(r.points.every((p) => p.values[0] < -0.5)).toBe(true); // x stays on the lower branch
  });

  it('names a real eigenvalue through zero (x\' = (r − 1)*x − x^3 at the origin)', () => {
    const a = analyze('const r = 0\nstate x\nx\' = (r - 1)*x - x^3\npoint p:\n  x ~ 0\n');
    const res = runSweep(a, { point: 'p', vary: 'r', from: 0, to: 2, steps: 7 });
    expect(res.complete).toBe(true);
    expect(res.crossings.length).toBe(1);
    expect(res.crossings[0].kind).toBe('real');
    expectClose(res.crossings[0].at, 1, 1e-8, 0, 'pitchfork at r = 1'); // eigenvalue r − 1 (Strogatz ch. 3)
    expect(res.crossings[0].message).toMatch(/real eigenvalue crosses zero into the right half-plane/);
  });

  it('follows a 50-state chain over 200 steps with the closed-form eigenvalues', () => {
    const n = 50;
    let t = 'const k = 0.01 [m^2.5/s]\ninput q [m^3/s]\n';
    for (let i = 1; i <= n; i++) t += `const area${i} = ${1 + i / 10} [m^2]\nstate h${i} [m]\nvar f${i} [m^3/s]\n`;
    for (let i = 1; i <= n; i++) t += `f${i} = k*sqrt(h${i})\narea${i}*h${i}' = ${i === 1 ? 'q' : `f${i - 1}`} - f${i}\n`;
    t += 'point base:\n  q = 0.01 [m^3/s]\n';
    const a = analyze(t);
    expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const r = runSweep(a, { point: 'base', vary: 'q', from: 0.005, to: 0.02, steps: 200 });
    expect(r.complete).toBe(true);
    expect(r.points.length).toBe(201);
    for (const p of [r.points[0], r.points[100], r.points[200]]) {
      const want = Array.from({ length: n }, (_, i) => -(0.01 ** 2) / (2 * (1 + (i + 1) / 10) * p.value)).sort((x, y) => x - y);
      p.eigenvalues.forEach((e, i) => expectClose(e.re, want[i], 1e-9, 0, `tank eigenvalue at q = ${p.value}`)); // Seborg et al.
    }
  });
});

describe('declared sweeps and requests', () => {
  const base = dedent(`
    const area = 2 [m^2]
    input feed [m^3/s]
    state level [m]
    var out [m^3/s]
    out = 0.01*sqrt(level)
    area*level' = feed - out
    point nominal:
      feed = 0.02 [m^3/s]
      level ~ 1 [m]
  `);
  const diags = (sweep: string) => {
    const a = analyze(base + sweep);
    return { a, d: declaredSweeps(a).flatMap((x) => x.diagnostics) };
  };

  it('accepts a constant, a fixed input, and bounds with units', () => {
    const { a, d } = diags('sweep s from nominal:\n  vary feed = 10 [L/s] to 0.05 steps 8 log\n');
    expect(d).toEqual([]);
    const spec = declaredSweeps(a)[0].spec!;
    expectClose(spec.from, 0.01, 1e-12, 0, '10 L/s in m^3/s'); // 1 L = 0.001 m^3 (SI Brochure)
    expect(spec.to).toBe(0.05);
    expect(diags('sweep s from nominal:\n  vary area = 1 to 3 steps 4\n').d).toEqual([]);
  });

  it('reports P602 for a solved variable, a log sweep through zero and an empty range', () => {
    const solved = diags('sweep s from nominal:\n  vary level = 1 to 2 steps 4\n').d;
    expect(solved.map((x) => x.code)).toEqual(['P602']);
    expect(solved[0].message).toMatch(/solves for|does not fix/);
    const log = diags('sweep s from nominal:\n  vary feed = 0 to 0.05 steps 4 log\n').d;
    expect(log.map((x) => x.code)).toEqual(['P602']); // log of 0 is undefined (common practice)
    expect(log[0].message).toMatch(/above zero/);
    const empty = diags('sweep s from nominal:\n  vary feed = 0.02 to 0.02 steps 4\n').d;
    expect(empty.map((x) => x.code)).toEqual(['P602']);
  });

  it('reads command-line ranges in the words of a declared sweep, with units', () => {
    const a = analyze(base);
    const r = varyRequest(a, 'nominal', 'feed = 5 [L/s] to 0.03 steps 6');
    expectClose(r.spec!.from, 0.005, 1e-12, 0, '5 L/s'); // 1 L = 0.001 m^3 (SI Brochure)
    expect(r.spec!.to).toBe(0.03);
    expect(r.spec!.steps).toBe(6);
    expect(r.spec!.log).toBe(false);
    // the same range written as a sweep block in the model resolves to the same spec (independent route)
    const declared = declaredSweeps(analyze(base + 'sweep s from nominal:\n  vary feed = 5 [L/s] to 0.03 steps 6\n'))[0].spec!;
    expect({ ...r.spec, name: 's' }).toEqual(declared);
    expect(varyRequest(a, 'nominal', 'vary feed = 0.01 to 0.03 steps 4 log').spec!.log).toBe(true);
    expect(varyRequest(a, 'nominal', 'feed = 5 [kg] to 0.03 steps 6').error).toMatch(/P308|convert|unit/i);
    expect(varyRequest(a, 'nominal', 'level = 1 to 2 steps 3').error).toMatch(/level/);
    expect(varyRequest(a, 'nominal', 'feed = 0 to 1 steps 3 log').error).toMatch(/above zero/);
    expect(varyRequest(a, 'nominal', 'feed = 1 to 2').error).toMatch(/NAME = FROM to TO steps N/);
    expect(varyRequest(a, 'nominal', 'nosuch = 1 to 2 steps 3').error).toMatch(/the model has no name "nosuch"/);
    expect(varyRequest(a, 'nominal', 'fede = 1 to 2 steps 3').error).toBe('--vary: the model has no name "fede"; did you mean "feed"?');
    // the colon triple is refused: its parts mean different things in different tools
    const colon = varyRequest(a, 'nominal', 'feed=1:2:3');
    expect(colon.spec).toBeUndefined();
    expect(colon.error).toMatch(/--vary "feed = FROM to TO steps N"/);
  });
});

describe('poise sweep', () => {
  it('runs the declared sweep and prints JSON', async () => {
    const io = capture();
    const code = await main(['sweep', beltFile, '--format', 'json'], io);
    expect(code).toBe(0);
    const j = JSON.parse(io.stdout) as SweepResult;
    expect(j.points.length).toBe(61);
    expect(j.crossings[0].kind).toBe('complex');
    expectClose(j.crossings[0].at, vref * Math.log((press * (mus - muk)) / (damp * vref)), 1e-8, 0, 'crossing from the CLI'); // closed form above
  });

  it('runs --vary with units and writes CSV; refuses bad requests', async () => {
    const io = capture();
    expect(await main(['sweep', beltFile, '--point', 'fast', '--vary', 'belt = 1500 [mm/s] to 2 steps 5', '--format', 'csv'], io)).toBe(0);
    const lines = io.stdout.trim().split('\n');
    expect(lines.length).toBe(7);
    expect(Number(lines[1].split(',')[0])).toBe(1.5); // 1500 mm/s = 1.5 m/s
    const bad = capture();
    expect(await main(['sweep', beltFile, '--point', 'fast', '--vary', 'slip = 1 to 2 steps 3'], bad)).toBe(2);
    expect(bad.stderr).toMatch(/slip/);
    const none = capture();
    expect(await main(['sweep', beltFile, '--sweep', 'nothing'], none)).toBe(1);
    expect(none.stderr).toMatch(/no sweep named "nothing"/);
  });

  it('writes the HTML page', async () => {
    const dir = scratchDir('sweep');
    try {
      const out = path.join(dir, 'sweep.html');
      const io = capture();
      expect(await main(['sweep', beltFile, '--html', out], io)).toBe(0);
      const html = fs.readFileSync(out, 'utf8');
      expect(html).toMatch(/<svg/);
      expect(html).toMatch(/belt/);
      expect(html).toMatch(/1\.688/); // the crossing, closed form above
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

/**
 * Hovers through the real server over stdio: variables, equations (local gains), points (eigenvalues,
 * stability, time constants), constants, built-in functions, keywords, units and Δ names.
 * Expected figures are derived by hand from the model text (steady state: derivatives zero) or from
 * published closed forms, named beside each check.
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BUILTIN_DOC } from '../../server/src/core/algebra/expr';
import { EXAMPLES, REFERENCE } from '../helpers/cli';
import { startSession, uriOf, type Session } from './session';

let s: Session;
const settings = { digits: 4, activePoint: '' };
beforeAll(async () => {
  s = await startSession({ settings });
});
afterAll(async () => {
  await s?.shutdown();
});

const BUFFER = fs.readFileSync(path.join(EXAMPLES, 'buffer_tank.poise'), 'utf8');
const model = (name: string) => fs.readFileSync(path.join(REFERENCE, 'models', name), 'utf8');
const printed = (v: number, digits = 4) => Number(v.toPrecision(digits));

async function hoverText(uri: string, needle: string, delta = 0, nth = 0): Promise<string> {
  const h = await s.hover(uri, s.pos(uri, needle, delta, nth));
  expect(h, `hover at "${needle}"`).not.toBeNull();
  expect(h!.contents.kind).toBe('markdown');
  return h!.contents.value;
}

/** The number in a Markdown table row whose first cell is `label`: "| label | 1.08 | unit |". */
function cell(md: string, label: string): { value: number; unit: string } {
  const row = md.split('\n').find((l) => l.startsWith(`| ${label} |`));
  expect(row, `row ${label} in\n${md}`).toBeDefined();
  const cells = row!.split('|').map((c) => c.trim());
  return { value: Number(cells[2]), unit: cells[3] };
}

// buffer tank, point dry_day: inflow = opening·cv·√level at steady state (derivative zero; common practice)
const LEVEL_DRY = (0.0015 / (0.4 * 0.0045)) ** 2;
const LEVEL_BURST = (0.006 / (0.9 * 0.0045)) ** 2;

describe('hover on a variable', () => {
  it('shows its value at each point, with unit and whether fixed or solved', async () => {
    const uri = uriOf('hover-var.poise');
    await s.open(uri, BUFFER);
    const md = await hoverText(uri, 'var outflow', 5);
    expect(md).toContain('**var** `outflow` [L/s]');
    // at steady state outflow equals inflow (by hand)
    expect(md).toContain('| dry_day | 1.5 L/s | solved |');
    expect(md).toContain('| cloudburst | 6 L/s | solved |');
    const lv = await hoverText(uri, 'sqrt(level)', 6);
    expect(lv).toContain(`| dry_day | ${printed(LEVEL_DRY)} m | solved |`);
    expect(lv).toContain(`| cloudburst | ${printed(LEVEL_BURST)} m | solved |`);
    const inflow = await hoverText(uri, 'inflow - outflow', 2);
    expect(inflow).toContain('| dry_day | 1.5 L/s | fixed |');
    const range = (await s.hover(uri, s.pos(uri, 'inflow - outflow', 2)))!.range!;
    expect(range).toEqual({ start: s.pos(uri, 'inflow - outflow'), end: s.pos(uri, 'inflow - outflow', 6) });
  });
});

describe('hover on an equation', () => {
  it('shows ∂y/∂x gains with units for y = f(…), at the active point', async () => {
    const uri = uriOf('hover-eq.poise');
    await s.open(uri, BUFFER);
    const md = await hoverText(uri, 'outflow = opening', 8); // on the "="
    expect(md).toContain('point `dry_day`');
    // ∂outflow/∂level = opening·cv/(2√level) (differentiation of a square root: common practice), m³/s → L/s ×1000
    const g = cell(md, '∂outflow/∂level');
    expect(g).toEqual({ value: printed((1000 * 0.4 * 0.0045) / (2 * Math.sqrt(LEVEL_DRY))), unit: 'L/s per m' });
    // ∂outflow/∂opening = cv·√level, opening dimensionless
    expect(cell(md, '∂outflow/∂opening')).toEqual({ value: printed(1000 * 0.0045 * Math.sqrt(LEVEL_DRY)), unit: 'L/s' });
    // the active point setting moves the gains to another point
    s.settings = { ...settings, activePoint: 'cloudburst' };
    await s.conn.sendNotification('workspace/didChangeConfiguration', { settings: { poise: s.settings } });
    const md2 = await hoverText(uri, 'outflow = opening', 8); // requests are handled after the notification
    expect(md2).toContain('point `cloudburst`');
    expect(cell(md2, '∂outflow/∂level').value).toBe(printed((1000 * 0.9 * 0.0045) / (2 * Math.sqrt(LEVEL_BURST))));
    s.settings = { ...settings };
    await s.conn.sendNotification('workspace/didChangeConfiguration', { settings: { poise: s.settings } });
  });

  it('shows ∂r/∂x of the residual for an implicit equation', async () => {
    const uri = uriOf('hover-implicit.poise');
    await s.open(uri, BUFFER);
    const md = await hoverText(uri, "area*level' = inflow", 12); // on the "="
    expect(md).toContain('Residual r = left side − right side [m^3/s]');
    // r = area·level' − inflow + outflow: ∂r/∂level' = area; inflow and outflow in L/s are 0.001 m³/s each
    expect(cell(md, "∂r/∂level'")).toEqual({ value: 3.2, unit: 'm^3/s per m/s' });
    expect(cell(md, '∂r/∂inflow')).toEqual({ value: -0.001, unit: 'm^3/s per L/s' });
    expect(cell(md, '∂r/∂outflow')).toEqual({ value: 0.001, unit: 'm^3/s per L/s' });
  });
});

describe('hover on a point name', () => {
  it('gives the eigenvalue and the time constant of a draining tank', async () => {
    const uri = uriOf('hover-drain.poise');
    await s.open(uri, model('drain.poise'));
    const md = await hoverText(uri, 'point normal', 7);
    // τ = 2·A·h0/q0 for square-root outflow (Seborg, Edgar, Mellichamp & Doyle, liquid-level linearisation);
    // h0 from feed = cd·ao·√(2·g·h0)
    const q0 = 0.004;
    const h0 = (q0 / (0.61 * 0.002)) ** 2 / (2 * 9.81);
    const tau = (2 * 1.5 * h0) / q0;
    expect(md).toContain('**Stable**');
    expect(md).toContain(`Time constant [s]: ${printed(tau)}`);
    expect(md).toContain(`Eigenvalues [1/s]: ${printed(-1 / tau)}`);
  });

  it('tells an unstable rest point and a centre', async () => {
    const relax = uriOf('hover-relax.poise');
    await s.open(relax, model('relax.poise'));
    // trace mu·(1 − v0²) = 1.5 > 0 at v0 = 0: unstable (Strogatz, Nonlinear Dynamics and Chaos, ch. 7)
    expect(await hoverText(relax, 'point rest', 7)).toContain('**Unstable**');
    const fish = uriOf('hover-fishery.poise');
    await s.open(fish, model('fishery.poise'));
    // Lotka–Volterra coexistence point: a centre, eigenvalues ±i·√(a·c), a = alpha − effort (Strogatz, ch. 6)
    const md = await hoverText(fish, 'point managed', 7);
    expect(md).toContain('**Marginally stable**');
    expect(md).toContain(`natural frequency ${printed(Math.sqrt((1.1 - 0.1) * 0.4))} rad/year`);
  });

  it('gives the natural frequency and damping ratio of a pendulum', async () => {
    const uri = uriOf('hover-swing.poise');
    await s.open(uri, model('swing.poise'));
    // ωn² = g·cos(θ0)/L, 2·ζ·ωn = b/(m·L²) (any undergraduate dynamics text); θ0 from m·g·L·sin θ0 = torque
    const th0 = Math.asin(5 / (3 * 9.81 * 0.8));
    const wn = Math.sqrt((9.81 * Math.cos(th0)) / 0.8);
    const zeta = 0.4 / (3 * 0.8 ** 2) / (2 * wn);
    const md = await hoverText(uri, 'point gust', 7);
    expect(md).toContain(`natural frequency ${printed(wn)} rad/s, damping ratio ${printed(zeta)}`);
    expect(md).toContain(`Time constant [s]: ${printed(1 / (zeta * wn))}`);
  });
});

describe('other hovers', () => {
  it('constant: value and the equations using it', async () => {
    const uri = uriOf('hover-const.poise');
    await s.open(uri, BUFFER);
    const md = await hoverText(uri, 'const cv', 7);
    expect(md).toContain('**constant** `cv` = 0.0045 [m^2.5/s]');
    expect(md).toContain('- line 12: `outflow = opening*cv*sqrt(level)`');
    expect(md).not.toContain("area*level'");
  });

  it('built-in function, keyword, unit, comment', async () => {
    const uri = uriOf('hover-misc.poise');
    await s.open(uri, BUFFER);
    expect(await hoverText(uri, 'sqrt(level)', 1)).toContain(BUILTIN_DOC.sqrt);
    expect(await hoverText(uri, 'point dry_day', 2)).toMatch(/^\*\*point\*\* — /);
    // 1 L = 1 dm³ = 0.001 m³ (SI Brochure, 9th ed., table 8)
    expect(await hoverText(uri, '[L/s]   ', 2)).toContain('1 L/s = 0.001 m^3/s');
    expect(await s.hover(uri, s.pos(uri, 'tank cross-section', 3))).toBeNull();
  });

  it('Δ name in a generated block: what it is', async () => {
    const uri = uriOf('hover-delta.poise');
    await s.open(uri, BUFFER);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'dry_day'] });
    const md = await hoverText(uri, '100*Δlevel', 6);
    expect(md).toContain('`Δlevel` — deviation of state `level` from its value at point `dry_day`');
    expect(md).toContain(`Δlevel = level − ${printed(LEVEL_DRY)} [m]`);
    const d = await hoverText(uri, "Δlevel' =", 2);
    expect(d).toContain("time derivative of `Δlevel`");
  });
});

describe('hover on a point: where the model goes next (smaller, sampled)', () => {
  it('buffer tank: the one Hankel singular value equals the closed form of a first-order lag', async () => {
    const uri = uriOf('hover-handoff-tank.poise');
    await s.open(uri, BUFFER);
    const md = await hoverText(uri, 'point dry_day', 7);
    // one state: P = ‖b‖²/(2a), Q = c²/(2a), σ = √(PQ) = |c|·‖b‖/(2a) for x' = −a·x + b·u, y = c·x (a
    // standard result of balanced realisation, e.g. Antoulas, Approximation of Large-Scale Dynamical
    // Systems, ch. 7; derived by hand). Here a = opening·cv/(2·√level·area) [1/s],
    // b = [0.001/area per L/s, −cv·√level/area per unit opening], c = 100 cm/m.
    const area = 3.2, cv = 0.0045, opening = 0.4;
    const a = (opening * cv) / (2 * Math.sqrt(LEVEL_DRY) * area);
    const b = Math.hypot(0.001 / area, (cv * Math.sqrt(LEVEL_DRY)) / area);
    const sigma = (100 * b) / (2 * a);
    expect(md).toContain(`Smaller model: Hankel singular values ${printed(sigma)};`);
    expect(md).toContain('every state is needed');
    expect(md).toContain('`poise sample --every T`');
    // the time constant 1/a, by hand
    expect(md).toContain(`the fastest time constant is ${printed(1 / a)} s`);
  });
  it('canal of 60 pools: the order that keeps the error within 10⁻³·σ₁', async () => {
    const uri = uriOf('hover-handoff-canal.poise');
    await s.open(uri, fs.readFileSync(path.join(EXAMPLES, 'canal_pools.poise'), 'utf8'));
    const md = await hoverText(uri, 'point summer', 7);
    expect(md).toMatch(/\*\*1[0-9] of 60\*\* states keep the error within 10⁻³·σ₁ — `poise reduce`/);
  });
});

describe('hover on a constant: what a 1 % larger value does', () => {
  it('gives the pole shift of the draining tank, λ ∝ cv² (closed form from the steady state), and the band', async () => {
    const uri = uriOf('hover-sens.poise');
    await s.open(uri, BUFFER.replace('const cv    = 0.0045 [m^2.5/s]', 'const cv    = 0.0045 [m^2.5/s] ± 8 %'));
    const md = await hoverText(uri, 'const cv', 7);
    // λ = −(o·cv)²/(2·area·q): a 1 % larger cv moves λ by 2 % (first order) and shortens the time constant by 2 %
    expect(md).toContain('At point `dry_day`, 1 % larger `cv`:');
    expect(md).toMatch(/mode 1 \(λ = -0\.0003375 1\/s\): λ moves 2 %, time constant -2 %/);
    // the level gain 2q/(o·cv)² falls by 2 %
    expect(md).toMatch(/gain `inflow` → `level_cm`: -2 %/);
    expect(md).toContain('Tolerance `± 8 %`');
    const area = await hoverText(uri, 'const area', 7);
    expect(area).toMatch(/λ moves 1 %, time constant \+1 %/); // λ ∝ 1/area
  });
});

/**
 * The `poise` command on a model with parts in other files (examples/feed_header/: plant.poise and its
 * library folder), run as a real process: check, solve, linearize, report, sweep and expand read the
 * files the model brings in; the flat model `poise expand` prints gives the same linear model through the
 * same command (the independent route); a mistake inside a library file is reported in that file.
 * The steady state is checked against the part equations evaluated here by hand (pump curve, valve and
 * outlet laws written in the library files; Torricelli outflow q = k·√h, common practice).
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ensureBuilt, EXAMPLES, runCli, scratchDir } from './helpers/cli';

const plant = path.join(EXAMPLES, 'feed_header', 'plant.poise');
let dir = '';

beforeAll(() => {
  ensureBuilt();
  dir = scratchDir('parts-cli');
}, 300_000);
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe('poise on a model of parts from a library folder', () => {
  it('check: ok', () => {
    const r = runCli(['check', plant]);
    expect(r.stderr).toBe('');
    expect(r.stdout).toBe(`${plant}: ok\n`);
    expect(r.code).toBe(0);
  });

  it('solve --format json: the steady state satisfies the parts\' laws', () => {
    const r = runCli(['solve', plant, '--format', 'json']);
    expect(r.code).toBe(0);
    const v = JSON.parse(r.stdout).values as Record<string, { value: number }>;
    const x = (n: string) => v[n].value;
    const rho = 998;
    const g = 9.81;
    const cv = [6e-4, 5.5e-4, 5e-4, 4.5e-4];
    let total = 0;
    for (let i = 1; i <= 4; i++) {
      const h = x(`t[${i}].level`);
      const q = x(`v[${i}].q`);
      // the valve law (library/valve.poise) and the outlet law (library/tank.poise) at steady state
      expect(q).toBeCloseTo(cv[i - 1] * 0.5 * Math.sqrt((2 * (x('p_header') - rho * g * h)) / rho), 12);
      expect(q).toBeCloseTo(0.004 * Math.sqrt(h), 12);
      total += q;
    }
    // the pump curve (library/pump.poise) delivers what the four valves pass
    expect(total).toBeCloseTo(0.012 * (0.9 - x('p_header') / (1.5e5 * 0.9)), 12);
  });

  it('linearize: the same A, B, C, D as the flat model poise expand prints', () => {
    const parts = runCli(['linearize', plant, '--format', 'json']);
    expect(parts.code).toBe(0);
    const ex = runCli(['expand', plant]);
    expect(ex.code).toBe(0);
    expect(ex.stdout).toContain('state t[3].level [m]');
    expect(ex.stdout).toContain('input v[2].opening');
    const flat = path.join(dir, 'flat.poise');
    fs.writeFileSync(flat, ex.stdout);
    const back = runCli(['linearize', flat, '--format', 'json']);
    expect(back.stderr).toBe('');
    const a = JSON.parse(parts.stdout);
    const b = JSON.parse(back.stdout);
    expect(a.states).toEqual(['t[1].level', 't[2].level', 't[3].level', 't[4].level']);
    expect(a.inputs).toEqual(['feed.speed', 'v[1].opening', 'v[2].opening', 'v[3].opening', 'v[4].opening']);
    for (const m of ['A', 'B', 'C', 'D']) expect(b[m]).toEqual(a[m]);
  });

  it('report and sweep run on it', () => {
    const r = runCli(['report', plant, '--format', 'json']);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).ok).toBe(true);
    const s = runCli(['sweep', plant, '--vary', 'v[2].opening = 0.3 to 0.7 steps 4', '--format', 'csv']);
    expect(s.stderr).toBe('');
    expect(s.code).toBe(0);
    expect(s.stdout.trim().split('\n')).toHaveLength(6);
    const declared = runCli(['sweep', plant, '--sweep', 'pump_speed', '--format', 'csv']);
    expect(declared.code).toBe(0);
  });

  it('a mistake in a library file is reported in that file, at its line', () => {
    const copy = path.join(dir, 'copy');
    fs.cpSync(path.join(EXAMPLES, 'feed_header'), copy, { recursive: true });
    const valve = path.join(copy, 'library', 'valve.poise');
    fs.writeFileSync(valve, fs.readFileSync(valve, 'utf8').replace('sqrt(2*(p_up - p_down)/rho)', 'sqrt(2*(p_up - p_down)/rh)'));
    const r = runCli(['check', path.join(copy, 'plant.poise')]);
    expect(r.code).toBe(1);
    const line = fs.readFileSync(valve, 'utf8').split('\n').findIndex((l) => l.includes('/rh)')) + 1;
    const col = fs.readFileSync(valve, 'utf8').split('\n')[line - 1].indexOf('rh)') + 1;
    expect(r.stdout).toContain(`${valve}:${line}:${col}: error P250: "rh" is not declared in part "valve"`);
  });

  it('a missing library file is an error on the parts line of the model', () => {
    const m = path.join(dir, 'missing.poise');
    fs.writeFileSync(m, 'parts tank, boiler from "library"\nstate x\nx\' = -x\n');
    const r = runCli(['check', m]);
    expect(r.code).toBe(1);
    expect(r.stdout).toContain(`${m}:1:7: error P255: No file "library/tank.poise" (looked for ${path.join(dir, 'library', 'tank.poise')})`);
    expect(r.stdout).toContain(`${m}:1:13: error P255: No file "library/boiler.poise"`);
  });
});

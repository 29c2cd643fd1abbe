/**
 * Sensitivities and tolerance samples (issue 13 §4 targets): the sensitivities of a 200-state tank chain to
 * 50 constants (under 1 s), and 1,000 Latin hypercube samples of a 20-state chain on two worker threads
 * (under 5 s). Invented models; prints, asserts nothing.
 */
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { Analysis } from '../server/src/core/pipeline/analysis';
import { samplePlan, sensitivities, sensitivityReport, withSamples } from '../server/src/core/analysis/sensitivity';
import { runSamples } from '../server/src/cli/sampleWorkers';
import { runChild } from './scale';

function ms(t0: bigint): number {
  return Number(process.hrtime.bigint() - t0) / 1e6;
}

/** n tanks in a chain, the areas and valve coefficients in `groups` groups of alike tanks, each a constant (with a tolerance when asked). */
export function groupedChain(n: number, groups: number, tol: boolean): string {
  const L: string[] = [`# chain of ${n} tanks, ${groups} groups of areas and valve coefficients (generated)`];
  const band = (p: number) => (tol ? ` ± ${p} %` : '');
  for (let g = 1; g <= groups; g++) L.push(`const area${g} = ${(1.2 + 0.01 * g).toFixed(2)} [m^2]${band(5)}`);
  for (let g = 1; g <= groups; g++) L.push(`const k${g} = 0.01 [m^2.5/s]${band(10)}`);
  L.push('input qin [m^3/s]');
  for (let i = 1; i <= n; i++) L.push(`state h${i} [m]`);
  for (let i = 1; i <= n; i++) L.push(`var q${i} [m^3/s]`);
  const g = (i: number) => 1 + Math.floor(((i - 1) * groups) / n);
  for (let i = 1; i <= n; i++) {
    L.push(`area${g(i)}*h${i}' = ${i === 1 ? 'qin' : `q${i - 1}`} - q${i}`);
    L.push(i < n ? `q${i} = k${g(i)}*sqrt(h${i} - h${i + 1})` : `q${i} = k${g(i)}*sqrt(h${i})`);
  }
  L.push('point nominal:');
  L.push('  qin = 0.01 [m^3/s]');
  for (let i = 1; i <= n; i++) L.push(`  h${i} ~ ${((n - i + 1) * 1.1).toFixed(2)} [m]`);
  for (let i = 1; i <= n; i++) L.push(`  q${i} ~ 0.011 [m^3/s]`);
  return L.join('\n') + '\n';
}

export async function sensitivityBench(log: (s: string) => void = console.log): Promise<void> {
  {
    const a = new Analysis(groupedChain(200, 25, false));
    a.linear('nominal');
    const t0 = process.hrtime.bigint();
    const c0 = process.cpuUsage();
    const s = sensitivities(a, 'nominal');
    const t = ms(t0);
    const c = process.cpuUsage(c0);
    log(`sensitivities, 200 tanks to ${s.parameters.length} constants (${s.modes.length} modes, ${s.gains.length} gains): ${t.toFixed(0)} ms wall, ${((c.user + c.system) / 1000).toFixed(0)} ms CPU (target under 1000 ms)${s.ok ? '' : ` — failed: ${s.problem}`}`);
  }
  {
    const text = groupedChain(20, 4, true);
    const file = path.join(os.tmpdir(), 'poise-bench-tolerances.poise');
    fs.writeFileSync(file, text);
    const a = new Analysis(text);
    const r0 = sensitivityReport(a, 'nominal');
    const plan = samplePlan(a, 'nominal', 1000, 1);
    const t0 = process.hrtime.bigint();
    const res = await runSamples(file, text, plan, 2);
    const t = ms(t0);
    const r = withSamples(r0, plan, res);
    log(`1000 Latin hypercube samples, 20 tanks, ${plan.constants.length} toleranced constants, 2 worker threads, out/ modules: ${t.toFixed(0)} ms, ${r.sampled!.failed} failed, ${r.sampled!.unstable} unstable`);
    // what a user runs: the bundled command (its worker threads load dist/cli.js; a worker loading out/ module
    // by module also loads all of mathjs, about 1.5 s of CPU, which the bundle leaves out)
    const whole = runChild([path.join(__dirname, '..', '..', 'bin', 'poise.js'), 'sensitivity', file, '--samples', '1000', '--workers', '2', '--format', 'json']);
    const none = runChild([path.join(__dirname, '..', '..', 'bin', 'poise.js'), 'sensitivity', file, '--samples', '0', '--format', 'json']);
    log(`poise sensitivity --samples 1000 --workers 2 (the whole command, 20 tanks): ${(whole.wall * 1000).toFixed(0)} ms wall, ${(whole.cpu * 1000).toFixed(0)} ms CPU of both threads (${(whole.cpu * 500).toFixed(0)} ms per core); without samples ${(none.wall * 1000).toFixed(0)} ms wall; target under 5000 ms on two cores`);
  }
}

if (require.main === module) void sensitivityBench();

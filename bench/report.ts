/**
 * Timing of the full dynamics report on 50-state models (asserts nothing): analysis (modes, gains,
 * transfer functions, controllability), frequency response at 200 frequencies for every pair, linear and
 * nonlinear step for every input, then the validity ranges and the HTML page separately.
 * Run: `node out/bench/report.js` (after `npx tsc -p .`), or call `reportBench()` from bench.ts.
 */
import { Analysis } from '../server/src/core/pipeline/analysis';
import { buildReport } from '../server/src/core/analysis/report';
import { renderReportHtml } from '../server/src/core/present/reportHtml';
import { tankChain } from './models';

/** A chain of n masses joined by stiffening springs and dampers (2n state components), 2 inputs, 2 outputs. */
export function massChain(n: number): string {
  const L: string[] = [];
  L.push(`# chain of ${n} masses with stiffening springs (generated)`);
  L.push('const k = 400 [N/m]');
  L.push('const k3 = 4e4 [N/m^3]');
  L.push('const b = 6 [N*s/m]');
  L.push('input push [N]');
  L.push('input pull [N]');
  for (let i = 1; i <= n; i++) L.push(`const m${i} = ${(1 + 0.37 * ((i * 7) % 5)).toFixed(2)} [kg]`);
  for (let i = 1; i <= n; i++) L.push(`state x${i} [m]`);
  for (let i = 1; i <= n; i++) L.push(`var f${i} [N]`);
  L.push(`output tip [mm] = x${n}`);
  L.push('output anchor_force [N] = f1');
  for (let i = 1; i <= n; i++) {
    // spring i joins mass i to mass i−1 (mass 1 to the wall)
    const d = i === 1 ? 'x1' : `(x${i} - x${i - 1})`;
    L.push(`f${i} = k*${d} + k3*${d}^3`);
  }
  for (let i = 1; i <= n; i++) {
    const vi = `x${i}'`;
    const left = i === 1 ? `b*${vi}` : `b*(${vi} - x${i - 1}')`;
    const right = i < n ? ` + f${i + 1} + b*(x${i + 1}' - ${vi})` : '';
    const load = i === 1 ? ' + push' : i === n ? ' + pull' : '';
    L.push(`m${i}*x${i}'' = -f${i} - ${left}${right}${load}`);
  }
  L.push('point nominal:');
  L.push('  push = 0 [N]');
  L.push('  pull = 20 [N]');
  for (let i = 1; i <= n; i++) L.push(`  x${i} ~ ${(0.04 * i).toFixed(3)} [m]`);
  return L.join('\n') + '\n';
}

function ms(t0: bigint): number {
  return Number(process.hrtime.bigint() - t0) / 1e6;
}

export function reportBench(log: (s: string) => void = console.log): void {
  const models: [string, string][] = [['50 tanks (tridiagonal, 1 input, 1 output)', tankChain(50)], ['25 masses (2 states each, 2 inputs, 2 outputs)', massChain(25)]];
  log('Full report of a 50-state model, ms (2nd run; the 1st warms up the JIT)');
  log('model                                            states  analysis  freq(200)  steps  total   | validity  html');
  for (const [name, text] of models) {
    let line = '';
    for (let run = 0; run < 2; run++) {
      const a = new Analysis(text);
      const t0 = process.hrtime.bigint();
      const r = buildReport(a, 'nominal', { validity: false, frequencies: 200 });
      const total = ms(t0);
      if (!r.ok) throw new Error(`${name}: ${r.problems.join('; ')}`);
      const t1 = process.hrtime.bigint();
      const rv = buildReport(a, 'nominal', { frequencies: 200 });
      const tValidity = rv.timingsMs.validity ?? NaN;
      void t1;
      const t2 = process.hrtime.bigint();
      const html = renderReportHtml(rv);
      const tHtml = ms(t2);
      const t = r.timingsMs;
      line = `${name.padEnd(48)} ${String(r.states.length).padStart(6)}  ${t.analysis.toFixed(0).padStart(8)}  ${t.frequency.toFixed(0).padStart(9)}  ${t.steps.toFixed(0).padStart(5)}  ${total.toFixed(0).padStart(5)}   | ${tValidity.toFixed(0).padStart(8)}  ${tHtml.toFixed(0).padStart(4)} (${(html.length / 1024).toFixed(0)} KB)`;
    }
    log(line);
  }
}

if (require.main === module) reportBench();

/**
 * npm run bench — per-stage timings on generated models of growing size, and the same job in SymPy
 * where Python with SymPy is present (measured in the same run). Prints a table; asserts nothing.
 */
import { execFileSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { Analysis } from '../server/src/core/pipeline/analysis';
import { eigenvalues } from '../server/src/core/numeric/eigen';
import { runSweep } from '../server/src/core/analysis/sweep';
import { latencyLines, lspLatency } from './lspLatency';
import { partsLatency, partsLines } from './lspParts';
import { eigenBench } from './eigen';
import { massChain, reportBench } from './report';
import { tankChain, tankChainFamily, tankChainFlatElements, tankChainSympy } from './models';
import { scaleBench, startupBench } from './scale';
import { sensitivityBench } from './sensitivity';

function ms(t0: bigint): number {
  return Number(process.hrtime.bigint() - t0) / 1e6;
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

interface Row { n: number; parse: number; check: number; solve: number; linearize: number; eig: number; total: number; a00: number }

function runOnce(text: string, withEig: boolean): Row {
  const t0 = process.hrtime.bigint();
  const a = new Analysis(text); // parse, bind, units, lower, structure
  const tCheck = ms(t0);
  const t1 = process.hrtime.bigint();
  const sol = a.point('nominal');
  const tSolve = ms(t1);
  if (!sol || !sol.ok) throw new Error('point did not solve: ' + JSON.stringify(sol?.diagnostics.map((d) => d.message)));
  const t2 = process.hrtime.bigint();
  const lin = a.linear('nominal')!;
  const tLin = ms(t2);
  if (!lin.ok) throw new Error('linearization failed');
  const total = ms(t0);
  let tEig = NaN;
  if (withEig) {
    const t3 = process.hrtime.bigint();
    eigenvalues({ rows: lin.n, cols: lin.n, data: lin.A });
    tEig = ms(t3);
  }
  // parse alone
  const tp = process.hrtime.bigint();
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  require('../server/src/core/syntax/parser').parse(text);
  const tParse = ms(tp);
  return { n: lin.n, parse: tParse, check: tCheck, solve: tSolve, linearize: tLin, eig: tEig, total, a00: lin.A[0] };
}

/** Family and flat texts of one chain, side by side (median of warm runs, in-process, text to A, B, C, D). */
function familyBench(n: number): void {
  if (!(n > 0)) return;
  const reps = 5;
  const texts: [string, string][] = [['family', tankChainFamily(n)], ['flat', tankChainFlatElements(n)]];
  const medians = texts.map(([, text]) => {
    const rows: Row[] = [];
    for (let r = 0; r < reps + 1; r++) rows.push(runOnce(text, false));
    return median(rows.slice(1).map((x) => x.total)); // the first run warms up
  });
  console.log(`Chain of ${n} tanks written with a family and written flat (issue 11 target: family ≤ 1.2× flat), text → A,B,C,D, median of ${reps}, ms`);
  console.log('text     text→ABCD');
  texts.forEach(([name], k) => console.log(`${name.padEnd(8)} ${medians[k].toFixed(1).padStart(9)}`));
  console.log(`family/flat ${(medians[0] / medians[1]).toFixed(2)}× ${medians[0] <= 1.2 * medians[1] ? '(within the target)' : '(over the 1.2× target)'}`);
}

function sympyTime(n: number): number | undefined {
  const py = ['/usr/bin/python3', 'python3'].find((p) => {
    try {
      execFileSync(p, ['-c', 'import sympy, numpy'], { stdio: 'ignore' });
      return true;
    } catch {
      return false;
    }
  });
  if (!py) return undefined;
  const file = path.join(os.tmpdir(), `poise-bench-sympy-${n}.py`);
  fs.writeFileSync(file, tankChainSympy(n));
  const t0 = process.hrtime.bigint();
  execFileSync(py, [file], { encoding: 'utf8', timeout: 600_000 });
  return ms(t0); // whole process, as a user would run it
}

async function main() {
  const sizes = (process.env.POISE_BENCH_SIZES ?? '10,100,1000,3000').split(',').map(Number);
  const reps = Number(process.env.POISE_BENCH_REPS ?? 5);
  console.log(`Poise bench — chains of N tanks with turbulent links (2N unknowns); median of ${reps} warm runs, ms`);
  console.log('N      states  parse   check(all static)  solve   linearize  text→ABCD   eig(A)');
  for (const n of sizes) {
    const text = tankChain(n);
    runOnce(text, false); // warm-up
    const rows: Row[] = [];
    for (let r = 0; r < reps; r++) rows.push(runOnce(text, n <= 1000 && r === 0));
    const med = (k: keyof Row) => median(rows.map((x) => x[k] as number).filter((v) => !Number.isNaN(v)));
    const eig = rows[0].eig;
    console.log(
      `${String(n).padEnd(6)} ${String(rows[0].n).padEnd(7)} ${med('parse').toFixed(1).padStart(6)}  ${med('check').toFixed(1).padStart(17)}  ${med('solve').toFixed(1).padStart(6)}  ${med('linearize').toFixed(1).padStart(9)}  ${med('total').toFixed(1).padStart(9)}  ${Number.isNaN(eig) ? '     -' : eig.toFixed(1).padStart(7)}`,
    );
  }
  // issue 11 target: the same chain written with a family takes no more than 1.2× the flat text, text to A, B, C, D
  console.log('');
  familyBench(Number(process.env.POISE_BENCH_FAMILY ?? 1000));
  // issue 12 targets, whole process (POISE_BENCH_SCALE=1000,10000 to shorten, 0 to skip)
  if (process.env.POISE_BENCH_SCALE !== '0') {
    console.log('');
    scaleBench();
  }
  startupBench();
  console.log('');

  // eigenvalues: the chain through its structure, dense matrices against NumPy (issue targets printed)
  eigenBench();

  // report of a 50-state model including validity ranges (issue 12 target: under 1 s)
  console.log('');
  reportBench();

  // sensitivities (200 states, 50 constants) and tolerance samples (1,000 of 20 states on two threads)
  console.log('');
  await sensitivityBench();

  // 200-step sweep of a 50-state model (issue target: under 5 s)
  console.log('');
  for (const [name, text, vary, from, to] of [
    ['50 tanks, vary qin', tankChain(50), 'qin', 0.005, 0.02],
    ['25 masses, vary the pull', massChain(25), 'pull', 0, 40],
  ] as [string, string, string, number, number][]) {
    const a = new Analysis(text);
    const t0 = process.hrtime.bigint();
    const r = runSweep(a, { point: 'nominal', vary, from, to, steps: 200 });
    const t = ms(t0);
    console.log(`200-step sweep, ${name} (50 states): ${t.toFixed(0)} ms, ${r.points.length} points, ${r.stats.solves} solves${r.complete ? '' : ' (stopped early)'}`);
  }
  console.log('');

  // language server: one-character edit → diagnostics, 2,000- and 10,000-equation models
  if (process.env.POISE_BENCH_LSP !== '0') {
    for (const n of [1000, 5000]) for (const line of latencyLines(await lspLatency(n))) console.log(line);
    // an edit the quick route does not take (a name in an equation): the full static analysis, for comparison
    for (const n of [1000, 5000]) for (const line of latencyLines(await lspLatency(n, 7, 'name'))) console.log(line);
    // a parts document edited: the open model that places its part (2,001 equations) analysed again
    for (const line of partsLines(await partsLatency(667))) console.log(line);
  }

  // whole-process comparison with SymPy, same job, same run
  for (const n of (process.env.POISE_BENCH_SYMPY ?? '10,100').split(',').map(Number).filter((x) => x > 0)) {
    const runs = Number(process.env.POISE_BENCH_SYMPY_RUNS ?? 3);
    const pys: number[] = [];
    for (let r = 0; r < runs; r++) {
      const t = sympyTime(n);
      if (t === undefined) break;
      pys.push(t);
    }
    if (!pys.length) {
      console.log('SymPy: not present (install Debian python3-sympy for the comparison)');
      break;
    }
    const tPy = median(pys);
    const pts: number[] = [];
    let out = '';
    for (let r = 0; r < runs; r++) {
      const t0 = process.hrtime.bigint();
      out = execFileSync(process.execPath, [path.join(__dirname, '..', '..', 'bin', 'poise.js'), 'linearize', writeTmp(n), '--format', 'json'], { encoding: 'utf8' });
      pts.push(ms(t0));
    }
    const tPoise = median(pts);
    const a00 = (JSON.parse(out) as { A: number[][] }).A[0][0];
    console.log(`N=${n}: whole process, text to A,B,C,D, median of ${runs} — Poise CLI ${tPoise.toFixed(0)} ms, SymPy ${tPy.toFixed(0)} ms: ${(tPy / tPoise).toFixed(1)}× (A[0][0] = ${a00.toPrecision(6)})`);
  }
}

function writeTmp(n: number): string {
  const f = path.join(os.tmpdir(), `poise-bench-chain-${n}.poise`);
  fs.writeFileSync(f, tankChain(n));
  return f;
}

main().catch((e) => {
  console.error(e);
  process.exitCode = 1;
});

/**
 * Whole-process targets of issue 12, each measured as a user runs it (a child process of the installed
 * command, bin/poise.js) and printed next to its target; asserts nothing.
 * - text → A, B, C, D (JSON written) of the N-tank chain for growing N, with the fitted growth exponent;
 * - peak memory (maximum resident set of the child) at N = 10,000;
 * - start-up: the whole `poise linearize` of a 10-state model against `node -e 0` in the same run.
 * Times are wall-clock and CPU (user + system) of the child, from /usr/bin/time when present (CPU time is
 * what the machine's other load disturbs least); medians where repeated.
 */
import { execFileSync, spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { tankChain, tankChainFamily } from './models';
import { analyzeDocuments } from '../server/src/core/pipeline/analysis';
import { exportChunks } from '../server/src/core/present/exports';
import { cliSources } from '../server/src/cli/sourceHost';

const BIN = path.join(__dirname, '..', '..', 'bin', 'poise.js');
const TIME = fs.existsSync('/usr/bin/time') ? '/usr/bin/time' : undefined;

export interface Run {
  wall: number; // s
  cpu: number; // s, NaN without /usr/bin/time
  rssMB: number; // NaN without /usr/bin/time
  bytes: number;
}

/** Runs node with args, output to a file; wall, CPU and peak memory of the child. */
export function runChild(args: string[], outFile = path.join(os.tmpdir(), 'poise-bench-out.txt')): Run {
  const fd = fs.openSync(outFile, 'w');
  const t0 = process.hrtime.bigint();
  const r = TIME
    ? spawnSync(TIME, ['-f', '@@ %e %U %S %M', process.execPath, ...args], { stdio: ['ignore', fd, 'pipe'], encoding: 'utf8', maxBuffer: 1 << 26 })
    : spawnSync(process.execPath, args, { stdio: ['ignore', fd, 'pipe'], encoding: 'utf8' });
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  fs.closeSync(fd);
  if (r.status !== 0) throw new Error(`${args.join(' ')} failed (${r.status}): ${String(r.stderr).slice(-500)}`);
  const bytes = fs.statSync(outFile).size;
  const m = /@@ ([\d.]+) ([\d.]+) ([\d.]+) (\d+)/.exec(String(r.stderr));
  if (!m) return { wall, cpu: NaN, rssMB: NaN, bytes };
  return { wall: Number(m[1]) || wall, cpu: Number(m[2]) + Number(m[3]), rssMB: Number(m[4]) / 1024, bytes };
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

/** Least-squares slope of log t against log N. */
export function growthExponent(ns: number[], ts: number[]): number {
  const x = ns.map(Math.log);
  const y = ts.map(Math.log);
  const mx = x.reduce((a, b) => a + b, 0) / x.length;
  const my = y.reduce((a, b) => a + b, 0) / y.length;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < x.length; i++) {
    sxy += (x[i] - mx) * (y[i] - my);
    sxx += (x[i] - mx) ** 2;
  }
  return sxy / sxx;
}

const mark = (ok: boolean) => (ok ? 'met' : 'NOT met');

/**
 * The same job inside this process (the steps of `poise linearize --format json --sparse`: analysis, point,
 * linear model, JSON written to a discarded sink), without node's start, the bundle's loading and compiling:
 * CPU seconds of this process (process.cpuUsage, all threads) and wall seconds.
 */
export function inProcess(file: string): { wall: number; cpu: number } {
  const cpu0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  const text = fs.readFileSync(file, 'utf8');
  const a = analyzeDocuments(cliSources(file, text), file)!;
  const sol = a.point()!;
  const lin = a.linear()!;
  if (!sol.ok || !lin.ok) throw new Error(`${file}: the point or the linear model failed`);
  let bytes = 0;
  const equations = a.deviationEquations(undefined, 6);
  for (const c of exportChunks(lin, a.values(sol), 'json', { sparse: true, equations, solve: { iterations: sol.iterations, residual: sol.residual } })) bytes += c.length;
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  const u = process.cpuUsage(cpu0);
  void bytes;
  return { wall, cpu: (u.user + u.system) / 1e6 };
}

export function scaleBench(log: (s: string) => void = console.log): void {
  const sizes = (process.env.POISE_BENCH_SCALE ?? '1000,3000,10000,30000,100000').split(',').map(Number).filter((n) => n > 0);
  const targets: Record<number, number> = { 1000: 0.2, 10000: 2, 100000: 30 };
  log('Whole process, text → A, B, C, D of the N-tank chain (poise linearize --format json --sparse > file), s');
  log('N        states   wall    cpu    peak MB   output MB   target');
  const fit: { n: number; wall: number; cpu: number }[] = [];
  for (const n of sizes) {
    const file = path.join(os.tmpdir(), `poise-bench-chain-${n}.poise`);
    fs.writeFileSync(file, tankChain(n));
    const reps = n <= 10000 ? 3 : 1;
    const runs: Run[] = [];
    for (let r = 0; r < reps; r++) runs.push(runChild([BIN, 'linearize', file, '--format', 'json', '--sparse']));
    const wall = median(runs.map((r) => r.wall));
    const cpu = median(runs.map((r) => r.cpu));
    const rss = median(runs.map((r) => r.rssMB));
    fit.push({ n, wall, cpu });
    const tgt = targets[n];
    const t = Number.isNaN(cpu) ? wall : cpu;
    const memNote = n === 10000 ? `; peak memory under 500 MB: ${mark(rss < 500)}` : '';
    log(`${String(n).padEnd(8)} ${String(n).padStart(6)}  ${wall.toFixed(2).padStart(6)}  ${cpu.toFixed(2).padStart(6)}  ${rss.toFixed(0).padStart(8)}  ${(runs[0].bytes / 1e6).toFixed(1).padStart(9)}   ${tgt !== undefined ? `under ${tgt} s (cpu): ${mark(t < tgt)}` : ''}${memNote}`);
  }
  // the same command asked for the eigenvalues too (computed unasked only up to Σ m² = 10⁷, docs/cli.md)
  for (const n of sizes.filter((x) => x === 10000)) {
    const file = path.join(os.tmpdir(), `poise-bench-chain-${n}.poise`);
    const runs: Run[] = [];
    for (let r = 0; r < 3; r++) runs.push(runChild([BIN, 'linearize', file, '--format', 'json', '--sparse', '--eigenvalues']));
    log(`  N = ${n} with --eigenvalues (one coupled block of ${n}): wall ${median(runs.map((r) => r.wall)).toFixed(2)} s, cpu ${median(runs.map((r) => r.cpu)).toFixed(2)} s, peak ${median(runs.map((r) => r.rssMB)).toFixed(0)} MB`);
  }
  const inRange = fit.filter((f) => f.n >= 1000 && f.n <= 100000);
  if (inRange.length >= 2) {
    const eCpu = growthExponent(inRange.map((f) => f.n), inRange.map((f) => f.cpu));
    const eWall = growthExponent(inRange.map((f) => f.n), inRange.map((f) => f.wall));
    log(`growth exponent over N = ${inRange[0].n}…${inRange[inRange.length - 1].n}: ${eCpu.toFixed(2)} (cpu), ${eWall.toFixed(2)} (wall); target at most 1.2: ${mark(eCpu <= 1.2)}`);
  }
  // the same job inside one process (modules loaded and warmed by a 1,000-tank run first)
  log('In process (no node start-up, bundle loading or compiling; modules warmed by one N = 1,000 run first), s:');
  const warm = path.join(os.tmpdir(), 'poise-bench-chain-warm-1000.poise');
  fs.writeFileSync(warm, tankChain(1000));
  inProcess(warm);
  for (const n of sizes) {
    const file = path.join(os.tmpdir(), `poise-bench-chain-${n}.poise`);
    if (n > 30000) continue; // the whole-process figure above is the one to read at this size
    const r = inProcess(file);
    const tgt = targets[n];
    log(`  N = ${String(n).padEnd(7)} wall ${r.wall.toFixed(2).padStart(6)}  cpu ${r.cpu.toFixed(2).padStart(6)}   ${tgt !== undefined ? `(target under ${tgt} s, read as in-process: ${mark(r.cpu < tgt)})` : ''}`);
  }
  // issue 11: the 10,000-state chain written with families, whole process
  {
    const file = path.join(os.tmpdir(), 'poise-bench-chain-family-10000.poise');
    fs.writeFileSync(file, tankChainFamily(10000));
    const runs: Run[] = [];
    for (let r = 0; r < 3; r++) runs.push(runChild([BIN, 'linearize', file, '--format', 'json', '--sparse']));
    const cpu = median(runs.map((r) => r.cpu));
    log(`family model (10,000 states written with families), whole process: wall ${median(runs.map((r) => r.wall)).toFixed(2)} s, cpu ${cpu.toFixed(2)} s, peak ${median(runs.map((r) => r.rssMB)).toFixed(0)} MB; target under 3 s (cpu): ${mark(cpu < 3)}`);
  }
  // dense JSON, for comparison (n² numbers)
  for (const n of sizes.filter((x) => x <= 10000 && x >= 1000)) {
    const file = path.join(os.tmpdir(), `poise-bench-chain-${n}.poise`);
    const r = runChild([BIN, 'linearize', file, '--format', 'json']);
    log(`dense JSON (n² numbers), N = ${n}: wall ${r.wall.toFixed(2)} s, cpu ${r.cpu.toFixed(2)} s, peak ${r.rssMB.toFixed(0)} MB, ${(r.bytes / 1e6).toFixed(1)} MB written`);
  }
}

export function startupBench(log: (s: string) => void = console.log): void {
  const file = path.join(os.tmpdir(), 'poise-bench-chain-10.poise');
  fs.writeFileSync(file, tankChain(10));
  const reps = Number(process.env.POISE_BENCH_STARTUP_REPS ?? 9);
  const nodeT: number[] = [];
  const poiseT: number[] = [];
  // interleaved, so that both see the same load
  for (let r = 0; r < reps; r++) {
    nodeT.push(runChild(['-e', '0']).wall);
    poiseT.push(runChild([BIN, 'linearize', file]).wall);
  }
  const tn = median(nodeT);
  const tp = median(poiseT);
  log(`start-up: poise linearize (10 states) ${(tp * 1000).toFixed(0)} ms, node -e 0 ${(tn * 1000).toFixed(0)} ms (medians of ${reps}, interleaved): ${(tp / tn).toFixed(2)}×; target within 1.5×: ${mark(tp / tn <= 1.5)}`);
  void execFileSync;
}

if (require.main === module) {
  scaleBench();
  startupBench();
}

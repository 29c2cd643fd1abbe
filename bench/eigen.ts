/**
 * Eigenvalue timings for `npm run bench`: the A of a 10,000-tank chain through the structured path,
 * and random dense matrices against numpy.linalg.eigvals on the same matrices in the same run.
 */
import { execFileSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { Analysis } from '../server/src/core/pipeline/analysis';
import { csrFromTriplets, CsrMatrix } from '../server/src/core/numeric/csr';
import { BlockStats, eigenvalues, eigenvaluesSparse } from '../server/src/core/numeric/eigen';
import { tankChain } from './models';

/** CPU time (user + system) of this process since t0, in ms: the figure to read on a shared machine. */
function cpuMs(t0: NodeJS.CpuUsage): number {
  const u = process.cpuUsage(t0);
  return (u.user + u.system) / 1000;
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

/**
 * A of the chain of n tanks in models.ts at its steady state, written down directly: every link drops
 * 1 m, so each q_i = k·sqrt(Δh) has slope g = k/(2·area) per metre after division by the area, and
 * A = g·tridiag(1, −2, 1) with A[0][0] = −g. Checked below against the linearizer at n = 200.
 */
export function tankChainA(n: number): CsrMatrix {
  const g = 0.01 / 2 / 1.5;
  const ti: number[] = [], tj: number[] = [], tv: number[] = [];
  for (let i = 0; i < n; i++) {
    if (i > 0) ti.push(i), tj.push(i - 1), tv.push(g);
    ti.push(i), tj.push(i), tv.push(i === 0 ? -g : -2 * g);
    if (i + 1 < n) ti.push(i), tj.push(i + 1), tv.push(g);
  }
  return csrFromTriplets(n, n, ti, tj, tv);
}

/** Entries uniform in [−0.5, 0.5) from a seeded mulberry32 generator. */
function randomDense(n: number, seed: number): Float64Array {
  const a = new Float64Array(n * n);
  let s = seed >>> 0;
  for (let i = 0; i < a.length; i++) {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    a[i] = ((t ^ (t >>> 14)) >>> 0) / 4294967296 - 0.5;
  }
  return a;
}

function findNumpy(): string | undefined {
  return ['/usr/bin/python3', 'python3'].find((p) => {
    try {
      execFileSync(p, ['-c', 'import numpy'], { stdio: 'ignore' });
      return true;
    } catch {
      return false;
    }
  });
}

/**
 * Median of `reps` timings of numpy.linalg.eigvals on the matrix (raw float64 file), in ms of CPU time
 * (time.process_time), and the sum of the eigenvalues. OpenBLAS is held to one thread: Poise runs on one
 * core, and a multi-threaded BLAS on a loaded 2-core machine mostly measures its threads spinning.
 */
function numpyEigvals(py: string, a: Float64Array, n: number, reps: number): { ms: number; sum: number } {
  const file = path.join(os.tmpdir(), `poise-bench-eig-${n}.f64`);
  fs.writeFileSync(file, Buffer.from(a.buffer, a.byteOffset, a.byteLength));
  const script = [
    'import sys, time, numpy as np',
    `a = np.fromfile(${JSON.stringify(file)}, dtype='<f8').reshape(${n}, ${n})`,
    'ts = []',
    `for r in range(${reps}):`,
    '    t0 = time.process_time(); w = np.linalg.eigvals(a); ts.append((time.process_time() - t0) * 1000)',
    'ts.sort(); print(ts[len(ts) // 2], w.real.sum())',
  ].join('\n');
  const env = { ...process.env, OPENBLAS_NUM_THREADS: '1', OMP_NUM_THREADS: '1', MKL_NUM_THREADS: '1' };
  const out = execFileSync(py, ['-c', script], { encoding: 'utf8', timeout: 600_000, env }).trim().split(/\s+/).map(Number);
  return { ms: out[0], sum: out[1] };
}

export function eigenBench(): void {
  // the chain: analytic A checked against the linearizer on a shorter chain
  const check = new Analysis(tankChain(200));
  check.point('nominal');
  const lin = check.linear('nominal')!;
  const small = tankChainA(200);
  let diff = 0;
  for (let i = 0; i < 200; i++) {
    for (let j = 0; j < 200; j++) {
      let v = 0;
      for (let p = small.rowPtr[i]; p < small.rowPtr[i + 1]; p++) if (small.colIdx[p] === j) v = small.values[p];
      diff = Math.max(diff, Math.abs(v - lin.A[i * 200 + j]));
    }
  }
  for (const n of [10_000, 100_000]) {
    const a = tankChainA(n);
    const stats: BlockStats = { blocks: 0, largest: 0 };
    const ts: number[] = [];
    const reps = n <= 10_000 ? 3 : 1;
    let ok = true;
    for (let r = 0; r < reps; r++) {
      const t0 = process.cpuUsage();
      ok = eigenvaluesSparse(a, {}, stats).converged && ok;
      ts.push(cpuMs(t0));
    }
    const target = n === 10_000 ? ' (target: under 1,000 ms)' : ' (O(n²): one tridiagonal block)';
    console.log(
      `eigenvalues, chain of ${n} tanks (A tridiagonal, ${stats.blocks} block of ${stats.largest}; A as the linearizer gives it, max diff ${diff.toExponential(1)} at n = 200): ${median(ts).toFixed(0)} ms CPU${reps > 1 ? ` (median of ${reps})` : ''}${target}${ok ? '' : ' NOT CONVERGED'}`,
    );
    if (process.env.POISE_BENCH_EIG_100K !== '1') break;
  }
  // a one-way cascade (lower bidiagonal): 1×1 blocks
  {
    const n = 100_000;
    const ti: number[] = [], tj: number[] = [], tv: number[] = [];
    for (let i = 0; i < n; i++) {
      ti.push(i), tj.push(i), tv.push(-1 - (i % 7));
      if (i > 0) ti.push(i), tj.push(i - 1), tv.push(1);
    }
    const c = csrFromTriplets(n, n, ti, tj, tv);
    const t0 = process.cpuUsage();
    eigenvaluesSparse(c);
    console.log(`eigenvalues, one-way cascade of 100000 states (1×1 blocks): ${cpuMs(t0).toFixed(0)} ms CPU`);
  }
  // dense: Poise and NumPy on the same matrices
  const py = findNumpy();
  for (const n of (process.env.POISE_BENCH_EIG_DENSE ?? '500,1000').split(',').map(Number).filter((x) => x > 0)) {
    const a = randomDense(n, 2026 + n);
    const reps = 3;
    const ts: number[] = [];
    let sum = 0;
    for (let r = 0; r < reps; r++) {
      const t0 = process.cpuUsage();
      const e = eigenvalues({ rows: n, cols: n, data: a });
      ts.push(cpuMs(t0));
      sum = e.re.reduce((x, y) => x + y, 0);
    }
    const tp = median(ts);
    if (!py) {
      console.log(`eigenvalues, random dense ${n}×${n}: ${tp.toFixed(0)} ms CPU (median of ${reps}); NumPy not present (python3-numpy)`);
      continue;
    }
    const np = numpyEigvals(py, a, n, reps);
    console.log(
      `eigenvalues, random dense ${n}×${n}: Poise ${tp.toFixed(0)} ms, numpy.linalg.eigvals ${np.ms.toFixed(0)} ms (CPU time, one thread each, medians of ${reps}; load ${os.loadavg()[0].toFixed(1)}): ${(tp / np.ms).toFixed(1)}× (target: within 3×); Σλ ${sum.toFixed(9)} vs ${np.sum.toFixed(9)}`,
    );
  }
}

// `npx tsc -p . && node out/bench/eigen.js` runs the eigenvalue bench alone
if (require.main === module) eigenBench();

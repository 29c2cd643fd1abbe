/**
 * Running the built `poise` command from tests.
 *
 * `ensureBuilt()` builds the project once per vitest run: `npx tsc -p .` into out/, then the one-file
 * bundle of the command (`node scripts/bundle.mjs cli` → dist/cli.js), which bin/poise.js prefers when
 * present, so the process the tests start never runs a stale bundle. Test files run in parallel worker
 * processes, so the first caller builds under a lock directory and the others wait for it; a stamp file
 * (dated when its build started) lets later callers skip the build while no file under server/src/ is
 * newer. Type errors elsewhere in the tree (other work in progress) do not stop the build: tsc still
 * emits, and the tests then run against what was emitted.
 */
import { spawn, spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';

export const ROOT = path.resolve(__dirname, '..', '..');
export const EXAMPLES = path.join(ROOT, 'examples');
export const REFERENCE = path.resolve(ROOT, '..', 'shared', 'reference');
const BIN = path.join(ROOT, 'bin', 'poise.js');

function sleep(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/** Newest modification time (ms) of the sources the command is built from. */
function newestSource(dir = path.join(ROOT, 'server', 'src')): number {
  let t = 0;
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) t = Math.max(t, newestSource(p));
    else if (e.name.endsWith('.ts')) t = Math.max(t, fs.statSync(p).mtimeMs);
  }
  return t;
}

function upToDate(stamp: string): boolean {
  try {
    if (!fs.existsSync(path.join(ROOT, 'out', 'server', 'src', 'cli', 'main.js'))) return false;
    return fs.statSync(stamp).mtimeMs >= newestSource();
  } catch {
    return false;
  }
}

export function ensureBuilt(): void {
  const tag = Buffer.from(ROOT).toString('hex').slice(-24);
  const lock = path.join(os.tmpdir(), `poise-test-build-${tag}.lock`);
  const stamp = path.join(os.tmpdir(), `poise-test-build-${tag}.stamp`);
  for (;;) {
    if (upToDate(stamp)) return;
    try {
      fs.mkdirSync(lock);
    } catch {
      // another worker is building; a lock older than two minutes is stale (a killed run)
      try {
        if (Date.now() - fs.statSync(lock).mtimeMs > 120_000) fs.rmSync(lock, { recursive: true, force: true });
      } catch {
        /* gone meanwhile */
      }
      sleep(100);
      continue;
    }
    try {
      if (upToDate(stamp)) return;
      const started = new Date();
      const r = spawnSync(process.platform === 'win32' ? 'npx.cmd' : 'npx', ['tsc', '-p', '.'], { cwd: ROOT, encoding: 'utf8' });
      if (!fs.existsSync(path.join(ROOT, 'out', 'server', 'src', 'cli', 'main.js'))) {
        throw new Error(`build failed: ${r.stdout}${r.stderr}`);
      }
      const bundler = path.join(ROOT, 'scripts', 'bundle.mjs');
      if (fs.existsSync(bundler)) {
        const b = spawnSync(process.execPath, [bundler, 'cli'], { cwd: ROOT, encoding: 'utf8' });
        if (b.status !== 0) throw new Error(`bundling the command failed: ${b.stdout}${b.stderr}`);
      }
      fs.writeFileSync(stamp, started.toISOString());
      fs.utimesSync(stamp, started, started); // sources saved during the build make it stale
      return;
    } finally {
      fs.rmSync(lock, { recursive: true, force: true });
    }
  }
}

export interface CliResult {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Runs `node bin/poise.js ARGS` (after the build) and returns its exit code and both streams. */
export function runCli(args: string[], opts: { cwd?: string } = {}): CliResult {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: opts.cwd ?? ROOT, encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** Like runCli, without blocking: several commands can run at once. */
export function runCliAsync(args: string[], opts: { cwd?: string } = {}): Promise<CliResult> {
  return new Promise((resolve, reject) => {
    const p = spawn(process.execPath, [BIN, ...args], { cwd: opts.cwd ?? ROOT });
    let stdout = '';
    let stderr = '';
    p.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    p.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    p.on('error', reject);
    p.on('close', (code) => resolve({ code, stdout, stderr }));
  });
}

/** A scratch folder for model files written by a test (removed by the caller with `rmSync`). */
export function scratchDir(prefix: string): string {
  return fs.mkdtempSync(path.join(os.tmpdir(), `poise-${prefix}-`));
}

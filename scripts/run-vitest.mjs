// Runs the vitest suite and closes with a plain summary line ("vitest: N passed, N failed") that CI
// tools can read; the exit code is vitest's.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const out = join(mkdtempSync(join(tmpdir(), 'poise-vitest-')), 'results.json');
const args = ['vitest', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${out}`, ...process.argv.slice(2)];
const r = spawnSync('npx', args, { stdio: 'inherit' });
try {
  const j = JSON.parse(readFileSync(out, 'utf8'));
  const skipped = (j.numPendingTests ?? 0) + (j.numTodoTests ?? 0);
  console.log(`vitest: ${j.numPassedTests} passed, ${j.numFailedTests} failed${skipped ? `, ${skipped} skipped` : ''}`);
} catch {
  console.log('vitest: no result file (the run did not complete)');
}
process.exit(r.status ?? 1);

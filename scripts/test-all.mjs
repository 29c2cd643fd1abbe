// `npm test`: the vitest suite, then the real-editor test; ends with one plain line that counts both
// ("tests: N passed, N failed"). Exit code: non-zero when either part failed.
import { spawn } from 'node:child_process';

function run(cmd, args) {
  return new Promise((resolve) => {
    const p = spawn(cmd, args, { stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    p.stdout.on('data', (d) => {
      process.stdout.write(d);
      out += d;
    });
    p.on('close', (code) => resolve({ code: code ?? 1, out }));
  });
}

function counts(out, word) {
  const m = [...out.matchAll(new RegExp(`^${word}: (\\d+) passed, (\\d+) failed`, 'gm'))].pop();
  return m ? [Number(m[1]), Number(m[2])] : [0, 1];
}

const unit = await run(process.execPath, ['scripts/run-vitest.mjs']);
const [up, uf] = counts(unit.out, 'vitest');
let [ep, ef] = [0, 0];
let e2eCode = 0;
if (process.env.POISE_SKIP_E2E === '1') {
  console.log('real-editor test skipped (POISE_SKIP_E2E=1)');
} else {
  const e2e = await run(process.execPath, ['test/e2e/editor.e2e.mjs']);
  [ep, ef] = counts(e2e.out, 'e2e');
  e2eCode = e2e.code;
}
console.log(`tests: ${up + ep} passed, ${uf + ef} failed`);
process.exit(unit.code || e2eCode ? 1 : 0);

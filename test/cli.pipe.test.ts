/**
 * Output piped into a reader that stops early (`poise linearize … | head`): the command ends quietly, as
 * command-line tools do (common practice: a closed pipe is not an error of the writer), with no stack trace.
 */
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as path from 'path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ROOT, ensureBuilt, scratchDir } from './helpers/cli';

beforeAll(() => ensureBuilt(), 600_000);

describe('a closed output pipe', () => {
  it('ends the command quietly', () => {
    // a chain long enough that its JSON is far larger than the pipe's buffer (64 KiB on Linux)
    const n = 3000;
    const lines = ['const area = 1.5 [m^2]', 'const k = 0.01 [m^2.5/s]', 'input qin [m^3/s]', `state h[1..${n}] [m]`, `var q[1..${n}] [m^3/s]`,
      "area*h[1]' = qin - q[1]", `each i in 2..${n}:`, "  area*h[i]' = q[i-1] - q[i]", `each i in 1..${n - 1}: q[i] = k*sqrt(h[i] - h[i+1])`, `q[${n}] = k*sqrt(h[${n}])`,
      'point p:', '  qin = 0.01 [m^3/s]', `  h ~ {${Array.from({ length: n }, (_, i) => (n - i) * 1.1).join(', ')}} [m]`, '  q ~ 0.01 [m^3/s]'];
    const file = path.join(scratchDir('pipe'), 'chain.poise');
    fs.writeFileSync(file, lines.join('\n') + '\n');
    const bin = path.join(ROOT, 'bin', 'poise.js');
    const r = spawnSync('sh', ['-c', `"${process.execPath}" "${bin}" linearize "${file}" --format json | head -c 100 > /dev/null`], { encoding: 'utf8' });
    expect(r.stderr).not.toMatch(/EPIPE|Unhandled|at /);
    expect(r.status).toBe(0);
  });
});

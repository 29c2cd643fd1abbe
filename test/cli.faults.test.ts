/**
 * Command-line faults (issue 10 §3): `--digits` outside 1..17 or not a number is a usage error (exit 2)
 * that prints nothing before it; `check` with a missing file among others checks the others and exits 1.
 * 17 is the upper bound because 17 significant digits always round-trip an IEEE 754 double (IEEE 754-2019
 * §5.12.2: 17 decimal digits suffice for binary64); more would print digits that are not there.
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../server/src/cli/main';
import { parseDigits } from '../server/src/cli/digits';
import { EXAMPLES, scratchDir } from './helpers/cli';

async function run(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(argv, { out: (s) => (out += s + '\n'), err: (s) => (err += s + '\n') });
  return { code, out, err };
}

const STACK = /\n\s+at .+[:(]\d+:\d+/;
const ex = path.join(EXAMPLES, 'buffer_tank.poise');
let dir = '';
beforeAll(() => (dir = scratchDir('faults')));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe('--digits', () => {
  it('accepts 1..17 and nothing else', () => {
    expect(parseDigits(undefined, 6)).toBe(6);
    expect(parseDigits('1', 6)).toBe(1);
    expect(parseDigits('17', 6)).toBe(17);
    for (const bad of ['0', '18', '200', 'abc', '', '2.5', '-3', '1e1', ' ', 'NaN', 'Infinity']) {
      expect(parseDigits(bad, 6), bad).toEqual({ error: expect.stringContaining('from 1 to 17') });
    }
  });

  for (const cmd of ['solve', 'linearize']) {
    for (const bad of ['abc', '0', '18', '200']) {
      it(`${cmd} --digits ${bad}: exit 2, a clear message, nothing printed before it`, async () => {
        const r = await run(cmd, ex, '--digits', bad);
        expect(r.code).toBe(2);
        expect(r.out).toBe('');
        expect(r.err).toMatch(/^poise: --digits takes a whole number of significant digits from 1 to 17, not "/);
        expect(r.err).not.toMatch(STACK);
      });
    }
  }

  it('solve --digits 17 is accepted (1/3 printed with 17 significant digits)', async () => {
    const f = path.join(dir, 'third.poise');
    fs.writeFileSync(f, 'input u\nvar y\n3*y = u\npoint p:\n  u = 1\n  y ~ 1\n');
    const r = await run('solve', f, '--digits', '17');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/Point p: solved/);
    // 1/3 = 0.333… (arithmetic): 17 significant digits printed, within a few ulps of the double nearest 1/3
    const y = /\n\s+y\s+(0\.(\d+))\n/.exec(r.out)!;
    expect(y[2]).toHaveLength(17);
    expect(Math.abs(Number(y[1]) - 1 / 3)).toBeLessThan(4e-16);
  });
});

describe('check with a missing file among others', () => {
  it('checks every other file, says which one is missing, exits 1', async () => {
    const a = path.join(dir, 'a.poise');
    const b = path.join(dir, 'b.poise');
    fs.writeFileSync(a, 'input u\nvar y\ny = u + nope\n'); // P201 in a
    fs.writeFileSync(b, 'input u\nvar y\ny = u + other\n'); // P201 in b, after the missing file
    const r = await run('check', a, path.join(dir, 'missing.poise'), b);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/a\.poise:3:\d+: error P201/);
    expect(r.out).toMatch(/b\.poise:3:\d+: error P201/);
    expect(r.err).toMatch(/missing\.poise: no such file/);
    expect(r.err).not.toMatch(STACK);
  });

  it('exits 1 when the only problem is the missing file', async () => {
    const r = await run('check', ex, path.join(dir, 'missing.poise'));
    expect(r.code).toBe(1);
  });
});

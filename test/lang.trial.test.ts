/**
 * Regressions found by trying the language on new models as a new user would (each: a small model in,
 * the expected data out). Independent routes are named beside each check.
 */
import * as path from 'path';
import * as fs from 'fs';
import { describe, expect, it } from 'vitest';
import { solveEdits } from '../server/src/core/services/solve';
import { applyEdits } from '../server/src/core/services/edits';
import { EXAMPLES } from './helpers/cli';
import { analyzeFile } from './helpers/examples';

describe('Solve writes a value that is zero on its branch as 0, so a second Solve writes nothing', () => {
  // examples/valve_datasheet.poise below its overflow lip: spill = choose(level > lip, …, 0 [m^3/h]) is
  // exactly 0. From this guess the coupled Newton step used to leave rounding residue, written back as
  // "spill ~ -1.034e-25 [m^3/h]", which the next Solve changed to 0.
  const file = path.join(EXAMPLES, 'valve_datasheet.poise');
  const text = fs.readFileSync(file, 'utf8').replace('level ~ 1 [m]', 'level ~ 0.863722 [m]');

  it('spill is exactly 0 and Solve is idempotent', () => {
    const a = analyzeFile(file, text);
    const sol = a.point('shower')!;
    expect(sol.ok).toBe(true);
    const spill = a.values(sol).find((v) => v.name === 'spill')!;
    expect(spill.value).toBe(0);
    const first = solveEdits(a, 'shower');
    expect(first.ok).toBe(true);
    const once = applyEdits(text, first.ok ? first.edits : []);
    expect(once).toContain('  spill ~ 0 [m^3/h]\n');
    const second = solveEdits(analyzeFile(file, once), 'shower');
    expect(second.ok && second.edits).toEqual([]);
    // the zero branch holds: the level is below the lip (1.6 m)
    const level = a.values(sol).find((v) => v.name === 'level')!.value;
    expect(level).toBeLessThan(1.6);
  });
});

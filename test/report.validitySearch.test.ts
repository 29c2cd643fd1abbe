/**
 * The fast validity search (server/src/core/analysis/validitySearch.ts: loose scouting simulations, careful
 * ones only next to the limit) against the careful search (every trial at the careful tolerance), on a
 * model whose limit is known in closed form and on models with two inputs, a domain limit and a lightly
 * damped chain: the same kind of limit, and the two brackets overlap, so the limits agree within the
 * search's ratio of 1.04.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { buildReport, type ReportData } from '../server/src/core/analysis/report';
import { SEARCH_RATIO } from '../server/src/core/analysis/validitySearch';
import { massChain } from '../bench/report';
import { EXAMPLES } from './helpers/cli';

/** y = x² of a first-order lag x' = −x + u at x₀ = u₀ = 2. */
const SQUARE = `
input u
state x
output y = x^2
x' = -x + u
point p:
  u = 2
  x ~ 2
`;

/** The same laminar tank with a √ of the level as in report.test.ts: its up limit is a domain limit. */
const LAMINAR = `
const area = 2 [m^2]
const r = 100 [s/m^2]
input draw [L/s]
state level [m]
var spill [L/s]
var speed [m^0.5]
output level_cm [cm] = level
area*level' = 3 [L/s] - spill - draw
spill = level/r
speed = sqrt(level)
point p:
  draw = 2 [L/s]
  level ~ 0.1 [m]
`;

function agree(fast: ReportData, careful: ReportData): void {
  expect(fast.validity!.length).toBe(careful.validity!.length);
  fast.validity!.forEach((v, j) => {
    const c = careful.validity![j];
    for (const dir of ['up', 'down'] as const) {
      const f = v[dir]!;
      const k = c[dir]!;
      const where = `${v.input} ${dir}`;
      expect(f.limitedBy, where).toBe(k.limitedBy);
      if (f.firstInvalid !== null) expect(f.firstInvalid / f.step, where).toBeLessThanOrEqual(SEARCH_RATIO * (1 + 1e-9));
      if (k.limitedBy === 'tolerance' || k.limitedBy === 'domain') {
        // both brackets hold the limit: they overlap, so the steps differ by less than the ratio
        expect(f.step, where).toBeLessThanOrEqual(k.firstInvalid! * (1 + 1e-9));
        expect(k.step, where).toBeLessThanOrEqual(f.firstInvalid! * (1 + 1e-9));
        expect(Math.max(f.step / k.step, k.step / f.step), where).toBeLessThan(SEARCH_RATIO);
      } else {
        expect(f.step, where).toBe(k.step);
      }
    }
  });
}

describe('fast validity search', () => {
  it('brackets the closed-form limit of y = x² like the careful search', () => {
    // linear Δy = 2x₀Δx, nonlinear Δy = 2x₀Δx + Δx², so the error at the end of the horizon (the largest
    // of both) is |Δx|/(2x₀ ± |Δx|) with Δx = s(1 − e^−T): the limit is 0.05·2x₀/0.95 up and 0.05·2x₀/1.05
    // down, divided by (1 − e^−T) (algebra, worked by hand)
    const fast = buildReport(analyze(SQUARE), 'p', { validity: true });
    const careful = buildReport(analyze(SQUARE), 'p', { validity: true, validitySearch: 'careful' });
    const T = fast.horizon!.value;
    const reach = 1 - Math.exp(-T);
    const exact = { up: (0.05 * 4) / 0.95 / reach, down: (0.05 * 4) / 1.05 / reach };
    for (const r of [fast, careful]) {
      const v = r.validity![0];
      for (const dir of ['up', 'down'] as const) {
        expect(v[dir]!.limitedBy).toBe('tolerance');
        // the careful integration (rtol 3e-5) moves the error by about 1e-4 of the change
        expect(v[dir]!.step).toBeLessThanOrEqual(exact[dir] * 1.001);
        expect(v[dir]!.firstInvalid!).toBeGreaterThanOrEqual(exact[dir] * 0.999);
      }
    }
    agree(fast, careful);
    // and it needs less integration work
    expect(fast.work).toBeLessThan(careful.work);
  });

  it('agrees with the careful search on the buffer tank (two inputs) and on a domain limit', () => {
    const tank = () => analyze(fs.readFileSync(path.join(EXAMPLES, 'buffer_tank.poise'), 'utf8'));
    agree(buildReport(tank(), 'dry_day'), buildReport(tank(), 'dry_day', { validitySearch: 'careful' }));
    const fast = buildReport(analyze(LAMINAR), 'p');
    agree(fast, buildReport(analyze(LAMINAR), 'p', { validitySearch: 'careful' }));
    expect(fast.validity![0].up!.limitedBy).toBe('domain');
    expect(fast.validity![0].up!.domainMessage).toMatch(/square root/);
  });

  it('agrees with the careful search on a lightly damped chain of masses with stiffening springs', () => {
    const text = massChain(4);
    const fast = buildReport(analyze(text), 'nominal', { frequencies: 20 });
    const careful = buildReport(analyze(text), 'nominal', { frequencies: 20, validitySearch: 'careful' });
    agree(fast, careful);
    expect(fast.work).toBeLessThan(careful.work);
  }, 60_000);
});

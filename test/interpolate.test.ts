/**
 * Lookup tables (server/src/core/numeric/interpolate.ts).
 *
 * Outside references, run live: `numpy.interp` for linear tables (value; the slope of the interval found by
 * `numpy.searchsorted`), SciPy's `PchipInterpolator` and its `derivative()` for monotone cubic tables, at
 * 1,000 random points per table. Independent route: the slopes against central differences of the values,
 * and monotonicity preserved on monotone data (Fritsch & Carlson 1980, the property the method guarantees).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { makeTable, parseTableCsv, tableSlope, tableSlopes, tableValue, type InterpolationKind } from '../server/src/core/numeric/interpolate';
import { PYTHON_WITH_SCIPY, runScipy, SCIPY_REQUIRED } from './helpers/scipy';

// invented demo data: a valve's flow coefficient against opening, a pump's head against flow (falling),
// and a curve that rises and falls (not monotone), with uneven breakpoints
const TABLES: { name: string; x: number[]; y: number[] }[] = [
  { name: 'valve curve', x: [0, 0.1, 0.2, 0.4, 0.6, 0.8, 1], y: [0, 0.6, 1.5, 4.2, 8.8, 14.9, 21] },
  { name: 'pump head', x: [0, 5, 12, 20, 26, 31], y: [42, 41.2, 38.5, 32, 24.5, 15] },
  { name: 'rise and fall', x: [-2, -1.3, 0, 0.4, 2, 2.5, 4], y: [1, 3, 3.5, 2, 2, -1, 0.5] },
];

let seed = 12345;
const rnd = (): number => {
  seed = (seed * 48271) % 2147483647;
  return seed / 2147483647;
};

const points = TABLES.map((t) => {
  const lo = t.x[0], hi = t.x[t.x.length - 1];
  return Array.from({ length: 1000 }, () => lo + (hi - lo) * rnd());
});

describe('tables against NumPy and SciPy', () => {
  if (!PYTHON_WITH_SCIPY && !SCIPY_REQUIRED) {
    it.skip('needs python3 with numpy and scipy', () => {});
    return;
  }
  let ref: { lin: number[]; linSlope: number[]; pchip: number[]; pchipSlope: number[] }[] = [];
  beforeAll(() => {
    ref = runScipy(
      `from scipy.interpolate import PchipInterpolator
out = []
for t, q in zip(inp['tables'], inp['points']):
    x = np.array(t['x'], dtype=float); y = np.array(t['y'], dtype=float); q = np.array(q, dtype=float)
    k = np.clip(np.searchsorted(x, q, side='right') - 1, 0, len(x) - 2)
    p = PchipInterpolator(x, y)
    out.append({'lin': np.interp(q, x, y).tolist(), 'linSlope': ((y[k + 1] - y[k]) / (x[k + 1] - x[k])).tolist(),
                'pchip': p(q).tolist(), 'pchipSlope': p.derivative()(q).tolist()})
print(json.dumps(out))`,
      { tables: TABLES, points },
    );
  });
  TABLES.forEach((t, i) => {
    it(`${t.name}: linear equals numpy.interp, value and slope`, () => {
      const tab = makeTable(t.x, t.y, 'linear');
      points[i].forEach((q, j) => {
        expect(Math.abs(tableValue(tab, q) - ref[i].lin[j])).toBeLessThan(1e-13 * 50);
        expect(Math.abs(tableSlope(tab, q) - ref[i].linSlope[j])).toBeLessThan(1e-11);
      });
    });
    it(`${t.name}: monotone cubic equals PchipInterpolator, value and slope`, () => {
      const tab = makeTable(t.x, t.y, 'monotone');
      points[i].forEach((q, j) => {
        expect(Math.abs(tableValue(tab, q) - ref[i].pchip[j])).toBeLessThan(1e-12 * 50);
        expect(Math.abs(tableSlope(tab, q) - ref[i].pchipSlope[j])).toBeLessThan(1e-10 * 50);
      });
    });
  });
});

describe('tables on their own', () => {
  for (const kind of ['linear', 'monotone'] as InterpolationKind[]) {
    it(`${kind}: slopes equal central differences of the values away from breakpoints`, () => {
      TABLES.forEach((t, i) => {
        const tab = makeTable(t.x, t.y, kind);
        for (const q of points[i].slice(0, 200)) {
          if (t.x.some((b) => Math.abs(b - q) < 1e-4)) continue;
          const h = 1e-6;
          const fd = (tableValue(tab, q + h) - tableValue(tab, q - h)) / (2 * h);
          expect(Math.abs(tableSlope(tab, q) - fd)).toBeLessThan(1e-5 * (1 + Math.abs(fd)));
        }
      });
    });
    it(`${kind}: passes through every breakpoint and holds the end values outside`, () => {
      for (const t of TABLES) {
        const tab = makeTable(t.x, t.y, kind);
        t.x.forEach((x, k) => expect(tableValue(tab, x)).toBeCloseTo(t.y[k], 14));
        expect(tableValue(tab, t.x[0] - 10)).toBe(t.y[0]);
        expect(tableValue(tab, t.x[t.x.length - 1] + 10)).toBe(t.y[t.y.length - 1]);
        expect(tableSlopes(tab, t.x[0] - 1)).toEqual({ left: 0, right: 0 });
      }
    });
  }
  it('the monotone cubic keeps monotone data monotone (Fritsch & Carlson 1980)', () => {
    for (const t of TABLES.slice(0, 2)) {
      const tab = makeTable(t.x, t.y, 'monotone');
      const dir = Math.sign(t.y[t.y.length - 1] - t.y[0]);
      let prev = tableValue(tab, t.x[0]);
      for (let k = 1; k <= 2000; k++) {
        const v = tableValue(tab, t.x[0] + ((t.x[t.x.length - 1] - t.x[0]) * k) / 2000);
        expect(dir * (v - prev)).toBeGreaterThanOrEqual(-1e-12);
        prev = v;
      }
    }
  });
  it('a linear table has two slopes at an interior breakpoint; the linear model uses their mean', () => {
    const tab = makeTable([0, 1, 2], [0, 1, 3], 'linear');
    expect(tableSlopes(tab, 1)).toEqual({ left: 1, right: 2 });
    expect(tableSlope(tab, 1)).toBe(1.5);
  });
  it('refuses unusable data with a sentence', () => {
    expect(() => makeTable([0, 0], [1, 2], 'linear')).toThrow(/increase strictly/);
    expect(() => makeTable([0], [1], 'linear')).toThrow(/at least two/);
    expect(() => makeTable([0, 1], [1, NaN], 'linear')).toThrow(/finite/);
  });
  it('reads CSV with a header, comments and either separator', () => {
    expect(parseTableCsv('opening,cv\n# from the data sheet\n0, 0\n0.5;2.5\n1\t6\n')).toEqual({ x: [0, 0.5, 1], y: [0, 2.5, 6] });
    expect(parseTableCsv('0,0\n0.5,abc\n')).toEqual({ line: 2, problem: 'expected two numbers (breakpoint, value), found "0.5,abc"' });
  });
});

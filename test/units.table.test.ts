/**
 * The fast unit reader (server/src/core/semantics/units.ts `parseUnitFast`, a copy of mathjs's unit grammar over
 * the table scripts/gen-unit-table.mjs generates from mathjs) against mathjs itself, the reference library
 * for unit names, prefixes and grammar: the mathjs path of units.ts (`parseUnitMathjs`) and, independently
 * of Poise's code, a mathjs instance created here (its normalised value of 1 unit, its dimensions, and
 * 0 units converted to SI for the offset).
 */
import * as fs from 'fs';
import * as path from 'path';
import fc from 'fast-check';
import { create, unitDependencies } from 'mathjs';
import { describe, expect, it, vi } from 'vitest';
import { SCALED_UNIT_PROBLEM, leadingNumber, parseUnit, parseUnitFast, parseUnitMathjs, type UnitInfo } from '../server/src/core/semantics/units';
// @ts-expect-error -- a plain .mjs script without type declarations
import { TABLE_PATH, unitTableSource } from '../scripts/gen-unit-table.mjs';
import { expectClose } from './helpers/model';
import { poiseFiles } from './helpers/examples';

interface MathjsUnit {
  value: unknown;
  dimensions: number[];
  toSI(): { value: unknown };
}
const math = create({ unitDependencies }) as unknown as {
  unit(v: number, t: string): MathjsUnit;
  Unit: { UNITS: Record<string, { prefixes: Record<string, unknown> }> };
};
const ANGLE = 7; // mathjs's dimension order: MASS LENGTH TIME CURRENT TEMPERATURE LUMINOUS AMOUNT ANGLE BIT

/** mathjs's own reading of `text`, or its error message. */
function reference(text: string): { dims: number[]; scale: unknown; zeroInSI: unknown } | string {
  try {
    const u = math.unit(1, text);
    return { dims: u.dimensions.filter((_, i) => i !== ANGLE), scale: u.value, zeroInSI: math.unit(0, text).toSI().value };
  } catch (e) {
    return (e as Error).message;
  }
}

/** Same number to relative 1e-12 (NaN matches NaN, ±Infinity itself). */
function same(a: number, b: number, what: string): void {
  if (Number.isNaN(b) || !Number.isFinite(b)) expect(a, what).toBe(b);
  else expectClose(a, b, 1e-12, 1e-300, what);
}

/** The fast path and the mathjs path give the same answer for `text`; returns whether mathjs accepted it. */
function agree(text: string): boolean {
  const t = text.trim();
  const fast = parseUnitFast(t);
  const slow = parseUnitMathjs(t);
  const ref = reference(t);
  if (typeof slow === 'string') {
    // rejected: the fast path leaves it to mathjs, whose message parseUnit passes on
    expect(fast, `${t}: fast path read text mathjs rejects`).toBeUndefined();
    expect(typeof ref, `${t}: mathjs itself accepts it`).toBe('string');
    const own = parseUnit(text);
    // a number alone ("2", "2 3") is Poise's scaled-unit error (P311), never a silently dropped number
    if (typeof own === 'string' && own.startsWith(SCALED_UNIT_PROBLEM)) expect(leadingNumber(t)?.value, t).not.toBe(1);
    else expect(own, t).toBe(slow);
    if (/[a-zA-Z]/.test(t)) expect([ref, (ref as string).replace(/^Unit "(.*)" not found\.?$/, 'no unit named "$1"')], t).toContain(slow);
    return false;
  }
  expect(fast, `${t}: fast path failed on text mathjs reads`).toBeDefined();
  const f = fast as UnitInfo;
  expect(f.dims, `${t} dims`).toEqual(slow.dims);
  same(f.scale, slow.scale, `${t} scale`);
  same(f.offset, slow.offset, `${t} offset`);
  expect(f.text).toBe(t);
  // Poise keeps a leading number that mathjs ignores: [1000 kg/s] is a unit of 1000 kg/s (scaled units,
  // test/units.scaled.test.ts); a negative one is an error (P311)
  const lead = leadingNumber(t);
  if (!lead || lead.value === 1) expect(parseUnit(text), t).toEqual(f);
  else if (lead.value > 0 && f.offset === 0) expect(parseUnit(text), t).toEqual({ ...f, scale: f.scale * lead.value });
  else expect(String(parseUnit(text)), t).toMatch(new RegExp('^' + SCALED_UNIT_PROBLEM));
  // and against mathjs's own arithmetic (a Complex value, only VAR's, has no real scale to compare)
  if (typeof ref === 'string') throw new Error(`${t}: units.ts read it but mathjs says ${ref}`);
  expect(f.dims, `${t} dims vs mathjs`).toEqual(ref.dims);
  if (typeof ref.scale === 'number') same(f.scale, ref.scale, `${t} scale vs mathjs`);
  if (typeof ref.zeroInSI === 'number' && Number.isFinite(f.scale) && f.offset !== 0) same(f.offset, ref.zeroInSI, `${t} offset vs mathjs`);
  return true;
}

// units.ts's own header comment, the tank-chain benchmark model and everyday engineering units
const COMMON = [
  'm^2.5/s', 'L/min', 'kW', 'degC', 'J/(kg*K)', 'N*m*s/rad', '1/year', 'm^3/s', 'bar', 'mm', 'kPa', 'm', 'm^2', 'cm',
  'um', 'mL', 'kN', 'MW', 'GJ', 'hPa', 'mbar', 'psi', 'degF', 'K', 'kmol', 'mol/L', 'rad/s', 'deg', 'h', 'min',
  'day', 'year', 'g/cm^3', 'kWh', 'W/(m^2*K)', 'N*m', '1/s', 'm3', 'm2', 'L', 'kg', 'g', 's', 'ms', 'A', 'mA', 'V',
  'kV', 'ohm', 'Hz', 'rpm', 'cycle/min', 'mol', 'kJ/(kg*K)', 'kg/m^3', 'm/s^2', 'N/m', 'N*s/m', 'Pa*s', 'W/K',
  'kJ/K', 'J/mol', 'mol/(m^3*s)', 'L/s', 'gal/min', 'ft', 'inch', 'in', 'lbm', 'lbf', 'hp', 'atm', 'mmHg', 'BTU',
  'cc', 'Wh', 'degR', 'kelvin', 'celsius', 'fahrenheit', 'meter', 'meters', 'second', 'hours', 'liter', 'litre',
  'kilometer', 'milliliter', 'kilogram', 'megawatt', 'VA', 'VAR', 'kVAR', 'b', 'B', 'kB', 'KiB', 'kibibyte',
  'MMBTU', 'cd', 'lm', 'T', 't', 'tonne', 'C', 'F', 'H', 'S', 'Wb', 'eV', 'erg', 'dyn', 'arcsec', 'grad', 'cycle',
  // exact names win over a prefix split (pint, not pico-tonne; foot, not femto-tonne; quart, not quecto-tonne)
  'pt', 'ft', 'qt', 'pt/min',
];
// spacing, leading numbers, parentheses, powers of every form mathjs's grammar allows
const SYNTAX = [
  ' m / s ', 'kg m^2 / s^2', 'kg\tm', 'm^-1', 'm^ -2', 'm ^ 2', 'm^+2', 'm^.5', 'm^-.5', 'm^2.', 'm^1e1', 'm^2e-1',
  's^-0.25', '1 / s', '1/(m*s)', '2/s', '5 m', '1e3 m', '1.5e-3/s', '-1/s', '+1/s', '.5 m', '1*m', 'kg/(m*(s^2))',
  '((m))', '(m/s)/(kg/s)', 'kg/m/s', 'kg/m*s', 'J/(mol K)', 'm2kg', 'mm^2', 'cm^3/min', 'degC/min', 'degC^1',
  '(degC)', 'degC*m', 'degC^2', 'kdegC', 'mdegF', 'degC/s^0', 'm^0', 's^-0',
];
// text mathjs rejects (parseUnit must give mathjs's message); a power of a group, '(m/s)^2', is Poise's own
// extension, read as '(m^2/s^2)' (test/lang.trial.test.ts)
const REJECTED = [
  'µm', 'μs', 'rpm2', 'd', 'm/', '/s', 'm^', 'm^x', 'm^(2)', '(m', 'm)', 'kg*', 'm**2', 'foo', 'kft',
  'km2x', '2', '2 3', '1/', 'm s)', '3m^2kg?', 'm,s', 'm.s', 'm-s', 'm^2^3', 'k m', 'Kelvin', 'METER', 'e', 'em',
  '1e', 'degc', 'm\ns', 'm^--1', '^2', '()', 'm()', '%/s', 'ppm/s',
];

describe('fast unit reader vs mathjs (mathjs 15, the reference library)', () => {
  it.each(COMMON.map((t) => [t]))('%s', (t) => {
    agree(t);
  });
  it.each(SYNTAX.map((t) => [t]))('syntax %j', (t) => {
    agree(t);
  });
  it.each(REJECTED.map((t) => [t]))('rejected %j', (t) => {
    expect(agree(t)).toBe(false);
  });
  it('most of the everyday and syntax lists are accepted (the comparison is not vacuous)', () => {
    const accepted = [...COMMON, ...SYNTAX].filter((t) => typeof reference(t) !== 'string');
    expect(accepted.length).toBeGreaterThan(0.9 * (COMMON.length + SYNTAX.length));
  });
  it('% and ppm are Poise\'s own (not mathjs\'s) and stay dimensionless fractions', () => {
    // common practice: 1 % = 0.01, 1 ppm = 1e-6
    for (const [t, s] of [['%', 0.01], ['ppm', 1e-6]] as const) {
      const u = parseUnit(t) as UnitInfo;
      expect([u.dims.every((d) => d === 0), u.scale, u.offset]).toEqual([true, s, 0]);
    }
  });

  // 200 random unit texts: prefixed units with powers, joined by * / or spaces, some in parentheses,
  // sometimes after a leading number; prefixes a unit does not take and stray characters are rejected
  const UNITS = [
    'm', 'g', 's', 'A', 'K', 'mol', 'cd', 'N', 'J', 'W', 'Pa', 'bar', 'L', 'l', 'h', 'min', 'day', 'year', 'degC',
    'degF', 'rad', 'deg', 'Hz', 'V', 'ohm', 'psi', 'atm', 'ft', 'inch', 'in', 'lbm', 'lbf', 'BTU', 'Wh', 'cc',
    'gal', 'mmHg', 'meter', 'second', 'hour', 'liter', 'gram', 'b', 'B', 'bits', 'erg', 'eV', 'cycle', 'm2', 'm3',
    'sqft', 'cuft', 'VA', 'hp', 'tonne', 't', 'T', 'C', 'F', 'H', 'S', 'Wb', 'mi', 'kip', 'torr', 'ampere',
  ];
  const PREFIXES = ['', 'k', 'M', 'G', 'm', 'u', 'n', 'c', 'd', 'da', 'h', 'kilo', 'milli', 'micro', 'mega', 'Ki', 'kibi', 'MM', 'E', 'P', 'µ', 'kk'];
  const POWERS = ['', '', '', '^2', '^3', '^-1', '^-2', '^0.5', '^2.5', '^-1.5', '^ 2', ' ^2', '^+2', '^.5', '^-.5', '^0', '^1.25', '^1e1', '^'];
  const SEPARATORS = ['*', '/', ' ', ' * ', ' / ', '\t/', '*', '/'];
  const LEADING = ['', '', '', '', '1/', '1 / ', '2*', '1e3 ', '10 ', '1/('];
  // three times in four a prefix the unit takes (from mathjs's own list), else one from PREFIXES
  const takes = (u: string): string[] => Object.keys(math.Unit.UNITS[u].prefixes);
  const factor = fc
    .tuple(fc.constantFrom(...UNITS), fc.nat(3), fc.nat(1000), fc.constantFrom(...PREFIXES), fc.constantFrom(...POWERS))
    .map(([u, k, i, p, w]) => (k ? takes(u)[i % takes(u).length] : p) + u + w);
  const { term } = fc.letrec<{ term: string }>((tie) => ({
    term: fc.oneof(
      { depthSize: 'small', withCrossShrink: true },
      factor,
      fc.tuple(tie('term'), fc.constantFrom(...SEPARATORS), tie('term')).map(([a, s, b]) => a + s + b),
      tie('term').map((x) => `(${x})`),
    ),
  }));
  const text = fc.tuple(fc.constantFrom(...LEADING), term).map(([l, t]) => (l.endsWith('(') ? `${l}${t})` : l + t));

  it('200 random unit texts read alike', () => {
    let accepted = 0;
    fc.assert(
      fc.property(text, (t) => {
        if (agree(t)) accepted++;
      }),
      { numRuns: 200, seed: 20251202 },
    );
    // both kinds are exercised
    expect(accepted).toBeGreaterThan(80);
    expect(accepted).toBeLessThan(200);
  });
});

describe('the generated table', () => {
  it('is what scripts/gen-unit-table.mjs makes from the installed mathjs (run it after a mathjs upgrade)', () => {
    const now = (unitTableSource() as string).split('\n');
    const file = fs.readFileSync(TABLE_PATH as string, 'utf8').split('\n');
    const firstDiff = now.findIndex((line, i) => line !== file[i]);
    expect(firstDiff === -1 && now.length === file.length, `line ${firstDiff + 1}: ${file[firstDiff]} / mathjs now: ${now[firstDiff]}`).toBe(true);
  });

  it('the unit texts of the examples and the common list never create mathjs; unknown text does', async () => {
    // every .poise file, the parts libraries in subfolders included
    const fromExamples = poiseFiles()
      .flatMap((f) => [...fs.readFileSync(f, 'utf8').matchAll(/\[([^\]\n]+)\]/g)].map((m) => m[1].trim()));
    expect(fromExamples.length).toBeGreaterThan(20);
    // (a negative leading number is Poise's own error, P311, found without mathjs too)
    const texts = [...fromExamples, ...COMMON, ...SYNTAX].filter((t) => t === '%' || (typeof reference(t) !== 'string' && !(Number(leadingNumber(t)?.value) < 0)));
    vi.resetModules(); // a units module that has read nothing yet
    const fresh = await import('../server/src/core/semantics/units');
    expect(fresh.mathjsCreated()).toBe(false);
    for (const t of texts) expect(typeof fresh.parseUnit(t), t).toBe('object');
    expect(fresh.mathjsCreated()).toBe(false);
    expect(fresh.parseUnit('furlongs/fortnight')).toBe(parseUnitMathjs('furlongs/fortnight'));
    expect(fresh.mathjsCreated()).toBe(true);
  });
});

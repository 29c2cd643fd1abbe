/**
 * Offset units (degC, degF) with a sign: a sign written before a quantity belongs to the value in that
 * unit, so −5 °C is 268.15 K, not −(5 °C in K) = −278.15 K. Checked in every place a value is read or
 * written back: constants, equations, point lines (= and ~), declared sweeps, values printed in the
 * declared unit, the Solve lens's written guesses, and hovers.
 *
 * Outside sources: SI Brochure, 9th ed. (2019), 2.3.1: t/°C = T/K − 273.15. NIST SP 811 (2008), appendix B
 * (B.9 and the temperature conversions): t/°F = 1.8·t/°C + 32, T/K = (t/°F + 459.67)/1.8.
 * Independent route inside the test: each value is also computed here from those two formulas by hand.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { parseUnit, type UnitInfo } from '../server/src/core/semantics/units';
import { runDeclaredSweep, declaredSweeps } from '../server/src/core/analysis/sweep';
import { solveEdits } from '../server/src/core/services/solve';
import { hover } from '../server/src/core/services/hover';
import { applyEdits } from '../server/src/core/services/edits';
import { UNIT_TABLE } from '../server/src/core/semantics/unitTable.generated';
import { dedent, expectClose, solve } from './helpers/model';

/** SI Brochure 9th ed. 2.3.1: T/K = t/°C + 273.15 */
const kelvinFromC = (c: number): number => c + 273.15;
/** NIST SP 811 appendix B: t/°C = (t/°F − 32)/1.8 */
const celsiusFromF = (f: number): number => (f - 32) / 1.8;

function unit(text: string): UnitInfo {
  const u = parseUnit(text);
  if (typeof u === 'string') throw new Error(u);
  return u;
}

/** SI value of a constant, read from the analysis. */
function constSI(text: string, name: string): number {
  const a = analyze(text);
  const s = a.bound.symbols.get(name);
  if (!s) throw new Error(`no ${name}`);
  return a.units.constValues.get(s)!;
}

// negative, zero and positive values in each offset unit, with their kelvin by the published formulas
const CASES: [string, number, number][] = [
  ['degC', -5, kelvinFromC(-5)], // 268.15 K
  ['degC', -40, kelvinFromC(-40)],
  ['degC', 0, 273.15],
  ['degC', 25, kelvinFromC(25)],
  ['degF', -40, kelvinFromC(celsiusFromF(-40))], // −40 °F = −40 °C (NIST SP 811: the scales cross there)
  ['degF', -4, kelvinFromC(celsiusFromF(-4))], // −20 °C
  ['degF', 0, kelvinFromC(celsiusFromF(0))], // 255.372… K
  ['degF', 50, kelvinFromC(celsiusFromF(50))], // 10 °C
  ['celsius', -5, kelvinFromC(-5)],
  ['fahrenheit', -4, kelvinFromC(celsiusFromF(-4))],
];

describe('the unit table: every offset unit is covered here', () => {
  it('the offset units of the table are degC, degF and their long names, and each is tested below', () => {
    const offsetUnits = UNIT_TABLE.filter((r) => r[4] !== 0).map((r) => r[0]).sort();
    expect(offsetUnits).toEqual(['celsius', 'degC', 'degF', 'fahrenheit']);
    for (const t of ['K', 'degR']) expect(unit(t).offset).toBe(0);
  });
});

describe('a signed quantity in an offset unit is the value in that unit', () => {
  it.each(CASES)('constant %s: %s → %s K', (u, v, kelvin) => {
    expectClose(constSI(`const t0 = ${v} [${u}]\n`, 't0'), kelvin, 1e-12, 1e-12);
    // written with a space, in parentheses, and with a leading plus: the same value
    expectClose(constSI(`const t0 = - ${Math.abs(v)} [${u}]\n`.replace('- ', v < 0 ? '- ' : ''), 't0'), kelvin, 1e-12, 1e-12);
    if (v < 0) expectClose(constSI(`const t0 = -(${-v} [${u}])\n`, 't0'), kelvin, 1e-12, 1e-12);
    else expectClose(constSI(`const t0 = +${v} [${u}]\n`, 't0'), kelvin, 1e-12, 1e-12);
    // a double sign cancels: --5 [degC] is 5 °C
    expectClose(constSI(`const t0 = --${v} [${u}]\n`, 't0'), kelvinFromC(u === 'degC' || u === 'celsius' ? v : celsiusFromF(v)), 1e-12, 1e-12);
  });

  it('a constant computed from a negative temperature (a difference stays a difference)', () => {
    // 18 °C − (−5 °C) = 23 K (SI Brochure 2.3.1: a difference of Celsius temperatures equals one in kelvin)
    const text = 'const a = 18 [degC]\nconst b = -5 [degC]\nconst d = a - b\n';
    expectClose(constSI(text, 'd'), 23, 1e-12);
  });
});

/** A glasshouse: heat loss through the cover UA·(T_in − T_out), heater power, air temperature as a state. */
const glasshouse = (tout: string, tin = '18 [degC]'): string => dedent(`
  const ua = 850 [W/K]
  const cap = 2e6 [J/K]
  input t_out [degC]
  input heat [kW]
  state t_in [degC]
  output loss [kW] = ua*(t_in - t_out)
  cap*t_in' = heat - ua*(t_in - t_out)
  point frost:
    t_in = ${tin}
    t_out = ${tout}
    heat ~ 10 [kW]
`);

describe('glasshouse heat loss with a frosty outside temperature (computed by hand)', () => {
  it('T_out = −5 °C, T_in = 18 °C: heat = 850 W/K · 23 K = 19.55 kW', () => {
    // by hand: T_in − T_out = 18 − (−5) = 23 °C = 23 K (SI Brochure 2.3.1); 850 · 23 = 19 550 W
    const s = solve(glasshouse('-5 [degC]'));
    expectClose(s.value('heat'), 19.55, 1e-12);
    expectClose(s.value('loss'), 19.55, 1e-12);
    // printed back in its declared unit: −5 °C
    expectClose(s.value('t_out'), -5, 1e-12);
    // the linear model does not depend on the offset: ∂t_in'/∂t_out = UA/C = 4.25e-4 1/s
    expectClose(s.B('t_in', 't_out'), 850 / 2e6, 1e-12);
  });

  it.each([
    // T_out in °F by NIST SP 811: −4 °F = −20 °C → ΔT = 38 K; 23 °F = −5 °C → 23 K; 32 °F = 0 °C; 50 °F = 10 °C
    ['-4 [degF]', 18 - celsiusFromF(-4)],
    ['23 [degF]', 18 - celsiusFromF(23)],
    ['0 [degF]', 18 - celsiusFromF(0)],
    ['32 [degF]', 18],
    ['50 [degF]', 8],
    ['-0 [degC]', 18],
    ['0 [degC]', 18],
    ['12 [degC]', 6],
    ['-5', 23], // a bare number is in the declared unit (degC)
  ])('T_out = %s: heat = UA·ΔT', (tout, dT) => {
    const s = solve(glasshouse(tout));
    expectClose(s.value('heat'), (850 * dT) / 1000, 1e-12, 1e-15, tout);
  });

  it('an equation with a negative temperature literal: setpoint below zero', () => {
    // a cold store held at −18 °C by a cooler; loss from 20 °C outside: 850 W/K · 38 K = 32.3 kW removed
    const s = solve(dedent(`
      const ua = 850 [W/K]
      input cool [kW]
      input t_out [degC]
      state t_in [degC]
      (2e6 [J/K])*t_in' = ua*(t_out - t_in) - cool
      output below [K] = t_in - -18 [degC]
      point hold:
        t_in = -18 [degC]
        t_out = 20 [degC]
        cool ~ 1 [kW]
    `));
    expectClose(s.value('cool'), 32.3, 1e-12);
    expectClose(s.value('t_in'), -18, 1e-12);
    expectClose(s.value('below'), 0, 0, 1e-12);
  });

  it('a guess below zero is read as a guess below zero (the point solves to it at once)', () => {
    // t_in unknown with guess −10 °C; the answer fixed by heat: 18 °C − 19.55 kW/850 W/K = −5 °C... by hand:
    // heat = 0 → t_in = t_out = −5 °C (no heating: the house sits at the outside temperature)
    const text = dedent(`
      const ua = 850 [W/K]
      input t_out [degC]
      input heat [kW]
      state t_in [degC]
      (2e6 [J/K])*t_in' = heat - ua*(t_in - t_out)
      point cold:
        t_out = -5 [degC]
        heat = 0 [kW]
        t_in ~ -10 [degC]
    `);
    const a = analyze(text);
    const sol = a.point('cold')!;
    expect(sol.ok).toBe(true);
    const id = a.lowered.slotOf(a.bound.symbols.get('t_in')!);
    expectClose(sol.guesses[id], kelvinFromC(-10), 1e-12); // 263.15 K
    expectClose(sol.values[id], kelvinFromC(-5), 1e-12); // 268.15 K
  });
});

describe('the Solve lens writes negative temperatures that read back as written', () => {
  it.each([
    ['degC', '-10 [degC]', -5, '-5 [degC]'],
    ['degF', '14 [degF]', celsiusFromF(-4), '-4 [degF]'], // by NIST SP 811: −4 °F
    ['degC', '3 [degC]', 0, '0 [degC]'],
  ])('%s: guess %s, solution written as %s', (u, guess, tOutC, written) => {
    // no heating: the air sits at the outside temperature; t_out given in °C
    const text = dedent(`
      const ua = 850 [W/K]
      input t_out [degC]
      input heat [kW]
      state t_in [${u}]
      (2e6 [J/K])*t_in' = heat - ua*(t_in - t_out)
      point cold:
        t_out = ${tOutC} [degC]
        heat = 0 [kW]
        t_in ~ ${guess}
    `);
    const a = analyze(text);
    const r = solveEdits(a, 'cold');
    if (!r.ok) throw new Error(r.message);
    const after = applyEdits(text, r.edits);
    expect(after).toContain(`t_in ~ ${written}`);
    // the written text is read back as the same temperature, so solving again changes nothing
    const again = solveEdits(analyze(after), 'cold');
    if (!again.ok) throw new Error(again.message);
    expect(again.edits).toEqual([]);
    const b = analyze(after);
    const id = b.lowered.slotOf(b.bound.symbols.get('t_in')!);
    expectClose(b.point('cold')!.guesses[id], kelvinFromC(tOutC), 1e-12, 1e-9);
  });

  it('an unknown the block does not list is added in its declared unit with the right sign', () => {
    const text = dedent(`
      const ua = 850 [W/K]
      input t_out [degF]
      input heat [kW]
      state t_in [degF]
      (2e6 [J/K])*t_in' = heat - ua*(t_in - t_out)
      point cold:
        t_out = -4 [degF]
        heat = 0 [kW]
    `);
    const a = analyze(text);
    const r = solveEdits(a, 'cold');
    if (!r.ok) throw new Error(r.message);
    expect(applyEdits(text, r.edits)).toContain('t_in ~ -4 [degF]');
  });
});

describe('declared sweeps starting below zero', () => {
  it.each([
    ['-10 [degC]', '10 [degC]', -10, 10],
    ['-40 [degF]', '50 [degF]', -40, 10], // t_out declared in degC: −40 °F = −40 °C, 50 °F = 10 °C (NIST SP 811)
    ['-10', '0', -10, 0],
  ])('vary t_out = %s to %s starts at %s °C', (from, to, c0, c1) => {
    const text = glasshouse('-5 [degC]') + `sweep cold from frost:\n  vary t_out = ${from} to ${to} steps 4\n`;
    const a = analyze(text);
    const d = declaredSweeps(a)[0];
    expect(d.diagnostics).toEqual([]);
    expectClose(d.spec!.from, c0, 1e-12, 1e-12);
    expectClose(d.spec!.to, c1, 1e-12, 1e-12);
    const r = runDeclaredSweep(a, 'cold')!;
    const heat = r.columns.findIndex((c) => c.name === 'heat');
    // heat at each step by hand: 0.85 kW/K · (18 − t_out)
    for (const p of r.points) expectClose(p.values[heat], 0.85 * (18 - p.value), 1e-9, 1e-12);
    expectClose(r.points[0].value, c0, 1e-12, 1e-12);
  });
});

describe('hovers show negative temperatures as written', () => {
  it('a constant and a point value below zero', () => {
    const text = glasshouse('-5 [degC]').replace('const ua', 'const tmin = -40 [degF]\nconst ua') + 'output margin [K] = t_out - tmin\n';
    const a = analyze(text);
    const at = (needle: string): string => hover(a, text.indexOf(needle) + 1)!.markdown;
    // −40 °F is −40 °C = 233.15 K (NIST SP 811)
    expect(at('tmin =')).toMatch(/-40/);
    expect(at('tmin =')).not.toMatch(/-7\d\d|-4[0-9]{2}\./);
    // the hover of t_out lists its value at the point: −5 °C
    const h = at('t_out [degC]');
    expect(h).toMatch(/-5 ?(\| )?degC|-5 degC|\| -5 /);
    expect(h).not.toMatch(/-551/);
  });
});

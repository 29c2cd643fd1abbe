/**
 * A number inside a unit bracket is never dropped: `[1000 kg/s]` is a unit of 1000 kg/s (a scaled unit),
 * so `2 [1000 kg/s]` is 2000 kg/s and a variable declared in it is shown as multiples of 1000 kg/s. What
 * cannot be a scaled unit (an offset unit, a scale that is not positive, a number alone) is an error with
 * the bracket's range (P311).
 *
 * Outside sources: NIST SP 811 (2008), appendix B (1 L = 1e-3 m³, 1 min = 60 s, 1 t = 1000 kg) for the
 * scaled units that equal named ones. Independent route: the same model written in plain units with the
 * numbers multiplied out by hand must give the same SI values and the same linear model after rescaling.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { parseUnit, type UnitInfo } from '../server/src/core/semantics/units';
import { solveEdits } from '../server/src/core/services/solve';
import { applyEdits } from '../server/src/core/services/edits';
import { hover } from '../server/src/core/services/hover';
import { exportLinear } from '../server/src/core/present/exports';
import { check } from './helpers/check';
import { dedent, expectClose, solve } from './helpers/model';

function unit(text: string): UnitInfo {
  const u = parseUnit(text);
  if (typeof u === 'string') throw new Error(`${text}: ${u}`);
  return u;
}

describe('a scaled unit is the number times the unit', () => {
  it.each([
    // [scaled text, equal named unit (NIST SP 811 appendix B)]
    ['1000 kg', 't'], // 1 t = 1000 kg
    ['1e3 kg', 'tonne'],
    ['60 s', 'min'],
    ['1000 L', 'm^3'], // 1 L = 1e-3 m³
    ['0.001 m^3', 'L'],
    ['1000 kg/s', 't/s'],
    ['3600 s', 'h'],
    ['1000*m', 'km'],
    ['1000/s', 'kHz'],
  ])('[%s] = [%s]', (scaled, named) => {
    const a = unit(scaled);
    const b = unit(named);
    expectClose(a.scale, b.scale, 1e-15, 0, scaled);
    expect(a.dims).toEqual(b.dims);
    expect(a.offset).toBe(0);
    // the text keeps the number, so the unit is printed as written
    expect(a.text).toBe(scaled);
  });

  it('a leading 1 changes nothing (1/s is the reciprocal second)', () => {
    expect(unit('1/s').scale).toBe(1);
    expect(unit('1 kg').scale).toBe(1);
  });
});

const plant = (unitFeed: string, feed: string, k: string): string => dedent(`
  const k = ${k}
  const mass = 5000 [kg]
  input feed [${unitFeed}]
  state m [kg]
  var out [${unitFeed}]
  output m_t [1000 kg] = m
  mass*m'/(1 [kg]) = feed - out
  out = k*m
  point p:
    feed = ${feed}
    out ~ 1 [${unitFeed}]
`);

describe('a model in a scaled unit gives the numbers of the same model in plain units', () => {
  it('values in SI and in the declared scaled unit; A B C D rescaled', () => {
    // scaled: feed = 2 [1000 kg/s] = 2000 kg/s; out = k·m with k = 0.5 [1000 kg/s]/(1000 kg)... by hand:
    // steady state out = feed = 2000 kg/s, m = out/k with k = 0.5 1/s → m = 4000 kg = 4 [1000 kg]
    const s = solve(plant('1000 kg/s', '2', '0.5 [1000 kg/s] / (1000 [kg])'));
    const p = solve(plant('kg/s', '2000', '0.5 [1/s]'));
    expectClose(s.value('feed'), 2, 1e-12); // printed in its unit of 1000 kg/s
    expectClose(s.value('out'), 2, 1e-12);
    expectClose(s.value('m'), 4000, 1e-12);
    expectClose(s.value('m_t'), 4, 1e-12);
    expectClose(p.value('out'), 2000, 1e-12);
    for (let i = 0; i < s.sol.values.length; i++) expectClose(s.sol.values[i], p.sol.values[i], 1e-12, 1e-12);
    // A is the same; B in kg/(1000 kg/s) per s is 1000 × the plain one; C in 1000 kg per kg is 1/1000
    expectClose(s.A('m', 'm'), p.A('m', 'm'), 1e-12);
    expectClose(s.B('m', 'feed'), 1000 * p.B('m', 'feed'), 1e-12);
    // both declare m_t in [1000 kg]: C = 1/1000 (1000 kg per kg)
    expectClose(s.C('m_t', 'm'), 1e-3, 1e-12);
    expectClose(p.C('m_t', 'm'), 1e-3, 1e-12);
  });

  it('a literal in a scaled unit: 2 [1000 kg/s] is 2000 kg/s', () => {
    const s = solve(dedent(`
      input feed [kg/s]
      state m [kg]
      m' = feed - 2 [1000 kg/s]
      output net [kg/s] = feed - 2 [1000 kg/s]
      point p:
        feed ~ 1 [kg/s]
        m = 1 [kg]
    `));
    expectClose(s.value('feed'), 2000, 1e-12);
  });

  it('the Solve lens writes a value in the line\'s scaled unit', () => {
    const text = plant('1000 kg/s', '2', '0.5 [1000 kg/s] / (1000 [kg])');
    const a = analyze(text);
    const r = solveEdits(a, 'p');
    if (!r.ok) throw new Error(r.message);
    const after = applyEdits(text, r.edits);
    expect(after).toContain('out ~ 2 [1000 kg/s]');
    expect(after).toContain('m ~ 4000 [kg]');
  });

  it('exports and hovers print the scaled unit with its number', () => {
    const text = plant('1000 kg/s', '2', '0.5 [1000 kg/s] / (1000 [kg])');
    const a = analyze(text);
    const json = JSON.parse(exportLinear(a, 'p', 'json')) as { values: Record<string, { value: number; unit: string }> };
    expect(json.values.feed).toEqual({ value: 2, unit: '1000 kg/s' });
    const md = hover(a, text.indexOf('1000 kg/s') + 2)!.markdown;
    expect(md).toContain('1000 kg/s');
    expect(md).toMatch(/= 1000 kg\/s \(SI\)/);
  });
});

describe('what a number cannot scale is an error on the bracket (P311)', () => {
  it('an offset unit', () => {
    check(`
      input t ⟦[5 degC]⟧
      state x [K]
      (1 [s])*x' = t - x
    `, [{ code: 'P311', message: ['offset unit', '5 [degC]'] }], { ignore: ['P302', 'P304'] });
  });
  it('a scale that is not positive', () => {
    check(`
      input q ⟦[-2 kg/s]⟧
      state m [kg]
      (1 [s])*m' = q
    `, [{ code: 'P311', message: ['positive'] }], { ignore: ['P302'] });
    check(`
      input q ⟦[0 kg/s]⟧
      state m [kg]
      (1 [s])*m' = q
    `, [{ code: 'P311', message: ['positive'] }], { ignore: ['P302'] });
  });
  it('a number alone', () => {
    check(`
      const c = 3 ⟦[1000]⟧
    `, [{ code: 'P311', message: ['no unit'] }], { warnUnused: false });
  });
  it('a number after the unit is an unknown unit, never ignored', () => {
    check(`
      input q ⟦[kg/1000 s]⟧
      state m [kg]
      (1 [s])*m' = q
    `, [{ code: 'P301' }], { ignore: ['P302'] });
  });
});

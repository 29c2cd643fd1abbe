/**
 * Units: conversion factors against published values, dimension rules of the unit checker, and unit
 * conversions at the edges of a model (point values, constants, outputs, derivatives in the model's time
 * unit). Sources are named beside each check.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { dimsEqual, parseUnit, type UnitInfo } from '../server/src/core/semantics/units';
import { check } from './helpers/check';
import { dedent, expectClose, solve } from './helpers/model';

function unit(text: string): UnitInfo {
  const u = parseUnit(text);
  if (typeof u === 'string') throw new Error(`${text}: ${u}`);
  return u;
}

describe('conversion factors', () => {
  // NIST Special Publication 811 (2008 ed.), appendix B (factors marked exact there are compared to 1e-15)
  it.each([
    ['L', 1e-3],
    ['min', 60],
    ['h', 3600],
    ['day', 86400],
    ['kW', 1e3],
    ['bar', 1e5],
    ['atm', 101325],
    ['ft', 0.3048],
    ['inch', 0.0254],
    ['lbm', 0.45359237],
    ['gal', 3.785411784e-3],
    ['kWh', 3.6e6],
    ['L/min', 1e-3 / 60],
    ['cm^2', 1e-4],
    ['mm', 1e-3],
    ['kJ/(kg*K)', 1e3],
    ['mol/L', 1e3],
  ])('1 %s = %s SI', (text, si) => {
    const u = unit(text);
    expectClose(u.scale, si, 1e-15, 0, text);
    expect(u.offset).toBe(0);
  });

  it('psi and horsepower (NIST SP 811, appendix B, to the digits printed there)', () => {
    expectClose(unit('psi').scale, 6.894757e3, 1e-7);
    expectClose(unit('hp').scale, 7.456999e2, 1e-7);
  });

  it('temperatures: degC and degF carry an offset, their rates do not', () => {
    // SI Brochure, 9th ed., 2.3.1: t/°C = T/K − 273.15. NIST SP 811, B.9: T/K = (t/°F + 459.67)/1.8
    const c = unit('degC');
    expect([c.scale, c.offset]).toEqual([1, 273.15]);
    const f = unit('degF');
    expectClose(f.scale, 5 / 9, 1e-15);
    expectClose(32 * f.scale + f.offset, 273.15, 1e-12); // 32 °F is the ice point
    expectClose(212 * f.scale + f.offset, 373.15, 1e-12); // 212 °F boils (at 1 atm)
    // a rate of change in degC/min has no offset (a change of 1 °C is a change of 1 K)
    const r = unit('degC/min');
    expect(r.offset).toBe(0);
    expectClose(r.scale, 1 / 60, 1e-15);
  });

  it('angles: the radian is dimensionless, a degree is π/180 (SI Brochure, 9th ed., table 4 and table 8)', () => {
    expect(dimsEqual(unit('rad').dims, unit('1').dims)).toBe(true);
    expectClose(unit('deg').scale, Math.PI / 180, 1e-15);
    expect(dimsEqual(unit('kg*m^2*rad/s^2').dims, unit('N*m').dims)).toBe(true);
    expect(dimsEqual(unit('N*m*s/rad').dims, unit('kg*m^2/s').dims)).toBe(true);
  });

  it('derived units have the dimensions of their definitions (SI Brochure, 9th ed., table 4)', () => {
    const same = (a: string, b: string) => expect(dimsEqual(unit(a).dims, unit(b).dims), `${a} vs ${b}`).toBe(true);
    same('N', 'kg*m/s^2');
    same('Pa', 'N/m^2');
    same('J', 'N*m');
    same('W', 'J/s');
    same('V', 'W/A');
    same('ohm', 'V/A');
    same('H', 'V*s/A');
    same('m^2.5/s', 'm^3/s/m^0.5');
    expect(dimsEqual(unit('W').dims, unit('J').dims)).toBe(false);
  });

  it('percent and ppm are dimensionless fractions', () => {
    expect(unit('%').scale).toBe(0.01);
    expect(unit('ppm').scale).toBe(1e-6);
  });

  it('an unknown unit is an error message, not a throw', () => {
    expect(typeof parseUnit('furlongz')).toBe('string');
    expect(typeof parseUnit('m/(s')).toBe('string');
    expect(typeof parseUnit('3 4')).toBe('string');
  });
});

describe('unit checking rules', () => {
  it('sqrt halves the exponents: √(m²) balances m', () => {
    check(`
      input a [m^2]
      state x [m]
      x' = (sqrt(a) - x)/(1 [s])
      point p:
        a = 4 [m^2]
    `, []);
  });

  it('a power of a quantity needs a constant exponent', () => {
    check(`
      input u
      state x [m]
      x' = (⟦x^u⟧ - 2 [m])/(1 [s])
      point p:
        u = 1
    `, [{ code: 'P305' }]);
  });

  it('an exponent must be dimensionless', () => {
    check(`
      input u [s]
      state x
      x' = (2^⟦u⟧ - x)/(1 [s])
      point p:
        u = 1 [s]
    `, [{ code: 'P306', message: ['s'] }]);
  });

  it.each(['min', 'max', 'hypot', 'atan2'])('%s needs both arguments in the same unit', (f) => {
    check(`
      input u [m]
      input w [s]
      state x [m]
      x' = (${f === 'atan2' ? '1 [m]*' : ''}⟦${f}(u, w)⟧ - x)/(1 [s])
      point p:
        u = 1 [m]
        w = 2 [s]
    `, [{ code: 'P307', message: [f, 'm', 's'] }]);
  });

  it('terms of a sum must agree', () => {
    check(`
      input u [m]
      input w [s]
      state x [m]
      x' = ⟦(u + w)⟧/(1 [s]) - x/(1 [s])
      point p:
        u = 1 [m]
        w = 1 [s]
    `, [{ code: 'P304', message: ['m', 's'] }]); // the range keeps the parentheses written
  });

  it("an output's expression must have its declared unit", () => {
    check(`
      input u [m]
      state x [m]
      output y [s] = ⟦x⟧
      x' = (u - x)/(1 [s])
      point p:
        u = 1 [m]
    `, [{ code: 'P309', message: ['"y"'] }]);
  });

  it('the time unit must be a time', () => {
    check(`
      time ⟦[m]⟧
      input u
      state x
      x' = u - x
      point p:
        u = 1
    `, [{ code: 'P310' }], { ignore: ['P302'] });
  });

  it('a bare 0 fits any unit', () => {
    check(`
      input u [m^3/s]
      state x [m]
      output y [m] = max(x, 0)
      (2 [m^2])*x' = u - 0 - (0.1 [m^2/s])*x
      point p:
        u = 0.1 [m^3/s]
    `, []);
  });

  it('a file without any unit bracket is nondimensional: nothing to check, time dimensionless', () => {
    const a = analyze(dedent(`
      input u
      state x
      x' = sin(x) + exp(u) - 2*x
      point p:
        u = 0
    `));
    expect(a.units.checked).toBe(false);
    expect(a.allDiagnostics()).toEqual([]);
    expect(a.units.time.text).toBe('');
    expect(a.units.time.scale).toBe(1);
  });

  it('in a nondimensional model the derivative components are dimensionless too (no "1/1")', () => {
    const s = solve(dedent(`
      input u
      state z
      z''' + 3*z'' + 3*z' + z = u
      point p:
        u = 2
    `));
    expect(s.lin.states).toEqual(['z', "z'", "z''"]);
    for (const u of s.lin.stateUnits) expect(['', '1']).toContain(u);
    // (s + 1)³: the companion row is [−1, −3, −3] (characteristic polynomial s³ + 3s² + 3s + 1)
    expect([s.A("z''", 'z'), s.A("z''", "z'"), s.A("z''", "z''")]).toEqual([-1, -3, -3]);
  });
});

describe('units at the edges of a model', () => {
  it('a bare number in a point is in the declared unit; a quantity converts', () => {
    // 2 L/s = 0.002 m³/s; h = (q/k)² = (0.002/0.004)² = 0.25 m = 25 cm
    const text = (q: string) => dedent(`
      input q [L/s]
      state h [cm]
      (1 [m^2])*h' = q - 0.004 [m^2.5/s]*sqrt(h)
      point p:
        q = ${q}
        h ~ 10
    `);
    for (const q of ['2', '2 [L/s]', '0.002 [m^3/s]', '120 [L/min]']) {
      const s = solve(text(q));
      expectClose(s.value('q'), 2, 1e-12, 0, q);
      expectClose(s.value('h'), 25, 1e-9, 0, q);
    }
  });

  it('a point value given by a constant with a unit is that quantity (not a number in the declared unit)', () => {
    // hmax = 1.5 m, so h = hmax is 150 cm; tset = 45 °C, so t = tset is 45 °C (318.15 K), not 45 K + offset
    const s = solve(dedent(`
      const hmax = 1.5 [m]
      const tset = 45 [degC]
      const frac = 0.5
      input q [m^3/s]
      input heat [kW]
      input opening [%]
      state h [cm]
      state t [degC]
      (2 [m^2])*h' = q - opening*(0.02 [m^2.5/s])*sqrt(h)
      (8 [kJ/K])*t' = heat - (0.2 [kW/K])*(t - 15 [degC])
      point p:
        h = hmax
        t = tset
        opening = frac*100
        q ~ 0.01 [m^3/s]
        heat ~ 1 [kW]
    `));
    expectClose(s.value('h'), 150, 1e-12);
    expectClose(s.value('t'), 45, 1e-12);
    // a dimensionless expression stays a bare number in the declared unit: 0.5·100 = 50 %
    expectClose(s.value('opening'), 50, 1e-12);
    // q = 0.5 · 0.02 · √1.5 m³/s; heat = 0.2 kW/K · 30 K = 6 kW
    expectClose(s.value('q'), 0.5 * 0.02 * Math.sqrt(1.5), 1e-9);
    expectClose(s.value('heat'), 6, 1e-9);
    // the constants count as used
    expect(s.a.allDiagnostics()).toEqual([]);
  });

  it('a temperature given in degC for a state declared in K converts with the offset', () => {
    // SI Brochure, 9th ed., 2.3.1: 20 °C = 293.15 K
    const s = solve(dedent(`
      input heat [W]
      state t [K]
      (500 [J/K])*t' = heat - (10 [W/K])*(t - 20 [degC])
      point p:
        t = 30 [degC]
        heat ~ 1 [W]
    `));
    expectClose(s.value('t'), 303.15, 1e-12);
    // heat = 10 W/K · (303.15 K − 293.15 K) = 100 W: the difference of two offset temperatures
    expectClose(s.value('heat'), 100, 1e-9);
  });

  it('constants: any unit in, SI inside; given again in a point they change there only', () => {
    const text = dedent(`
      const area = 1500 [cm^2]
      const rl = 2 [min/m^2]
      const tau = area*rl
      input q [m^3/s]
      state h [m]
      area*h' = q - h/rl
      output t_s [s] = tau
      point base:
        q = 0.01 [m^3/s]
      point wide:
        area = 0.3 [m^2]
        q = 0.01 [m^3/s]
    `);
    // tau = 0.15 m² · 120 s/m² = 18 s; h = q·rl = 0.01 m³/s · 120 s/m² = 1.2 m; A = −1/(area·rl)
    const b = solve(text, 'base');
    expectClose(b.value('t_s'), 18, 1e-12);
    expectClose(b.value('h'), 1.2, 1e-12);
    expectClose(b.A('h', 'h'), -1 / 18, 1e-12);
    const w = solve(text, 'wide');
    // the override of area also changes tau, which is computed from it: 0.3 · 120 = 36 s
    expectClose(w.value('t_s'), 36, 1e-12);
    expectClose(w.A('h', 'h'), -1 / 36, 1e-12);
  });

  it("derivatives are per model time unit: time [h] makes A per hour", () => {
    const per = (t: string) => solve(dedent(`
      ${t}
      input q [m^3/h]
      state v [m^3]
      v' = q - (0.5 [1/h])*v
      point p:
        q = 3 [m^3/h]
    `));
    // v = q/k = 6 m³; A = −k = −0.5 /h = −0.5/3600 /s; B = 1 (m³/h per m³/h) per hour
    const h = per('time [h]');
    const s = per('');
    expectClose(h.value('v'), 6, 1e-12);
    expectClose(h.A('v', 'v'), -0.5, 1e-12);
    expectClose(s.A('v', 'v'), -0.5 / 3600, 1e-12);
    expectClose(h.B('v', 'q'), 1, 1e-12);
    expectClose(s.B('v', 'q'), 1 / 3600, 1e-12);
    expect(h.lin.timeUnit).toBe('h');
  });

  it('a second-order state with time [min]: the velocity is per minute, the shift row is 1', () => {
    // x'' = −ω²·(x − u) with ω² = 4 /min²: A = [[0, 1], [−4, 0]] per minute; x' is in m/min
    const s = solve(dedent(`
      time [min]
      input u [m]
      state x [m]
      x'' = -(4 [1/min^2])*(x - u)
      point p:
        u = 2 [m]
    `));
    expect(s.lin.stateUnits).toEqual(['m', 'm/min']);
    expectClose(s.A('x', "x'"), 1, 1e-12);
    expectClose(s.A("x'", 'x'), -4, 1e-12);
    expectClose(s.B("x'", 'u'), 4, 1e-12);
    for (const e of s.eig()) expectClose(Math.abs(e.im), 2, 1e-9);
  });
});

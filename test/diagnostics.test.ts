/**
 * Each diagnostic of the table (issue 2, section 3) on a small model, with the exact range it
 * points at (marked ⟦…⟧ in the snippet; ⟦⟧ is a zero-width range) and the facts its message must carry.
 * What must be reported comes from the table; the numbers expected in messages are worked out by
 * hand in the comments beside them.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { catalogue } from '../server/src/core/diagnostics';
import { check } from './helpers/check';
import { dedent } from './helpers/model';

describe('syntax', () => {
  it('reports several errors in one file, each at its position, and still analyses the rest', () => {
    check(`
      ⟦⟧const k = 2 [1/s]
      input u
      state x
      var y
      x' = -k*x + u * ⟦*⟧ 3
      const c = 4 ⟦$⟧
      y = sqrt⟦(⟧x + 1
      state⟦⟧
      y = 2*x + ⟦zz⟧
      point p:
        u = 1
    `, [
      { code: 'P401', message: ['1 equation(s) for 2 unknown(s)', `"x'"`] }, // structure still checked
      { code: 'P101', message: ['"*"'] },
      { code: 'P104', message: ['"$"'] },
      { code: 'P102' }, // points at the "(" left open
      { code: 'P105', message: ['"state"'] }, // right after the keyword
      { code: 'P201', message: ['"zz"'] }, // a later line is still bound
    ], { ignore: ['P205', 'P403'] }); // consequences of the lost x' equation
  });

  it('an unclosed group points at its "(", a missing "=" at the line, a lone unit at the unit', () => {
    check(`
      input u
      state x
      x' = ⟦(⟧u - x
      ⟦x' + x⟧
      x' = ⟦[m]⟧ + u
      point p:
        u = 1
    `, [{ code: 'P102' }, { code: 'P110' }, { code: 'P101', message: ['number before the unit'] }], { ignore: ['P401', 'P403', 'P205', 'P405'] });
  });

  it('"Δ" is reserved outside generated blocks', () => {
    check(`
      input u
      state x
      x' = -x + u + ⟦Δx⟧
      point p:
        u = 1
    `, [{ code: 'P111' }]);
  });
});

describe('names', () => {
  it('unknown name', () => {
    check(`
      input u
      state x
      x' = -x + u*⟦gain⟧
      point p:
        u = 1
    `, [{ code: 'P201', message: ['"gain"', 'declare it'] }]);
  });

  it('duplicate declaration, with the first one as related information', () => {
    const { diagnostics, a } = check(`
      input u
      state x
      var ⟦x⟧
      x' = -x + u
      point p:
        u = 1
    `, [{ code: 'P202', message: ['"x"', 'a state'] }]);
    const rel = diagnostics[0].related![0];
    expect(a.lines.position(rel.span.start)).toEqual({ line: 1, character: 6 });
  });

  it('declared but unused is a warning', () => {
    check(`
      const ⟦spare⟧ = 3
      input u
      input ⟦dist⟧
      state x
      x' = -x + u
      point p:
        u = 1
        dist = 0
    `, [
      { code: 'P203', severity: 'warning', message: ['Constant "spare"'] },
      { code: 'P203', severity: 'warning', message: ['Input "dist"'] },
    ], { warnUnused: true });
  });

  it('derivative of a name that is not a state', () => {
    check(`
      input u
      state x
      var y
      x' = -x + u + ⟦y'⟧
      y = 2*x
      point p:
        u = 1
    `, [{ code: 'P204', message: ['"y" is a var', 'declare it with "state"'] }]);
  });

  it('a state never differentiated', () => {
    check(`
      input u
      state x, ⟦z⟧
      x' = -x + u
      z = 2*x
      point p:
        u = 1
    `, [{ code: 'P205', message: [`z'`, 'declare it as "var"'] }], { ignore: ['P401', 'P402', 'P403', 'P404', 'P406', 'P407'] });
  });
});

describe('units', () => {
  it('the two sides differ: both units in the message', () => {
    check(`
      input q [m^3/s]
      state h [m]
      ⟦(2 [m^2])*h' = (q - (0.1 [m^2/s])*h)*(1 [s])⟧
      point p:
        q = 1 [m^3/s]
    `, [{ code: 'P302', message: ['left is m^3/s', 'right is m^3.'] }]);
  });

  it.each(['exp', 'log', 'sin'])('argument of %s not dimensionless', (f) => {
    check(`
      input u [m]
      state x [m]
      x' = (1 [m/s])*${f}(⟦u⟧) - x/(1 [s])
      point p:
        u = 2 [m]
    `, [{ code: 'P303', message: [f, 'dimensionless', 'm'] }]);
  });

  it('a radian or an angle in degrees is a fine argument of sin', () => {
    check(`
      input u [deg]
      state x [rad]
      x' = sin(u)/(1 [s]) + sin(x)/(1 [s]) - x/(1 [s])
      point p:
        u = 30 [deg]
    `, []);
  });

  it('unknown unit', () => {
    check(`
      input u [m]
      state x ⟦[furlongz]⟧
      x' = u/(1 [s])
      point p:
        u = 1 [m]
    `, [{ code: 'P301', message: ['"furlongz"'] }], { ignore: ['P302'] });
  });

  it('a point value in a unit that does not convert', () => {
    check(`
      input u [m]
      state x [m]
      x' = (u - x)/(1 [s])
      point p:
        u = ⟦2 [kg]⟧
    `, [{ code: 'P308', message: ['kg', 'm'] }]);
  });
});

describe('structure', () => {
  it('model unbalanced: counts, and which equation is left over', () => {
    // 3 equations (x', y = 2x, y = 3u) for 2 unknowns (x', y): one left over
    check(`
      ⟦⟧input u
      state x
      var y
      x' = -x + u
      y = 2*x
      ⟦y = 3*u⟧
      point p:
        u = 1
    `, [
      { code: 'P401', message: ['3 equation(s) for 2 unknown(s)', '1 highest derivative(s), 1 var(s), 0 output(s)', '"y = 3*u"'] },
      { code: 'P402', message: ['"y"'] },
    ]);
  });

  it('model unbalanced: counts, and which unknowns have no equation', () => {
    // 2 equations for 3 unknowns (x', y, w)
    check(`
      ⟦⟧input u
      state x
      var y, ⟦w⟧
      output ⟦out⟧ = y + w
      x' = -x + u + y
      y = 2*x
      point p:
        u = 1
    `, [
      // 3 equations (with the output's definition) for 4 unknowns (x', y, w, out): w is the one left
      { code: 'P401', message: ['3 equation(s) for 4 unknown(s)', '1 highest derivative(s), 2 var(s), 1 output(s)', '"w"'] },
      { code: 'P403', message: ['var "w"'] },
    ].concat([]), { ignore: [] });
  });

  it('structurally singular subsystem: two equations for one unknown while another has none', () => {
    check(`
      input u
      state x
      var a, ⟦b⟧
      x' = -x + u + b
      ⟦a = u⟧
      ⟦a = 2*u⟧
      point p:
        u = 1
    `, [
      { code: 'P403', at: 0, message: ['"b"'] },
      { code: 'P404', at: 1, message: ['"a = u"', '"a = 2*u"', '"a"'] },
      { code: 'P402', at: 2 },
    ]);
  });

  it('two constraints on a state are an index-2 model, reduced (P407 on each, P409 at the point: no state left)', () => {
    // a = x and a = 2*x hold x at 0; differentiated once each (Pantelides), x' = 0 and b follows
    check(`
      input u
      state x
      var a, b
      x' = -x + u + b
      ⟦a = x⟧
      ⟦a = 2*x⟧
      point ⟦p⟧:
        u = 1
    `, [
      { code: 'P407', at: 0, message: ['index 2', 'once'] },
      { code: 'P407', at: 1, message: ['index 2', 'once'] },
      { code: 'P409', at: 2, message: ['none (the linear model is static)', '"x" follow'] },
    ]);
  });
});

describe('operating point', () => {
  it('unbalanced: how many values to fix, and candidates', () => {
    // 1 equation (x' = 0) for 2 unknowns (x, u): fix one more value, e.g. u
    check(`
      input u
      state x
      x' = -x + u
      point ⟦p⟧:
        x ~ 1
    `, [{ code: 'P501', message: ['1 equation(s) for 2 unknown(s)', 'Fix 1 more value', '"u"'] }]);
  });

  it('unbalanced: how many values to free, and candidates', () => {
    // 2 equations (x' = 0 and y's definition) but only y unknown once x and u are fixed
    check(`
      input u
      state x
      var y
      x' = -x + u + y
      y = 0.5*x
      point ⟦p⟧:
        u = 1
        x = 2
        y ~ 1
    `, [{ code: 'P501', message: ['2 equation(s) for 1 unknown(s)', 'Free 1 fixed value', '"x"', '"u"'] }]);
  });

  it('no convergence: the worst residual and its equation', () => {
    // exp(x) = 20000 has its root at x = ln 20000 ≈ 9.9; from the guess 300 each Newton step moves x by
    // about −1 (x − (e^x − u)/e^x), so 100 iterations end near x = 200 with e^200 ≈ 7.2e86 left.
    const { diagnostics } = check(`
      input u
      state x
      ⟦x' = exp(x) - u⟧
      point p:
        u = 20000
        x ~ 300
    `, [{ code: 'P502', message: ['did not converge', 'largest residual'] }]);
    expect(diagnostics[0].message).toMatch(/residual is 7\.\d+e\+86/);
  });

  it('no real solution: −x² = u > 0 has none', () => {
    check(`
      input u
      state x
      x' = -x*x - u
      point ⟦p⟧:
        u = 1
    `, [{ code: 'P503', message: ['no real solution', `x' = -x*x - u`] }]);
  });

  it('domain error at the point: square root of a negative value in a checked equation', () => {
    // x is fixed at 1, so √(x − 2) = √(−1): domain error, and the equation (no unknown left) fails
    check(`
      input u
      state x
      var q
      x' = u - q
      ⟦q = ⟦sqrt(x - 2)⟧⟧
      point p:
        u = 1
        x = 1
        q = 1
    `, [
      { code: 'P504', at: 1, message: ['square root of a negative value (-1.000)'] },
      { code: 'P508', at: 0, message: ['residual NaN'] },
    ]);
  });

  it('domain error at the point: division by zero points at the division', () => {
    // trim: x fixed at 0, so 1/x² divides by zero (exp(−∞) = 0 keeps the residual finite)
    check(`
      input u
      state x
      x' = u - x - exp(⟦-1/x^2⟧)
      point p:
        x = 0
        u ~ 1
    `, [{ code: 'P504', message: ['division by zero'] }]);
  });

  it('domain error at the point: logarithm of zero', () => {
    check(`
      input u
      state x
      var y
      x' = u - x
      ⟦y = ⟦log(x)⟧⟧
      point p:
        u = 0
        x = 0
        y = 1
    `, [
      { code: 'P504', at: 1, message: ['logarithm of 0'] },
      { code: 'P508', at: 0 },
    ]);
  });

  it('not differentiable at the point: √ at 0 (infinite slope, so no linear model)', () => {
    check(`
      input u
      state x
      ⟦x' = u - ⟦sqrt(x)⟧⟧
      point p:
        u = 0
    `, [
      { code: 'P505', at: 1, severity: 'warning', message: ['square root at zero'] },
      { code: 'P504', at: 0, message: ['not finite'] },
    ]);
  });

  it.each([
    ['abs at 0', `x' = u - ⟦abs(x)⟧ - x`, 'u = 0', 'abs at zero'],
    ['sign at 0', `x' = u - ⟦sign(x)⟧ - x`, 'u = 0', 'sign at zero'],
    // x = 2 − max(x, 1) solves at x = 1, where max(x, 1) ties
    ['max tie', `x' = u - x - ⟦max(x, 1)⟧ + 1`, 'u = 1', 'max with both arguments equal'],
    // x = 1.5 + min(x, 3)/2 solves at x = 3 (1.5 + 3/2), where min(x, 3) ties; below 3 the equation is
    // linear (x = 1.5 + x/2), so Newton from 1 lands on 3 exactly
    ['min tie', `x' = u - x + ⟦min(x, 3)⟧/2`, 'u = 1.5', 'min with both arguments equal'],
  ])('not differentiable at the point: %s', (_, eq, fix, msg) => {
    check(`
      input u
      state x
      ${eq}
      point p:
        ${fix}
        x ~ 1
    `, [{ code: 'P505', severity: 'warning', message: [msg] }]);
  });

  it('singular steady-state Jacobian: the equilibrium is not isolated, naming the free unknowns', () => {
    // x1' = x2 − x1, x2' = x1 − x2: every x1 = x2 is an equilibrium
    check(`
      state x1, x2
      x1' = x2 - x1
      x2' = x1 - x2
      point ⟦p⟧:
        x1 ~ 1
    `, [{ code: 'P506', message: ['not isolated', '"x2"', 'Fix one of them'] }]);
  });

  it('derivatives not solvable at the point (index above 1 there)', () => {
    // x·x' = u − x at u = 0 gives x = 0, where the coefficient of x' vanishes
    check(`
      input u
      state x
      x*x' = u - x
      point ⟦p⟧:
        u = 0
    `, [{ code: 'P507', message: ['highest derivatives', `"x'"`] }]);
  });

  it('algebraic unknowns not solvable at the point (singular algebraic loop)', () => {
    // (z − 1)² = x − 1 with z = x: the point x = z = 1 is an isolated steady state (Jacobian
    // [[1, −1], [−1, 0]] is regular), but ∂/∂z of the loop equation, 2(z − 1), is 0 there
    check(`
      state x
      var z
      x' = z - x
      (z - 1)^2 = x - 1
      point ⟦p⟧:
        x ~ 1
        z ~ 1
    `, [{ code: 'P507', message: ['algebraic unknowns', '"z"'] }]);
  });

  it('an equation left without unknowns is a consistency check: fine when it holds', () => {
    // x fixed at 2, u fixed at 2: x' = u − x holds exactly
    check(`
      input u
      state x
      x' = u - x
      point p:
        u = 2
        x = 2
    `, []);
  });

  it('an equation left without unknowns is a consistency check: an error naming it when it fails', () => {
    // x' = u − x with u = 1, x = 2: residual 0 − (1 − 2) = 1
    check(`
      input u
      state x
      ⟦x' = u - x⟧
      point p:
        u = 1
        x = 2
    `, [{ code: 'P508', message: ['does not hold', 'residual 1.000e+0'] }]);
  });
});

describe('the catalogue', () => {
  it('every code has a severity and a message that says what to do or what is wrong', () => {
    for (const [code, e] of Object.entries(catalogue)) {
      expect(code).toMatch(/^P[1-8]\d\d$/);
      expect(['error', 'warning', 'info']).toContain(e.severity);
      expect(e.text.length).toBeGreaterThan(10);
    }
  });

  it('a clean model has no diagnostics at all', () => {
    const a = analyze(dedent(`
      const area = 1.5 [m^2]
      input q [m^3/s]
      state h [m]
      area*h' = q - 0.01 [m^2.5/s]*sqrt(h)
      point p:
        q = 0.01 [m^3/s]
    `));
    expect(a.allDiagnostics()).toEqual([]);
  });
});

describe('structure: a constraint on the states', () => {
  // An algebraic equation in states and inputs only is a hidden constraint: the model's index is above 1
  // (Brenan, Campbell & Petzold, Numerical Solution of Initial-Value Problems in DAEs, ch. 2: index of
  // semi-explicit DAEs).
  it('names the equation and says what to do', () => {
    check(`
      input u
      state x
      var z
      x' = z
      ⟦x = u⟧
      point ⟦p⟧:
        u = 1
    `, [
      { code: 'P407', at: 0, message: ['index 2', 'differentiates this equation once'] },
      { code: 'P410', at: 0, message: ['input "u"', 'rate as zero', 'first-order lag'] },
      { code: 'P409', at: 1, message: ['"x" follow from the constraints'] },
    ]);
  });

  it('an unbalanced model with a constraint is not reduced: P406 stays', () => {
    check(`
      input u
      state x
      x' = -x + u
      ⟦x = 2*u⟧
      point p:
        u = 1
    `, [{ code: 'P406', at: 0, message: ['constrains the states', 'Differentiate'] }], { ignore: ['P401', 'P402'] });
  });
});

/**
 * The interpreted expression tape (server/src/core/model/tape.ts) against the generated JavaScript of
 * model/compile.ts: the point solver and the linearizer of a large model evaluate the tape, sweeps and
 * simulations the compiled code, and both must give bit-for-bit the same numbers (the tape repeats the
 * generated code's operations in the same order). A second, outside route: each function and special
 * power written directly with JavaScript's Math (ECMAScript's Math object, the reference the generated
 * code calls too) on the same inputs.
 */
import * as fs from 'fs';
import * as path from 'path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { compileVector } from '../server/src/core/model/compile';
import { lazyVector, Tape } from '../server/src/core/model/tape';
import * as E from '../server/src/core/algebra/expr';
import { EXAMPLES } from './helpers/cli';
import { analyzeFile, exampleModels } from './helpers/examples';

const X = E.sym(0);
const Y = E.sym(1);
const Z = E.sym(2);
const raw = (t: 'pow', base: E.Node, exp: E.Node): E.Node => ({ t, base, exp }); // unfolded powers

/** One expression per operation of the tape, with the same formula in plain JavaScript. */
const CASES: [E.Node, (x: number, y: number, z: number) => number][] = [
  [E.add([X, Y, Z, E.num(-2.5)]), (x, y, z) => x + y + z + -2.5],
  [E.mul([E.num(3), X, Y, Z]), (x, y, z) => 3 * x * y * z],
  [raw('pow', X, E.num(2)), (x) => x * x],
  [raw('pow', X, E.num(-1)), (x) => 1 / x],
  [raw('pow', X, E.num(-2)), (x) => 1 / (x * x)],
  [raw('pow', X, E.num(0.5)), (x) => Math.sqrt(x)],
  [raw('pow', X, E.num(-0.5)), (x) => 1 / Math.sqrt(x)],
  [raw('pow', X, E.num(3)), (x) => x * x * x],
  [raw('pow', X, E.num(1.7)), (x) => Math.pow(x, 1.7)],
  [raw('pow', X, Y), (x, y) => Math.pow(x, y)],
  [E.fn('exp', [X]), (x) => Math.exp(x)],
  [E.fn('log', [Y]), (_x, y) => Math.log(y)],
  [E.fn('log10', [Z]), (_x, _y, z) => Math.log10(z)],
  [E.fn('sqrt', [X]), (x) => Math.sqrt(x)],
  [E.fn('sin', [X]), (x) => Math.sin(x)],
  [E.fn('cos', [X]), (x) => Math.cos(x)],
  [E.fn('tan', [X]), (x) => Math.tan(x)],
  [E.fn('asin', [X]), (x) => Math.asin(x)],
  [E.fn('acos', [X]), (x) => Math.acos(x)],
  [E.fn('atan', [X]), (x) => Math.atan(x)],
  [E.fn('sinh', [X]), (x) => Math.sinh(x)],
  [E.fn('cosh', [X]), (x) => Math.cosh(x)],
  [E.fn('tanh', [X]), (x) => Math.tanh(x)],
  [E.fn('abs', [X]), (x) => Math.abs(x)],
  [E.fn('sign', [X]), (x) => Math.sign(x)],
  [E.fn('atan2', [X, Y]), (x, y) => Math.atan2(x, y)],
  [E.fn('min', [X, Y]), (x, y) => Math.min(x, y)],
  [E.fn('max', [X, Y]), (x, y) => Math.max(x, y)],
  [E.fn('hypot', [X, Y]), (x, y) => Math.hypot(x, y)],
  [E.fn('pick', [X, Y, Z, E.num(4)]), (x, y, z) => (x <= y ? z : 4)],
  // a shared sub-expression, a nested one and a negative zero literal (written as 0 by the code)
  [E.mul([E.add([X, Y]), E.fn('exp', [E.add([X, Y])]), E.add([E.num(-0), Z])]), (x, y, z) => (x + y) * Math.exp(x + y) * z], // -0 + z folds to z
  [X, (x) => x],
  [E.num(-0), () => 0],
];

const same = (a: Float64Array, b: Float64Array) => a.every((x, i) => Object.is(x, b[i]));

describe('expression tape', () => {
  it('each operation: tape = generated code = Math, bit for bit', () => {
    const nodes = CASES.map((c) => c[0]);
    const tape = new Tape(nodes);
    const code = compileVector(nodes);
    const num = fc.oneof(fc.double({ noNaN: false }), fc.double({ min: -3, max: 3, noNaN: true }), fc.constantFrom(0, -0, 1, -1, Infinity, -Infinity));
    fc.assert(
      fc.property(num, num, num, (x, y, z) => {
        const v = Float64Array.of(x, y, z);
        const a = new Float64Array(nodes.length);
        const b = new Float64Array(nodes.length);
        tape.run(v, a);
        code(v, b);
        const ref = Float64Array.from(CASES, (c) => c[1](x, y, z));
        return same(a, b) && same(a, ref);
      }),
      { numRuns: 400 },
    );
  });

  it('every example: residuals and Jacobian entries, tape = generated code, bit for bit; lazyVector switches without a change', () => {
    const files = exampleModels().map((m) => m.name);
    expect(files.length).toBeGreaterThan(3);
    for (const f of files) {
      const lm = analyzeFile(path.join(EXAMPLES, f)).lowered;
      const res = lm.equations.map((e) => e.residual);
      const jac: E.Node[] = [];
      for (const e of lm.equations) for (const s of E.slots(e.residual)) jac.push(E.derivative(e.residual, s));
      for (const nodes of [res, jac]) {
        const tape = new Tape(nodes);
        const code = compileVector(nodes);
        const lazy = lazyVector(nodes, 2);
        for (let r = 0; r < 6; r++) {
          // the model's own values, then values scattered around them
          const v = Float64Array.from(lm.baseValues, (x, i) => (Number.isFinite(x) ? x : 1) * (r === 0 ? 1 : 1 + 0.3 * Math.sin(7 * i + r)));
          const a = new Float64Array(nodes.length);
          const b = new Float64Array(nodes.length);
          const c = new Float64Array(nodes.length);
          tape.run(v, a);
          code(v, b);
          lazy(v, c); // interpreted twice, then compiled
          expect(same(a, b), `${f}, values ${r}`).toBe(true);
          expect(same(c, b), `${f}, lazy, call ${r + 1}`).toBe(true);
        }
      }
    }
  });
});

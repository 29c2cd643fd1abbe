/**
 * The symbolic differentiation (server/src/core/algebra/expr.ts `derivative`), the model Jacobian
 * (jacobian.ts `compileModel`) and the linear model, each against an outside numerical reference:
 * central finite differences (Richardson-extrapolated; common practice, e.g. Burden & Faires, Numerical
 * Analysis, §4.2) at random points chosen by fast-check.
 */
import * as fs from 'fs';
import * as path from 'path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyze, analyzeDocuments } from '../server/src/core/pipeline/analysis';
import { cliSources } from '../server/src/cli/sourceHost';
import { makeTable } from '../server/src/core/numeric/interpolate';
import { compileVector } from '../server/src/core/model/compile';
import * as E from '../server/src/core/algebra/expr';
import { compileModel } from '../server/src/core/model/jacobian';
import { EXAMPLES, REFERENCE } from './helpers/cli';
import { dedent } from './helpers/model';
import { centralDiff, newtonFD } from './helpers/numeric';
import { exampleModels } from './helpers/examples';

const X = E.sym(0);
const Y = E.sym(1);
const Z = E.sym(2);

/** Checks d node/d slot at v against finite differences; returns a message when they disagree. */
function checkAt(node: E.Node, id: number, v: number[], rel = 1e-6): string | undefined {
  const d = E.derivative(node, id);
  const sym = E.evaluate(d, v);
  const f = (t: number) => {
    const w = v.slice();
    w[id] = t;
    return E.evaluate(node, w);
  };
  const h = 1e-3 * Math.max(Math.abs(v[id]), 0.05);
  const fd = centralDiff(f, v[id], h);
  const scale = Math.max(1, Math.abs(fd.d), Math.abs(f(v[id])));
  if (!(Math.abs(sym - fd.d) <= rel * scale)) return `∂/∂v${id} of ${E.print(node, { name: (k) => `v${k}` })} at [${v.join(', ')}]: symbolic ${sym}, finite differences ${fd.d}`;
  // the compiled derivative gives the same number as the tree walk
  const out = new Float64Array(1);
  compileVector([d])(Float64Array.from(v), out);
  if (!(Math.abs(out[0] - sym) <= 1e-12 * Math.max(1, Math.abs(sym)))) return `compiled ${out[0]} vs evaluated ${sym}`;
  return undefined;
}

const num = (min: number, max: number) => fc.double({ min, max, noNaN: true, noDefaultInfinity: true });
const away = (min: number, max: number, from: number, gap: number) => num(min, max).filter((x) => Math.abs(x - from) > gap);

interface Rule {
  name: string;
  node: E.Node;
  /** generator of [x, y, z] inside the rule's domain, away from kinks */
  at: fc.Arbitrary<number[]>;
  wrt: number[];
}

// arguments built from the variables so that the chain rule is exercised too: g = x·y + 0.3
const G = E.add([E.mul([X, Y]), E.num(0.3)]);
const TABLE = (kind: 'linear' | 'monotone'): E.TableSource => ({
  name: 'tab', table: makeTable([0, 0.7, 1.5, 2.4, 4], [1, 1.8, 1.2, 3.5, 3.9], kind), outside: 'hold',
  xUnit: { text: '', scale: 1, offset: 0 }, yUnit: { text: '', scale: 1, offset: 0 }, span: { start: 0, end: 0 },
});

const rules: Rule[] = [
  { name: 'sum and product', node: E.add([E.mul([E.num(3), X, Y, Y]), E.neg(Z), E.mul([X, Z])]), at: fc.tuple(num(-5, 5), num(-5, 5), num(-5, 5)), wrt: [0, 1, 2] },
  { name: 'quotient', node: E.div(E.add([X, E.num(1)]), E.add([E.mul([Y, Y]), E.num(0.5)])), at: fc.tuple(num(-5, 5), num(-5, 5), num(0, 1)), wrt: [0, 1] },
  { name: 'pow, constant exponent', node: E.pow(X, E.num(2.7)), at: fc.tuple(num(0.05, 8), num(0, 1), num(0, 1)), wrt: [0] },
  { name: 'pow, negative integer exponent', node: E.pow(E.add([X, E.num(3)]), E.num(-3)), at: fc.tuple(num(-2.5, 5), num(0, 1), num(0, 1)), wrt: [0] },
  { name: 'pow, variable exponent', node: E.pow(X, Y), at: fc.tuple(num(0.1, 10), num(-3, 3), num(0, 1)), wrt: [0, 1] },
  { name: 'pow, constant base', node: E.pow(E.num(2.5), E.mul([X, Y])), at: fc.tuple(num(-2, 2), num(-2, 2), num(0, 1)), wrt: [0, 1] },
  { name: 'sqrt', node: E.fn('sqrt', [G]), at: fc.tuple(num(0.1, 5), num(0.1, 5), num(0, 1)), wrt: [0, 1] },
  { name: 'exp', node: E.fn('exp', [G]), at: fc.tuple(num(-2, 2), num(-2, 2), num(0, 1)), wrt: [0, 1] },
  { name: 'log', node: E.fn('log', [G]), at: fc.tuple(num(0.1, 5), num(0.1, 5), num(0, 1)), wrt: [0, 1] },
  { name: 'log10', node: E.fn('log10', [G]), at: fc.tuple(num(0.1, 5), num(0.1, 5), num(0, 1)), wrt: [0, 1] },
  { name: 'sin', node: E.fn('sin', [G]), at: fc.tuple(num(-3, 3), num(-3, 3), num(0, 1)), wrt: [0, 1] },
  { name: 'cos', node: E.fn('cos', [G]), at: fc.tuple(num(-3, 3), num(-3, 3), num(0, 1)), wrt: [0, 1] },
  { name: 'tan', node: E.fn('tan', [X]), at: fc.tuple(num(-1.3, 1.3), num(0, 1), num(0, 1)), wrt: [0] },
  // asin/acos strictly inside (−1, 1)
  { name: 'asin', node: E.fn('asin', [E.mul([X, Y])]), at: fc.tuple(num(-0.95, 0.95), num(0.1, 1), num(0, 1)), wrt: [0, 1] },
  { name: 'acos', node: E.fn('acos', [E.mul([X, Y])]), at: fc.tuple(num(-0.95, 0.95), num(0.1, 1), num(0, 1)), wrt: [0, 1] },
  { name: 'atan', node: E.fn('atan', [G]), at: fc.tuple(num(-4, 4), num(-4, 4), num(0, 1)), wrt: [0, 1] },
  { name: 'sinh', node: E.fn('sinh', [G]), at: fc.tuple(num(-2, 2), num(-2, 2), num(0, 1)), wrt: [0, 1] },
  { name: 'cosh', node: E.fn('cosh', [G]), at: fc.tuple(num(-2, 2), num(-2, 2), num(0, 1)), wrt: [0, 1] },
  { name: 'tanh', node: E.fn('tanh', [G]), at: fc.tuple(num(-2, 2), num(-2, 2), num(0, 1)), wrt: [0, 1] },
  // atan2 and hypot away from the origin, both arguments depending on the variables
  { name: 'atan2', node: E.fn('atan2', [E.add([Y, E.mul([E.num(0.2), X])]), X]), at: fc.tuple(num(-3, 3), num(-3, 3), num(0, 1)).filter(([x, y]) => Math.hypot(x, y + 0.2 * x) > 0.2), wrt: [0, 1] },
  { name: 'hypot', node: E.fn('hypot', [X, E.mul([Y, Z])]), at: fc.tuple(num(-3, 3), num(-3, 3), num(0.5, 2)).filter(([x, y, z]) => Math.hypot(x, y * z) > 0.2), wrt: [0, 1, 2] },
  // abs away from 0, min/max away from ties, sign away from 0 (derivative 0)
  { name: 'abs', node: E.fn('abs', [G]), at: fc.tuple(num(-3, 3), num(-3, 3), num(0, 1)).filter(([x, y]) => Math.abs(x * y + 0.3) > 0.05), wrt: [0, 1] },
  { name: 'sign', node: E.mul([E.fn('sign', [X]), Y]), at: fc.tuple(away(-3, 3, 0, 0.05), num(-3, 3), num(0, 1)), wrt: [0, 1] },
  { name: 'min', node: E.fn('min', [E.mul([X, Y]), E.add([Z, E.num(0.5)])]), at: fc.tuple(num(-3, 3), num(-3, 3), num(-3, 3)).filter(([x, y, z]) => Math.abs(x * y - z - 0.5) > 0.05), wrt: [0, 1, 2] },
  { name: 'max', node: E.fn('max', [E.mul([X, Y]), E.add([Z, E.num(0.5)])]), at: fc.tuple(num(-3, 3), num(-3, 3), num(-3, 3)).filter(([x, y, z]) => Math.abs(x * y - z - 0.5) > 0.05), wrt: [0, 1, 2] },
  // clamp away from its limits; choose with a numeric condition (x ≤ y as pick(x, y, 1, 0)) away from the switch
  { name: 'clamp', node: E.fn('clamp', [E.mul([X, Y]), E.add([Z, E.num(-1)]), E.add([Z, E.num(1)])]), at: fc.tuple(num(-3, 3), num(-3, 3), num(-3, 3)).filter(([x, y, z]) => Math.abs(Math.abs(x * y - z) - 1) > 0.05), wrt: [0, 1, 2] },
  { name: 'choose', node: E.fn('choose', [E.fn('pick', [X, Y, E.ONE, E.ZERO]), E.mul([X, Y]), E.pow(Z, E.num(2))]), at: fc.tuple(num(-3, 3), num(-3, 3), num(-3, 3)).filter(([x, y]) => Math.abs(x - y) > 0.05), wrt: [0, 1, 2] },
  // lookup tables (invented rows): value and slope (the slope's derivative checks the second derivative), away from breakpoints
  ...(['linear', 'monotone'] as const).flatMap((kind) => [0, 1].map((order) => ({
    name: `table (${kind}, derivative ${order})`,
    node: E.tableFn(TABLE(kind), order, G),
    at: fc.tuple(num(-2, 2.5), num(0.5, 2), num(0, 1)).filter(([x, y]) => [0, 0.7, 1.5, 2.4, 4].every((b) => Math.abs(x * y + 0.3 - b) > 0.02)),
    wrt: [0, 1],
  }))),
];

describe('every differentiation rule against finite differences', () => {
  it('covers every built-in function', () => {
    const covered = new Set(rules.map((r) => r.name));
    for (const f of Object.keys(E.BUILTIN_ARITY)) expect(covered.has(f), f).toBe(true);
  });
  it.each(rules)('$name', (rule) => {
    fc.assert(
      fc.property(rule.at, (v) => {
        for (const id of rule.wrt) {
          const bad = checkAt(rule.node, id, v);
          if (bad) throw new Error(bad);
        }
      }),
      { numRuns: 150, seed: 20240611 },
    );
  });
  it('min/max derivatives take the branch of the smaller/larger argument', () => {
    // d min(x, 2)/dx is 1 below 2 and 0 above; d max(x, 2)/dx the opposite (definition of min/max)
    const dmin = E.derivative(E.fn('min', [X, E.num(2)]), 0);
    const dmax = E.derivative(E.fn('max', [X, E.num(2)]), 0);
    expect([E.evaluate(dmin, [1]), E.evaluate(dmin, [3])]).toEqual([1, 0]);
    expect([E.evaluate(dmax, [1]), E.evaluate(dmax, [3])]).toEqual([0, 1]);
  });
});

// ---------------------------------------------------------------- random expressions

const smoothUnary: E.FnName[] = ['sqrt', 'exp', 'log', 'sin', 'cos', 'atan', 'tanh', 'sinh', 'log10'];
const exprArb: fc.Arbitrary<E.Node> = fc.letrec<{ e: E.Node }>((tie) => ({
  e: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    fc.constantFrom(X, Y, Z),
    num(-3, 3).map((v) => E.num(Math.round(v * 100) / 100)),
    fc.tuple(tie('e'), tie('e')).map(([a, b]) => E.add([a, b])),
    fc.tuple(tie('e'), tie('e')).map(([a, b]) => E.mul([a, b])),
    fc.tuple(tie('e'), tie('e')).map(([a, b]) => E.div(a, E.add([E.num(1.5), E.pow(b, E.num(2))]))),
    fc.tuple(tie('e'), fc.constantFrom(2, 3, -1, 0.5, 1.5)).map(([a, p]) => E.pow(E.add([E.num(2), E.pow(a, E.num(2))]), E.num(p))),
    fc.tuple(fc.constantFrom(...smoothUnary), tie('e')).map(([f, a]) => E.fn(f, [f === 'sqrt' || f === 'log' || f === 'log10' ? E.add([E.num(1), E.pow(a, E.num(2))]) : f === 'exp' || f === 'sinh' ? E.fn('tanh', [a]) : a])),
    fc.tuple(tie('e'), tie('e')).map(([a, b]) => E.fn('hypot', [E.add([a, E.num(0.7)]), b])),
    fc.tuple(tie('e'), tie('e')).map(([a, b]) => E.pow(E.add([E.num(1.2), E.pow(a, E.num(2))]), E.fn('tanh', [b]))),
  ),
})).e;

describe('random expressions', () => {
  it('symbolic partials agree with finite differences wherever the function is smooth', () => {
    let checked = 0;
    fc.assert(
      fc.property(exprArb, fc.tuple(num(-2, 2), num(-2, 2), num(-2, 2)), fc.integer({ min: 0, max: 2 }), (node, v, id) => {
        const f0 = E.evaluate(node, v);
        fc.pre(Number.isFinite(f0) && Math.abs(f0) < 1e8);
        const f = (t: number) => {
          const w = v.slice();
          w[id] = t;
          return E.evaluate(node, w);
        };
        const h = 1e-3 * Math.max(Math.abs(v[id]), 0.05);
        const fd = centralDiff(f, v[id], h);
        // skip points where the finite differences themselves are not trustworthy (kinks, steep spots)
        fc.pre(Number.isFinite(fd.d) && fd.spread < 1e-3 * Math.max(1, Math.abs(fd.d)));
        checked++;
        const bad = checkAt(node, id, v, 1e-5);
        if (bad) throw new Error(bad);
      }),
      { numRuns: 400, seed: 7151 },
    );
    expect(checked).toBeGreaterThan(200);
  });
});

// ---------------------------------------------------------------- whole models

function modelFiles(): { name: string; text: string; file?: string }[] {
  const out: { name: string; text: string; file?: string }[] = [];
  for (const m of exampleModels()) out.push({ name: `examples/${m.name}`, text: m.text, file: m.file });
  const refDir = path.join(REFERENCE, 'models');
  if (fs.existsSync(refDir)) for (const f of fs.readdirSync(refDir).filter((x) => x.endsWith('.poise')).sort()) out.push({ name: `reference/${f}`, text: fs.readFileSync(path.join(refDir, f), 'utf8') });
  // a model of our own with an implicit equation, a coupled second-order pair and a pick of functions
  out.push({
    name: 'own/implicit_coupled',
    text: dedent(`
      input f [N]
      state p, q [m]
      var r [m]
      2 [kg]*p'' + 0.5 [kg]*q'' + 3 [N*s/m]*p' + 40 [N/m]*(p - q) = f
      0.5 [kg]*p'' + 1 [kg]*q'' + 40 [N/m]*(q - p) + 15 [N/m]*q + 5 [N/m^2]*q^2 = 0 [N]
      r + 0.1*atan(r/(1 [m]))*(1 [m]) = hypot(p, q) + max(p, 0.01 [m])
      point p1:
        f = 4 [N]
        p ~ 0.3 [m]
        q ~ 0.2 [m]
    `),
  });
  // descriptor form (two derivatives in each equation) and a third-order state, nondimensional
  out.push({
    name: 'own/descriptor_third_order',
    text: dedent(`
      input u
      state x, y
      state z
      x' + y' = u - x*y
      x' - 2*y' = -y^3 + 0.5*z
      z''' + 3*z'' + 3*z' + z*(1 + 0.1*z^2) = u
      point p:
        u = 2
        x ~ 1
        y ~ 1
    `),
  });
  return out;
}

const models = modelFiles();

/** Points of every model, each solved. */
const cases = models.flatMap((m) => {
  // examples through a disk host, so files beside them (tables) are read
  const a = m.file ? analyzeDocuments(cliSources(m.file, m.text), m.file)! : analyze(m.text);
  return a.pointNames.map((p) => ({ label: `${m.name} @ ${p}`, a, point: p }));
});

describe('model Jacobians (compileModel) against finite differences of the compiled residual', () => {
  it.each(cases)('$label', ({ a, point }) => {
    const sol = a.point(point)!;
    expect(sol.ok).toBe(true);
    const lm = a.lowered;
    const cm = compileModel(lm);
    // at the solution and at a nearby point off the steady state (derivatives nonzero there)
    const rnd = fc.sample(fc.double({ min: -1, max: 1, noNaN: true }), { numRuns: lm.slots.length, seed: 99 });
    const off = Float64Array.from(sol.values, (v, i) => (lm.slots[i].kind === 'const' ? v : v + 0.02 * rnd[i] * Math.max(Math.abs(v), Math.abs(lm.slots[i].scale))));
    for (const at of [sol.values, off]) {
      const J = new Float64Array(cm.nodes.length);
      cm.jacobian(at, J);
      const F = new Float64Array(cm.nEq);
      for (const s of lm.slots) {
        if (s.kind === 'const') continue;
        const h = 1e-4 * Math.max(Math.abs(at[s.id]), Math.abs(s.scale));
        const col = new Float64Array(cm.nEq);
        const w = Float64Array.from(at);
        const fdRow = (r: number) => centralDiff((t) => {
          w[s.id] = t;
          cm.residual(w, F);
          w[s.id] = at[s.id];
          return F[r];
        }, at[s.id], h);
        for (let k = 0; k < J.length; k++) if (cm.cols[k] === s.id) col[cm.rows[k]] = J[k];
        for (let r = 0; r < cm.nEq; r++) {
          const fd = fdRow(r);
          // row scale: the largest sensitivity of the row times the unknown's size
          const scale = Math.max(Math.abs(fd.d), Math.abs(col[r])) + 1e-9;
          expect(Math.abs(col[r] - fd.d), `∂F${r}/∂${s.name}: symbolic ${col[r]}, finite differences ${fd.d}`).toBeLessThanOrEqual(1e-6 * scale + 1e-7 * rowMag(cm, J, r));
        }
      }
    }
  });
});

function rowMag(cm: ReturnType<typeof compileModel>, J: Float64Array, r: number): number {
  let m = 0;
  for (const k of cm.rowEntries[r]) m = Math.max(m, Math.abs(J[k]));
  return m;
}

describe('linear model against finite differences of the nonlinear model (independent route)', () => {
  // For each state component and input: perturb it by ±δ, solve the model equations for the highest
  // derivatives and the algebraic unknowns numerically (Newton with a finite-difference Jacobian and
  // ml-matrix's dense LU, evaluating the residuals through the expression tree), and difference the
  // state derivatives and outputs. This uses neither the symbolic partials nor the sparse LU.
  // a constrained model's linear model is that of its index reduction at the point, not of the lowered
  // equations: test/indexReduction.test.ts checks it by finite differences and simulation of the reduced model
  it.each(cases.filter((c) => !c.a.indexPlan))('$label', ({ a, point }) => {
    const sol = a.point(point)!;
    const lin = a.linear(point)!;
    expect(lin.ok).toBe(true);
    const lm = a.lowered;
    const unknowns = a.structure.unknowns;
    const typical = Float64Array.from(unknowns, (s) => Math.max(Math.abs(sol.values[s]), Math.abs(lm.slots[s].scale)));
    const respond = (slot: number, value: number): Float64Array => {
      const v = Float64Array.from(sol.values);
      v[slot] = value;
      const g = (z: Float64Array) => {
        unknowns.forEach((s, i) => (v[s] = z[i]));
        return Float64Array.from(lm.equations, (eq) => E.evaluate(eq.residual, v));
      };
      const z = newtonFD(g, Float64Array.from(unknowns, (s) => sol.values[s]), typical);
      if (!z) throw new Error(`the nonlinear equations did not solve after perturbing ${lm.slots[slot].name}`);
      unknowns.forEach((s, i) => (v[s] = z[i]));
      return v;
    };
    const rate = (v: Float64Array, i: number) => v[lm.componentDerivative[i]]; // d(state component i)/dt, SI
    const columns = [...lin.stateSlots.map((s) => ({ s, M: 'A' as const, N: 'C' as const })), ...lin.inputSlots.map((s) => ({ s, M: 'B' as const, N: 'D' as const }))];
    const nA = lin.n;
    for (const { s, M, N } of columns) {
      const j = M === 'A' ? lin.stateSlots.indexOf(s) : lin.inputSlots.indexOf(s);
      const ncol = M === 'A' ? lin.n : lin.m;
      const d = 1e-5 * Math.max(Math.abs(sol.values[s]), Math.abs(lm.slots[s].scale));
      const vp = respond(s, sol.values[s] + d);
      const vm = respond(s, sol.values[s] - d);
      const sj = lm.slots[s].scale;
      for (let i = 0; i < nA; i++) {
        const fd = ((rate(vp, i) - rate(vm, i)) / (2 * d)) * (sj / lm.slots[lin.stateSlots[i]].scale) * lm.timeScale;
        const have = lin[M][i * ncol + j];
        const rowNorm = Math.max(...Array.from(lin.A.subarray(i * nA, i * nA + nA), Math.abs), ...Array.from(lin.B.subarray(i * lin.m, i * lin.m + lin.m), Math.abs));
        expect(Math.abs(have - fd), `${M}[${lin.states[i]}, ${lm.slots[s].name}]: linearizer ${have}, finite differences ${fd}`).toBeLessThanOrEqual(1e-5 * Math.abs(fd) + 1e-7 * rowNorm);
      }
      for (let i = 0; i < lin.p; i++) {
        const o = lin.outputSlots[i];
        const fd = ((vp[o] - vm[o]) / (2 * d)) * (sj / lm.slots[o].scale);
        const have = lin[N][i * ncol + j];
        const rowNorm = Math.max(...Array.from(lin.C.subarray(i * nA, i * nA + nA), Math.abs), ...Array.from(lin.D.subarray(i * lin.m, i * lin.m + lin.m), Math.abs));
        expect(Math.abs(have - fd), `${N}[${lin.outputs[i]}, ${lm.slots[s].name}]: linearizer ${have}, finite differences ${fd}`).toBeLessThanOrEqual(1e-5 * Math.abs(fd) + 1e-7 * rowNorm);
      }
    }
  });
});

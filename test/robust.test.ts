/**
 * Long and deep input (issue 10 §3): every stage — parser, binder, unit checker, lowering, differentiation,
 * folding, compiled code, printing, symbolic elimination, the editor services — on generated models with a
 * sum of 10^5 terms, expressions nested up to the documented limit (MAX_NESTING) and beyond it, 150,000
 * constants; and no spread of an unbounded array into a call anywhere in server/src (a model with 1,000
 * states, a sweep page with 2,000 steps).
 *
 * Reference values: each generated model is built so its answer is known in closed form (a sum of
 * square roots, a power tower at 1, an odd number of sign flips), computed here by plain JavaScript
 * arithmetic beside the model — an independent route from the Poise pipeline.
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyze, located } from '../server/src/core/pipeline/analysis';
import { MAX_NESTING } from '../server/src/core/syntax/parser';
import * as E from '../server/src/core/algebra/expr';
import { compileVector } from '../server/src/core/model/compile';
import { hover } from '../server/src/core/services/hover';
import { completions } from '../server/src/core/services/completion';
import { definition, references } from '../server/src/core/services/navigation';
import { documentOutline } from '../server/src/core/services/symbols';
import { foldingRanges } from '../server/src/core/services/folding';
import { semanticTokens } from '../server/src/core/services/semanticTokens';
import { pointLenses } from '../server/src/core/services/lenses';
import { solveEdits } from '../server/src/core/services/solve';
import { linearizeEdit } from '../server/src/core/services/linearBlock';
import { quickFixes } from '../server/src/core/services/quickFixes';
import { symbolicLinear } from '../server/src/core/analysis/symbolic';
import { runDeclaredSweep } from '../server/src/core/analysis/sweep';
import { sweepHtml } from '../server/src/core/present/sweepHtml';
import { tankChain } from '../bench/models';
import { ROOT, ensureBuilt, runCliAsync, scratchDir } from './helpers/cli';

/** A model around one equation `y = EXPR` (nondimensional), with an output and a point fixing u. */
function oneEquation(expr: string, u = 1): string {
  return ['input u', 'var y', 'output z = y', `y = ${expr}`, 'point p:', `  u = ${u}`, ''].join('\n');
}

const N_TERMS = 100_000;
/** y = u + Σ sqrt(u + i), i = 1..N: no two terms fold together. */
const flatSum = (n: number) => oneEquation('u' + Array.from({ length: n }, (_, i) => ` + sqrt(u + ${i + 1})`).join(''));
const flatSumValue = (n: number, u: number) => {
  let s = u;
  for (let i = 1; i <= n; i++) s += Math.sqrt(u + i);
  return s;
};

/** Nested forms of depth d, each with its value at u = 1 (or 0.5). */
const deep = {
  parens: (d: number) => '('.repeat(d) + 'u' + ')'.repeat(d),
  calls: (d: number) => 'abs('.repeat(d) + 'u' + ')'.repeat(d),
  tower: (d: number) => Array(d).fill('u').join('^'),
  signs: (d: number) => '-('.repeat(d) + 'u' + ')'.repeat(d),
};

let dir: string;
beforeAll(() => {
  ensureBuilt();
  dir = scratchDir('robust');
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function write(name: string, text: string): string {
  const f = path.join(dir, name);
  fs.writeFileSync(f, text);
  return f;
}

/** The outcome of a command: no internal error or trace, and an exit code. */
function noCrash(r: { code: number | null; stdout: string; stderr: string }) {
  expect(r.stderr).not.toMatch(/internal|RangeError|Maximum call stack|\n\s+at /);
  expect(r.stdout).not.toMatch(/internal failure/);
}

/** Runs every pure editor service over the analysis at a few offsets; none may throw. */
function allServices(text: string) {
  const a = analyze(text);
  const eq = text.indexOf('y = ');
  const offsets = [eq, eq + 4, eq + 6, Math.floor((eq + text.indexOf('\npoint')) / 2), text.indexOf('\npoint') - 2, text.length - 2];
  for (const o of offsets) {
    hover(a, o);
    completions(a, o);
    definition(a, o);
    references(a, o);
  }
  documentOutline(a);
  foldingRanges(a);
  semanticTokens(a);
  pointLenses(a);
  solveEdits(a, 'p');
  linearizeEdit(a, 'p');
  quickFixes(a, a.allDiagnostics().map((d) => ({ code: d.code, span: d.span, data: d.data })));
  symbolicLinear(a, 'p');
  return a;
}

describe('a sum of 10^5 terms just works', () => {
  it('in every stage in-process: one flat sum, the right value, the services', () => {
    const text = flatSum(N_TERMS);
    const a = allServices(text);
    expect(a.diagnostics).toEqual([]);
    // lowering keeps the sum flat: one sum node with every term (not a chain 10^5 deep)
    let widest = 0;
    const stack: E.Node[] = [a.lowered.equations[0].residual];
    while (stack.length) {
      const n = stack.pop()!;
      if (n.t === 'add' || n.t === 'mul' || n.t === 'fn') {
        if (n.t === 'add') widest = Math.max(widest, n.args.length);
        for (const x of n.args) stack.push(x);
      }
    }
    expect(widest).toBeGreaterThanOrEqual(N_TERMS);
    const sol = a.point('p')!;
    expect(sol.ok).toBe(true);
    const y = a.values(sol).find((v) => v.name === 'y')!.value;
    expect(y).toBeCloseTo(flatSumValue(N_TERMS, 1), 6);
    // dy/du = 1 + Σ 1/(2 sqrt(1 + i)): D of the output z = y (closed form, computed here)
    const lin = a.linear('p')!;
    let dydu = 1;
    for (let i = 1; i <= N_TERMS; i++) dydu += 0.5 / Math.sqrt(1 + i);
    expect(lin.D[0]).toBeCloseTo(dydu, 6); // D is row-major (outputs × inputs)
  }, 240_000);

  it('through the command: check and linearize', async () => {
    const f = write('flat.poise', flatSum(N_TERMS));
    const [c, l] = await Promise.all([runCliAsync(['check', f]), runCliAsync(['linearize', f])]);
    noCrash(c);
    noCrash(l);
    expect(c.code).toBe(0);
    expect(l.code).toBe(0);
    expect(l.stdout).toMatch(/\bD\b/);
  }, 240_000);
});

describe(`expressions nested up to ${MAX_NESTING} levels work; deeper is P115 with its range`, () => {
  // depth d of parentheses or calls costs d + 1 levels (the expression itself is one); a tower of d
  // operands d levels; a sign with its parenthesis two
  const ok = { parens: MAX_NESTING - 1, calls: MAX_NESTING - 1, tower: MAX_NESTING, signs: (MAX_NESTING >> 1) - 1 };
  const value = { parens: 0.5, calls: 0.5, tower: 1, signs: ok.signs % 2 ? -0.5 : 0.5 };

  for (const kind of Object.keys(deep) as (keyof typeof deep)[]) {
    it(`${kind}: at the limit every stage runs; 10,000 deep is one clear diagnostic`, async () => {
      const u = kind === 'tower' ? 1 : 0.5;
      const atLimit = oneEquation(deep[kind](ok[kind]), u);
      const a = allServices(atLimit);
      expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
      const sol = a.point('p')!;
      expect(sol.ok).toBe(true);
      expect(a.values(sol).find((v) => v.name === 'y')!.value).toBeCloseTo(value[kind], 12);
      expect(a.linear('p')!.ok).toBe(true);

      const tooDeep = oneEquation(deep[kind](10_000), u);
      const b = analyze(tooDeep);
      const p115 = b.diagnostics.filter((d) => d.code === 'P115');
      expect(p115).toHaveLength(1);
      expect(p115[0].message).toContain(`deeper than ${MAX_NESTING} levels`);
      // the range is the token that opens the level beyond the limit, on the equation's line
      const [loc] = located(b, p115);
      expect(loc.start.line).toBe(3);
      expect(p115[0].span.end).toBeGreaterThan(p115[0].span.start);
      expect(tooDeep.slice(p115[0].span.start, p115[0].span.end)).toMatch(/^(\(|abs|u|-)$/);

      const f1 = write(`${kind}-ok.poise`, atLimit);
      const f2 = write(`${kind}-deep.poise`, tooDeep);
      const [c1, l1, c2, l2] = await Promise.all([runCliAsync(['check', f1]), runCliAsync(['linearize', f1]), runCliAsync(['check', f2]), runCliAsync(['linearize', f2])]);
      for (const r of [c1, l1, c2, l2]) noCrash(r);
      expect(c1.code).toBe(0);
      expect(l1.code).toBe(0);
      expect(c2.code).toBe(1);
      expect(c2.stdout + c2.stderr).toMatch(/:4:\d+: error P115: Expression nested deeper than/);
    }, 240_000);
  }
});

describe('compiled code', () => {
  it('a deep expression compiles (shallow code with temporaries) and agrees with plain arithmetic', () => {
    // (((v0 + 1)^2 + 1)^2 ...) nested 3,000 deep: the value by plain arithmetic, the tree evaluator, the code
    let n: E.Node = E.sym(0);
    let ref = 0.1;
    for (let i = 0; i < 3000; i++) {
      n = E.fn('sin', [E.add([n, E.num(1)])]);
      ref = Math.sin(ref + 1);
    }
    const f = compileVector([n]);
    const out = new Float64Array(1);
    f(Float64Array.of(0.1), out);
    expect(out[0]).toBe(ref);
  });

  it('a shared sub-expression is computed once (derivatives of a power tower stay graph-sized)', () => {
    // u^u^…^u (400 levels) and its derivative: at u = 1 the tower is 1 and its derivative is 1
    // (d/du u^T = u^T (T' ln u + T/u) = T at u = 1, and T = 1)
    let t: E.Node = E.sym(0);
    for (let i = 1; i < 400; i++) t = E.pow(E.sym(0), t);
    const d = E.derivative(t, 0);
    const out = new Float64Array(2);
    compileVector([t, d])(Float64Array.of(1), out);
    expect(out[0]).toBe(1);
    expect(out[1]).toBeCloseTo(1, 12);
    // finite differences (central, h = 1e-6) at u = 1.001: an independent route for the derivative
    const g = compileVector([t]);
    const at = (u: number) => {
      const o = new Float64Array(1);
      g(Float64Array.of(u), o);
      return o[0];
    };
    const o2 = new Float64Array(2);
    compileVector([t, d])(Float64Array.of(1.001), o2);
    expect(o2[1]).toBeCloseTo((at(1.001 + 1e-6) - at(1.001 - 1e-6)) / 2e-6, 4);
  });
});

describe('150,000 constants', () => {
  it('the outline lists them all; every stage runs', () => {
    const L = ['input u', 'var y'];
    for (let i = 0; i < 150_000; i++) L.push(`const c${i} = ${i ? `c${i - 1} + 1` : '1'}`);
    L.push('y = u + c149999', 'point p:', '  u = 1', '');
    const a = analyze(L.join('\n'));
    expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const outline = documentOutline(a);
    const consts = outline.find((g) => g.name === 'Constants')!;
    expect(consts.children).toHaveLength(150_000);
    expect(consts.span.start).toBe(a.text.indexOf('const c0'));
    const sol = a.point('p')!;
    expect(a.values(sol).find((v) => v.name === 'y')!.value).toBe(150_001);
    foldingRanges(a);
    semanticTokens(a);
  }, 240_000);
});

describe('no spread of an unbounded array into a call', () => {
  it('server/src has none (Math.max(...xs), out.push(...xs), f(...args))', () => {
    const bad: string[] = [];
    const walk = (d: string) => {
      for (const e of fs.readdirSync(d, { withFileTypes: true })) {
        const p = path.join(d, e.name);
        if (e.isDirectory()) walk(p);
        else if (e.name.endsWith('.ts')) {
          fs.readFileSync(p, 'utf8').split('\n').forEach((line, i) => {
            const code = line.replace(/\/\/.*$/, '');
            if (/^\s*\*/.test(code)) return;
            // "name(...x" or "name(a, ...x" but not a rest parameter "(...args: T)"
            for (const m of code.matchAll(/[\w$\])]\s*\(([^()[\]{}]*,\s*)?\.\.\.(?![\w$]+\s*[:)]\s*(?:[A-Z\w<[]|=>))/g)) bad.push(`${path.relative(ROOT, p)}:${i + 1}: ${m[0]}`);
          });
        }
      }
    };
    walk(path.join(ROOT, 'server', 'src'));
    expect(bad).toEqual([]);
  });

  it('linearize prints a 1,000-state chain (text)', async () => {
    const f = write('chain1000.poise', tankChain(1000));
    const r = await runCliAsync(['linearize', f]);
    noCrash(r);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain("Δh1000'");
  }, 240_000);

  it('a sweep page with 2,000 steps', () => {
    const text = ['input u', 'state x', "x' = u - x", 'point p:', '  u = 1', '  x ~ 1', 'sweep s from p:', '  vary u = 1 to 2 steps 2000', ''].join('\n');
    const a = analyze(text);
    const r = runDeclaredSweep(a, 's')!;
    expect(r.points).toHaveLength(2001);
    // x = u at every steady state (closed form)
    expect(r.points[2000].values[r.columns.findIndex((c) => c.name === 'x')]).toBeCloseTo(2, 9);
    const html = sweepHtml(r);
    expect(html).toContain('<svg');
    expect(html.split('<tr>').length).toBeGreaterThan(2000);
  }, 240_000);
});

/**
 * Non-finite and vanishing numbers never pass silently: a literal outside double precision's range (too
 * large: Infinity; too small: 0), a point value, a constant, or a linear-model entry that is not finite
 * (or so large or small that the analyses built on it overflow) is an error on the line that produced it,
 * and nothing non-finite is printed or written by a lens. And a model with widely different magnitudes
 * keeps its exact entries: the elimination is equilibrated and round-off is judged per solved column.
 *
 * Outside sources: IEEE 754-2019 binary64 (largest finite ≈ 1.797e308, smallest subnormal ≈ 4.9e-324;
 * common practice, and checked here against Number.MAX_VALUE / Number.MIN_VALUE). Hand elimination for
 * the small models below. Independent route: the same models rescaled (equations multiplied through,
 * variables in other units) must give the same A B C D.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { buildReport } from '../server/src/core/analysis/report';
import { applyEdits, type TextEdit } from '../server/src/core/services/edits';
import { linearizeEdit } from '../server/src/core/services/linearBlock';
import { check } from './helpers/check';
import { EXAMPLES, ensureBuilt, runCli, scratchDir } from './helpers/cli';
import { REFERENCE_MODELS } from './helpers/reference';
import { dedent, expectClose, solve } from './helpers/model';
import { analyzeFile, exampleModels } from './helpers/examples';

describe('number literals outside double precision (P114)', () => {
  it('the range is binary64\'s', () => {
    // IEEE 754 binary64: largest finite 1.7976931348623157e308, smallest subnormal 5e-324
    expect(Number.MAX_VALUE).toBe(1.7976931348623157e308);
    expect(Number.MIN_VALUE).toBe(5e-324);
    expect(Number('1e400')).toBe(Infinity);
    expect(Number('1e-400')).toBe(0);
  });
  it('too large and too small are both errors on the literal', () => {
    check(`
      const a = ⟦1e400⟧ [m]
      const b = ⟦1e-400⟧ [m]
      const c = ⟦2.5e-330⟧
    `, [
      { code: 'P114', message: ['too large', 'infinite'] },
      { code: 'P114', message: ['too small', 'as 0'] },
      { code: 'P114', message: ['too small'] },
    ], { ignore: ['P510'] });
  });
  it('zero written with an exponent, and subnormal numbers, are fine', () => {
    check(`
      const a = 0e-400 [m]
      const b = 0.000e5 [m]
      const c = 1e-310 [m]
      const d = 1.7e308 [m]
    `, []);
  });
});

describe('point values that are not finite (P512)', () => {
  it('a fixed value and a constant given again', () => {
    check(`
      const c = 2 [m]
      input u [m]
      state x [m]
      (1 [s])*x' = u - x + 0*c
      point p:
        u = ⟦1e200*1e200 [m]⟧
      point q:
        u = 1 [m]
        c = ⟦1e300 [m]*1e300⟧
    `, [{ code: 'P512', message: ['"u"', 'Infinity'] }, { code: 'P512', message: ['"c"'] }], { ignore: ['P308'] });
  });
});

describe('linear models with entries the analyses cannot take (P511)', () => {
  const tiny = dedent(`
    const c = 1e-300 [s]
    input u [m]
    state x1 [m]
    state x2 [m]
    x1' = (u - x1)/c
    x2' = (x1 - x2)/c
    point p:
      u = 1 [m]
  `);
  it('a time constant of 1e-300 s: A = −1e300 is an error on each equation, nothing is linearised', () => {
    const a = analyze(tiny);
    const lin = a.linear('p')!;
    expect(lin.ok).toBe(false);
    const lines = lin.diagnostics.map((d) => a.text.slice(d.span.start, d.span.end));
    expect(lin.diagnostics.map((d) => d.code)).toEqual(['P511', 'P511']);
    expect(lines).toEqual(["x1' = (u - x1)/c", "x2' = (x1 - x2)/c"]);
    expect(lin.diagnostics[0].message).toContain("A[Δx1', x1]");
    // the Linearize lens writes nothing
    expect(linearizeEdit(a, 'p').ok).toBe(false);
    expect(a.deviationEquations('p')).toBeUndefined();
  });
  it('the command prints no non-finite number and fails', () => {
    ensureBuilt();
    const dir = scratchDir('nonfinite');
    const f = path.join(dir, 'tiny.poise');
    fs.writeFileSync(f, tiny);
    for (const cmd of [['linearize', f], ['report', f], ['linearize', f, '--format', 'json']]) {
      const r = runCli(cmd);
      expect(r.code, cmd.join(' ')).toBe(1);
      expect(r.stdout + r.stderr).not.toMatch(/NaN|Infinity/);
      expect(r.stdout).not.toMatch(/1e300/); // the message names the entry; nothing else prints it
      expect(r.stderr).toContain('too large for the analyses');
      // located: file:line:col of the equation (line 5 is "x1' = (u - x1)/c"), as check prints them
      expect(r.stderr, cmd.join(' ')).toContain(`${f}:5:1: error P511:`);
    }
    fs.rmSync(dir, { recursive: true, force: true });
  }, 300_000);
  it('a time constant of 1e-100 s is still within range: A = −1e100 exactly', () => {
    const s = solve(tiny.replace('1e-300', '1e-100'));
    expect(s.A('x1', 'x1')).toBe(-1e100);
    expect(s.B('x1', 'u')).toBe(1e100);
    expect(s.A('x2', 'x1')).toBe(1e100);
  });
});

describe('dynamics that overflow although every entry is in range (P513)', () => {
  // four lags in series with τ = 1e-100 s: A entries ±1e100 are fine, but the transfer function to x4 has
  // the denominator (s + 1e100)^4, whose constant term 1e400 overflows double precision (binary64)
  const chain = dedent(`
    const c = 1e-100 [s]
    input u [m]
    state x1 [m]
    state x2 [m]
    state x3 [m]
    state x4 [m]
    x1' = (u - x1)/c
    x2' = (x1 - x2)/c
    x3' = (x2 - x3)/c
    x4' = (x3 - x4)/c
    point p:
      u = 1 [m]
  `);
  it('the report is refused with a message that says what to change, and holds no non-finite number', () => {
    const a = analyze(chain);
    expect(a.linear('p')!.ok).toBe(true);
    const r = buildReport(a, 'p');
    expect(r.ok).toBe(false);
    expect(r.problems.join('\n')).toMatch(/overflow double precision \(the transfer function u → x\d is not finite\)/);
    expect(JSON.stringify(r)).not.toMatch(/NaN|Infinity/);
  });
  it('the same chain in a time unit near its time constant reports normally', () => {
    // τ = 1 time unit: with time in [s] and c = 1 s the same structure is harmless (no overflow)
    const r = buildReport(analyze(chain.replace('1e-100 [s]', '1 [s]')), 'p');
    expect(r.problems).toEqual([]);
    expect(r.ok).toBe(true);
    // by hand: G(s) from u to x4 is 1/(s + 1)^4, DC gain 1
    const tf = r.transfer.find((t) => t.output === 'x4')!;
    expect(tf.dcGain).toBeCloseTo(1, 12);
  });
});

describe('widely different magnitudes keep their exact entries', () => {
  // x' = y + u with k·y = −x: by hand y = −x/k, so x' = −x/k + u: A = −1/k, B = 1 exactly
  const model = (k: string) => dedent(`
    const k = ${k}
    input u
    state x
    var y
    x' = y + u
    k*y = -x
    point p:
      u = 1
      x ~ 1e-16
  `);
  it.each(['1e-16', '1e-8', '1', '1e8', '1e16'])('k = %s: A = −1/k, B = 1', (k) => {
    const s = solve(model(k));
    expectClose(s.A('x', 'x'), -1 / Number(k), 1e-15);
    expect(s.B('x', 'u')).toBe(1);
  });
  it('the issue\'s form k·y = x, with an output y', () => {
    // y = x/k; x' = u − y: A = −1/k, B = 1; output yo = y: C = 1/k, D = 0 (by hand)
    const s = solve(dedent(`
      const k = 1e-16
      input u
      state x
      output yo = y
      var y
      x' = u - y
      k*y = x
      point p:
        u = 1e-16
        x ~ 1e-32
    `));
    expectClose(s.A('x', 'x'), -1e16, 1e-15);
    expect(s.B('x', 'u')).toBe(1);
    expectClose(s.C('yo', 'x'), 1e16, 1e-15);
    expect(s.D('yo', 'u')).toBe(0);
  });
});

/** The model with every equation multiplied through by `f` on both sides (same solution, same linear model). */
function multiplied(text: string, f: string, file?: string): string {
  const a = at(file)(text);
  const edits: TextEdit[] = [];
  // an equation of an each block stands for many bound equations with one span: edit its text once
  const seen = new Set<number>();
  for (const eq of a.bound.equations) {
    if (seen.has(eq.lhs.span.start) || a.documents.foreign(eq.lhs.span)) continue; // a part's equations: in its own file
    seen.add(eq.lhs.span.start);
    edits.push({ span: { start: eq.lhs.span.start, end: eq.lhs.span.start }, newText: '(' });
    edits.push({ span: { start: eq.lhs.span.end, end: eq.lhs.span.end }, newText: `)*${f}` });
    edits.push({ span: { start: eq.rhs.span.start, end: eq.rhs.span.start }, newText: '(' });
    edits.push({ span: { start: eq.rhs.span.end, end: eq.rhs.span.end }, newText: `)*${f}` });
  }
  return applyEdits(text, edits);
}

/** Analyses of a model's text where its file is (the parts files beside it read from the disk). */
const at = (file?: string) => (text: string) => (file ? analyzeFile(file, text) : analyze(text));

const models: [string, string, string?][] = [
  ...exampleModels().map((m) => [m.name, m.text, m.file] as [string, string, string?]),
  ...(fs.existsSync(REFERENCE_MODELS)
    ? fs.readdirSync(REFERENCE_MODELS).filter((f) => f.endsWith('.poise')).map((f) => ['reference/' + f, fs.readFileSync(path.join(REFERENCE_MODELS, f), 'utf8')] as [string, string, string?])
    : []),
];

describe('a model and its rescaled copy give the same A B C D', () => {
  it.each(models)('%s with every equation ×1e12, ×1e-12 and ×4096', (_f, text, file) => {
    const a = at(file)(text);
    for (const f of ['1e12', '1e-12', '4096']) {
      const b = at(file)(multiplied(text, f, file));
      for (const p of a.pointNames) {
        const la = a.linear(p);
        const lb = b.linear(p);
        expect(!!lb?.ok, `${p} ×${f}`).toBe(!!la?.ok);
        if (!la?.ok || !lb?.ok) continue;
        for (const m of ['A', 'B', 'C', 'D'] as const) {
          const x = la[m];
          const y = lb[m];
          const big = x.reduce((s, v) => Math.max(s, Math.abs(v)), 0);
          // a matrix that is zero may come back as rounding residue (1e-109 after a constraint's elimination)
          const floor = big > 0 ? 1e-12 * big : 1e-90;
          for (let i = 0; i < x.length; i++) expectClose(y[i], x[i], 1e-9, floor, `${p} ${m}[${i}] ×${f}`);
          // a power-of-two factor changes nothing at all
          if (f === '4096') expect(Array.from(y), `${p} ${m} ×4096`).toEqual(Array.from(x));
        }
      }
    }
  });
});

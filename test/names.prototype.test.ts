/**
 * Names are values, not object keys: a user may call a variable `toString`, `constructor`, `valueOf`,
 * `hasOwnProperty` or `__proto__` (JavaScript's Object.prototype members, ECMAScript 2023 §20.1.3) and it
 * must behave like any other name. Property: every example and shared reference model, with its names
 * renamed to these words, gives the same numbers (values, A B C D), the same diagnostics apart from the
 * names, hovers that show the name, and exports that carry it. Independent route: the original model.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze, type Analysis } from '../server/src/core/pipeline/analysis';
import { applyEdits, type TextEdit } from '../server/src/core/services/edits';
import { hover } from '../server/src/core/services/hover';
import { exportLinear } from '../server/src/core/present/exports';
import { linearJson } from '../server/src/core/present/format';
import { solveEdits } from '../server/src/core/services/solve';
import { linearizeEdit } from '../server/src/core/services/linearBlock';
import { EXAMPLES, ensureBuilt, runCli, scratchDir } from './helpers/cli';
import { REFERENCE_MODELS } from './helpers/reference';
import { dedent, solve } from './helpers/model';
import { analyzeFile, exampleModels } from './helpers/examples';

const WORDS = ['toString', 'constructor', 'valueOf', 'hasOwnProperty', '__proto__', '__defineGetter__', 'isPrototypeOf', 'propertyIsEnumerable', 'toLocaleString'];

/**
 * Renames the first declared names of a model (declarations and every reference, found by the binder) to
 * WORDS. A family's elements (th[1], th[2], …) are symbols of their own that share the family's name: the
 * family is renamed as one name.
 */
function renamed(text: string, file?: string): { text: string; map: Map<string, string> } {
  const a = at(file)(text);
  const base = (n: string) => n.replace(/\[.*$/, '');
  // the names of families first (so a family model renames its families); a constant written inside index
  // brackets (a family's size in `th[1..n]`, an index `th[n]`) is renamed there too: the binder records
  // those places as references (where: 'index')
  // names the model declares itself (a part's names live in its own file: an instance's are left alone)
  const names = [...new Set([...a.bound.symbols.values()].filter((s) => !a.documents.foreign(s.span)).map((s) => base(s.name)))]
    .filter((n) => !WORDS.includes(n))
    .sort((x, y) => Number(a.families.has(y)) - Number(a.families.has(x)));
  const map = new Map<string, string>();
  names.slice(0, WORDS.length).forEach((n, i) => map.set(n, WORDS[i]));
  const edits: TextEdit[] = [];
  // the name only: an element's reference spans its index too (th[i-1]), which stays as written
  const nameSpan = (sp: { start: number }, n: string) => ({ start: sp.start, end: sp.start + base(n).length });
  for (const s of a.bound.symbols.values()) if (map.has(base(s.name)) && !a.documents.foreign(s.span)) edits.push({ span: nameSpan(s.span, s.name), newText: map.get(base(s.name))! });
  for (const r of a.bound.references) if (map.has(base(r.symbol.name))) edits.push({ span: nameSpan(r.span, r.symbol.name), newText: map.get(base(r.symbol.name))! });
  // a family's line stands for each of its elements: the same span may be recorded once per element
  const seen = new Set<string>();
  const unique = edits.filter((e) => !seen.has(`${e.span.start}:${e.span.end}`) && !!seen.add(`${e.span.start}:${e.span.end}`));
  return { text: applyEdits(text, unique), map };
}

/** Analyses of a model's text where its file is (the parts files beside it read from the disk). */
const at = (file?: string) => (text: string) => (file ? analyzeFile(file, text) : analyze(text));

const models: [string, string, string?][] = [
  ...exampleModels().map((m) => [m.name, m.text, m.file] as [string, string, string?]),
  ...(fs.existsSync(REFERENCE_MODELS)
    ? fs.readdirSync(REFERENCE_MODELS).filter((f) => f.endsWith('.poise')).map((f) => ['reference/' + f, fs.readFileSync(path.join(REFERENCE_MODELS, f), 'utf8')] as [string, string, string?])
    : []),
  // models with indexed families are in too: a family is renamed at its declaration and every reference,
  // and its elements (h[1], h[2], …) follow the family's name
];

const codes = (a: Analysis) => a.allDiagnostics().map((d) => d.code).sort();

describe('every test model renamed to Object.prototype words gives the same numbers', () => {
  it('there are models to rename', () => expect(models.length).toBeGreaterThan(5));

  it.each(models)('%s', (_file, text, file) => {
    const { text: t2, map } = renamed(text, file);
    expect(map.size).toBeGreaterThan(0);
    const a = at(file)(text);
    const b = at(file)(t2);
    // the same diagnostics by code (the stale-block warning P601 aside: the digest covers the names)
    expect(codes(b).filter((c) => c !== 'P601')).toEqual(codes(a).filter((c) => c !== 'P601'));
    for (const p of a.pointNames) {
      const sa = a.point(p);
      const sb = b.point(p);
      expect(sb?.ok, p).toBe(sa?.ok);
      if (!sa?.ok || !sb?.ok) continue;
      expect(Array.from(sb.values)).toEqual(Array.from(sa.values));
      const la = a.linear(p)!;
      const lb = b.linear(p)!;
      expect(lb.ok).toBe(la.ok);
      if (!la.ok) continue;
      for (const m of ['A', 'B', 'C', 'D'] as const) expect(Array.from(lb[m]), m).toEqual(Array.from(la[m]));
      // the leading name: a plain name, or a family's name before its index brackets
      const rename = (n: string) => n.replace(/^[\p{L}_][\p{L}\p{N}_]*/u, (x) => map.get(x) ?? x);
      expect(lb.states).toEqual(la.states.map(rename));
      expect(lb.inputs).toEqual(la.inputs.map(rename));
      // the values listed by name carry the renamed names (JSON keeps "__proto__" as a key of its own)
      const ja = JSON.parse(JSON.stringify(linearJson(la, a.values(sa), a.deviationEquations(p)!))) as { values: Record<string, unknown> };
      const jb = JSON.parse(JSON.stringify(linearJson(lb, b.values(sb), b.deviationEquations(p)!))) as { values: Record<string, unknown> };
      expect(Object.keys(jb.values)).toEqual(Object.keys(ja.values).map(rename));
      for (const [k, v] of Object.entries(ja.values)) expect(Object.prototype.hasOwnProperty.call(jb.values, rename(k)) && jb.values[rename(k)]).toEqual(v);
      // every renamed state, input, var or output is in the JSON export under its new name
      const exported = JSON.stringify(JSON.parse(exportLinear(b, p, 'json')));
      for (const s of b.bound.symbols.values()) if (s.kind !== 'const' && WORDS.includes(s.name)) expect(exported).toContain(`"${s.name}"`);
    }
  });
});

describe('each word works as a name in every role', () => {
  it.each(WORDS)('%s as constant, input, state, var, output, in points, hovers, Solve, Linearize', (w) => {
    // a tank: area·h' = q_in − k·√h; the word plays each role in turn, by hand h = (q/k)² at the point
    const roles = {
      c: dedent(`
        const ${w} = 0.01 [m^2.5/s]
        input q [m^3/s]
        state h [m]
        var out [m^3/s]
        (2 [m^2])*h' = q - out
        out = ${w}*sqrt(h)
        point p:
          q = 0.02 [m^3/s]
          ${w} = 0.01 [m^2.5/s]
          h ~ 1 [m]
      `),
      i: dedent(`
        const k = 0.01 [m^2.5/s]
        input ${w} [m^3/s]
        state h [m]
        var out [m^3/s]
        (2 [m^2])*h' = ${w} - out
        out = k*sqrt(h)
        point p:
          ${w} = 0.02 [m^3/s]
          h ~ 1 [m]
      `),
      s: dedent(`
        const k = 0.01 [m^2.5/s]
        input q [m^3/s]
        state ${w} [m]
        var out [m^3/s]
        (2 [m^2])*${w}' = q - out
        out = k*sqrt(${w})
        output level [cm] = ${w}
        point p:
          q = 0.02 [m^3/s]
          ${w} ~ 1 [m]
      `),
      v: dedent(`
        const k = 0.01 [m^2.5/s]
        input q [m^3/s]
        state h [m]
        var ${w} [m^3/s]
        (2 [m^2])*h' = q - ${w}
        ${w} = k*sqrt(h)
        point p:
          q = 0.02 [m^3/s]
          ${w} ~ 0.01 [m^3/s]
      `),
    };
    for (const [role, text] of Object.entries(roles)) {
      const s = solve(text);
      expect(s.a.allDiagnostics().filter((d) => d.severity !== 'info'), `${w} as ${role}`).toEqual([]);
      // steady state by hand: q = k·√h → h = (0.02/0.01)² = 4 m
      const h = role === 's' ? s.value(w) : s.value('h');
      expect(h, `${w} as ${role}`).toBeCloseTo(4, 10);
      // A = −k/(2·area·√h) = −0.01/(2·2·2) = −1/800 1/s (derivative of the outflow)
      const x = role === 's' ? w : 'h';
      expect(s.A(x, x)).toBeCloseTo(-1 / 800, 14);
      // hover on the name shows the name, never a function's source text
      const at = text.indexOf(w, text.indexOf('\n(') > 0 ? 0 : 0);
      const md = hover(s.a, at + 1)?.markdown ?? '';
      expect(md).toContain(w);
      expect(md).not.toMatch(/native code|\[object|function /);
      // Solve and Linearize lenses write the name back
      const se = solveEdits(s.a, 'p');
      expect(se.ok).toBe(true);
      const le = linearizeEdit(s.a, 'p');
      expect(le.ok).toBe(true);
      if (role !== 'c') expect(JSON.stringify(le)).toContain(w);
    }
  });
});

describe('the command line carries every word as a name', () => {
  it('solve and linearize --format json, report --step: __proto__ and constructor are keys of their own', () => {
    ensureBuilt();
    const dir = scratchDir('names');
    const f = path.join(dir, 'tank.poise');
    // tank: area·h' = __proto__ − constructor·√h; by hand h = (0.02/0.01)² = 4 m at the point
    fs.writeFileSync(f, dedent(`
      const constructor = 0.01 [m^2.5/s]
      input __proto__ [m^3/s]
      state toString [m]
      (2 [m^2])*toString' = __proto__ - constructor*sqrt(toString)
      point p:
        __proto__ = 0.02 [m^3/s]
        toString ~ 1 [m]
    `));
    const s = runCli(['solve', f, '--format', 'json']);
    expect(s.code, s.stderr).toBe(0);
    const sj = JSON.parse(s.stdout) as { values: Record<string, { value: number }> };
    expect(Object.keys(sj.values).sort()).toEqual(['__proto__', 'toString']);
    expect(sj.values.toString.value).toBeCloseTo(4, 10);
    expect(Object.prototype.hasOwnProperty.call(sj.values, '__proto__')).toBe(true);
    const l = runCli(['linearize', f, '--format', 'json']);
    expect(l.code, l.stderr).toBe(0);
    const lj = JSON.parse(l.stdout) as { inputs: string[]; states: string[]; B: number[][] };
    expect(lj.inputs).toEqual(['__proto__']);
    expect(lj.states).toEqual(['toString']);
    expect(lj.B[0][0]).toBeCloseTo(0.5, 12); // 1/area
    const r = runCli(['report', f, '--step', '__proto__=0.001', '--format', 'json']);
    expect(r.code, r.stderr).toBe(0);
    const rj = JSON.parse(r.stdout) as { steps: { input: string; step: number }[] };
    expect(rj.steps.map((x) => [x.input, x.step])).toEqual([['__proto__', 0.001]]);
    fs.rmSync(dir, { recursive: true, force: true });
  }, 300_000);
});

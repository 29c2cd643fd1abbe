/**
 * The parser and the whole analysis on random, truncated and damaged input (property-based, fast-check):
 * they never throw, and every diagnostic range (and related range) lies inside the document. Property
 * expected of an error-tolerant front end (common practice for language servers: an editor sends every
 * keystroke's half-written text).
 */
import * as fs from 'fs';
import * as path from 'path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyze, analyzeDocuments } from '../server/src/core/pipeline/analysis';
import { cliSources } from '../server/src/cli/sourceHost';
import type { Diagnostic } from '../server/src/core/diagnostics';
import * as E from '../server/src/core/algebra/expr';
import { parse } from '../server/src/core/syntax/parser';
import { EXAMPLES, REFERENCE } from './helpers/cli';
import { poiseFiles } from './helpers/examples';

const sources: { name: string; text: string; file?: string }[] = [];
// every .poise file: the models (subfolders too) and the parts-library files, which parse on their own
for (const f of poiseFiles()) sources.push({ name: path.relative(EXAMPLES, f), text: fs.readFileSync(f, 'utf8'), file: f });
const refDir = path.join(REFERENCE, 'models');
if (fs.existsSync(refDir)) for (const f of fs.readdirSync(refDir).filter((x) => x.endsWith('.poise')).sort()) sources.push({ name: `reference/${f}`, text: fs.readFileSync(path.join(refDir, f), 'utf8') });

function rangesInside(ds: Diagnostic[], length: number): string | undefined {
  for (const d of ds) {
    for (const s of [d.span, ...(d.related ?? []).map((r) => r.span)]) {
      if (!(Number.isInteger(s.start) && Number.isInteger(s.end) && s.start >= 0 && s.start <= s.end && s.end <= length)) {
        return `${d.code} has range ${s.start}..${s.end} outside 0..${length}: ${d.message}`;
      }
    }
    if (typeof d.message !== 'string' || !d.message) return `${d.code} has no message`;
  }
  return undefined;
}

/** Everything an editor would ask of a document; throws if any step throws or a range is outside. */
function exercise(text: string): void {
  const p = parse(text);
  const bad = rangesInside(p.diagnostics, text.length);
  if (bad) throw new Error(`parse: ${bad}`);
  const a = analyze(text);
  const all = a.allDiagnostics();
  const bad2 = rangesInside(all, text.length);
  if (bad2) throw new Error(`analysis: ${bad2}`);
  for (const d of all) {
    // positions map back to the same offsets (LineMap round trip)
    expect(a.lines.offset(a.lines.position(d.span.start))).toBe(d.span.start);
  }
  for (const name of a.pointNames) {
    const lin = a.linear(name);
    if (lin && lin.ok) {
      a.deviationEquations(name);
      a.values(a.point(name)!);
    }
  }
}

// token soup close to the language, so that deeper parser paths are reached
const piece = fc.constantFrom(
  'time', 'const', 'input', 'state', 'var', 'output', 'point', 'linear', 'digest', 'at', 'sweep', 'from', 'vary', 'to', 'steps', 'log',
  'x', 'y', 'level', 'θ', 'Δx', 'Δ', "x'", "x''", "'", 'sqrt', 'exp', 'min', 'atan2', 'pi',
  '0', '1.5', '2e3', '1e', '.5', '1e400', '[m]', '[m^3/s]', '[degC]', '[L/min]', '[', ']', '[]', '[kW',
  '=', '~', ':', '+', '-', '*', '/', '^', '(', ')', ',', ' ', '  ', '\t', '\n', '\n  ', '\r\n', '# note', '$', '😀', '\u00a0',
  'point p:\n  x = 1\n', 'state x [m]\n', "x' = -x\n", 'sweep s from p:\n  vary u = 1 to 2 steps 3\n', 'linear p digest 1234abcd:\n  at x = 1\n  Δx\' = -Δx\n',
  // piecewise laws and tables (docs/language.md): comparisons, conditions, choose, clamp, table blocks and files
  '<', '<=', '>', '>=', 'and', 'or', 'not', 'choose', 'clamp', 'table', 'monotone', 'strict', 'hold', '"', '"cv.csv"',
  'choose(x > 1 [m], x, 2 [m])', 'clamp(x, 0, 1)', 'table cv [%] to [m^3/h] monotone:\n  0 0\n  50, 2\n  100 -3\n', 'table t [m] to [s] from "t.csv"\n', 'cv(x)',
);
const soup = fc.array(piece, { maxLength: 60 }).map((a) => a.join(''));

describe('parser and analysis on random input', () => {
  it('token soup never throws and keeps ranges inside', () => {
    fc.assert(fc.property(soup, (t) => exercise(t)), { numRuns: 400, seed: 424242 });
  });

  it('arbitrary unicode (including lone surrogates) never throws', () => {
    fc.assert(fc.property(fc.string({ unit: 'binary', maxLength: 200 }), (t) => exercise(t)), { numRuns: 300, seed: 31337 });
  });

  it('a well-formed model with random characters deleted never throws', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: sources.length - 1 }), fc.array(fc.nat(), { minLength: 1, maxLength: 8 }), (k, cuts) => {
        let t = sources[k].text;
        for (const c of cuts) {
          const i = c % Math.max(1, t.length);
          t = t.slice(0, i) + t.slice(i + 1);
        }
        exercise(t);
      }),
      { numRuns: 150, seed: 2718 },
    );
  });

  it('a well-formed model cut at a random character never throws', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: sources.length - 1 }), fc.nat(), (k, c) => {
        const t = sources[k].text;
        exercise(t.slice(0, c % (t.length + 1)));
      }),
      { numRuns: 150, seed: 1618 },
    );
  });
});

describe('truncations of every example at every line', () => {
  it.each(sources.map((s) => [s.name, s.text] as const))('%s', (_, text) => {
    const lines = text.split('\n');
    expect(lines.length).toBeGreaterThan(3);
    for (let k = 0; k <= lines.length; k++) {
      const t = lines.slice(0, k).join('\n');
      try {
        exercise(t);
      } catch (e) {
        throw new Error(`after ${k} line(s): ${(e as Error).message}`);
      }
      // the same cut without the trailing newline, and with the line half written
      if (k < lines.length) exercise(t + '\n' + lines[k].slice(0, Math.ceil(lines[k].length / 2)));
    }
  });

  it('the full examples have no errors at all (so the truncations above start from a clean model)', () => {
    for (const s of sources) {
      // examples through the disk host: a table's CSV file beside the model is read
      const a = s.file ? analyzeDocuments(cliSources(s.file, s.text), s.file)! : analyze(s.text);
      const errors = a.allDiagnostics().filter((d) => d.severity === 'error');
      expect(errors, s.name).toEqual([]);
    }
  });
});

describe('language rules the parser keeps (docs/language.md; issue 2, section 2)', () => {
  /** Structural keys of the lowered residuals of a model text. */
  const residuals = (text: string) => {
    const a = analyze(text);
    expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    return a.lowered.equations.map((e) => E.key(e.residual));
  };
  const decl = 'input u\nstate th, x\n';

  it("the prime binds tighter than any operator: th'^2 is (th')^2, -x' is -(x')", () => {
    expect(residuals(decl + "th'' = -th'^2 - u*x'\nx' = -x\n")).toEqual(residuals(decl + "th'' = -((th')^2) - u*(x')\nx' = -x\n"));
  });

  it('a line continues after a binary operator and while a parenthesis is open (on indented lines)', () => {
    const one = residuals(decl + "th'' = -th - 0.5*(th' + x)*u\nx' = -x + u\n");
    const split = residuals(decl + "th'' = -th -\n  0.5*(th' +\n    x)*u\nx' = -x +\n  u\n");
    expect(split).toEqual(one);
  });

  it('-x^2 is -(x^2) and ^ is right-associative (2^3^2 = 2^9)', () => {
    const a = analyze("input u\nstate x\nx' = -u^2 + 2^3^2\n");
    const r = a.lowered.equations[0].residual;
    // x' − (−u² + 512) at x' = 0, u = 3: −(−9 + 512) = −503
    const v = new Float64Array(a.lowered.slots.length);
    v[a.lowered.slotOf(a.bound.symbols.get('u')!)] = 3;
    expect(E.evaluate(r, v)).toBe(-503);
  });

  it('several names share one declaration, with one unit', () => {
    const a = analyze("state h1, h2 [m]\ninput q [m^3/s]\n(1 [m^2])*h1' = q - (0.1 [m^2/s])*h1\n(1 [m^2])*h2' = (0.1 [m^2/s])*(h1 - h2)\n");
    expect(a.bound.states.map((s) => [s.name, s.unit?.text])).toEqual([['h1', 'm'], ['h2', 'm']]);
  });
});

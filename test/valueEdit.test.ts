/**
 * An edit's static diagnostics worked out from the analysis before the edit (server/src/core/services/
 * valueEdit.ts): for every edit it accepts they must equal, diagnostic by diagnostic (code, range, message,
 * related ranges), the static diagnostics of a full analysis of the edited text (the independent route:
 * parse … structure run again from scratch, and the stale-block check by the full digest). Edits whose
 * values a static stage reads (an exponent, a family's size, another constant's value, a tolerance band)
 * and edits of names or operators must be refused (undefined), so the full analysis runs.
 * No outside reference applies: this is equality of two routes through our own pipeline.
 */
import { describe, expect, it } from 'vitest';
import type { Diagnostic } from '../server/src/core/diagnostics';
import { analyze, type Analysis } from '../server/src/core/pipeline/analysis';
import { applyEdits } from '../server/src/core/services/edits';
import { linearizeEdit, staticDiagnostics } from '../server/src/core/services/linearBlock';
import { valueEdit } from '../server/src/core/services/valueEdit';
import { dedent } from './helpers/model';

const base = dedent(`
  # two tanks (invented numbers)
  const area = 2 [m^2]
  const k = 0.01 [m^2.5/s]
  const b = 2*k
  const n = 2
  const c = 0.5 [m] ± 5 %
  input feed [m^3/s]
  state h [m]
  state g [m]
  const spare = 1 [m]
  output level [m] = h
  output sq [m^2] = h^n
  area*h' = feed - k*sqrt(h)
  area*g' = k*sqrt(h) - b*sqrt(g)
  point low:
    feed = 0.01 [m^3/s]
    h ~ 0.5 [m]
    g ~ 0.1 [m]
  point high:
    feed = 0.02 [m^3/s]
    h ~ 3 [m]
    g ~ 1 [m]
`);

/** The model with an up-to-date generated block for `low`. */
function withBlock(): string {
  const a = analyze(base);
  const r = linearizeEdit(a, 'low', 4);
  if (!r.ok) throw new Error(r.message);
  return applyEdits(base, r.edits);
}

const norm = (ds: readonly Diagnostic[]) =>
  [...ds]
    .map((d) => ({ code: d.code, start: d.span.start, end: d.span.end, message: d.message, related: (d.related ?? []).map((r) => [r.span.start, r.span.end, r.message]) }))
    .sort((x, y) => x.start - y.start || x.code.localeCompare(y.code) || x.message.localeCompare(y.message));

/** Checks the quick route against the full one; returns the full analysis of the edited text. */
function same(a: Analysis, text: string): Analysis {
  const q = valueEdit(a, text);
  expect(q, 'the edit is taken').toBeDefined();
  const full = analyze(text);
  expect(norm(q!.diagnostics)).toEqual(norm(staticDiagnostics(full)));
  return full;
}

describe('static diagnostics of a value edit, from the analysis before it', () => {
  const text = withBlock();
  const a = analyze(text);

  it('the model has what must be moved: a warning and a current block; with a unit error too', () => {
    const codes = staticDiagnostics(a).map((d) => d.code);
    expect(codes).toContain('P203'); // spare is never used
    expect(codes).not.toContain('P601');
    const wrong = text.replace('output level [m] = h\n', 'output level [m] = h + feed\n');
    const w = analyze(wrong);
    expect(staticDiagnostics(w).map((d) => d.code).some((c) => c.startsWith('P30'))).toBe(true); // h + feed
    same(w, wrong.replace('const area = 2 [m^2]', 'const area = 2.75 [m^2]'));
    same(w, wrong.replace('    h ~ 3 [m]', '    h ~ 3.25 [m]'));
  });

  it('a constant’s value, longer and back: the block goes stale, then current again', () => {
    const edited = text.replace('const area = 2 [m^2]', 'const area = 2.75 [m^2]');
    const b = same(a, edited);
    expect(staticDiagnostics(b).map((d) => d.code)).toContain('P601');
    const back = same(b, text);
    expect(staticDiagnostics(back).map((d) => d.code)).not.toContain('P601');
  });

  it('a fixed value of a point line (stale block), a guess (not stale), a comment, spaces inside a line', () => {
    const fixed = same(a, text.replace('  feed = 0.01 [m^3/s]', '  feed = 0.015 [m^3/s]'));
    expect(staticDiagnostics(fixed).map((d) => d.code)).toContain('P601');
    const guess = same(a, text.replace('  h ~ 0.5 [m]', '  h ~ 0.75 [m]'));
    expect(staticDiagnostics(guess).map((d) => d.code)).not.toContain('P601');
    same(a, text.replace('# two tanks', '# two connected tanks'));
    same(a, text.replace("area*h' = feed - k*sqrt(h)", "area * h'  =  feed - k * sqrt(h)"));
    // several lines at once, each a value
    same(a, text.replace('const area = 2 [m^2]', 'const area = 3 [m^2]').replace('  feed = 0.02 [m^3/s]', '  feed = 0.025 [m^3/s]'));
  });

  it('refuses what a static stage reads, and any other change of the tokens', () => {
    expect(valueEdit(a, text.replace('const n = 2', 'const n = 3'))).toBeUndefined(); // an exponent: the unit of h^n
    expect(valueEdit(a, text.replace('const k = 0.01', 'const k = 0.02'))).toBeUndefined(); // b = 2*k
    expect(valueEdit(a, text.replace('const c = 0.5', 'const c = 0.6'))).toBeUndefined(); // a tolerance band
    expect(valueEdit(a, text.replace('const area = 2 [m^2]', 'const area = 2 [m^3]'))).toBeUndefined(); // a unit
    expect(valueEdit(a, text.replace('const spare = 1 [m]', 'const spares = 1 [m]'))).toBeUndefined(); // a name
    expect(valueEdit(a, text.replace("feed - k*sqrt(h)\n", "feed + k*sqrt(h)\n"))).toBeUndefined(); // an operator
    expect(valueEdit(a, text.replace('  h ~ 0.5 [m]', '  h = 0.5 [m]'))).toBeUndefined(); // fixed instead of guessed
    expect(valueEdit(a, text.replace('sqrt(h)', 'sqrt(h) * 1.5'))).toBeUndefined(); // a number added
  });

  it('a family model: the size is refused, another constant and a list of guesses are taken', () => {
    const fam = dedent(`
      const n = 3
      const area = 1.5 [m^2]
      const k = 0.01 [m^2.5/s]
      input qin [m^3/s]
      state h[1..n] [m]
      var q[1..n] [m^3/s]
      area*h[1]' = qin - q[1]
      each i in 2..n: area*h[i]' = q[i-1] - q[i]
      each i in 1..n-1: q[i] = k*sqrt(h[i] - h[i+1])
      q[n] = k*sqrt(h[n])
      var unused
      point nominal:
        qin = 0.01 [m^3/s]
        h ~ {3.3, 2.2, 1.1} [m]
    `);
    const f = analyze(fam);
    expect(valueEdit(f, fam.replace('const n = 3', 'const n = 4'))).toBeUndefined();
    same(f, fam.replace('const area = 1.5', 'const area = 1.25'));
    same(f, fam.replace('{3.3, 2.2, 1.1}', '{3.35, 2.2, 1.1}'));
  });
});

/**
 * Which parts a document may place (server/src/core/pipeline/documents.ts, `PartScopes`): its own parts,
 * every part of a file a `parts from "…"` line brings in whole, and only the named ones of a
 * `parts A, B from "…"` line. A part of a file that was read but not named is error P262 on the place
 * line, saying what to write, with a quick fix that writes it (server/src/core/services/quickFixes.ts).
 *
 * Independent route: after the quick fix the same model solves, and its level equals Torricelli's law
 * h = (q/k)² (common practice in any fluid-mechanics text) — the same number as the model that names the
 * part on its parts line by hand.
 */
import { describe, expect, it } from 'vitest';
import { analyzeDocuments, type Analysis } from '../server/src/core/pipeline/analysis';
import { relativePath } from '../server/src/core/pipeline/documents';
import { memoryHost } from '../server/src/core/sources';
import { quickFixes } from '../server/src/core/services/quickFixes';
import { applyEdits } from '../server/src/core/services/edits';
import { dedent, expectClose, solveAnalysis } from './helpers/model';

const ROOT = 'mem:/plant/model.poise';
const TANKS = 'mem:/plant/lib/tanks.poise';

/** A file of two parts: a tank, and a weir that the tank may place (its neighbour). */
const tanksFile = dedent(`
  part weir:
    const k = 0.01 [m^2.5/s]
    input level [m]
    var q [m^3/s]
    q = k*sqrt(level)
  part tank:
    const area = 1.5 [m^2]
    input inflow [m^3/s]
    state level [m]
    place weir as out
    out.level = level
    area*level' = inflow - out.q
`);

const model = (head: string, body = '') => [head, 'input feed [m^3/s]', 'place tank as t', 't.inflow = feed', body, 'point p:', '  feed = 0.004 [m^3/s]', '  t.level ~ 0.1 [m]', ''].join('\n');

const analysis = (text: string, files: Record<string, string> = { [TANKS]: tanksFile }) => analyzeDocuments(memoryHost({ [ROOT]: text, ...files }), ROOT)!;
const errors = (a: Analysis) => a.allDiagnostics().filter((d) => d.severity === 'error');
const at = (a: Analysis, code: string) => {
  const d = a.allDiagnostics().find((x) => x.code === code);
  if (!d) return undefined;
  const w = a.where(d.span);
  return { file: w.uri.replace(/^.*\//, ''), line: w.start.line + 1, col: w.start.character + 1, text: a.documents.slice(d.span), message: d.message, d };
};

describe('a parts line with names brings in those parts only', () => {
  it('a named part places its unnamed neighbour inside its own file', () => {
    const s = solveAnalysis(analysis(model('parts tank from "lib/tanks.poise"')), 'p');
    // Torricelli: h = (q/k)² = (0.004/0.01)² = 0.16 m
    expectClose(s.value('t.level'), 0.16, 1e-9);
  });

  it('placing the unnamed neighbour in the model is P262 at the part\'s name, saying what to add', () => {
    const a = analysis(model('parts tank from "lib/tanks.poise"', 'place weir as spare\nspare.level = t.level'));
    const p = at(a, 'P262')!;
    expect(p).toMatchObject({ file: 'model.poise', line: 5, col: 7, text: 'weir' });
    expect(p.message).toBe('Part "weir" is defined in tanks.poise but not brought in here (its parts line names only tank): write parts tank, weir from "lib/tanks.poise".');
    expect(a.allDiagnostics().some((d) => d.code === 'P251')).toBe(false);
  });

  it('the quick fix writes the parts line with the name added; the model then solves', () => {
    const text = model('parts tank from "lib/tanks.poise"', 'place weir as spare\nspare.level = t.level');
    const a = analysis(text);
    const d = a.allDiagnostics().find((x) => x.code === 'P262')!;
    const fixes = quickFixes(a, [d]);
    expect(fixes.map((f) => f.title)).toEqual(['Bring in part weir: parts tank, weir from "lib/tanks.poise"']);
    const fixed = applyEdits(text, fixes[0].edits);
    expect(fixed.split('\n')[0]).toBe('parts tank, weir from "lib/tanks.poise"');
    const s = solveAnalysis(analysis(fixed), 'p');
    expectClose(s.value('t.level'), 0.16, 1e-9);
    expectClose(s.value('spare.q'), 0.004, 1e-9); // the spare weir reads the same level: the same flow
  });

  it('a parts line without names brings in every part of the file', () => {
    const a = analysis(model('parts from "lib/tanks.poise"', 'place weir as spare\nspare.level = t.level'));
    expect(errors(a)).toEqual([]);
  });

  it('a folder line: a neighbour in a named file is P262 with a parts line for that file (and the fix adds it after)', () => {
    const files = { 'mem:/plant/lib/tank.poise': tanksFile };
    const text = model('parts tank from "lib"', 'place weir as spare\nspare.level = t.level');
    const a = analysis(text, files);
    const p = at(a, 'P262')!;
    expect(p.message).toContain('(no parts line of this file names it): write parts weir from "lib/tank.poise"');
    const fixed = applyEdits(text, quickFixes(a, [p.d])[0].edits);
    expect(fixed.split('\n').slice(0, 2)).toEqual(['parts tank from "lib"', 'parts weir from "lib/tank.poise"']);
    expect(errors(analysis(fixed, files))).toEqual([]);
  });

  it('an unnamed part of the file no longer clashes with the model\'s own part of that name', () => {
    const own = dedent(`
      part weir:
        input level [m]
        var q [m^3/s]
        q = 0.02 [m^2.5/s]*sqrt(level)
    `);
    const named = analysis(model('parts tank from "lib/tanks.poise"', `place weir as spare\nspare.level = t.level\n${own}`));
    expect(errors(named)).toEqual([]);
    const s = solveAnalysis(named, 'p');
    expectClose(s.value('spare.q'), 0.02 * Math.sqrt(0.16), 1e-9); // the model's own weir (k = 0.02), not the file's
    expectClose(s.value('t.level'), 0.16, 1e-9); // while the tank still places its own neighbour (k = 0.01)
    // bringing in the whole file still clashes (P257 on the parts line)
    const whole = analysis(model('parts from "lib/tanks.poise"', `place weir as spare\nspare.level = t.level\n${own}`));
    expect(at(whole, 'P257')).toMatchObject({ line: 1, text: '"lib/tanks.poise"' });
  });

  it('a part in a library file placing a part its file does not bring in: P262 in that file', () => {
    const files = {
      [TANKS]: tanksFile.replace('place weir as out', 'place orifice as out').replace(/part weir:[^]*?sqrt\(level\)\n/, ''),
      'mem:/plant/lib/orifice.poise': 'part orifice:\n  const k = 0.01 [m^2.5/s]\n  input level [m]\n  var q [m^3/s]\n  q = k*sqrt(level)\n',
    };
    const a = analysis(dedent(`
      parts tank from "lib/tanks.poise"
      parts orifice from "lib"
      input feed [m^3/s]
      place tank as t
      t.inflow = feed
    `), files);
    const p = at(a, 'P262')!;
    expect(p).toMatchObject({ file: 'tanks.poise', text: 'orifice' });
    expect(p.message).toContain('write parts orifice from "orifice.poise"');
    expect(quickFixes(a, [p.d])).toEqual([]); // the fix would be in another file: the message says it
  });
});

describe('relativePath', () => {
  it.each([
    ['mem:/plant/model.poise', 'mem:/plant/lib/tank.poise', 'lib/tank.poise'],
    ['mem:/plant/lib/a.poise', 'mem:/plant/lib/b.poise', 'b.poise'],
    ['mem:/plant/lib/a.poise', 'mem:/plant/shared/b.poise', '../shared/b.poise'],
    ['file:///home/u/plant/model.poise', 'file:///home/u/shared/v/valve.poise', '../shared/v/valve.poise'],
  ])('%s → %s', (from, to, want) => expect(relativePath(from, to)).toBe(want));
});

/**
 * Parts models on damaged input (property-based, fast-check): the parser and the whole analysis of a
 * model with parts in other files never throw, and every diagnostic range (and related range) lies inside
 * one of the documents read, within that document's text; damage done to one file only is reported in
 * that file (or on the line that brings it in). Property expected of an error-tolerant front end (common
 * practice for language servers: an editor sends every keystroke's half-written text).
 */
import * as fs from 'fs';
import * as path from 'path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyzeDocuments, type Analysis } from '../server/src/core/pipeline/analysis';
import { parse } from '../server/src/core/syntax/parser';
import { memoryHost } from '../server/src/core/sources';
import { EXAMPLES } from './helpers/cli';
import { LIB, PIPE, ROOT, partsModel, pipeFile, tankFile } from './helpers/partsModels';

const example = path.join(EXAMPLES, 'feed_header');
const exampleFiles: Record<string, string> = {
  'ex:/plant.poise': fs.readFileSync(path.join(example, 'plant.poise'), 'utf8'),
  'ex:/library/tank.poise': fs.readFileSync(path.join(example, 'library', 'tank.poise'), 'utf8'),
  'ex:/library/valve.poise': fs.readFileSync(path.join(example, 'library', 'valve.poise'), 'utf8'),
  'ex:/library/pump.poise': fs.readFileSync(path.join(example, 'library', 'pump.poise'), 'utf8'),
};
const sets: { root: string; files: Record<string, string> }[] = [
  { root: ROOT, files: { [ROOT]: partsModel, [LIB]: tankFile, [PIPE]: pipeFile } },
  { root: 'ex:/plant.poise', files: exampleFiles },
];

/** Every range of every diagnostic lies inside one document read; returns the analysis. */
function exercise(root: string, files: Record<string, string>): Analysis {
  for (const t of Object.values(files)) parse(t);
  const a = analyzeDocuments(memoryHost(files), root)!;
  const all = a.allDiagnostics();
  for (const d of all) {
    for (const s of [d.span, ...(d.related ?? []).map((r) => r.span)]) {
      const doc = a.documents.documentAt(s.start);
      const ok = Number.isInteger(s.start) && Number.isInteger(s.end) && s.start <= s.end && s.start >= doc.base && s.end <= doc.base + doc.text.length;
      if (!ok) throw new Error(`${d.code} has range ${s.start}..${s.end} outside ${doc.uri} (${doc.base}..${doc.base + doc.text.length}): ${d.message}`);
      const w = a.where(s);
      expect(files[w.uri]).toBeDefined();
      expect(w.start.line).toBeLessThan(doc.lines.lineCount);
    }
    expect(d.message).toBeTruthy();
  }
  for (const name of a.pointNames) {
    const lin = a.linear(name);
    if (lin && lin.ok) a.deviationEquations(name);
  }
  return a;
}

const damage = (t: string, cuts: number[]) => {
  for (const c of cuts) {
    const i = c % Math.max(1, t.length);
    t = t.slice(0, i) + t.slice(i + 1);
  }
  return t;
};

describe('models with parts in other files on damaged input', () => {
  it('the undamaged sets have no errors', () => {
    for (const s of sets) expect(exercise(s.root, s.files).allDiagnostics().filter((d) => d.severity === 'error')).toEqual([]);
  });

  it('random characters deleted in any of the files never throw; ranges stay in their documents', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: sets.length - 1 }), fc.nat(), fc.array(fc.nat(), { minLength: 1, maxLength: 6 }), (k, which, cuts) => {
        const s = sets[k];
        const uris = Object.keys(s.files);
        const u = uris[which % uris.length];
        exercise(s.root, { ...s.files, [u]: damage(s.files[u], cuts) });
      }),
      { numRuns: 200, seed: 9091 },
    );
  });

  it('a file cut at any character never throws', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: sets.length - 1 }), fc.nat(), fc.nat(), (k, which, c) => {
        const s = sets[k];
        const uris = Object.keys(s.files);
        const u = uris[which % uris.length];
        exercise(s.root, { ...s.files, [u]: s.files[u].slice(0, c % (s.files[u].length + 1)) });
      }),
      { numRuns: 200, seed: 5150 },
    );
  });

  it('a syntax error made in a parts file is reported in that file', () => {
    fc.assert(
      fc.property(fc.nat(), fc.constantFrom('$', ')', '= =', '[m', '"'), (c, junk) => {
        const lines = tankFile.split('\n');
        const k = 2 + (c % (lines.length - 3)); // a line of the part's body
        lines[k] = lines[k] + ' ' + junk;
        const a = exercise(ROOT, { [ROOT]: partsModel, [LIB]: lines.join('\n'), [PIPE]: pipeFile });
        const syntax = a.allDiagnostics().filter((d) => /^P1/.test(d.code));
        expect(syntax.length).toBeGreaterThan(0);
        for (const d of syntax) {
          const w = a.where(d.span);
          expect(w.uri).toBe(LIB);
          expect(w.start.line).toBe(k);
        }
      }),
      { numRuns: 60, seed: 77 },
    );
  });

  it('token soup with the words of parts never throws', () => {
    const piece = fc.constantFrom(
      'part', 'place', 'parts', 'as', 'with', 'from', 'tank', 't1', 'cell', ' ', '\n', '\n  ', ':', '=', ',', '.', '[1..3]', '[2]', '"lib/tank.poise"', '"lib"', '"',
      't1.level', 'cell[2].level', "cell[i].level'", 'each i in 1..3:', 'state x [m]', "x' = -x", 'point p:\n  t1.level ~ 1\n', '{1, 2, 3}', 'area = 2 [m^2]',
    );
    fc.assert(
      fc.property(fc.array(piece, { maxLength: 50 }).map((a) => a.join('')), (t) => {
        exercise(ROOT, { [ROOT]: t, [LIB]: tankFile, [PIPE]: pipeFile });
        exercise(ROOT, { [ROOT]: partsModel, [LIB]: t, [PIPE]: pipeFile });
      }),
      { numRuns: 300, seed: 60606 },
    );
  });
});

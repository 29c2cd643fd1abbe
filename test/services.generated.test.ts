/**
 * What Solve and Linearize write into the file (server/src/core/services/solve.ts, linearBlock.ts, and
 * the shell's one Solve/Linearize command, lsp/jobs.ts `pointEdit`), applied as an editor would:
 *
 * - Linearize twice, or on a file that already holds two blocks for the point, leaves exactly one block
 *   for the point, current (no P601), and leaves every other line alone.
 * - Property (common practice for write-back tools: a round trip is a fixed point): for random
 *   perturbations of the guesses of every example point, Solve writes a point whose text parses and checks
 *   without error; solving again from what was written gives the same point to the digits written (so a
 *   second Solve has nothing to write). Independent route: the point solved from the perturbed text and
 *   from the written text are compared value by value, in SI, at the relative size of the written digits.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze, type Analysis } from '../server/src/core/pipeline/analysis';
import { applyEdits } from '../server/src/core/services/edits';
import { linearizeEdit } from '../server/src/core/services/linearBlock';
import { solveEdits } from '../server/src/core/services/solve';
import { pointEdit } from '../server/src/lsp/jobs';
import { EXAMPLES } from './helpers/cli';
import { dedent } from './helpers/model';
import { analyzeFile, exampleModels } from './helpers/examples';

const tank = dedent(`
  const area = 2 [m^2]
  const k = 0.01 [m^2.5/s]
  input feed [m^3/s]
  state h [m]
  output level [m] = h
  area*h' = feed - k*sqrt(h)
  point low:
    feed = 0.01 [m^3/s]
    h ~ 0.5 [m]
  point high:
    feed = 0.02 [m^3/s]
    h ~ 3 [m]
`);

const blocksOf = (text: string, point: string) => analyze(text).bound.linears.filter((l) => l.name.name === point).length;
const errorsOf = (a: Analysis) => a.allDiagnostics().filter((d) => d.severity === 'error' || d.code === 'P601');

describe('generated blocks are written once per point', () => {
  it('Linearize twice gives one block, the same text the second time', () => {
    const once = applyEdits(tank, (linearizeEdit(analyze(tank), 'low') as { edits: never[] }).edits);
    const r2 = linearizeEdit(analyze(once), 'low');
    expect(r2.ok).toBe(true);
    const twice = applyEdits(once, r2.ok ? r2.edits : []);
    expect(twice).toBe(once);
    expect(blocksOf(twice, 'low')).toBe(1);
  });

  it('a file with two blocks for the same point (a paste) keeps one after regenerating, current and error-free', () => {
    const one = applyEdits(tank, (linearizeEdit(analyze(tank), 'low') as { edits: never[] }).edits);
    const block = one.slice(one.indexOf('linear low'), one.indexOf('\n', one.indexOf('Δh\'')) + 1);
    // a stale copy at the end of the file, and a change of the constant so both are stale
    const two = (one + '\n' + block).replace('k = 0.01', 'k = 0.012');
    expect(blocksOf(two, 'low')).toBe(2);
    for (const regenerate of [
      (t: string) => { const r = linearizeEdit(analyze(t), 'low'); return r.ok ? applyEdits(t, r.edits) : t; },
      (t: string) => { const r = pointEdit(analyze(t), 'linearize', 'low', 4); return r.ok ? applyEdits(t, r.edits) : t; },
    ]) {
      const out = regenerate(two);
      expect(blocksOf(out, 'low')).toBe(1);
      expect(errorsOf(analyze(out))).toEqual([]);
      // nothing else changed: the text outside the blocks is the same as before
      const strip = (t: string) => t.replace(/\n*linear low[^]*?(?=\n\S|\n*$)/g, '').replace(/\n+$/, '');
      expect(strip(out)).toBe(strip(two));
      expect(out.endsWith('\n')).toBe(true);
    }
  });

  it('the blocks of other points are left alone', () => {
    let t = tank;
    for (const p of ['low', 'high', 'low', 'high']) {
      const r = linearizeEdit(analyze(t), p);
      t = r.ok ? applyEdits(t, r.edits) : t;
    }
    expect(blocksOf(t, 'low')).toBe(1);
    expect(blocksOf(t, 'high')).toBe(1);
    expect(errorsOf(analyze(t))).toEqual([]);
  });
});

/** Deterministic pseudo-random numbers (mulberry32, common practice for seeded tests). */
function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The text with every plain numeric guess of `point` multiplied by a random factor in [1 − f, 1 + f]. */
function perturb(text: string, a: Analysis, point: string, r: () => number, f: number): string {
  const block = a.pointBlock(point)!;
  const edits = [];
  const seen = new Set<number>();
  for (const l of block.lines) {
    if (l.mode !== 'guess' || l.primes || seen.has(l.value.span.start)) continue;
    seen.add(l.value.span.start); // a family's line stands for several elements with one value span
    const src = text.slice(l.value.span.start, l.value.span.end);
    const m = /^\s*(-?\d+(?:\.\d*)?(?:e-?\d+)?)/i.exec(src);
    if (!m) continue;
    const v = Number(m[1]);
    const nv = v === 0 ? (r() - 0.5) * f : v * (1 + f * (2 * r() - 1));
    edits.push({ span: { start: l.value.span.start, end: l.value.span.start + m[0].length }, newText: String(Number(nv.toPrecision(6))) });
  }
  return applyEdits(text, edits);
}

const examples = exampleModels().map((m) => m.name); // subfolders too; parts files read beside the model

describe('Solve then Solve on perturbed guesses (property)', () => {
  for (const file of examples) {
    it(`${file}: every point, 8 random perturbations of ±20 %`, () => {
      const where = path.join(EXAMPLES, file);
      const analyze = (t: string) => analyzeFile(where, t);
      const base = fs.readFileSync(where, 'utf8');
      const a0 = analyze(base);
      const r = rng(0x5eed ^ file.length);
      let solvedRuns = 0;
      let runs = 0;
      for (const point of a0.pointNames) {
        if (!a0.point(point)?.ok) continue;
        for (let trial = 0; trial < 8; trial++) {
          runs++;
          const text = perturb(base, a0, point, r, 0.2);
          const a1 = analyze(text);
          const first = solveEdits(a1, point);
          if (!first.ok) continue; // a perturbation may leave the basin; the property is about what Solve writes
          solvedRuns++;
          const written = applyEdits(text, first.edits);
          const a2 = analyze(written);
          // the written text parses and checks without error
          expect(a2.diagnostics.filter((d) => d.severity === 'error'), `${file} ${point} #${trial}`).toEqual([]);
          const s1 = a1.point(point)!;
          const s2 = a2.point(point)!;
          expect(s2.ok, `${file} ${point} #${trial}: the written point solves`).toBe(true);
          // the same point to the digits written (4 significant digits): every unknown within 5e-4 relative
          for (const id of s1.unknowns) {
            const x = s1.values[id];
            const y = s2.values[id];
            expect(Math.abs(x - y), `${file} ${point} #${trial} ${a2.lowered.slots[id].name}`).toBeLessThanOrEqual(5e-4 * Math.max(Math.abs(x), Math.abs(a2.lowered.slots[id].scale) * 1e-6, 1e-300));
          }
          // a second Solve has nothing to write
          const second = solveEdits(a2, point);
          expect(second.ok && second.edits, `${file} ${point} #${trial}: second Solve`).toEqual([]);
        }
      }
      // the property must have been exercised: most perturbations solve
      expect(solvedRuns).toBeGreaterThanOrEqual(Math.ceil(0.75 * runs));
    });
  }
});

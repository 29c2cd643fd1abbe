/**
 * Reusable parts (server/src/core/semantics/elaborate.ts, server/src/core/pipeline/documents.ts): part
 * blocks, place lines with overrides, families of instances, qualified names, parts in other files read
 * through a SourceHost, and their diagnostics (in the file and on the line of the problem).
 *
 * Checks:
 * - A plant built from parts in two files equals the same plant written flat by hand, to the last digit
 *   (the point, A, B, C, D): the independent route.
 * - Outside reference for the same numbers: a tank drained through an outlet q = k·√h holds, at steady
 *   state with inflow q₀, the level h = (q₀/k)² (Torricelli's law, common practice in any fluid-mechanics
 *   or process-control text), and the linearised level equation has the pole −k/(2·area·√h) and passes
 *   k/(2·area'·√h) on to the tank it feeds (the derivative of k√h; common practice).
 */
import { describe, expect, it } from 'vitest';
import { analyzeDocuments, type Analysis } from '../server/src/core/pipeline/analysis';
import { resolvePath } from '../server/src/core/pipeline/documents';
import { memoryHost } from '../server/src/core/sources';
import { modelText } from '../server/src/core/present/modelText';
import { analyze } from '../server/src/core/pipeline/analysis';
import { dedent, solve, solveAnalysis } from './helpers/model';

import { LIB, PIPE, ROOT, partsModel, pipeFile, tankFile } from './helpers/partsModels';

/** The same plant written out by hand, element by element, in the names the parts model gets. */
const flatModel = dedent(`
  const n = 3
  input feed [m^3/s]
  const first.area = 2 [m^2]
  const first.k = 0.02 [m^2.5/s]
  var first.inflow [m^3/s]
  state first.level [m]
  var first.outflow [m^3/s]
  output first.level_cm [cm] = first.level
  first.area*first.level' = first.inflow - first.outflow
  first.outflow = first.k*sqrt(first.level)
  const link.delay_volume = 0.05 [m^3]
  var link.q_in [m^3/s]
  state link.held [m^3]
  var link.q_out [m^3/s]
  link.held' = link.q_in - link.q_out
  link.q_out = link.q_in*link.held/link.delay_volume
  const cell[1].area = 1.2 [m^2]
  const cell[1].k = 0.010 [m^2.5/s]
  var cell[1].inflow [m^3/s]
  state cell[1].level [m]
  var cell[1].outflow [m^3/s]
  output cell[1].level_cm [cm] = cell[1].level
  cell[1].area*cell[1].level' = cell[1].inflow - cell[1].outflow
  cell[1].outflow = cell[1].k*sqrt(cell[1].level)
  const cell[2].area = 1.2 [m^2]
  const cell[2].k = 0.012 [m^2.5/s]
  var cell[2].inflow [m^3/s]
  state cell[2].level [m]
  var cell[2].outflow [m^3/s]
  output cell[2].level_cm [cm] = cell[2].level
  cell[2].area*cell[2].level' = cell[2].inflow - cell[2].outflow
  cell[2].outflow = cell[2].k*sqrt(cell[2].level)
  const cell[3].area = 1.2 [m^2]
  const cell[3].k = 0.015 [m^2.5/s]
  var cell[3].inflow [m^3/s]
  state cell[3].level [m]
  var cell[3].outflow [m^3/s]
  output cell[3].level_cm [cm] = cell[3].level
  cell[3].area*cell[3].level' = cell[3].inflow - cell[3].outflow
  cell[3].outflow = cell[3].k*sqrt(cell[3].level)
  first.inflow = feed
  link.q_in = first.outflow
  cell[1].inflow = link.q_out
  cell[2].inflow = cell[1].outflow
  cell[3].inflow = cell[2].outflow
  output total [m] = first.level + (cell[1].level + cell[2].level + cell[3].level)

  point nominal:
    feed = 0.006 [m^3/s]
    first.level ~ 0.1 [m]
    link.held ~ 0.05 [m^3]
    cell[1].level ~ 0.3 [m]
    cell[2].level ~ 0.3 [m]
    cell[3].level ~ 0.3 [m]
`);

const plantHost = (model = partsModel, lib = tankFile, pipe = pipeFile) => memoryHost({ [ROOT]: model, [LIB]: lib, [PIPE]: pipe });
const plant = (model = partsModel, lib = tankFile, pipe = pipeFile): Analysis => analyzeDocuments(plantHost(model, lib, pipe), ROOT)!;

describe('a model built from parts in two files equals the same model written flat', () => {
  const parts = solveAnalysis(plant());
  const flat = solve(flatModel);

  it('reads the three documents', () => {
    expect(parts.a.documents.list.map((d) => d.uri)).toEqual([ROOT, LIB, PIPE]);
  });

  it('same names, point and A, B, C, D to the last digit', () => {
    expect(parts.lin.states).toEqual(flat.lin.states);
    expect(parts.lin.inputs).toEqual(flat.lin.inputs);
    expect(parts.lin.outputs).toEqual(flat.lin.outputs);
    expect(parts.lin.states).toEqual(['first.level', 'link.held', 'cell[1].level', 'cell[2].level', 'cell[3].level']);
    expect(parts.lin.inputs).toEqual(['feed']);
    for (const m of ['A', 'B', 'C', 'D'] as const) expect(Array.from(parts.lin[m])).toEqual(Array.from(flat.lin[m]));
    for (const v of parts.a.values(parts.sol)) expect(v.value).toBe(flat.value(v.name));
  });

  it('the levels and slopes Torricelli\'s law gives (outside reference)', () => {
    const q0 = 0.006;
    const ks = [0.01, 0.012, 0.015];
    // h = (q0/k)^2 (steady state of area*h' = q0 - k*sqrt(h))
    expect(parts.value('first.level')).toBeCloseTo((q0 / 0.02) ** 2, 12);
    ks.forEach((k, i) => expect(parts.value(`cell[${i + 1}].level`)).toBeCloseTo((q0 / k) ** 2, 12));
    // ∂(−k√h/area)/∂h = −k/(2·area·√h); the next tank receives +k/(2·area_next·√h)
    expect(parts.A('first.level', 'first.level')).toBeCloseTo(-0.02 / (2 * 2 * Math.sqrt((q0 / 0.02) ** 2)), 12);
    const h1 = (q0 / ks[0]) ** 2;
    expect(parts.A('cell[1].level', 'cell[1].level')).toBeCloseTo(-ks[0] / (2 * 1.2 * Math.sqrt(h1)), 12);
    expect(parts.A('cell[2].level', 'cell[1].level')).toBeCloseTo(ks[0] / (2 * 1.2 * Math.sqrt(h1)), 12);
    // the pipe holds q·V (steady state of held' = q − q·held/V means held = V)
    expect(parts.value('link.held')).toBeCloseTo(0.05, 12);
  });

  it('the expanded text reads back to the same linear model', () => {
    const text = modelText(plant().parsed.file);
    expect(text).toContain('state cell[2].level [m]');
    expect(text).not.toContain('part tank');
    const back = solve(text);
    for (const m of ['A', 'B', 'C', 'D'] as const) expect(Array.from(back.lin[m])).toEqual(Array.from(parts.lin[m]));
  });

  it('an untied input of a part is an input of the model; a tied one is a var', () => {
    const a = plant(partsModel.replace('first.inflow = feed\n', 'output spare [m^3/s] = feed\n'));
    expect(a.bound.inputs.map((s) => s.name)).toEqual(['feed', 'first.inflow']);
    expect(plant().bound.vars.map((s) => s.name)).toContain('first.inflow');
  });

  it('generated names are the qualified ones in the deviation equations', () => {
    const eqs = parts.a.deviationEquations('nominal')!.map((e) => e.text);
    expect(eqs.some((t) => t.startsWith("Δcell[2].level' ="))).toBe(true);
  });
});

describe('relative paths', () => {
  it.each([
    ['mem:/plant/model.poise', 'lib/tank.poise', 'mem:/plant/lib/tank.poise'],
    ['file:///home/u/plant/model.poise', '../shared/valve.poise', 'file:///home/u/shared/valve.poise'],
    ['/home/u/plant/model.poise', './lib/./t.poise', '/home/u/plant/lib/t.poise'],
    ['examples/feed_header/plant.poise', 'library/tank.poise', 'examples/feed_header/library/tank.poise'],
    ['model.poise', 'lib/t.poise', 'lib/t.poise'],
  ])('%s + %s', (base, rel, want) => expect(resolvePath(base, rel)).toBe(want));
});

/** Diagnostics as "file line:col-line:col CODE" (1-based), with related places. */
function where(a: Analysis) {
  return a.allDiagnostics().map((d) => {
    const w = a.where(d.span);
    const file = w.uri.replace(/^.*[/:]/, '');
    return {
      at: `${file} ${w.start.line + 1}:${w.start.character + 1}-${w.end.line + 1}:${w.end.character + 1}`,
      code: d.code,
      message: d.message,
      related: (d.related ?? []).map((r) => {
        const x = a.where(r.span);
        return `${x.uri.replace(/^.*[/:]/, '')} ${x.start.line + 1}:${x.start.character + 1}`;
      }),
    };
  });
}

describe('diagnostics of parts: in the right file, with exact ranges', () => {
  const files = (extra: Record<string, string>) => (model: string) => analyzeDocuments(memoryHost({ [ROOT]: dedent(model), [LIB]: tankFile, ...extra }), ROOT)!;
  const one = files({});
  void PIPE;

  it('a missing file: on the path, naming where it was looked for', () => {
    const d = where(one(`
      parts from "lib/tanks.poise"
      state x
      x' = -x
    `));
    expect(d[0]).toMatchObject({ at: 'model.poise 1:12-1:29', code: 'P255' });
    expect(d[0].message).toContain('mem:/plant/lib/tanks.poise');
  });

  it('files that bring each other in: on the line that closes the circle, in that file', () => {
    const a = analyzeDocuments(memoryHost({ [ROOT]: 'parts from "lib/a.poise"\n', 'mem:/plant/lib/a.poise': 'parts from "b.poise"\n', 'mem:/plant/lib/b.poise': 'parts from "../model.poise"\n' }), ROOT)!;
    const d = where(a).filter((x) => x.code === 'P256');
    expect(d).toHaveLength(1);
    expect(d[0].at).toBe('b.poise 1:12-1:28');
    expect(d[0].message).toContain('model.poise → a.poise → b.poise → model.poise');
  });

  it('a part defined twice: on the parts line, with both definitions as related places', () => {
    const d = where(one(`
      parts from "lib/tank.poise"
      part tank:
        state x
        x' = -x
      place tank as t
    `)).filter((x) => x.code === 'P257');
    expect(d).toHaveLength(1);
    expect(d[0].at).toBe('model.poise 1:12-1:28');
    expect(d[0].related).toEqual(['model.poise 2:6', 'tank.poise 2:6']);
  });

  it('a named part a file does not define; a folder without names', () => {
    const d = where(one(`
      parts tank, valve from "lib"
      parts from "lib"
    `));
    expect(d.find((x) => x.code === 'P255')).toMatchObject({ at: 'model.poise 1:13-1:18' });
    expect(d.find((x) => x.code === 'P259')).toMatchObject({ at: 'model.poise 2:12-2:17' });
    const e = where(one(`parts valve from "lib/tank.poise"\n`));
    expect(e.find((x) => x.code === 'P258')).toMatchObject({ at: 'model.poise 1:7-1:12' });
    expect(e.find((x) => x.code === 'P258')!.message).toContain('its parts are tank');
  });

  it('an unknown part, a constant the part does not have, a value given twice: at the use', () => {
    const d = where(one(`
      parts from "lib/tank.poise"
      place pump as p1
      place tank as t1 with aera = 2 [m^2], k = 0.02 [m^2.5/s], k = 0.03 [m^2.5/s]
      t1.inflow = 0.01 [m^3/s]
    `));
    expect(d.find((x) => x.code === 'P251')).toMatchObject({ at: 'model.poise 2:7-2:11' });
    const p253 = d.find((x) => x.code === 'P253')!;
    expect(p253.at).toBe('model.poise 3:23-3:27');
    expect(p253.message).toContain('its constants are area, k');
    expect(p253.related).toEqual(['tank.poise 2:6']);
    expect(d.find((x) => x.code === 'P254')).toMatchObject({ at: 'model.poise 3:59-3:60' });
  });

  it('a name a part does not declare: inside the part\'s file', () => {
    const lib = tankFile.replace('outflow = k*sqrt(level)', 'outflow = kk*sqrt(level)');
    const a = analyzeDocuments(memoryHost({ [ROOT]: 'parts from "lib/tank.poise"\nplace tank as t1\nt1.inflow = 0.01 [m^3/s]\n', [LIB]: lib }), ROOT)!;
    const d = where(a).filter((x) => x.code === 'P250');
    expect(d).toHaveLength(1);
    expect(d[0].at).toBe('tank.poise 10:13-10:15');
  });

  it('a syntax error in the part\'s file: in that file', () => {
    const lib = tankFile.replace('state level [m]', 'state level [m] level2');
    const d = where(analyzeDocuments(memoryHost({ [ROOT]: 'parts from "lib/tank.poise"\n', [LIB]: lib }), ROOT)!);
    expect(d.find((x) => x.code === 'P101')).toMatchObject({ at: 'tank.poise 6:19-6:25' });
  });

  it('a use that leaves an input of the part without value is unbalanced at the use, the part\'s line related', () => {
    const lib = tankFile.replace('var outflow [m^3/s]', 'var outflow, spill [m^3/s]');
    const a = analyzeDocuments(memoryHost({ [ROOT]: 'parts from "lib/tank.poise"\nplace tank as t1\nt1.inflow = 0.01 [m^3/s]\n', [LIB]: lib }), ROOT)!;
    const d = where(a).find((x) => x.code === 'P403')!;
    expect(d.message).toContain('t1.spill');
    expect(d.at).toBe('model.poise 2:15-2:17');
    expect(d.related[0]).toBe('tank.poise 7:16');
  });

  it('a part placing itself; an instance used as a value; an instance index outside the family', () => {
    const d = where(analyze(dedent(`
      part loop:
        state x
        x' = -x
        place loop as inner
      part cellp:
        state h
        h' = -h
      place loop as l1
      place cellp as c[1..3]
      state y
      y' = -y + c[4].h + c
    `)));
    expect(d.find((x) => x.code === 'P252')!.at).toBe('model.poise 4:9-4:13');
    expect(d.find((x) => x.code === 'P233')!.at).toBe('model.poise 11:13-11:14');
    const e = where(analyze(dedent(`
      part cellp:
        state h
        h' = -h
      place cellp as c[1..3]
      place cellp as one
      state y
      y' = -y + one
    `)));
    expect(e.find((x) => x.code === 'P261')).toMatchObject({ at: 'model.poise 7:11-7:14' });
    expect(e.find((x) => x.code === 'P261')!.message).toBe('"one" is an instance of part "cellp", not a value: name one of its members, e.g. one.h.');
  });

  it('a point or a part inside a part is a syntax error on that line', () => {
    const d = where(analyze(dedent(`
      part p:
        state x
        x' = -x
        point q:
    `)));
    expect(d.find((x) => x.code === 'P135')).toMatchObject({ at: 'model.poise 4:3-4:11' });
  });

  it('a part that nothing places is still checked for names and units', () => {
    const d = where(analyze(dedent(`
      part p:
        input u [m]
        state x [s]
        x' = u + y
    `)));
    expect(d.map((x) => x.code).sort()).toEqual(['P250', 'P302']);
  });
});

describe('the example of docs/language.md', () => {
  it('solves, each tank at the level Torricelli\'s law gives for its outlet', async () => {
    const fs = await import('fs');
    const path = await import('path');
    const doc = fs.readFileSync(path.join(__dirname, '..', 'docs', 'language.md'), 'utf8');
    const at = doc.indexOf('## Parts: pieces of model used many times');
    const start = doc.indexOf('```', at) + 4;
    const s = solve(doc.slice(start, doc.indexOf('```', start)));
    // h = (q/k)^2 with q = 0.01 m^3/s through every tank of the chain (common practice)
    expect(s.value('first.level')).toBeCloseTo((0.01 / 0.004) ** 2, 10);
    [4, 4.5, 5, 5.5].forEach((k, i) => expect(s.value(`cell[${i + 1}].level`)).toBeCloseTo((0.01 / (k * 1e-3)) ** 2, 10));
  });
});

describe('editor services on parts', () => {
  it('hover: a qualified name names its declaration in the parts file; a part\'s name lists its names and instances', async () => {
    const { hover } = await import('../server/src/core/services/hover');
    const a = plant();
    const h = hover(a, a.text.indexOf('first.level ~') + 8)!;
    expect(h.markdown).toContain('**state** `first.level` [m] — declared on line 6 of tank.poise');
    const p = hover(a, a.text.indexOf('place pipe') + 7)!;
    expect(p.markdown).toContain('**part** `pipe` — defined on line 1 of pipe.poise');
    expect(p.markdown).toContain('Placed as `link`.');
  });

  it('outline: one item per family, instances with their part', async () => {
    const { documentOutline } = await import('../server/src/core/services/symbols');
    const o = documentOutline(analyze(dedent(`
      part cellp:
        state h
        h' = -h
      const n = 3
      state x[1..n]
      each i in 1..n: x[i]' = -x[i]
      place cellp as c[1..n]
    `)));
    expect(o.find((g) => g.name === 'States')!.children!.map((c) => c.name)).toEqual(['x[1..3]']);
    expect(o.find((g) => g.name === 'Parts')!.children!.map((c) => c.name)).toEqual(['cellp']);
    expect(o.find((g) => g.name === 'Instances')!.children!.map((c) => [c.name, c.detail])).toEqual([['c[1..3]', 'cellp ×3']]);
    expect(o.find((g) => g.name === 'Equations')!.children).toHaveLength(1);
  });

  it('rename of a name inside a local part renames every use, qualified ones included', async () => {
    const { rename } = await import('../server/src/core/services/navigation');
    const { applyEdits } = await import('../server/src/core/services/edits');
    const text = dedent(`
      part cellp:
        const rate = 2 [1/s]
        state h
        h' = -rate*h
      place cellp as c[1..2] with rate = {1, 3} [1/s]
      place cellp as one
      output total = c[1].h + c[2].h + one.h
      point p:
        c.h ~ 1
    `);
    const a = analyze(text);
    const r = rename(a, text.indexOf('state h') + 6, 'level');
    expect(r.ok).toBe(true);
    const out = applyEdits(text, r.ok ? r.edits : []);
    expect(out).toContain("level' = -rate*level");
    expect(out).toContain('output total = c[1].level + c[2].level + one.level');
    expect(out).toContain('  c.level ~ 1');
    const r2 = rename(a, text.indexOf('with rate') + 6, 'k');
    const out2 = applyEdits(text, r2.ok ? r2.edits : []);
    expect(out2).toContain('const k = 2 [1/s]');
    expect(out2).toContain("h' = -k*h");
    expect(out2).toContain('with k = {1, 3} [1/s]');
    expect(analyze(out2).allDiagnostics().filter((d) => d.severity === 'error')).toEqual([]);
  });
});

describe('Solve and Linearize on the parts example write valid blocks in the qualified names', () => {
  it('examples/feed_header: the solved point and the generated block read back without problems', async () => {
    const fs = await import('fs');
    const path = await import('path');
    const { linearizeEdit } = await import('../server/src/core/services/linearBlock');
    const { solveEdits } = await import('../server/src/core/services/solve');
    const { applyEdits } = await import('../server/src/core/services/edits');
    const dir = path.join(__dirname, '..', 'examples', 'feed_header');
    const host = { read: (u: string) => (u.startsWith('ex:/') ? fs.readFileSync(path.join(dir, u.slice(4)), 'utf8') : undefined) };
    let a = analyzeDocuments(host, 'ex:/plant.poise')!;
    const se = solveEdits(a, 'design');
    expect(se.ok).toBe(true);
    a = a.withText(applyEdits(a.text, se.ok ? se.edits : []));
    expect(a.text).toContain('  t.level ~ {0.3197, 0.273, 0.229, 0.188} [m]');
    const e = linearizeEdit(a, 'design');
    expect(e.ok).toBe(true);
    const b = a.withText(applyEdits(a.text, e.ok ? [e.edit] : []));
    expect(b.text).toContain("  Δt[1].level' = -0.001929*Δt[1].level");
    expect(b.text).toContain('  at v[4].p_down = 1841 [Pa]');
    expect(b.allDiagnostics()).toEqual([]);
    // the block's coefficients are the linear model's (the same numbers by the route of A itself)
    const lin = b.linear('design')!;
    expect(lin.A[0]).toBeCloseTo(-0.001929, 6);
  });
});

describe('parts inside parts', () => {
  const text = dedent(`
      part tank:
        const k = 0.01 [m^2.5/s]
        input inflow [m^3/s]
        state level [m]
        var outflow [m^3/s]
        1 [m^2]*level' = inflow - outflow
        outflow = k*sqrt(level)
      part pair:
        const k2 = 0.02 [m^2.5/s]
        input feed [m^3/s]
        var out [m^3/s]
        place tank as c[1..2] with k = {k2, 2*k2}
        c[1].inflow = feed
        c[2].inflow = c[1].outflow
        out = c[2].outflow
      input q [m^3/s]
      place pair as p[1..2] with k2 = {0.01, 0.02} [m^2.5/s]
      place pair as solo
      p[1].feed = q
      p[2].feed = p[1].out
      solo.feed = p[2].out
      point x:
        q = 0.01 [m^3/s]
        p.c.level ~ 1 [m]
        solo.c[2].level ~ 0.5 [m]
  `);
  it('a family of instances of a part that places a family of instances: names, levels (Torricelli) and the expanded text', () => {
    const s = solve(text);
    expect(s.lin.states).toEqual(['p[1].c[1].level', 'p[1].c[2].level', 'p[2].c[1].level', 'p[2].c[2].level', 'solo.c[1].level', 'solo.c[2].level']);
    // h = (q/k)^2 with the k each instance gets: k2 from the outer place line, k = {k2, 2*k2} from the inner one
    const ks = [0.01, 0.02, 0.02, 0.04, 0.02, 0.04];
    s.lin.states.forEach((n, i) => expect(s.value(n)).toBeCloseTo((0.01 / ks[i]) ** 2, 10));
    const back = solve(modelText(s.a.parsed.file));
    for (const m of ['A', 'B', 'C', 'D'] as const) expect(Array.from(back.lin[m])).toEqual(Array.from(s.lin[m]));
  });
});

describe('folding', () => {
  it('a part block folds from its header to its last line', async () => {
    const { foldingRanges } = await import('../server/src/core/services/folding');
    const f = foldingRanges(analyze(dedent(`
      part cellp:
        state h
        h' = -h
      place cellp as one
    `)));
    expect(f).toEqual([{ startLine: 0, endLine: 2, kind: 'region' }]);
  });
});

/**
 * Parts through the real language server over stdio: a model that brings in a parts file from the disk,
 * the file opened and edited in the editor (the model is analysed again and shows the problem on its parts
 * line with the exact place as related information), definition and references across the two files,
 * rename of a part's name in both, completion after an instance's dot, the outline, and poise/expanded.
 * Positions are read off the texts by hand.
 */
import * as fs from 'fs';
import * as path from 'path';
import { pathToFileURL } from 'url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CompletionList, DocumentSymbol, Location, WorkspaceEdit } from 'vscode-languageserver-protocol';
import { scratchDir } from '../helpers/cli';
import { dedent } from '../helpers/model';
import { startSession, type Session } from './session';

let s: Session;
let dir = '';
let modelUri = '';
let libUri = '';

const lib = dedent(`
  part tank:
    const area = 1.2 [m^2]
    const k = 0.01 [m^2.5/s]
    input inflow [m^3/s]
    state level [m]
    var outflow [m^3/s]
    area*level' = inflow - outflow
    outflow = k*sqrt(level)
`);

const model = dedent(`
  parts from "lib/tank.poise"
  input feed [m^3/s]
  place tank as t1 with area = 2 [m^2]
  place tank as cell[1..3]
  t1.inflow = feed
  cell[1].inflow = t1.outflow
  each i in 2..3: cell[i].inflow = cell[i-1].outflow
  output total [m] = t1.level + sum(each i in 1..3: cell[i].level)

  point nominal:
    feed = 0.01 [m^3/s]
    t1.level ~ 1 [m]
    cell.level ~ 1 [m]
`);

beforeAll(async () => {
  dir = scratchDir('lsp-parts');
  fs.mkdirSync(path.join(dir, 'lib'));
  fs.writeFileSync(path.join(dir, 'lib', 'tank.poise'), lib);
  fs.writeFileSync(path.join(dir, 'plant.poise'), model);
  modelUri = pathToFileURL(path.join(dir, 'plant.poise')).href;
  libUri = pathToFileURL(path.join(dir, 'lib', 'tank.poise')).href;
  s = await startSession({ settings: { digits: 4, activePoint: '', warnUnused: true } });
}, 300_000);
afterAll(async () => {
  await s?.shutdown();
  fs.rmSync(dir, { recursive: true, force: true });
});

const td = (uri: string) => ({ textDocument: { uri } });

describe('a model with parts from a file on the disk', () => {
  it('is analysed with the parts file read from the disk: no problems', async () => {
    expect(await s.open(modelUri, model)).toEqual([]);
  });

  it('editing the parts file in the editor analyses the model again; the problem shows on the parts line, the place related', async () => {
    await s.open(libUri, lib);
    const before = s.published.get(modelUri)!.length;
    await s.change(libUri, lib.replace('outflow = k*sqrt(level)', 'outflow = kk*sqrt(level)'));
    const ds = await s.until(() => {
      const list = s.published.get(modelUri)!;
      return list.length > before && list[list.length - 1].params.diagnostics.length ? list[list.length - 1].params.diagnostics : undefined;
    }, 20000, 'the model analysed again');
    const d = ds.find((x) => x.code === 'P250')!;
    expect(d.range).toEqual({ start: { line: 0, character: 0 }, end: { line: 0, character: 27 } });
    expect(d.message).toMatch(/^tank\.poise:8: "kk" is not declared in part "tank"/);
    expect(d.relatedInformation![0].location).toEqual({ uri: libUri, range: { start: { line: 7, character: 12 }, end: { line: 7, character: 14 } } });
    // the parts file itself, opened alone, shows the problem at its place
    const own = await s.diagnostics(libUri);
    expect(own.find((x) => x.code === 'P250')!.range).toEqual({ start: { line: 7, character: 12 }, end: { line: 7, character: 14 } });
    // put right again: the model is clean again
    const n = s.published.get(modelUri)!.length;
    await s.change(libUri, lib);
    await s.until(() => {
      const list = s.published.get(modelUri)!;
      return list.length > n && list[list.length - 1].params.diagnostics.length === 0 ? true : undefined;
    }, 20000, 'the model clean again');
  });

  it('go to definition of t1.level lands on the declaration in the parts file', async () => {
    const def = await s.request<Location[]>('textDocument/definition', { ...td(modelUri), position: s.pos(modelUri, 't1.level +', 4) });
    expect(def).toEqual([{ uri: libUri, range: { start: { line: 4, character: 8 }, end: { line: 4, character: 13 } } }]);
  });

  it('references of level: the declaration and uses in the part, and every qualified use in the model', async () => {
    const refs = await s.request<Location[]>('textDocument/references', { ...td(modelUri), position: s.pos(modelUri, 't1.level +', 5), context: { includeDeclaration: true } });
    const inLib = refs.filter((r) => r.uri === libUri).map((r) => r.range.start);
    const inModel = refs.filter((r) => r.uri === modelUri).map((r) => r.range.start);
    // lib: "state level" (line 5), "area*level'" (line 7), "sqrt(level)" (line 8)
    expect(inLib).toEqual([{ line: 4, character: 8 }, { line: 6, character: 7 }, { line: 7, character: 19 }]);
    // model: t1.level and cell[i].level in the output, t1.level and cell.level in the point
    expect(inModel).toEqual(expect.arrayContaining([s.pos(modelUri, 't1.level +', 3), s.pos(modelUri, 'cell[i].level)', 8), s.pos(modelUri, 't1.level ~', 3), s.pos(modelUri, 'cell.level ~', 5)]));
    expect(inModel).toHaveLength(4);
  });

  it('rename of level from the model renames it in the part file too', async () => {
    const edit = await s.request<WorkspaceEdit>('textDocument/rename', { ...td(modelUri), position: s.pos(modelUri, 't1.level +', 5), newName: 'height' });
    expect(await s.applyWorkspaceEdit(edit)).toBe(true);
    expect(s.text(libUri)).toContain('state height [m]');
    expect(s.text(libUri)).toContain("area*height' = inflow - outflow");
    expect(s.text(modelUri)).toContain('output total [m] = t1.height + sum(each i in 1..3: cell[i].height)');
    expect(s.text(modelUri)).toContain('  cell.height ~ 1 [m]');
    await s.until(() => {
      const list = s.published.get(modelUri)!;
      const last = list[list.length - 1].params;
      return last.version === s.docs.get(modelUri)!.version && last.diagnostics.length === 0 ? true : undefined;
    }, 20000, 'the renamed model clean');
  });

  it('completion after an instance and a dot: the names of its part', async () => {
    await s.change(modelUri, s.text(modelUri) + 'output probe [m^3/s] = cell[2].\n');
    const r = await s.request<CompletionList>('textDocument/completion', { ...td(modelUri), position: s.pos(modelUri, 'cell[2].\n', 8) });
    expect(r.items.map((i) => i.label).sort()).toEqual(['area', 'height', 'inflow', 'k', 'outflow']);
    expect(r.items.find((i) => i.label === 'height')!.detail).toBe('state [m] of part tank');
  });

  it('the outline lists the instances with their part', async () => {
    const syms = await s.request<DocumentSymbol[]>('textDocument/documentSymbol', td(modelUri));
    const inst = syms.find((x) => x.name === 'Instances')!;
    expect(inst.children!.map((c) => [c.name, c.detail])).toEqual([['t1', 'tank with area'], ['cell[1..3]', 'tank ×3']]);
    expect(syms.find((x) => x.name === 'States')).toBeUndefined(); // the model's own states: none; the instances' are under them
  });

  it('poise/expanded: the flat model, read-only text', async () => {
    const r = await s.request<{ text: string }>('poise/expanded', { uri: modelUri });
    expect(r.text).toContain('state cell[3].height [m]');
    expect(r.text).toContain('var t1.inflow [m^3/s]');
    expect(r.text).not.toContain('place tank');
  });

  it('a large model of parts (its points solved in the worker) gets the parts file too', async () => {
    const big = pathToFileURL(path.join(dir, 'big.poise')).href;
    const text = 'parts from "lib/tank.poise"\ninput feed [m^3/s]\nplace tank as t[1..120]\nt[1].inflow = feed\neach i in 2..120: t[i].inflow = t[i-1].outflow\n\npoint nominal:\n  feed = 0.01 [m^3/s]\n  t.height ~ 1 [m]\n';
    const ds = await s.open(big, text);
    expect(ds).toEqual([]);
    // a hover asks for the solved point: in the worker, which needs the parts file's text
    const h = await s.hover(big, s.pos(big, 't.height ~', 3));
    // a line for the whole family of instances: the first instance's name and its solved value
    expect(h!.contents.value).toContain('**state** `t[1].height` [m] — declared on line 5 of tank.poise');
    expect(h!.contents.value).toMatch(/\| nominal \| 1 m \| solved \|/);
    const h2 = await s.hover(big, s.pos(big, 't[1].inflow', 6));
    expect(h2!.contents.value).toContain('**var** `t[1].inflow` [m^3/s]');
    expect(h2!.contents.value).toMatch(/\| nominal \| 0\.01 m\^3\/s \| solved \|/);
  });

  it('a parts file changed on the disk (not open): the models that bring it in are analysed again', async () => {
    const pumpFile = path.join(dir, 'lib', 'pump.poise');
    const pump = 'part pump:\n  input speed\n  var q [m^3/s]\n  q = 0.01 [m^3/s]*speed\n';
    fs.writeFileSync(pumpFile, pump);
    const m2 = pathToFileURL(path.join(dir, 'm2.poise')).href;
    expect(await s.open(m2, 'parts pump from "lib"\nplace pump as p1\noutput flow [m^3/s] = p1.q\n')).toEqual([]);
    const n = s.published.get(m2)!.length;
    fs.writeFileSync(pumpFile, pump.replace('*speed', '*sped'));
    await s.conn.sendNotification('workspace/didChangeWatchedFiles', { changes: [{ uri: pathToFileURL(pumpFile).href, type: 2 }] });
    const ds = await s.until(() => {
      const list = s.published.get(m2)!;
      return list.length > n ? list[list.length - 1].params.diagnostics : undefined;
    }, 20000, 'm2 analysed again');
    const d = ds.find((x) => x.code === 'P250')!;
    expect(d.range.start.line).toBe(0);
    expect(d.message).toMatch(/^pump\.poise:4: "sped" is not declared in part "pump"/);
    expect(d.relatedInformation![0].location.uri).toBe(pathToFileURL(pumpFile).href);
  });
});


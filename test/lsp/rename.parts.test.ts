/**
 * Rename through parts and families over the real language server (stdio):
 * - a part's variable renamed from the part's own file (a file of the library opened beside the model):
 *   the part's file and every open model that places the part change together;
 * - an instance name (`place tank as cell[1..3]` → rename `cell`) renames the place line and every
 *   qualified use (`cell[i].level`, `cell.level` in a point, a sweep's `vary`), and nothing else — the
 *   index brackets and member names stay;
 * - a family's name renamed from one element (`h[2]`) keeps the brackets;
 * - a cursor on an element's index is refused with a message saying where to put it.
 * After each rename the models are analysed again without problems (the independent check that the edit
 * is consistent). Positions are read off the texts by hand.
 */
import * as fs from 'fs';
import * as path from 'path';
import { pathToFileURL } from 'url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { WorkspaceEdit } from 'vscode-languageserver-protocol';
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
  parts tank from "lib/tank.poise"
  input feed [m^3/s]
  state h[1..2] [m]
  place tank as cell[1..3]
  cell[1].inflow = feed
  each i in 2..3: cell[i].inflow = cell[i-1].outflow
  h[1]' = (cell[3].level - h[1])/(10 [s])   # cell[3] lags
  h[2]' = (h[1] - h[2])/(10 [s])
  output total [m] = sum(each i in 1..3: cell[i].level)

  point nominal:
    feed = 0.01 [m^3/s]
    cell.level ~ 1 [m]
    h ~ 1 [m]

  sweep more from nominal:
    vary feed = 0.01 to 0.012 steps 3
`);

beforeAll(async () => {
  dir = scratchDir('lsp-rename-parts');
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
const clean = (uri: string, what: string) => s.until(() => {
  const list = s.published.get(uri)!;
  const last = list[list.length - 1].params;
  return last.version === s.docs.get(uri)!.version && last.diagnostics.length === 0 ? true : undefined;
}, 20000, what);

describe('rename through parts, instances and families', () => {
  it('opens the model and the part\'s file without problems', async () => {
    expect(await s.open(modelUri, model)).toEqual([]);
    expect(await s.open(libUri, lib)).toEqual([]);
  });

  it('a part\'s variable renamed in the part\'s own file renames its qualified uses in the open model', async () => {
    const edit = await s.request<WorkspaceEdit>('textDocument/rename', { ...td(libUri), position: s.pos(libUri, 'state level', 6), newName: 'height' });
    expect(await s.applyWorkspaceEdit(edit)).toBe(true);
    expect(s.text(libUri)).toContain('state height [m]');
    expect(s.text(libUri)).toContain('outflow = k*sqrt(height)');
    expect(s.text(modelUri)).toContain("h[1]' = (cell[3].height - h[1])/(10 [s])   # cell[3] lags");
    expect(s.text(modelUri)).toContain('output total [m] = sum(each i in 1..3: cell[i].height)');
    expect(s.text(modelUri)).toContain('  cell.height ~ 1 [m]');
    await clean(modelUri, 'the model clean after renaming level');
  });

  it('an instance name renamed from a qualified use: the place line and every qualified use, comments untouched', async () => {
    const prep = await s.request<{ range: unknown; placeholder: string }>('textDocument/prepareRename', { ...td(modelUri), position: s.pos(modelUri, 'cell[i-1].outflow', 1) });
    expect(prep.placeholder).toBe('cell');
    const edit = await s.request<WorkspaceEdit>('textDocument/rename', { ...td(modelUri), position: s.pos(modelUri, 'cell[i-1].outflow', 1), newName: 'tk' });
    expect(await s.applyWorkspaceEdit(edit)).toBe(true);
    expect(s.text(modelUri)).toBe(dedent(`
      parts tank from "lib/tank.poise"
      input feed [m^3/s]
      state h[1..2] [m]
      place tank as tk[1..3]
      tk[1].inflow = feed
      each i in 2..3: tk[i].inflow = tk[i-1].outflow
      h[1]' = (tk[3].height - h[1])/(10 [s])   # cell[3] lags
      h[2]' = (h[1] - h[2])/(10 [s])
      output total [m] = sum(each i in 1..3: tk[i].height)

      point nominal:
        feed = 0.01 [m^3/s]
        tk.height ~ 1 [m]
        h ~ 1 [m]

      sweep more from nominal:
        vary feed = 0.01 to 0.012 steps 3
    `));
    expect(s.text(libUri)).not.toContain('tk'); // the part's file is not the instance's
    await clean(modelUri, 'the model clean after renaming the instance');
  });

  it('a family renamed from one element keeps the brackets; references of it are every written h', async () => {
    const refs = await s.request<unknown[]>('textDocument/references', { ...td(modelUri), position: s.pos(modelUri, "h[2]' =", 0), context: { includeDeclaration: true } });
    expect(refs).toHaveLength(7); // state h[..], h[1]' and h[1] (twice), h[2]' and h[2], h in the point
    const edit = await s.request<WorkspaceEdit>('textDocument/rename', { ...td(modelUri), position: s.pos(modelUri, "h[2]' =", 0), newName: 'lag' });
    expect(await s.applyWorkspaceEdit(edit)).toBe(true);
    expect(s.text(modelUri)).toContain('state lag[1..2] [m]');
    expect(s.text(modelUri)).toContain("lag[1]' = (tk[3].height - lag[1])/(10 [s])");
    expect(s.text(modelUri)).toContain("lag[2]' = (lag[1] - lag[2])/(10 [s])");
    expect(s.text(modelUri)).toContain('  lag ~ 1 [m]');
    await clean(modelUri, 'the model clean after renaming the family');
  });

  it('a cursor on an element\'s index is refused, saying where to put it', async () => {
    await expect(s.request('textDocument/rename', { ...td(modelUri), position: s.pos(modelUri, "lag[2]' =", 4), newName: 'x' })).rejects.toThrow(/family's or instance's name/);
  });
});

/**
 * A problem inside a parts file is published in that file too, at its exact place (issue: every
 * diagnostic points at the file and line where the problem is), through the real server over stdio:
 * the parts file read from the disk (not open) gets the problem at its range with the model's `parts` line
 * as related information; the model keeps it on its `parts` line; put right on the disk, the file's list is
 * cleared; opened in the editor, the file shows each problem once (its own analysis and the model's agree);
 * closing the model ends what it lent. Positions are read off the texts by hand.
 */
import * as fs from 'fs';
import * as path from 'path';
import { pathToFileURL } from 'url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { scratchDir } from '../helpers/cli';
import { dedent } from '../helpers/model';
import { startSession, type Session } from './session';

let s: Session;
let dir = '';
let modelUri = '';
let libUri = '';
let libFile = '';

const lib = dedent(`
  part tank:
    const area = 1.2 [m^2]
    const k = 0.01 [m^2.5/s]
    input inflow [m^3/s]
    state level [m]
    var outflow [m^3/s]
    area*level' = inflow - outflow
    outflow = kk*sqrt(level)
`);

const model = dedent(`
  parts from "lib/tank.poise"
  input feed [m^3/s]
  place tank as t1
  t1.inflow = feed

  point nominal:
    feed = 0.01 [m^3/s]
    t1.level ~ 1 [m]
`);

/** `kk` on line 8 (0-based 7) of the parts file. */
const KK = { start: { line: 7, character: 12 }, end: { line: 7, character: 14 } };
/** `k` in `const k = …` on line 3 (0-based 2). */
const K_DECL = { start: { line: 2, character: 8 }, end: { line: 2, character: 9 } };
const PARTS_LINE = { start: { line: 0, character: 0 }, end: { line: 0, character: 27 } };

beforeAll(async () => {
  dir = scratchDir('lsp-part-diagnostics');
  fs.mkdirSync(path.join(dir, 'lib'));
  libFile = path.join(dir, 'lib', 'tank.poise');
  fs.writeFileSync(libFile, lib);
  fs.writeFileSync(path.join(dir, 'plant.poise'), model);
  modelUri = pathToFileURL(path.join(dir, 'plant.poise')).href;
  libUri = pathToFileURL(libFile).href;
  s = await startSession({ settings: { digits: 4, activePoint: '', warnUnused: true } });
}, 300_000);
afterAll(async () => {
  await s?.shutdown();
  fs.rmSync(dir, { recursive: true, force: true });
});

const lastOf = (uri: string) => s.published.get(uri)?.at(-1)?.params;

describe('a problem inside a parts file', () => {
  it('is published in the parts file (not open) at its place, and on the model’s parts line', async () => {
    const ds = await s.open(modelUri, model);
    const use = ds.find((d) => d.code === 'P250')!;
    expect(use.range).toEqual(PARTS_LINE);
    expect(use.message).toMatch(/^tank\.poise:8: "kk" is not declared/);
    expect(use.relatedInformation![0].location).toEqual({ uri: libUri, range: KK });
    const own = await s.until(() => lastOf(libUri)?.diagnostics, 20000, 'the parts file’s diagnostics');
    // kk is not declared, and so k is never used: both lie in the part
    expect(own.map((d) => [d.code, d.range])).toEqual([['P203', K_DECL], ['P250', KK]]);
    expect(own[1].message).toMatch(/^"kk" is not declared/);
    expect(own[1].relatedInformation![0]).toEqual({ location: { uri: modelUri, range: PARTS_LINE }, message: 'brought in by plant.poise' });
  });

  it('put right on the disk: the parts file’s list is cleared, and the model’s', async () => {
    const n = s.published.get(libUri)!.length;
    fs.writeFileSync(libFile, lib.replace('kk*sqrt', 'k*sqrt'));
    await s.conn.sendNotification('workspace/didChangeWatchedFiles', { changes: [{ uri: libUri, type: 2 }] });
    await s.until(() => (s.published.get(libUri)!.length > n && lastOf(libUri)!.diagnostics.length === 0 ? true : undefined), 20000, 'the parts file cleared');
    await s.until(() => (lastOf(modelUri)!.diagnostics.length === 0 ? true : undefined), 20000, 'the model clean');
  });

  it('opened and broken in the editor: each problem once in the file; closing the model ends its loan', async () => {
    const fixed = lib.replace('kk*sqrt', 'k*sqrt');
    await s.open(libUri, fixed);
    const v = await s.change(libUri, fixed.replace('outflow = k*sqrt', 'outflow = kk*sqrt'));
    // the model is analysed again, then lends its problem: still one P250 in the file's list
    await s.until(() => lastOf(modelUri)!.diagnostics.find((d) => d.code === 'P250'), 20000, 'the model sees the problem');
    const own = await s.until(() => (lastOf(libUri)?.version === v ? lastOf(libUri)!.diagnostics : undefined), 20000, 'the file’s own');
    expect(own.filter((d) => d.code === 'P250').map((d) => d.range)).toEqual([KK]);
    await s.closeDoc(modelUri);
    await s.until(() => (lastOf(modelUri)!.diagnostics.length === 0 ? true : undefined), 20000, 'the model cleared');
    // the file's own analysis still says it, once
    expect(lastOf(libUri)!.diagnostics.filter((d) => d.code === 'P250').map((d) => d.range)).toEqual([KK]);
    // put right in the editor: cleared
    const v2 = await s.change(libUri, fixed);
    await s.until(() => (lastOf(libUri)?.version === v2 && lastOf(libUri)!.diagnostics.length === 0 ? true : undefined), 20000, 'the file clean');
  });

  it('closing the model clears what it lent to a parts file that is not open', async () => {
    await s.closeDoc(libUri);
    fs.writeFileSync(libFile, lib);
    await s.open(modelUri, model);
    await s.until(() => (lastOf(libUri)!.diagnostics.some((d) => d.code === 'P250') ? true : undefined), 20000, 'lent again');
    await s.closeDoc(modelUri);
    await s.until(() => (lastOf(libUri)!.diagnostics.length === 0 ? true : undefined), 20000, 'the loan ended');
  });
});

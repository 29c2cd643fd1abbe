/**
 * Code lenses, the Solve and Linearize commands and the stale-block quick fix, through the real server
 * over stdio. The edits arrive as `workspace/applyEdit` requests; the test client applies them to its copy
 * of the document and sends the change back, as an editor does.
 *
 * Expected values are derived by hand from the model text (steady state: every derivative zero; the
 * derivative of a square root) or read from the reference linear models in ../shared/reference, which
 * were computed outside this project (SymPy/mpmath/NumPy; see its README).
 */
import * as fs from 'fs';
import * as path from 'path';
import { pathToFileURL } from 'url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeAction, CodeLens, Diagnostic } from 'vscode-languageserver-protocol';
import { analyze, analyzeDocuments } from '../../server/src/core/pipeline/analysis';
import { cliSources } from '../../server/src/cli/sourceHost';
import { EXAMPLES, REFERENCE } from '../helpers/cli';
import { readReferenceFile } from '../helpers/reference';
import { readBlock } from './blocks';
import { startSession, uriOf, type Session } from './session';
import { exampleModels } from '../helpers/examples';

let s: Session;
beforeAll(async () => {
  s = await startSession({ settings: { digits: 4 } });
});
afterAll(async () => {
  await s?.shutdown();
});

const BUFFER = fs.readFileSync(path.join(EXAMPLES, 'buffer_tank.poise'), 'utf8');

const lenses = (uri: string) => s.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } });
const exec = (command: string, uri: string, point: string) =>
  s.request<{ applied: boolean; edits?: number; message?: string }>('workspace/executeCommand', { command, arguments: [uri, point] });
const solve = (uri: string, point: string) => exec('poise.server.solvePoint', uri, point);
const linearize = (uri: string, point: string) => exec('poise.server.linearizePoint', uri, point);
const titles = async (uri: string, point: string) => (await lenses(uri)).filter((l) => l.command?.arguments?.[1] === point).map((l) => l.command!.title);

/** Rounds to `digits` significant digits, as the block prints them. */
const printed = (v: number, digits = 4) => (v === 0 ? 0 : Number(v.toPrecision(digits)));

describe('code lenses above each point header', () => {
  it('offer Solve, Linearize, Report and Sweep… with [uri, point] arguments', async () => {
    const uri = uriOf('lenses-buffer.poise');
    await s.open(uri, BUFFER);
    const ls = await lenses(uri);
    expect(ls).toHaveLength(8);
    for (const point of ['dry_day', 'cloudburst']) {
      const mine = ls.filter((l) => l.command?.arguments?.[1] === point);
      expect(mine.map((l) => [l.command!.title, l.command!.command])).toEqual([
        ['Solve', 'poise.server.solvePoint'],
        ['Linearize', 'poise.server.linearizePoint'],
        ['Report', 'poise.openReport'],
        ['Sweep…', 'poise.sweep'],
      ]);
      const header = s.pos(uri, `point ${point}:`);
      for (const l of mine) {
        expect(l.range.start).toEqual(header);
        expect(l.command!.arguments).toEqual([uri, point]);
      }
    }
    // the server declares exactly the two server-side commands
    expect(s.init.capabilities.executeCommandProvider?.commands).toEqual(['poise.server.solvePoint', 'poise.server.linearizePoint']);
  });

  it('say why a point cannot be solved', async () => {
    // level, inflow and opening all fixed: 3 equations (two model equations and the output) for the
    // 2 unknowns left (outflow, level_cm) — counted by hand from the text
    const uri = uriOf('lenses-unbalanced.poise');
    await s.open(uri, BUFFER.replace('level ~ 0.5 [m]', 'level = 0.5 [m]'));
    expect((await titles(uri, 'dry_day'))[0]).toBe('✗ Cannot solve: unbalanced (3 equations, 2 unknowns)');
    expect((await titles(uri, 'cloudburst'))[0]).toBe('Solve');
    const r = await solve(uri, 'dry_day');
    expect(r.applied).toBe(false);
    await s.until(() => s.messages.find((m) => m.type === 1 && /dry_day/.test(m.message)), 5000, 'an error message');
    // a model with errors
    const bad = uriOf('lenses-error.poise');
    await s.open(bad, BUFFER.replace('outflow = opening*cv*sqrt(level)', 'outflow = opening*cv*sqrt(levle)'));
    expect((await titles(bad, 'dry_day'))[0]).toBe('✗ Cannot solve: fix the model errors first');
  });
});

describe('Solve writes the solution into the point block', () => {
  it('rewrites ~ values, appends unlisted unknowns, leaves = lines alone, and is idempotent', async () => {
    const uri = uriOf('solve-buffer.poise');
    await s.open(uri, BUFFER);
    const r = await solve(uri, 'dry_day');
    expect(r.applied).toBe(true);
    const text = s.text(uri);
    // steady state: inflow = opening*cv*sqrt(level) ⇒ level = (inflow/(opening*cv))² (derivative zero; common practice)
    const level = (0.0015 / (0.4 * 0.0045)) ** 2;
    const block = text.slice(text.indexOf('point dry_day:'), text.indexOf('point cloudburst:'));
    expect(block).toContain(`  level ~ ${printed(level)} [m]\n`);
    // unlisted unknowns get lines in their declared units; outflow equals inflow at steady state, level_cm = 100·level
    expect(block).toContain(`  outflow ~ ${printed(1.5)} [L/s]\n`);
    expect(block).toContain(`  level_cm ~ ${printed(100 * level)} [cm]\n`);
    // fixed lines unchanged, the other point untouched
    expect(block).toContain('  inflow = 1.5 [L/s]\n  opening = 0.4\n');
    expect(text.slice(text.indexOf('point cloudburst:'))).toBe(BUFFER.slice(BUFFER.indexOf('point cloudburst:')));
    expect((await titles(uri, 'dry_day'))[0]).toBe('✓ Solved');
    // applying twice equals applying once
    const again = await solve(uri, 'dry_day');
    expect(again).toEqual({ applied: true, edits: 0 });
    expect(s.text(uri)).toBe(text);
    expect(await s.diagnostics(uri)).toEqual([]);
  });

  it('keeps the unit a ~ line was written in', async () => {
    const uri = uriOf('solve-units.poise');
    await s.open(uri, BUFFER.replace('level ~ 0.5 [m]', 'level ~ 50 [cm]   # guess'));
    await solve(uri, 'dry_day');
    const level = (0.0015 / (0.4 * 0.0045)) ** 2; // as above, in m; 1 m = 100 cm
    expect(s.text(uri)).toContain(`  level ~ ${printed(100 * level)} [cm]   # guess\n  outflow ~ 1.5 [L/s]\n`);
    const before = s.text(uri);
    await solve(uri, 'dry_day');
    expect(s.text(uri)).toBe(before);
  });

  it('falls back to changes when the client has no documentChanges', async () => {
    const plain = await startSession({ settings: { digits: 4 }, documentChanges: false });
    try {
      const uri = uriOf('solve-plain.poise');
      await plain.open(uri, BUFFER);
      const r = await plain.request<{ applied: boolean }>('workspace/executeCommand', { command: 'poise.server.solvePoint', arguments: [uri, 'cloudburst'] });
      expect(r.applied).toBe(true);
      expect(plain.applied[0].changes?.[uri]?.length).toBeGreaterThan(0);
      expect(plain.applied[0].documentChanges).toBeUndefined();
    } finally {
      await plain.shutdown();
    }
  });
});

describe('Linearize writes a generated linear block', () => {
  it('inserts it after the point block, with a digest header, at values and deviation equations', async () => {
    const uri = uriOf('lin-buffer.poise');
    await s.open(uri, BUFFER);
    expect((await linearize(uri, 'dry_day')).applied).toBe(true);
    const text = s.text(uri);
    const b = readBlock(text, 'dry_day')!;
    expect(b.headerLine).toMatch(/^linear dry_day digest [0-9a-f]{8}:\s+# generated by Poise .*regenerate, do not edit$/);
    // right after the point block, before the next point
    const at = text.indexOf('linear dry_day');
    expect(at).toBeGreaterThan(text.indexOf('  level ~ 0.5 [m]'));
    expect(at).toBeLessThan(text.indexOf('point cloudburst:'));
    expect(text.slice(0, text.indexOf('\n', text.indexOf('  level ~ 0.5 [m]')))).toBe(BUFFER.slice(0, BUFFER.indexOf('\n', BUFFER.indexOf('  level ~ 0.5 [m]'))));
    // operating values: level = (inflow/(opening*cv))², outflow = inflow, level_cm = 100·level (by hand)
    const level = (0.0015 / (0.4 * 0.0045)) ** 2;
    expect(b.at.get('level')).toEqual({ value: printed(level), unit: 'm' });
    expect(b.at.get('inflow')).toEqual({ value: 1.5, unit: 'L/s' });
    expect(b.at.get('opening')).toEqual({ value: 0.4, unit: '' });
    expect(b.at.get('outflow')).toEqual({ value: 1.5, unit: 'L/s' });
    expect(b.at.get('level_cm')).toEqual({ value: printed(100 * level), unit: 'cm' });
    // area·Δlevel' = Δinflow − Δoutflow, Δoutflow = cv·√level·Δopening + opening·cv/(2√level)·Δlevel
    // (derivative of a square root: common practice); inflow in L/s is 0.001 m³/s
    const dOut = (0.4 * 0.0045) / (2 * Math.sqrt(level));
    const row = b.rows.get("level'")!;
    expect(row.get('level')).toBe(printed(-dOut / 3.2));
    expect(row.get('inflow')).toBe(printed(0.001 / 3.2));
    expect(row.get('opening')).toBe(printed((-0.0045 * Math.sqrt(level)) / 3.2));
    expect(b.rows.get('level_cm')).toEqual(new Map([['level', 100]]));
    // the new text is a valid model with a fresh block
    const a = analyze(text);
    expect(a.allDiagnostics()).toEqual([]);
    expect(await s.diagnostics(uri)).toEqual([]);
    expect((await titles(uri, 'dry_day'))[1]).toBe('Linearize (block up to date)');
    // idempotent: a second Linearize changes nothing
    expect(await linearize(uri, 'dry_day')).toEqual({ applied: true, edits: 0 });
    expect(s.text(uri)).toBe(text);
  });

  it('goes stale (P601) when a constant changes, and the quick fix regenerates it in place', async () => {
    const uri = uriOf('lin-stale.poise');
    await s.open(uri, BUFFER);
    await linearize(uri, 'dry_day');
    await s.change(uri, s.text(uri).replace('const area  = 3.2 [m^2]', 'const area  = 4 [m^2]'));
    const ds = await s.diagnostics(uri);
    const stale = ds.filter((d) => d.code === 'P601');
    expect(stale).toHaveLength(1);
    expect(stale[0].severity).toBe(2); // warning
    expect(stale[0].source).toBe('poise');
    expect(stale[0].range.start).toEqual(s.pos(uri, 'linear dry_day'));
    expect((await titles(uri, 'dry_day'))[1]).toBe('Regenerate linear block');
    const actions = await s.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri }, range: stale[0].range, context: { diagnostics: [stale[0]] },
    });
    const fix = actions.find((x) => x.title === 'Regenerate linear block');
    expect(fix?.kind).toBe('quickfix');
    expect(fix?.diagnostics?.[0].code).toBe('P601');
    const outside = (t: string) => t.slice(0, t.indexOf('linear dry_day')) + t.slice(t.indexOf('point cloudburst:'));
    const before = s.text(uri);
    expect(await s.applyWorkspaceEdit(fix!.edit!)).toBe(true);
    const after = s.text(uri);
    expect(outside(after)).toBe(outside(before)); // nothing outside the block changed
    const b = readBlock(after, 'dry_day')!;
    expect(b.count).toBe(1);
    // the new area: A = −(opening·cv/(2√level))/area with area = 4 m² (by hand, as above)
    const level = (0.0015 / (0.4 * 0.0045)) ** 2;
    expect(b.rows.get("level'")!.get('level')).toBe(printed(-(0.4 * 0.0045) / (2 * Math.sqrt(level)) / 4));
    const ds2 = await s.diagnostics(uri);
    expect(ds2.filter((d: Diagnostic) => d.code === 'P601')).toEqual([]);
    // Linearize on a stale block also replaces it rather than adding a second one
    await s.change(uri, s.text(uri).replace('const area  = 4 [m^2]', 'const area  = 5 [m^2]'));
    await s.diagnostics(uri);
    await linearize(uri, 'dry_day');
    expect(readBlock(s.text(uri), 'dry_day')!.count).toBe(1);
    expect(analyze(s.text(uri)).allDiagnostics()).toEqual([]);
  });
});

/** Every model of examples/ and the reference models: solve and linearize every point through the server. */
const MODELS = [
  ...exampleModels().map((m) => ({ file: m.file, ref: undefined as string | undefined })),
  ...fs.readdirSync(path.join(REFERENCE, 'models')).filter((f) => f.endsWith('.poise')).map((f) => ({ file: path.join(REFERENCE, 'models', f), ref: path.join(REFERENCE, f.replace(/\.poise$/, '.json')) })),
];

describe.each(MODELS)('$file', ({ file, ref }) => {
  it('Solve and Linearize at every point: idempotent, valid model text, coefficients equal the linear model', async () => {
    const original = fs.readFileSync(file, 'utf8');
    // a model that reads a file beside it (a table's CSV) is opened under its own address, so the server finds it
    const besideFiles = /from\s+"/.test(original);
    const uri = besideFiles ? pathToFileURL(path.resolve(file)).href : uriOf('all-' + path.basename(file));
    const analyzeHere = (t: string) => (besideFiles ? analyzeDocuments(cliSources(path.resolve(file), t), path.resolve(file))! : analyze(t));
    await s.open(uri, original);
    const points = analyzeHere(original).pointNames;
    expect(points.length).toBeGreaterThan(0);
    // solve all points first (a solve edits the model text, which the other points' digests cover)
    for (const p of points) {
      expect((await solve(uri, p)).applied).toBe(true);
      const once = s.text(uri);
      expect(await solve(uri, p)).toEqual({ applied: true, edits: 0 });
      expect(s.text(uri)).toBe(once);
    }
    for (const p of points) {
      expect((await linearize(uri, p)).applied).toBe(true);
      const once = s.text(uri);
      expect(await linearize(uri, p)).toEqual({ applied: true, edits: 0 });
      expect(s.text(uri)).toBe(once);
    }
    const text = s.text(uri);
    const a = analyzeHere(text);
    expect(a.allDiagnostics().filter((d) => d.severity === 'error' || d.code === 'P601')).toEqual([]);
    expect((await s.diagnostics(uri)).filter((d) => d.severity === 1 || d.code === 'P601')).toEqual([]);
    for (const p of points) {
      const b = readBlock(text, p)!;
      expect(b.count).toBe(1);
      // equal to the core's A/B/C/D at the printed precision (4 significant digits)
      const lin = a.linear(p)!;
      const { n, m } = lin;
      lin.states.forEach((x, i) => {
        const row = b.rows.get(x + "'");
        if (!row) {
          // omitted only when it is the implied row Δx' = Δx' of a higher-order state
          expect(lin.states).toContain(x + "'");
          return;
        }
        lin.states.forEach((y, j) => expect(row.get(y) ?? 0, `A ${x}' ${y}`).toBe(printed(lin.A[i * n + j])));
        lin.inputs.forEach((u, j) => expect(row.get(u) ?? 0, `B ${x}' ${u}`).toBe(printed(lin.B[i * m + j])));
      });
      lin.outputs.forEach((y, i) => {
        const row = b.rows.get(y)!;
        lin.states.forEach((x, j) => expect(row.get(x) ?? 0, `C ${y} ${x}`).toBe(printed(lin.C[i * n + j])));
        lin.inputs.forEach((u, j) => expect(row.get(u) ?? 0, `D ${y} ${u}`).toBe(printed(lin.D[i * m + j])));
      });
      if (!ref || p !== readReferenceFile(ref).point) continue;
      // and equal to the reference linear model (computed outside the project) to the printed digits
      const r = readReferenceFile(ref);
      const close = (got: number, want: number, what: string) =>
        expect(Math.abs(got - want), `${what}: block ${got}, reference ${want}`).toBeLessThanOrEqual(5e-4 * Math.abs(want) + 1e-12 * (1 + Math.abs(want)));
      for (const [name, v] of Object.entries(r.values)) close(b.at.get(name)!.value, v, `at ${name}`);
      r.states.forEach((x, i) => {
        const row = b.rows.get(x + "'");
        if (!row) {
          // the implied row of a second-order state: the reference has Δx' = Δ(x') exactly
          const j = r.states.indexOf(x + "'");
          expect(r.A[i].map((v, k) => (k === j ? v : Math.abs(v)))).toEqual(r.A[i].map((_, k) => (k === j ? 1 : 0)));
          return;
        }
        r.states.forEach((y, j) => close(row.get(y) ?? 0, r.A[i][j], `A ${x}' ${y}`));
        r.inputs.forEach((u, j) => close(row.get(u) ?? 0, r.B[i][j], `B ${x}' ${u}`));
      });
      r.outputs.forEach((y, i) => {
        const row = b.rows.get(y)!;
        r.states.forEach((x, j) => close(row.get(x) ?? 0, r.C[i][j], `C ${y} ${x}`));
        r.inputs.forEach((u, j) => close(row.get(u) ?? 0, r.D[i][j], `D ${y} ${u}`));
      });
    }
    await s.closeDoc(uri);
  });
});

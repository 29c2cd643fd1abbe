/**
 * Completion, go to definition, find references, rename, document symbols, folding, semantic tokens,
 * quick fixes, the `poise/pointAt` request and the `poise` settings, through the real server over stdio.
 * Expected positions are read off the model text by hand; expected numbers derived by hand (named beside).
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  CodeAction, CompletionItem, CompletionList, Diagnostic, DocumentSymbol, FoldingRange, Location, SemanticTokens, WorkspaceEdit,
} from 'vscode-languageserver-protocol';
import { analyze } from '../../server/src/core/pipeline/analysis';
import { EXAMPLES } from '../helpers/cli';
import { readBlock } from './blocks';
import { startSession, uriOf, type Session } from './session';

let s: Session;
beforeAll(async () => {
  s = await startSession({ settings: { digits: 4, activePoint: '', warnUnused: true } });
});
afterAll(async () => {
  await s?.shutdown();
});

const BUFFER = fs.readFileSync(path.join(EXAMPLES, 'buffer_tank.poise'), 'utf8');
const td = (uri: string) => ({ textDocument: { uri } });

async function complete(uri: string, needle: string, delta: number): Promise<CompletionItem[]> {
  const r = await s.request<CompletionList>('textDocument/completion', { ...td(uri), position: s.pos(uri, needle, delta) });
  return r.items;
}
const labels = (items: CompletionItem[]) => items.map((i) => i.label);

// LSP enumerations (Language Server Protocol specification 3.17): CompletionItemKind Function = 3,
// Field = 5, Variable = 6, Keyword = 14, Unit = 11; InsertTextFormat Snippet = 2; DiagnosticTag
// Unnecessary = 1; SymbolKind Namespace = 3.
describe('completion', () => {
  it('units inside brackets, names and functions in expressions, keywords at the start of a line', async () => {
    const uri = uriOf('complete.poise');
    await s.open(uri, BUFFER.replace('var outflow [L/s]', 'var outflow [L/s]\nvar spill [m^\n') + 'level_cm2 = op\n');
    const units = await complete(uri, 'var spill [m^', 13);
    expect(labels(units)).toEqual(expect.arrayContaining(['m^3/s', 'L/s', 'L/min', 'kW', 'degC']));
    expect(units.every((u) => u.kind === 11)).toBe(true);
    // the partial unit "m^" is what gets replaced
    expect(units[0].textEdit).toMatchObject({ range: { start: s.pos(uri, 'var spill [m^', 11), end: s.pos(uri, 'var spill [m^', 13) } });

    const expr = await complete(uri, 'level_cm2 = op', 14);
    const opening = expr.find((i) => i.label === 'opening')!;
    expect(opening.kind).toBe(5);
    expect(opening.detail).toBe('input');
    expect(opening.textEdit).toMatchObject({ newText: 'opening', range: { start: s.pos(uri, 'level_cm2 = op', 12), end: s.pos(uri, 'level_cm2 = op', 14) } });
    expect(expr.find((i) => i.label === 'level')).toMatchObject({ kind: 6, detail: 'state [m]' });
    expect(expr.find((i) => i.label === 'sqrt')).toMatchObject({ kind: 3, insertTextFormat: 2 });
    expect(labels(expr)).toContain('pi');
    expect(labels(expr)).not.toContain('const');

    const start = await complete(uri, 'level_cm2 = op', 0);
    expect(labels(start)).toEqual(expect.arrayContaining(['const', 'state', 'input', 'var', 'output', 'point', 'level']));
    expect(start.find((i) => i.label === 'const')!.kind).toBe(14);

    expect(await complete(uri, 'tank cross-section', 4)).toEqual([]);
  });

  it('in a point block: the names not listed yet; after "linear": point names', async () => {
    const uri = uriOf('complete-point.poise');
    await s.open(uri, BUFFER.replace('  level ~ 0.5 [m]\n', '  level ~ 0.5 [m]\n  ou\n') + '\nlinear \n');
    const items = labels(await complete(uri, '  ou\n', 4));
    expect(items).toEqual(expect.arrayContaining(['outflow', 'level_cm', 'area']));
    expect(items).not.toContain('level');
    expect(items).not.toContain('sqrt');
    expect(labels(await complete(uri, 'linear \n', 7))).toEqual(['dry_day', 'cloudburst']);
  });
});

describe('definition, references, rename', () => {
  it('goes to the declaration and finds every use, never in comments', async () => {
    const uri = uriOf('nav.poise');
    await s.open(uri, BUFFER);
    const def = await s.request<Location[]>('textDocument/definition', { ...td(uri), position: s.pos(uri, 'sqrt(level)', 6) });
    expect(def).toEqual([{ uri, range: { start: s.pos(uri, 'state level', 6), end: s.pos(uri, 'state level', 11) } }]);
    const refs = await s.request<Location[]>('textDocument/references', { ...td(uri), position: s.pos(uri, 'const cv', 7), context: { includeDeclaration: true } });
    expect(refs.map((r) => r.range.start)).toEqual([s.pos(uri, 'cv    ='), s.pos(uri, 'cv*sqrt')]);
    const uses = await s.request<Location[]>('textDocument/references', { ...td(uri), position: s.pos(uri, 'const cv', 7), context: { includeDeclaration: false } });
    expect(uses).toHaveLength(1);
    // point names: the header and the linear block made from it
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'dry_day'] });
    const prefs = await s.request<Location[]>('textDocument/references', { ...td(uri), position: s.pos(uri, 'point dry_day', 7), context: { includeDeclaration: true } });
    expect(prefs.map((r) => r.range.start)).toEqual([s.pos(uri, 'dry_day:'), s.pos(uri, 'linear dry_day', 7)]);
    const pdef = await s.request<Location[]>('textDocument/definition', { ...td(uri), position: s.pos(uri, 'linear dry_day', 8) });
    expect(pdef[0].range.start).toEqual(s.pos(uri, 'dry_day:'));
  });

  it('renames a variable everywhere, including the Δ names of a generated block, which stays up to date', async () => {
    const uri = uriOf('rename.poise');
    await s.open(uri, BUFFER);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'dry_day'] });
    const prep = await s.request<{ range: unknown; placeholder: string }>('textDocument/prepareRename', { ...td(uri), position: s.pos(uri, "level'", 2) });
    expect(prep.placeholder).toBe('level');
    const edit = await s.request<WorkspaceEdit>('textDocument/rename', { ...td(uri), position: s.pos(uri, "level'", 2), newName: 'height' });
    expect(await s.applyWorkspaceEdit(edit)).toBe(true);
    const text = s.text(uri);
    expect(text).toContain('q ∝ √level'); // the comment is untouched
    expect(text).toContain("area*height' = inflow - outflow");
    expect(text).toContain('output level_cm [cm] = height');
    expect(text).toContain('  height ~ 0.5 [m]');
    const b = readBlock(text, 'dry_day')!;
    expect([...b.rows.keys()]).toEqual(["height'", 'level_cm']);
    expect(b.at.has('height')).toBe(true);
    expect(text).not.toMatch(/[^√_]level\b(?!_cm)/);
    // the block is still up to date and the model valid
    expect((await s.diagnostics(uri)).map((d) => d.code)).toEqual([]);
    // rename the point: the block follows and stays up to date
    const pe = await s.request<WorkspaceEdit>('textDocument/rename', { ...td(uri), position: s.pos(uri, 'point dry_day', 7), newName: 'dry' });
    expect(await s.applyWorkspaceEdit(pe)).toBe(true);
    expect(s.text(uri)).toMatch(/\npoint dry:\n/);
    expect(readBlock(s.text(uri), 'dry')).toBeDefined();
    expect(analyze(s.text(uri)).allDiagnostics()).toEqual([]);
  });

  it('refuses names that would clash, keywords, and places that are not names', async () => {
    const uri = uriOf('rename-bad.poise');
    await s.open(uri, BUFFER);
    await expect(s.request('textDocument/rename', { ...td(uri), position: s.pos(uri, 'state level', 7), newName: 'outflow' })).rejects.toThrow(/already declared/);
    await expect(s.request('textDocument/rename', { ...td(uri), position: s.pos(uri, 'state level', 7), newName: 'point' })).rejects.toThrow(/keyword/);
    await expect(s.request('textDocument/rename', { ...td(uri), position: s.pos(uri, 'state level', 7), newName: '2x' })).rejects.toThrow(/not a name/);
    expect(await s.request('textDocument/prepareRename', { ...td(uri), position: s.pos(uri, 'sqrt', 1) })).toBeNull();
    expect(await s.request('textDocument/prepareRename', { ...td(uri), position: s.pos(uri, 'tank cross', 1) })).toBeNull();
  });
});

describe('outline, folding, semantic tokens, pointAt', () => {
  it('document symbols grouped by kind', async () => {
    const uri = uriOf('symbols.poise');
    await s.open(uri, BUFFER);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'cloudburst'] });
    const syms = await s.request<DocumentSymbol[]>('textDocument/documentSymbol', td(uri));
    expect(syms.map((g) => g.name)).toEqual(['Constants', 'Inputs', 'States', 'Vars', 'Outputs', 'Equations', 'Points', 'Linear blocks']);
    expect(syms.every((g) => g.kind === 3)).toBe(true);
    const names = (g: string) => syms.find((x) => x.name === g)!.children!.map((c) => c.name);
    expect(names('Constants')).toEqual(['area', 'cv']);
    expect(names('Inputs')).toEqual(['inflow', 'opening']);
    expect(names('States')).toEqual(['level']);
    expect(names('Equations')).toEqual(["area*level' = inflow - outflow", 'outflow = opening*cv*sqrt(level)']);
    expect(names('Points')).toEqual(['dry_day', 'cloudburst']);
    expect(names('Linear blocks')).toEqual(['cloudburst']);
    const dry = syms.find((x) => x.name === 'Points')!.children![0];
    expect(dry.children!.map((c) => c.name)).toEqual(['inflow', 'opening', 'level']);
    expect(dry.selectionRange.start).toEqual(s.pos(uri, 'dry_day:'));
  });

  it('folding ranges of blocks and comment runs', async () => {
    const uri = uriOf('folding.poise');
    await s.open(uri, BUFFER);
    const folds = await s.request<FoldingRange[]>('textDocument/foldingRange', td(uri));
    const line = (needle: string) => s.pos(uri, needle).line;
    expect(folds).toEqual(expect.arrayContaining([
      { startLine: 0, endLine: 1, kind: 'comment' },
      { startLine: line('point dry_day'), endLine: line('  level ~ 0.5'), kind: 'region' },
      { startLine: line('point cloudburst'), endLine: line('  level ~ 1 [m]'), kind: 'region' },
    ]));
    expect(folds).toHaveLength(3);
  });

  it('semantic tokens tell states, inputs, constants, vars and outputs apart', async () => {
    const uri = uriOf('tokens.poise');
    await s.open(uri, BUFFER);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'dry_day'] });
    const legend = s.init.capabilities.semanticTokensProvider!.legend;
    const data = (await s.request<SemanticTokens>('textDocument/semanticTokens/full', td(uri))).data;
    // decode the relative encoding (LSP 3.17, semantic tokens: 5 integers per token)
    const tokens: { line: number; char: number; len: number; type: string; mods: string[] }[] = [];
    let line = 0;
    let char = 0;
    for (let i = 0; i < data.length; i += 5) {
      line += data[i];
      char = data[i] === 0 ? char + data[i + 1] : data[i + 1];
      tokens.push({ line, char, len: data[i + 2], type: legend.tokenTypes[data[i + 3]], mods: legend.tokenModifiers.filter((_, k) => data[i + 4] & (1 << k)) });
    }
    const at = (needle: string, delta = 0, nth = 0) => {
      const p = s.pos(uri, needle, delta, nth);
      return tokens.find((t) => t.line === p.line && t.char === p.character);
    };
    expect(at('state level', 6)).toMatchObject({ len: 5, type: 'variable', mods: ['declaration', 'state'] });
    expect(at('inflow - outflow')).toMatchObject({ type: 'parameter', mods: ['input'] });
    expect(at('cv*sqrt')).toMatchObject({ type: 'variable', mods: ['readonly', 'constant'] });
    expect(at('outflow = opening')).toMatchObject({ type: 'property', mods: ['var'] });
    expect(at('level_cm [cm]')).toMatchObject({ type: 'property', mods: ['declaration', 'output'] });
    expect(at("level' =")).toMatchObject({ type: 'variable', mods: ['state', 'derivative'] });
    expect(at('sqrt(')).toMatchObject({ type: 'function', mods: ['defaultLibrary'] });
    expect(at('dry_day:')).toMatchObject({ type: 'namespace' });
    expect(at('Δlevel_cm')).toMatchObject({ len: 9, type: 'property', mods: ['output', 'deviation'] });
    // no token inside comments
    const commentLine = s.pos(uri, 'tank cross-section').line;
    expect(tokens.filter((t) => t.line === commentLine && t.char > 20)).toEqual([]);
  });

  it('poise/pointAt finds the point at or above the cursor', async () => {
    const uri = uriOf('pointat.poise');
    await s.open(uri, BUFFER);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'cloudburst'] });
    const at = (needle: string, delta = 0) => s.request<{ point: string | null }>('poise/pointAt', { uri, position: s.pos(uri, needle, delta) });
    expect(await at('opening = 0.4', 3)).toEqual({ point: 'dry_day' });
    expect(await at('point cloudburst')).toEqual({ point: 'cloudburst' });
    expect(await at('Δlevel_cm')).toEqual({ point: 'cloudburst' });
    expect(await at('outflow = opening')).toEqual({ point: null });
    expect(await s.request('poise/pointAt', { uri: uriOf('not-open.poise'), position: { line: 0, character: 0 } })).toEqual({ point: null });
  });
});

async function actionsFor(uri: string, code: string): Promise<{ diag: Diagnostic; actions: CodeAction[] }> {
  const ds = await s.diagnostics(uri);
  const diag = ds.find((d) => d.code === code);
  expect(diag, `${code} in ${JSON.stringify(ds)}`).toBeDefined();
  const actions = await s.request<CodeAction[]>('textDocument/codeAction', { ...td(uri), range: diag!.range, context: { diagnostics: [diag], only: ['quickfix'] } });
  return { diag: diag!, actions };
}

describe('quick fixes', () => {
  it('unknown name: change to a near declared name, or declare it after the last declaration of that kind', async () => {
    const uri = uriOf('fix-unknown.poise');
    await s.open(uri, BUFFER.replace('outflow = opening*cv*sqrt(level)', 'outflow = opening*cv*sqrt(level) + leak\nleak = 0.1*outflw'));
    const { actions } = await actionsFor(uri, 'P201');
    const titles = actions.map((a) => a.title);
    expect(titles).toEqual(expect.arrayContaining(['Declare "leak" as var', 'Declare "leak" as state', 'Declare "leak" as input', 'Declare "leak" as const']));
    const declare = actions.find((a) => a.title === 'Declare "leak" as var')!;
    expect(declare.kind).toBe('quickfix');
    expect(await s.applyWorkspaceEdit(declare.edit!)).toBe(true);
    // it needs the unit of the other terms of its sum: outflow's L/s
    expect(s.text(uri)).toContain('var outflow [L/s]\nvar leak [L/s]\noutput');
    const second = await actionsFor(uri, 'P201');
    const change = second.actions.find((a) => a.title === 'Change to outflow')!;
    expect(change.isPreferred).toBe(true);
    expect(await s.applyWorkspaceEdit(change.edit!)).toBe(true);
    expect(s.text(uri)).toContain('leak = 0.1*outflow\n');
    expect((await s.diagnostics(uri)).filter((d) => d.severity === 1)).toEqual([]);
  });

  it('a primed unknown name is declared as a state', async () => {
    const uri = uriOf('fix-state.poise');
    await s.open(uri, 'const k = 2 [1/s]\n\nx\' = -k*x\n');
    const { actions } = await actionsFor(uri, 'P201');
    expect(actions.map((a) => a.title)).toEqual(['Declare "x" as state']);
    await s.applyWorkspaceEdit(actions[0].edit!);
    expect(s.text(uri)).toBe('const k = 2 [1/s]\nstate x\n\nx\' = -k*x\n');
  });

  it('unbalanced point: fix a missing value, or free a fixed one', async () => {
    const under = uriOf('fix-under.poise');
    // inflow left unknown: 4 unknowns (level, inflow, outflow, level_cm) for 3 equations (counted by hand)
    await s.open(under, BUFFER.replace('  inflow = 1.5 [L/s]', '  inflow ~ 1.5 [L/s]'));
    const u = await actionsFor(under, 'P501');
    expect(u.actions.length).toBeGreaterThan(0);
    expect(u.actions.every((a) => /^Fix \w+ with "=" in point dry_day$/.test(a.title))).toBe(true);
    const preferred = u.actions.find((a) => a.isPreferred)!;
    await s.applyWorkspaceEdit(preferred.edit!);
    expect((await s.diagnostics(under)).filter((d) => d.severity === 1)).toEqual([]);

    const over = uriOf('fix-over.poise');
    // level also fixed: 3 equations for 2 unknowns (outflow, level_cm)
    await s.open(over, BUFFER.replace('  level ~ 0.5 [m]', '  level = 0.5 [m]'));
    const o = await actionsFor(over, 'P501');
    expect(o.actions.length).toBeGreaterThan(0);
    expect(o.actions.every((a) => /^Free \w+ \(write "~"\) in point dry_day$/.test(a.title))).toBe(true);
    await s.applyWorkspaceEdit(o.actions[0].edit!);
    expect(s.text(over)).toMatch(/ ~ /);
    expect((await s.diagnostics(over)).filter((d) => d.severity === 1)).toEqual([]);
  });
});

describe('Solve and Linearize as code actions (for editors without code lenses)', () => {
  it('are offered inside a point block and do what the lenses do', async () => {
    const uri = uriOf('source-actions.poise');
    await s.open(uri, BUFFER);
    const at = (needle: string) => s.request<CodeAction[]>('textDocument/codeAction', { ...td(uri), range: { start: s.pos(uri, needle), end: s.pos(uri, needle) }, context: { diagnostics: [] } });
    const inside = await at('opening = 0.9');
    expect(inside.map((x) => [x.title, x.kind])).toEqual([
      ['Solve point cloudburst', 'source.poise.solvePoint'],
      ['Linearize at point cloudburst', 'source.poise.linearizePoint'],
    ]);
    expect(await at('outflow = opening')).toEqual([]);
    await s.applyWorkspaceEdit(inside[0].edit!);
    // steady state of cloudburst: level = (inflow/(opening·cv))² (derivative zero; by hand)
    expect(s.text(uri)).toContain(`  level ~ ${Number(((0.006 / (0.9 * 0.0045)) ** 2).toPrecision(4))} [m]\n`);
    expect((await at('opening = 0.9')).map((x) => x.title)).toEqual(['Linearize at point cloudburst']);
    // a request for quick fixes only leaves them out
    const only = await s.request<CodeAction[]>('textDocument/codeAction', { ...td(uri), range: { start: s.pos(uri, 'opening = 0.9'), end: s.pos(uri, 'opening = 0.9') }, context: { diagnostics: [], only: ['quickfix'] } });
    expect(only).toEqual([]);
  });
});

describe('settings', () => {
  it('warnUnused switches P203 (tagged unnecessary) on and off; digits sets the generated precision', async () => {
    const uri = uriOf('settings.poise');
    const text = BUFFER.replace('const cv ', 'const spare = 2\nconst cv ');
    await s.open(uri, text);
    const unused = (await s.diagnostics(uri)).filter((d) => d.code === 'P203');
    expect(unused).toHaveLength(1);
    expect(unused[0].tags).toEqual([1]);
    expect(unused[0].range.start).toEqual(s.pos(uri, 'spare'));
    s.settings = { digits: 6, activePoint: '', warnUnused: false };
    const before = s.published.get(uri)!.length;
    await s.conn.sendNotification('workspace/didChangeConfiguration', { settings: { poise: s.settings } });
    const republished = await s.until(() => (s.published.get(uri)!.length > before ? s.published.get(uri)!.at(-1)!.params.diagnostics : undefined), 10000, 'republished diagnostics');
    expect(republished.filter((d) => d.code === 'P203')).toEqual([]);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'dry_day'] });
    // A = −opening·cv/(2·area·√level), level = (inflow/(opening·cv))² (by hand), now to 6 digits
    const level = (0.0015 / (0.4 * 0.0045)) ** 2;
    const a = -(0.4 * 0.0045) / (2 * 3.2 * Math.sqrt(level));
    expect(readBlock(s.text(uri), 'dry_day')!.rows.get("level'")!.get('level')).toBe(Number(a.toPrecision(6)));
    s.settings = { digits: 4, activePoint: '', warnUnused: true };
    await s.conn.sendNotification('workspace/didChangeConfiguration', { settings: { poise: s.settings } });
  });
});

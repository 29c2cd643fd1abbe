/**
 * The language server as any LSP editor sees it: started with `poise lsp --stdio` (the command the
 * editor guide gives for Neovim, Helix and others) and driven by a plain JSON-RPC client — no VS Code and
 * no vscode-languageclient involved. Initialization, published diagnostics (codes, ranges, related
 * information, debouncing), robustness against bad requests, custom requests registered by other
 * modules, and a clean shutdown. Expected ranges are read off the model text by hand.
 */
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Diagnostic } from 'vscode-languageserver-protocol';
import { ROOT } from '../helpers/cli';
import { startSession, uriOf, type Session } from './session';

const ERRORS = [
  'const area = 2 [m^2]',
  'input feed [m^3/s]',
  'state level [m]',
  'var drain [m^3/s]',
  'var drain [L/s]',
  '',
  "area*level' = feed - drian",
  'drain = 0.01 [m^2.5/s]*sqrt(level) + 3 [s]',
  '',
].join('\n');

const range = (line: number, c0: number, c1: number, line1 = line) => ({ start: { line, character: c0 }, end: { line: line1, character: c1 } });

describe('stdio server answering a plain JSON-RPC client (an LSP client other than VS Code)', () => {
  let s: Session;
  beforeAll(async () => {
    // no workspace/configuration capability: the server must work with its defaults; a longer debounce
    // than the default 150 ms so that three back-to-back edits surely fall into one window
    s = await startSession({ via: 'bin', initializationOptions: { debounceMs: 400, clientCommands: false } });
  });
  afterAll(async () => {
    await s?.shutdown();
  });

  it('declares its capabilities on initialize', () => {
    const c = s.init.capabilities;
    expect(s.init.serverInfo?.name).toBe('poise');
    // TextDocumentSyncKind.Incremental = 2 (LSP 3.17)
    expect(c.textDocumentSync).toBe(2);
    expect(c.hoverProvider).toBe(true);
    expect(c.completionProvider?.triggerCharacters).toContain('[');
    expect(c.definitionProvider).toBe(true);
    expect(c.referencesProvider).toBe(true);
    expect(c.renameProvider).toEqual({ prepareProvider: true });
    expect(c.documentSymbolProvider).toBe(true);
    expect(c.foldingRangeProvider).toBe(true);
    expect(c.codeLensProvider).toBeDefined();
    expect(c.codeActionProvider).toEqual({ codeActionKinds: ['quickfix', 'source.poise.solvePoint', 'source.poise.linearizePoint'] });
    expect(c.executeCommandProvider?.commands).toEqual(['poise.server.solvePoint', 'poise.server.linearizePoint']);
    const legend = c.semanticTokensProvider!.legend;
    expect(legend.tokenTypes).toEqual(expect.arrayContaining(['variable', 'parameter', 'property', 'function', 'namespace']));
    expect(legend.tokenModifiers).toEqual(expect.arrayContaining(['state', 'input', 'constant', 'var', 'output', 'declaration', 'readonly']));
  });

  it('publishes diagnostics with codes, exact ranges, severity, source and related information', async () => {
    const uri = uriOf('errors.poise');
    const ds = await s.open(uri, ERRORS);
    const byCode = new Map(ds.map((d) => [d.code, d] as [string, Diagnostic]));
    expect([...byCode.keys()].sort()).toEqual(['P201', 'P202', 'P304']);
    // the second "drain" (line 5, columns 4–9) is the duplicate; related information points at the first
    expect(byCode.get('P202')!.range).toEqual(range(4, 4, 9));
    expect(byCode.get('P202')!.relatedInformation).toEqual([{ location: { uri, range: range(3, 4, 9) }, message: 'first declared here' }]);
    // the misspelt name only
    expect(byCode.get('P201')!.range).toEqual(range(6, 21, 26));
    expect(byCode.get('P201')!.message).toContain('"drian"');
    // the whole sum whose terms disagree (m³/s and s)
    expect(byCode.get('P304')!.range).toEqual(range(7, 8, 42));
    for (const d of ds) {
      expect(d.severity).toBe(1); // DiagnosticSeverity.Error
      expect(d.source).toBe('poise');
    }
    expect(s.published.get(uri)!.at(-1)!.params.version).toBe(1);
  });

  it('republishes after edits, for the latest version only (debounced)', async () => {
    const uri = uriOf('edits.poise');
    await s.open(uri, ERRORS);
    const before = s.published.get(uri)!.length;
    // three quick edits: only the last version's diagnostics need to arrive
    await s.change(uri, ERRORS.replace('drian', 'drai'));
    await s.change(uri, ERRORS.replace('drian', 'drain'));
    const v = await s.change(uri, ERRORS.replace('drian', 'drain').replace('var drain [L/s]\n', ''));
    const ds = await s.diagnostics(uri);
    expect(s.docs.get(uri)!.version).toBe(v);
    expect(ds.map((d) => d.code)).toEqual(['P304']);
    const after = s.published.get(uri)!.slice(before);
    expect(after.map((p) => p.params.version)).toEqual([v]);
    // closing the document clears its diagnostics
    await s.closeDoc(uri);
    await s.until(() => (s.published.get(uri)!.at(-1)!.params.diagnostics.length === 0 ? true : undefined), 5000, 'cleared diagnostics');
  });

  it('answers bad or untimely requests with neutral results or errors and keeps running', async () => {
    const ghost = uriOf('never-opened.poise');
    const pos = { line: 0, character: 0 };
    expect(await s.request('textDocument/hover', { textDocument: { uri: ghost }, position: pos })).toBeNull();
    expect(await s.request('textDocument/codeLens', { textDocument: { uri: ghost } })).toEqual([]);
    expect(await s.request('textDocument/completion', { textDocument: { uri: ghost }, position: pos })).toEqual({ isIncomplete: false, items: [] });
    // malformed parameters: the invalid-params error (-32602, LSP 3.17), before any handler runs (see guard.test.ts)
    await expect(s.request('textDocument/hover', { position: pos })).rejects.toMatchObject({ code: -32602 });
    await expect(s.request('textDocument/documentSymbol', {})).rejects.toMatchObject({ code: -32602 });
    // a command for a document that is not open: not applied, and the editor is told why
    expect(await s.request('workspace/executeCommand', { command: 'poise.server.solvePoint', arguments: [42] })).toEqual({ applied: false, message: 'the model file is not open in the editor: open the model file first.' });
    const uri = uriOf('after.poise');
    await s.open(uri, 'state x\nx\' = -x\npoint p:\n  x ~ 1\n');
    // past the end of the document
    expect(await s.request('textDocument/hover', { textDocument: { uri }, position: { line: 99, character: 99 } })).toBeNull();
    expect(s.exited).toBeUndefined();
    expect(await s.diagnostics(uri)).toEqual([]);
  });

  it('leaves out the VS Code-only lenses when told the client cannot run them', async () => {
    const uri = uriOf('lenses.poise');
    await s.open(uri, 'state x\ninput u\nx\' = -x + u\npoint p:\n  u = 2\n  x ~ 1\n');
    const lenses = await s.request<{ command: { title: string; command: string } }[]>('textDocument/codeLens', { textDocument: { uri } });
    // x' = −x + u at steady state: x = u = 2 (by hand), so the guess 1 is not the solution yet
    expect(lenses.map((l) => [l.command.title, l.command.command])).toEqual([
      ['Solve', 'poise.server.solvePoint'],
      ['Linearize', 'poise.server.linearizePoint'],
    ]);
  });

  it('shuts down cleanly on shutdown + exit', async () => {
    const t = await startSession({ via: 'bin' });
    await t.shutdown();
    expect(t.exited).toBe(0);
  });
});

describe('custom requests registered by other modules', () => {
  let s: Session;
  let dir = '';
  beforeAll(async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'poise-lsp-ext-'));
    const script = path.join(dir, 'server-with-extras.js');
    const out = (p: string) => JSON.stringify(path.join(ROOT, 'out', 'server', 'src', 'lsp', p));
    fs.writeFileSync(
      script,
      [
        `const { registerRequest } = require(${out('registry.js')});`,
        `const server = require(${out('server.js')});`,
        // before startServer: uses the analysis of the open document
        `registerRequest('poise/test/points', (p, ctx) => ({ points: ctx.analysis(p.uri)?.pointNames ?? null }));`,
        `registerRequest('poise/test/boom', () => { throw new Error('deliberate failure'); });`,
        `server.startServer();`,
        // after startServer
        `server.registerRequest('poise/test/late', async (p, ctx) => ({ digits: (await ctx.settings(p.uri)).digits }));`,
      ].join('\n'),
    );
    s = await startSession({ via: { script }, settings: { digits: 7 } });
  });
  afterAll(async () => {
    await s?.shutdown();
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('are answered before and after startServer, and a failing one answers an error without stopping the server', async () => {
    const uri = uriOf('extras.poise');
    await s.open(uri, 'state x\nx\' = -x\npoint a:\n  x ~ 1\npoint b:\n  x ~ 2\n');
    expect(await s.request('poise/test/points', { uri })).toEqual({ points: ['a', 'b'] });
    expect(await s.request('poise/test/late', { uri })).toEqual({ digits: 7 });
    await expect(s.request('poise/test/boom', {})).rejects.toThrow('deliberate failure');
    expect(await s.request('poise/test/points', { uri })).toEqual({ points: ['a', 'b'] });
    expect(s.exited).toBeUndefined();
  });
});

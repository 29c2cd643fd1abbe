/**
 * The request guard, through the real server over stdio (LSP 3.17 specification: "Response Message",
 * error codes InvalidParams = -32602 and RequestCancelled = -32800; "Cancellation Support"):
 *
 * - malformed parameters sent to every request handler are answered with InvalidParams, nothing is logged as
 *   a failure, and the server keeps answering;
 * - a long sweep runs in a worker thread: a hover sent after it is answered while the sweep still runs
 *   (an order of events, not a time), and cancelling the sweep answers RequestCancelled and stops it — a
 *   page request sent after the cancellation is answered without the sweep ever completing.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CancellationTokenSource } from 'vscode-jsonrpc/node';
import { startSession, uriOf, type Session } from './session';

const INVALID_PARAMS = -32602;
const REQUEST_CANCELLED = -32800;

/** A chain of n tanks (invented demo model): tank i drains into tank i+1 through q_i = k·√(h_i − h_{i+1}). */
function chain(n: number): string {
  const L = ['const area = 1.5 [m^2]', 'const k = 0.01 [m^2.5/s]', 'input qin [m^3/s]'];
  L.push(`state ${Array.from({ length: n }, (_, i) => `h${i + 1}`).join(', ')} [m]`);
  L.push(`var ${Array.from({ length: n }, (_, i) => `q${i + 1}`).join(', ')} [m^3/s]`);
  for (let i = 1; i <= n; i++) {
    L.push(`area*h${i}' = ${i === 1 ? 'qin' : `q${i - 1}`} - q${i}`);
    L.push(i < n ? `q${i} = k*sqrt(h${i} - h${i + 1})` : `q${i} = k*sqrt(h${i})`);
  }
  L.push('point nominal:', '  qin = 0.01 [m^3/s]');
  for (let i = 1; i <= n; i++) L.push(`  h${i} ~ ${n - i + 1} [m]`);
  return L.join('\n') + '\n';
}

async function rpcError(p: Promise<unknown>): Promise<{ code: number; message: string }> {
  try {
    await p;
  } catch (e) {
    return e as { code: number; message: string };
  }
  throw new Error('expected an error answer');
}

let s: Session;
beforeAll(async () => {
  s = await startSession({ settings: {} });
});
afterAll(async () => {
  await s?.shutdown();
});

describe('malformed parameters', () => {
  it('every handler answers InvalidParams and the server keeps running', async () => {
    const uri = uriOf('guard.poise');
    await s.open(uri, 'state x\ninput u\nx\' = -x + u\npoint p:\n  u = 1\n  x ~ 1\n');
    const doc = { uri };
    const pos = { line: 0, character: 0 };
    const range = { start: pos, end: pos };
    // for each method: parameters a client could send by mistake (each is wrong in one way)
    const cases: [string, unknown[]][] = [
      ['textDocument/hover', [null, {}, { textDocument: doc }, { textDocument: { uri: 3 }, position: pos }, { textDocument: doc, position: { line: -1, character: 0 } }, { textDocument: doc, position: { line: 'a', character: 0 } }]],
      ['textDocument/completion', [null, { textDocument: doc }, { position: pos }]],
      ['textDocument/definition', [null, { textDocument: doc, position: {} }]],
      ['textDocument/references', [{ textDocument: doc }, { textDocument: doc, position: pos, context: { includeDeclaration: 'yes' } }]],
      ['textDocument/prepareRename', [[], { textDocument: doc, position: null }]],
      ['textDocument/rename', [{ textDocument: doc, position: pos }, { textDocument: doc, position: pos, newName: 7 }]],
      ['textDocument/documentSymbol', [null, {}, { textDocument: 'x' }]],
      ['textDocument/foldingRange', [null, { textDocument: {} }]],
      ['textDocument/semanticTokens/full', [null, { textDocument: { uri: null } }]],
      ['textDocument/codeLens', [null, [uri]]],
      ['textDocument/codeAction', [{ textDocument: doc }, { textDocument: doc, range }, { textDocument: doc, range, context: {} }, { textDocument: doc, range, context: { diagnostics: [{}] } }, { textDocument: doc, range: { start: pos }, context: { diagnostics: [] } }]],
      ['workspace/executeCommand', [null, {}, { command: 5 }, { command: 'poise.server.solvePoint', arguments: 'x' }]],
      ['poise/report', [null, {}, { uri: 5 }, { uri, point: 3 }]],
      ['poise/sweep', [null, { uri, point: 'p', vary: 'u', from: '0', to: 1, steps: 4 }, { uri, vary: 3 }, { uri, vary: 'u', from: 0, to: 1, steps: 'many' }, { uri, log: 'yes' }]],
      ['poise/sweepCandidates', [null, { point: 'p' }]],
      ['poise/export', [null, { uri }, { uri, format: 1 }, { uri, format: 'json', digits: 0 }, { uri, format: 'json', digits: 2.5 }]],
      ['poise/pointAt', [null, { uri }, { uri, position: { line: 0 } }]],
    ];
    for (const [method, list] of cases) {
      for (const params of list) {
        const e = await rpcError(s.request(method, params));
        expect(e.code, `${method} ${JSON.stringify(params)}`).toBe(INVALID_PARAMS);
        // null and arrays go by position and are refused by the protocol library itself; the rest by the guard
        if (params !== null && !Array.isArray(params)) expect(e.message).toContain(`Invalid parameters for ${method}`);
      }
    }
    // nothing failed inside a handler: no error was logged, and the server still answers
    expect(s.errors).toEqual([]);
    expect(s.exited).toBeUndefined();
    expect(await s.request('poise/pointAt', { uri, position: { line: 4, character: 2 } })).toEqual({ point: 'p' });
  });
});

describe('long work and cancellation', () => {
  it('a sweep does not hold up a hover, and a cancelled sweep answers RequestCancelled and stops', async () => {
    const uri = uriOf('long-sweep.poise');
    const text = chain(40);
    await s.open(uri, text, 60000);
    const source = new CancellationTokenSource();
    let sweepSettled = false;
    const sweep = (s.conn.sendRequest('poise/sweep', { uri, point: 'nominal', vary: 'qin', from: 0.005, to: 0.02, steps: 5000 }, source.token) as Promise<unknown>)
      .finally(() => (sweepSettled = true));
    const logsBefore = s.logs.length;
    // hover of the constant "area": its declaration (a name hover needs no sweep)
    const h = await s.hover(uri, s.pos(uri, 'area', 2));
    expect(h!.contents.value).toContain('area');
    expect(sweepSettled).toBe(false); // answered while the sweep still runs
    source.cancel();
    const e = await rpcError(sweep);
    expect(e.code).toBe(REQUEST_CANCELLED);
    // the page worker is free at once: an export after the cancellation is answered, and the sweep never finished
    const exported = await s.request<{ text: string }>('poise/export', { uri, point: 'nominal', format: 'csv' });
    expect(exported.text).toContain('h40');
    expect(s.logs.slice(logsBefore).filter((l) => l.startsWith('poise/sweep'))).toEqual([]);
    expect(s.exited).toBeUndefined();
  }, 120000);
});

describe('hover Markdown', () => {
  it('escapes unit text from the model (CommonMark 0.31 §2.4 backslash escapes)', async () => {
    const uri = uriOf('markup.poise');
    await s.open(uri, "state x [m*s]\nvar y [<img src=x onerror=alert(1)>]\nx' = -x\ny = 1\n");
    const hx = await s.hover(uri, s.pos(uri, 'x ['));
    expect(hx!.contents.value).toContain('[m\\*s]');
    const hy = await s.hover(uri, s.pos(uri, 'y ['));
    expect(hy!.contents.value).toContain('\\<img');
    expect(hy!.contents.value).not.toMatch(/(^|[^\\])<img/);
    const hu = await s.hover(uri, s.pos(uri, '<img', 2));
    expect(hu!.contents.value).not.toMatch(/(^|[^\\])<img/);
  });
});

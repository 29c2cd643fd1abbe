/**
 * Language-server latency: a chain of 1000 tanks (2000 equations) opened in the real server over stdio;
 * one-character edits; time from didChange to the first publishDiagnostics of that version.
 */
import { spawn } from 'child_process';
import * as path from 'path';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter } from 'vscode-jsonrpc/node';
import { tankChain } from './models';

export async function lspLatency(n = 1000, edits = 21): Promise<{ open: number; median: number; all: number[] }> {
  const root = path.join(__dirname, '..', '..');
  const p = spawn(process.execPath, [path.join(root, 'bin', 'poise.js'), 'lsp', '--stdio'], { stdio: ['pipe', 'pipe', 'inherit'] });
  const c = createMessageConnection(new StreamMessageReader(p.stdout!), new StreamMessageWriter(p.stdin!));
  const waiters: { version: number; resolve: (t: number) => void }[] = [];
  c.onNotification('textDocument/publishDiagnostics', (msg: { version?: number }) => {
    const t = performance.now();
    for (let i = waiters.length - 1; i >= 0; i--) {
      if (waiters[i].version === msg.version) {
        waiters[i].resolve(t);
        waiters.splice(i, 1);
      }
    }
  });
  c.onRequest('workspace/configuration', (params: { items: unknown[] }) => params.items.map(() => ({})));
  c.onRequest('client/registerCapability', () => null);
  c.listen();
  await c.sendRequest('initialize', { processId: process.pid, rootUri: null, capabilities: { workspace: { configuration: true } } });
  c.sendNotification('initialized', {});
  const uri = 'file:///bench/chain.poise';
  let text = tankChain(n);
  const wait = (version: number) => new Promise<number>((resolve) => waiters.push({ version, resolve }));
  let t0 = performance.now();
  const opened = wait(1);
  c.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'poise', version: 1, text } });
  const open = (await opened) - t0;
  const all: number[] = [];
  // edit the constant's value one character at a time (1.5 → 1.6 → 1.5 …): a real change every time
  const line = text.split('\n').findIndex((l) => l.startsWith('const area'));
  const col = 'const area = 1.'.length;
  for (let v = 2; v < 2 + edits; v++) {
    const ch = v % 2 ? '5' : '6';
    text = text.replace(/^const area = 1\.\d/m, `const area = 1.${ch}`);
    const done = wait(v);
    t0 = performance.now();
    c.sendNotification('textDocument/didChange', {
      textDocument: { uri, version: v },
      contentChanges: [{ range: { start: { line, character: col }, end: { line, character: col + 1 } }, text: ch }],
    });
    all.push((await done) - t0);
    await new Promise((r) => setTimeout(r, 600)); // let the point solve finish before the next edit
  }
  p.stdin!.on('error', () => undefined); // the server may close its end first
  const exited = new Promise<void>((r) => p.once('exit', () => r()));
  await c.sendRequest('shutdown');
  await c.sendNotification('exit');
  await Promise.race([exited, new Promise((r) => setTimeout(r, 2000))]);
  c.dispose();
  if (p.exitCode === null) p.kill();
  const sorted = [...all].sort((a, b) => a - b);
  return { open, median: sorted[Math.floor(sorted.length / 2)], all };
}

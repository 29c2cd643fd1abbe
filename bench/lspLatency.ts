/**
 * Language-server latency: a chain of N tanks (2N equations) opened in the real server over stdio;
 * one-character edits of a constant; time from didChange to the first publishDiagnostics of that version
 * (and to the last one, when the points' diagnostics follow later), and the time a hover sent right after
 * the first diagnostics takes while the points are being solved. The server's own time per stage comes
 * from its timing log. Run alone: `node out/bench/lspLatency.js [N,N…] [value|name]` (after `npx tsc -p . && node
 * scripts/bundle.mjs server`). The edit is of a constant's value (what the quick route takes: the last
 * analysis's static diagnostics, moved) or of a name in an equation (the full static analysis).
 */
import { spawn } from 'child_process';
import * as path from 'path';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter } from 'vscode-jsonrpc/node';
import { tankChain } from './models';

export interface LspLatency {
  equations: number;
  /** What was edited: a constant's value (the quick route), or a name in an equation (the full analysis). */
  edit: 'value' | 'name';
  open: number;
  /** didChange → first publishDiagnostics of the version (ms), median. */
  median: number;
  /** didChange → last publishDiagnostics of the version (points solved), median. */
  finalMedian: number;
  /** A hover sent just after the first diagnostics (ms), median. */
  hoverMedian: number;
  /** Server time of the static stages (parse … structure), median. */
  analyzeMedian: number;
  all: number[];
}

const median = (xs: number[]) => {
  const v = [...xs].sort((a, b) => a - b);
  return v.length ? v[Math.floor(v.length / 2)] : NaN;
};

export async function lspLatency(n = 1000, edits = 11, edit: 'value' | 'name' = 'value'): Promise<LspLatency> {
  const root = path.join(__dirname, '..', '..');
  const p = spawn(process.execPath, [path.join(root, 'bin', 'poise.js'), 'lsp', '--stdio'], { stdio: ['pipe', 'pipe', 'inherit'] });
  const c = createMessageConnection(new StreamMessageReader(p.stdout!), new StreamMessageWriter(p.stdin!));
  const published: { version: number; at: number }[] = [];
  const logs: { text: string; at: number }[] = [];
  let wake: (() => void) | undefined;
  const until = async <T>(pred: () => T | undefined, timeoutMs = 120000): Promise<T | undefined> => {
    const end = performance.now() + timeoutMs;
    for (;;) {
      const v = pred();
      if (v !== undefined) return v;
      if (performance.now() > end) return undefined;
      await new Promise<void>((r) => {
        wake = r;
        setTimeout(r, 50);
      });
    }
  };
  c.onNotification('textDocument/publishDiagnostics', (msg: { version?: number }) => {
    published.push({ version: msg.version ?? -1, at: performance.now() });
    wake?.();
  });
  c.onNotification('window/logMessage', (msg: { message: string }) => {
    logs.push({ text: msg.message, at: performance.now() });
    wake?.();
  });
  c.onRequest('workspace/configuration', (params: { items: unknown[] }) => params.items.map(() => ({})));
  c.onRequest('client/registerCapability', () => null);
  c.listen();
  await c.sendRequest('initialize', { processId: process.pid, rootUri: null, capabilities: { workspace: { configuration: true } }, initializationOptions: { timing: true } });
  c.sendNotification('initialized', {});
  const uri = 'file:///bench/chain.poise';
  let text = tankChain(n);
  const doneLog = (v: number) => logs.find((l) => l.text.startsWith(`diagnostics ${uri} v${v}:`));
  let t0 = performance.now();
  c.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'poise', version: 1, text } });
  await until(() => doneLog(1), 600000);
  const open = published.find((x) => x.version === 1)!.at - t0;
  const all: number[] = [];
  const finals: number[] = [];
  const hovers: number[] = [];
  const analyze: number[] = [];
  // edit the constant's value one character at a time (1.5 → 1.6 → 1.5 …): a real change every time; or
  // a name in the first link's equation (k → kk, not declared, and back), which the full analysis takes
  const lines = text.split('\n');
  const line = edit === 'value' ? lines.findIndex((l) => l.startsWith('const area')) : lines.findIndex((l) => l.startsWith('q1 = k*'));
  const col = edit === 'value' ? 'const area = 1.'.length : 'q1 = k'.length;
  const hoverAt = { line: lines.findIndex((l) => l.startsWith('state h1 ')), character: 7 };
  for (let v = 2; v < 2 + edits; v++) {
    const ch = v % 2 ? '5' : '6';
    const add = v % 2 === 0;
    const change = edit === 'value'
      ? { range: { start: { line, character: col }, end: { line, character: col + 1 } }, text: ch }
      : { range: { start: { line, character: col }, end: { line, character: add ? col : col + 1 } }, text: add ? 'k' : '' };
    t0 = performance.now();
    c.sendNotification('textDocument/didChange', { textDocument: { uri, version: v }, contentChanges: [change] });
    const first = await until(() => published.find((x) => x.version === v));
    if (!first) throw new Error(`no diagnostics for version ${v}`);
    all.push(first.at - t0);
    const h0 = performance.now();
    await c.sendRequest('textDocument/hover', { textDocument: { uri }, position: hoverAt });
    hovers.push(performance.now() - h0);
    const done = await until(() => doneLog(v), 600000);
    if (done) {
      finals.push(published.filter((x) => x.version === v).at(-1)!.at - t0);
      const m = /analyze ([\d.]+) ms/.exec(done.text);
      if (m) analyze.push(Number(m[1]));
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  p.stdin!.on('error', () => undefined); // the server may close its end first
  const exited = new Promise<void>((r) => p.once('exit', () => r()));
  await c.sendRequest('shutdown');
  await c.sendNotification('exit');
  await Promise.race([exited, new Promise((r) => setTimeout(r, 2000))]);
  c.dispose();
  if (p.exitCode === null) p.kill();
  return { equations: 2 * n, edit, open, median: median(all), finalMedian: median(finals), hoverMedian: median(hovers), analyzeMedian: median(analyze), all };
}

/** Targets (issue: a responsive editor): edit → first diagnostics, median. */
export const LSP_TARGETS: Record<number, number> = { 2000: 50, 10000: 100 };

/** Printable lines: each measured value next to its target. */
export function latencyLines(l: LspLatency): string[] {
  const target = l.edit === 'value' ? LSP_TARGETS[l.equations] : undefined;
  const what = l.edit === 'value' ? 'one-character edit of a constant\'s value' : 'one-character edit of a name in an equation (full analysis)';
  return [
    `language server, ${l.equations}-equation model: ${what} → first diagnostics median ${l.median.toFixed(0)} ms` +
      (target ? ` (target < ${target} ms: ${l.median < target ? 'met' : 'NOT met'})` : '') +
      `; of which static analysis ${l.analyzeMedian.toFixed(0)} ms and the 30 ms debounce`,
    `  → points' diagnostics median ${l.finalMedian.toFixed(0)} ms; a hover sent meanwhile answered in ${l.hoverMedian.toFixed(0)} ms (median); open → diagnostics ${l.open.toFixed(0)} ms`,
  ];
}

if (require.main === module) {
  void (async () => {
    const edit = process.argv[3] === 'name' ? 'name' : 'value';
    for (const n of (process.argv[2] ?? '1000,5000').split(',').map(Number)) {
      for (const l of latencyLines(await lspLatency(n, 11, edit))) console.log(l);
    }
  })();
}

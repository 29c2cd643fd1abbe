/**
 * Language-server latency of a parts file edit: a model of about 2,000 equations that places a tank part
 * from another open document (`parts from "lib/tank.poise"`, a family of instances tied in a chain), both
 * opened in the real server over stdio; one-character edits of the part's constant (in the parts
 * document); time from that didChange to the model's next publishDiagnostics (the model analysed again
 * with the new part). Run alone: `node out/bench/lspParts.js [TANKS]` (after `npx tsc -p . && node
 * scripts/bundle.mjs server`).
 */
import { spawn } from 'child_process';
import * as path from 'path';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter } from 'vscode-jsonrpc/node';

/** Issue target: editing a part's file re-analyses the open models that use it within 200 ms at 2,000 equations. */
export const PARTS_TARGET_MS = 200;

export const tankPart = (area: string) =>
  ['part tank:', `  const area = ${area} [m^2]`, '  const k = 0.01 [m^2.5/s]', '  input inflow [m^3/s]', '  state level [m]', '  var outflow [m^3/s]',
    "  area*level' = inflow - outflow", '  outflow = k*sqrt(level)', ''].join('\n');

/** A chain of `n` placed tanks: 2 equations of the part and 1 tie per instance (3n equations). */
export const partsPlant = (n: number) =>
  ['parts from "lib/tank.poise"', 'input feed [m^3/s]', `place tank as t[1..${n}]`, 't[1].inflow = feed', `each i in 2..${n}: t[i].inflow = t[i-1].outflow`, '',
    'point nominal:', '  feed = 0.01 [m^3/s]', '  t.level ~ 1 [m]', ''].join('\n');

export interface PartsLatency {
  equations: number;
  /** Parts document didChange → the model's next publishDiagnostics (ms), median. */
  median: number;
  /** The server's own time of the model's static analysis (ms), median. */
  analyzeMedian: number;
  all: number[];
}

const median = (xs: number[]) => {
  const v = [...xs].sort((a, b) => a - b);
  return v.length ? v[Math.floor(v.length / 2)] : NaN;
};

export async function partsLatency(tanks = 667, edits = 11): Promise<PartsLatency> {
  const root = path.join(__dirname, '..', '..');
  const p = spawn(process.execPath, [path.join(root, 'bin', 'poise.js'), 'lsp', '--stdio'], { stdio: ['pipe', 'pipe', 'inherit'] });
  const c = createMessageConnection(new StreamMessageReader(p.stdout!), new StreamMessageWriter(p.stdin!));
  const published: { uri: string; at: number; n: number }[] = [];
  const logs: string[] = [];
  let wake: (() => void) | undefined;
  const until = async <T>(pred: () => T | undefined, timeoutMs = 600000): Promise<T | undefined> => {
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
  c.onNotification('textDocument/publishDiagnostics', (msg: { uri: string; diagnostics: unknown[] }) => {
    published.push({ uri: msg.uri, at: performance.now(), n: msg.diagnostics.length });
    wake?.();
  });
  c.onNotification('window/logMessage', (msg: { message: string }) => {
    logs.push(msg.message);
    wake?.();
  });
  c.onRequest('workspace/configuration', (params: { items: unknown[] }) => params.items.map(() => ({})));
  c.onRequest('client/registerCapability', () => null);
  c.listen();
  await c.sendRequest('initialize', { processId: process.pid, rootUri: null, capabilities: { workspace: { configuration: true } }, initializationOptions: { timing: true } });
  c.sendNotification('initialized', {});
  const lib = 'file:///bench/lib/tank.poise';
  const model = 'file:///bench/plant.poise';
  const runs = () => logs.filter((l) => l.startsWith(`diagnostics ${model} `));
  c.sendNotification('textDocument/didOpen', { textDocument: { uri: lib, languageId: 'poise', version: 1, text: tankPart('1.5') } });
  c.sendNotification('textDocument/didOpen', { textDocument: { uri: model, languageId: 'poise', version: 1, text: partsPlant(tanks) } });
  await until(() => (runs().length ? true : undefined));
  const all: number[] = [];
  const analyze: number[] = [];
  for (let v = 2; v < 2 + edits; v++) {
    const before = published.length;
    const done = runs().length;
    const t0 = performance.now();
    // const area = 1.5 → 1.6 → 1.5 …, in the parts document
    c.sendNotification('textDocument/didChange', {
      textDocument: { uri: lib, version: v },
      contentChanges: [{ range: { start: { line: 1, character: 17 }, end: { line: 1, character: 18 } }, text: v % 2 ? '5' : '6' }],
    });
    const first = await until(() => published.slice(before).find((x) => x.uri === model));
    if (!first) throw new Error(`the model was not analysed again after edit ${v}`);
    all.push(first.at - t0);
    const log = await until(() => (runs().length > done ? runs()[done] : undefined));
    const m = log && /analyze ([\d.]+) ms/.exec(log);
    if (m) analyze.push(Number(m[1]));
    await new Promise((r) => setTimeout(r, 100));
  }
  p.stdin!.on('error', () => undefined);
  const exited = new Promise<void>((r) => p.once('exit', () => r()));
  await c.sendRequest('shutdown');
  await c.sendNotification('exit');
  await Promise.race([exited, new Promise((r) => setTimeout(r, 2000))]);
  c.dispose();
  if (p.exitCode === null) p.kill();
  return { equations: 3 * tanks, median: median(all), analyzeMedian: median(analyze), all };
}

export function partsLines(l: PartsLatency): string[] {
  return [
    `language server, a ${l.equations}-equation model of parts from another open document: one-character edit of the parts document → the model's diagnostics median ${l.median.toFixed(0)} ms` +
      ` (target < ${PARTS_TARGET_MS} ms at 2,000 equations: ${l.median < PARTS_TARGET_MS ? 'met' : 'NOT met'}); of which the model's static analysis ${l.analyzeMedian.toFixed(0)} ms and the 30 ms debounce`,
  ];
}

if (require.main === module) {
  void (async () => {
    for (const n of (process.argv[2] ?? '667').split(',').map(Number)) for (const l of partsLines(await partsLatency(n))) console.log(l);
  })();
}

/**
 * Rapid edits of a model large enough that its points are solved in the worker (a chain of 200 tanks,
 * 400 equations), through the real server over stdio:
 *
 * - a superseded edit's results are never published once a newer version's are: the versions of the
 *   publications only grow, and the last is the last version's, whatever the gaps between the edits
 *   (some edits land while the worker solves the one before);
 * - the first diagnostics of a value edit (the last analysis's, moved: core/services/valueEdit.ts) equal
 *   those of the same text opened afresh (analysed in full), so the quick route is the full one;
 * - hovers and lenses asked right after a burst of edits are those of the last text: the hover's solved
 *   level against the closed form, the Solve lens saying the point cannot be solved exactly when the last
 *   text makes it so.
 *
 * The steady state is known in closed form: every link carries the feed, q_i = qin, so
 * h_i − h_{i+1} = (qin/k)² and h_n = (qin/k)², hence h_1 = n·(qin/k)² (Torricelli outflow; common practice).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeLens, Diagnostic } from 'vscode-languageserver-protocol';
import { startSession, uriOf, type Session } from './session';

const N = 200;
const K = 0.02;

function chain(qin: number, area = 2): string {
  const L = [`# chain of ${N} tanks (invented numbers)`, `const a = ${area} [m^2]`, `const k = ${K} [m^2.5/s]`, 'const spare = 1 [m]', 'input qin [m^3/s]'];
  L.push(`state ${Array.from({ length: N }, (_, i) => `h${i + 1}`).join(', ')} [m]`);
  L.push(`var ${Array.from({ length: N }, (_, i) => `q${i + 1}`).join(', ')} [m^3/s]`, '');
  for (let i = 1; i <= N; i++) {
    L.push(`a*h${i}' = ${i === 1 ? 'qin' : `q${i - 1}`} - q${i}`);
    L.push(i < N ? `q${i} = k*sqrt(h${i} - h${i + 1})` : `q${i} = k*sqrt(h${i})`);
  }
  L.push('', 'point base:', `  qin = ${qin} [m^3/s]`);
  for (let i = 1; i <= N; i++) L.push(`  h${i} ~ ${(1.1 * (N - i + 1) * 0.25).toPrecision(6)} [m]`);
  return L.join('\n') + '\n';
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

let s: Session;
beforeAll(async () => {
  s = await startSession({ settings: { digits: 4 }, initializationOptions: { timing: true } });
}, 120_000);
afterAll(async () => {
  await s?.shutdown();
});

/** Waits for the server's timing line of `version` (its run finished: every publication of it made). */
const settled = (uri: string, version: number) =>
  s.until(() => s.logs.find((l) => l.startsWith(`diagnostics ${uri} v${version}:`)), 120000, `the run of v${version}`);

describe('rapid edits of a 400-equation model', () => {
  it('never publishes a superseded version after a newer one, and ends with the last version', async () => {
    const uri = uriOf('rapid-chain.poise');
    expect((await s.open(uri, chain(0.01), 120000)).filter((d) => d.severity === 1)).toEqual([]);
    const start = s.published.get(uri)!.length;
    // qin −0.01 has no steady state (the square roots would need a negative drop): its point diagnostics
    // differ from the others', so a stale publication would show
    const values = [0.011, -0.01, 0.012, -0.01, 0.013, -0.01, 0.01];
    const gaps = [0, 40, 400, 0, 250, 700, 0];
    let last = 0;
    for (let i = 0; i < values.length; i++) {
      last = await s.change(uri, chain(values[i]));
      await sleep(gaps[i]);
    }
    await settled(uri, last);
    await sleep(300); // anything still on its way
    const list = s.published.get(uri)!.slice(start);
    const versions = list.map((p) => p.params.version!);
    for (let i = 1; i < versions.length; i++) expect(versions[i], `publication ${i} of ${versions.join(',')}`).toBeGreaterThanOrEqual(versions[i - 1]);
    expect(versions.at(-1)).toBe(last);
    // the last version's diagnostics: only the unused constant
    expect(list.at(-1)!.params.diagnostics.map((d) => d.code)).toEqual(['P203']);
  });

  it('a value edit’s first diagnostics equal those of the same text analysed in full', async () => {
    const uri = uriOf('rapid-quick.poise');
    const fresh = uriOf('rapid-fresh.poise');
    await s.open(uri, chain(0.01), 120000);
    // a longer number before the unused constant's line: every range after it moves
    const text = chain(0.01, 2.125);
    const logs = s.logs.length;
    const v = await s.change(uri, text);
    const first = await s.until(() => s.published.get(uri)!.find((p) => p.params.version === v), 60000, 'first diagnostics');
    await settled(uri, v);
    expect(s.logs.slice(logs).find((l) => l.startsWith(`diagnostics ${uri} v${v}:`))).toContain('value edit');
    const own = await s.open(fresh, text, 120000);
    const firstFresh = s.published.get(fresh)![0].params.diagnostics;
    const key = (ds: Diagnostic[]) => ds.map((d) => [d.code, d.range, d.message]);
    expect(key(first.params.diagnostics)).toEqual(key(firstFresh));
    expect(key(first.params.diagnostics)).toEqual([['P203', { start: { line: 3, character: 6 }, end: { line: 3, character: 11 } }, expect.any(String)]]);
    expect(key(s.published.get(uri)!.at(-1)!.params.diagnostics)).toEqual(key(own));
  });

  it('hovers and lenses asked right after a burst of edits are those of the last text', async () => {
    const uri = uriOf('rapid-hover.poise');
    await s.open(uri, chain(0.01), 120000);
    const h1 = () => s.hover(uri, s.pos(uri, 'state h1,', 6));
    for (const qin of [0.011, 0.013, 0.012]) await s.change(uri, chain(qin));
    // sent right after the last edit, before its diagnostics: h1 = n·(qin/k)² = 200·0.36 = 72 m
    const h = await h1();
    expect(h!.contents.value).toContain('| base | 72 m | solved |');
    const titles = async () => (await s.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } })).map((l) => l.command!.title);
    for (const qin of [0.011, 0.015, -0.01]) await s.change(uri, chain(qin));
    expect((await titles())[0]).toMatch(/^✗ Cannot solve/);
    for (const qin of [-0.01, 0.02, 0.01]) await s.change(uri, chain(qin));
    expect((await titles())[0]).toBe('Solve');
    // h1 = 200·0.25 = 50 m
    expect((await h1())!.contents.value).toContain('| base | 50 m | solved |');
  });
});

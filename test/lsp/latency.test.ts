/**
 * Diagnostics on a large model: a chain of 1000 tanks with turbulent links (2000 equations,
 * a·h_i' = q_{i−1} − q_i and q_i = k·√(h_i − h_{i+1})), edited one character at a time. Checks that every
 * edit gets the diagnostics of its own version and that they are right; MEASURES (prints, never asserts)
 * the latency from didChange to publishDiagnostics and the server's own time per stage.
 *
 * The steady state is known in closed form: every link carries the feed, q_i = qin, so
 * h_i − h_{i+1} = (qin/k)² and h_n = (qin/k)² (Torricelli outflow; common practice). The test checks the
 * hover value of a tank level against it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startSession, uriOf, type Session } from './session';

const N = 1000;
const QIN = 0.01;
const K = 0.02;

function chain(n: number): string {
  const L = [`# chain of ${n} tanks with turbulent links`, 'const a = 2 [m^2]', `const k = ${K} [m^2.5/s]`, 'input qin [m^3/s]'];
  const hs = Array.from({ length: n }, (_, i) => `h${i + 1}`);
  const qs = Array.from({ length: n }, (_, i) => `q${i + 1}`);
  L.push(`state ${hs.join(', ')} [m]`, `var ${qs.join(', ')} [m^3/s]`, '');
  for (let i = 1; i <= n; i++) {
    L.push(`a*h${i}' = ${i === 1 ? 'qin' : `q${i - 1}`} - q${i}`);
    L.push(i < n ? `q${i} = k*sqrt(h${i} - h${i + 1})` : `q${i} = k*sqrt(h${i})`);
  }
  L.push('', 'point base:', `  qin = ${QIN} [m^3/s]`);
  // guesses 10 % off the solution, so that Newton has work to do
  for (let i = 1; i <= n; i++) L.push(`  h${i} ~ ${(1.1 * (n - i + 1) * (QIN / K) ** 2).toPrecision(6)} [m]`);
  return L.join('\n') + '\n';
}

const median = (xs: number[]) => {
  const v = [...xs].sort((a, b) => a - b);
  return v.length % 2 ? v[(v.length - 1) / 2] : (v[v.length / 2 - 1] + v[v.length / 2]) / 2;
};

let s: Session;
beforeAll(async () => {
  s = await startSession({ settings: { digits: 4 }, initializationOptions: { timing: true } });
});
afterAll(async () => {
  await s?.shutdown();
});

describe('a 2,000-equation model', () => {
  it('gets the diagnostics of every one-character edit (latency measured, not asserted)', async () => {
    const uri = uriOf('chain.poise');
    const text = chain(N);
    const t0 = performance.now();
    expect(await s.open(uri, text, 120000)).toEqual([]);
    const openMs = performance.now() - t0;
    // hover of the last tank level: (qin/k)² (see above)
    const h = await s.hover(uri, s.pos(uri, `q${N} = k*sqrt(h${N})`, `q${N} = k*sqrt(`.length + 1));
    expect(h!.contents.value).toContain(`| base | ${Number(((QIN / K) ** 2).toPrecision(4))} m | solved |`);

    const first: number[] = [];
    const final: number[] = [];
    const serverAnalyze: number[] = [];
    const serverPoints: number[] = [];
    const rounds = 9;
    for (let r = 0; r < rounds; r++) {
      // one character: add or remove a space at the end of the first (comment) line
      const line0 = s.docs.get(uri)!.getText().split('\n', 1)[0];
      const add = r % 2 === 0;
      const pos = { line: 0, character: add ? line0.length : line0.length - 1 };
      const logsBefore = s.logs.length;
      const sent = performance.now();
      const v = await s.changeIncremental(uri, [{ range: { start: pos, end: add ? pos : { line: 0, character: line0.length } }, text: add ? ' ' : '' }]);
      const log = await s.until(() => s.logs.slice(logsBefore).find((l) => l.startsWith(`diagnostics ${uri} v${v}:`)), 120000, `timing of v${v}`);
      const mine = s.published.get(uri)!.filter((p) => p.params.version === v);
      expect(mine.length).toBeGreaterThanOrEqual(1);
      expect(mine.at(-1)!.params.diagnostics).toEqual([]);
      first.push(mine[0].at - sent);
      final.push(mine.at(-1)!.at - sent);
      const m = /analyze ([\d.]+) ms, points ([\d.]+) ms/.exec(log)!;
      serverAnalyze.push(Number(m[1]));
      serverPoints.push(Number(m[2]));
    }
    console.log(
      [
        `chain of ${N} tanks (${2 * N} equations): open → diagnostics ${openMs.toFixed(0)} ms`,
        `one-character didChange → first publishDiagnostics: median ${median(first).toFixed(0)} ms (includes the 30 ms debounce)`,
        `one-character didChange → final publishDiagnostics: median ${median(final).toFixed(0)} ms`,
        `server time per run: analyze (parse … structure) median ${median(serverAnalyze).toFixed(0)} ms, solve + linearize points median ${median(serverPoints).toFixed(0)} ms`,
      ].join('\n'),
    );
  });
});

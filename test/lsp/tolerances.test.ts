/**
 * Tolerance sampling in the language server, through the real server over stdio (server/src/lsp/tolerances.ts):
 * Latin hypercube samples solved in worker threads, shown in the hover of a toleranced constant or a point
 * and on the report page, and cancelled by the next edit.
 *
 * Outside reference: for x' = (a − b)·x with a uniform over 1 ± 10 % and b = 1.02, the eigenvalue is
 * λ = a − b, so P(unstable) = P(a > 1.02) = (1.1 − 1.02)/0.2 = 0.4 (uniform distribution, closed form), and
 * Re λ spans −0.12 … +0.08 (the band's ends). With N Latin hypercube strata of width 0.2/N, exactly 0.4·N
 * strata lie above 1.02 (the one straddling it aside) whatever the seed (McKay, Beckman & Conover 1979).
 * Independent route: the same count from the command (`poise sensitivity --samples N --seed 1`).
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EXAMPLES, runCli, scratchDir } from '../helpers/cli';
import { startSession, uriOf, type Session } from './session';

const GROW = [
  'const a = 1 [1/s] ± 10 %',
  'const b = 1.02 [1/s]',
  'input u',
  'state x',
  "x' = (a - b)*x + u*1 [1/s]",
  'point p:',
  '  u = 0',
  '',
].join('\n');

let s: Session;
beforeAll(async () => {
  s = await startSession({ settings: { digits: 4, activePoint: '', toleranceSamples: 1000 } });
});
afterAll(async () => {
  await s?.shutdown();
});

const hoverAt = async (uri: string, needle: string) => (await s.hover(uri, s.pos(uri, needle)))?.contents.value ?? '';

/** Hovers until the sampled section is in (the first hover starts the samples). */
async function sampledHover(uri: string, needle: string): Promise<string> {
  for (let i = 0; i < 400; i++) {
    const md = await hoverAt(uri, needle);
    if (md.includes('Tolerance bands at point')) return md;
    expect(md).toMatch(/Sampling the tolerances: \d+ Latin hypercube samples/);
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`no sampled bands in the hover at ${needle}`);
}

describe('tolerance samples in the language server', () => {
  it('shows the sampled bands and the share of unstable samples in the hover of a toleranced constant', async () => {
    const uri = uriOf('grow.poise');
    await s.open(uri, GROW);
    const md = await sampledHover(uri, 'a = 1');
    // P(a > 1.02) = 0.4: 400 of 1000 strata (± the straddling one)
    const m = /Unstable: (\d+) of (\d+) samples/.exec(md);
    expect(m, md).not.toBeNull();
    expect(Number(m![2])).toBe(1000);
    expect(Math.abs(Number(m![1]) - 400)).toBeLessThanOrEqual(1);
    // the mode's row: λ = −0.02; first order −0.12 … 0.08 exactly (λ linear in a); samples inside it
    const row = md.split('\n').find((l) => l.startsWith('| 1 |'))!;
    const cells = row.split('|').map((c) => c.trim());
    expect(Number(cells[2])).toBeCloseTo(-0.02, 12);
    expect(cells[3]).toBe('-0.12 … 0.08');
    const [lo, hi] = cells[4].replace(/ \(reaches the axis\)$/, '').split(' … ').map(Number);
    expect(lo).toBeGreaterThanOrEqual(-0.12);
    expect(lo).toBeLessThan(-0.1198); // the lowest stratum is 0.2/1000 wide
    expect(hi).toBeLessThanOrEqual(0.08);
    expect(hi).toBeGreaterThan(0.0798);
    expect(cells[4]).toMatch(/reaches the axis/);
    // the point's name shows the same samples
    const onPoint = await sampledHover(uri, 'p:');
    expect(onPoint).toContain(m![0]);
  });

  it('agrees with the command on the same samples (seed 1)', async () => {
    const dir = scratchDir('lsp-tolerances');
    const file = path.join(dir, 'grow.poise');
    fs.writeFileSync(file, GROW);
    const r = runCli(['sensitivity', file, '--samples', '1000', '--seed', '1', '--format', 'json']);
    expect(r.code, r.stderr).toBe(0);
    const cli = JSON.parse(r.stdout) as { sampled: { unstable: number; count: number } };
    const md = await sampledHover(uriOf('grow.poise'), 'a = 1');
    expect(md).toContain(`Unstable: ${cli.sampled.unstable} of ${cli.sampled.count} samples`);
  });

  it('puts the sampled bands and the pole cloud on the report page', async () => {
    const uri = uriOf('grow.poise');
    const r = await s.request<{ html: string }>('poise/report', { uri, point: 'p' });
    expect(r.html).toMatch(/1000 Latin hypercube samples \(seed 1\): (399|400|401) of 1000 unstable/);
    expect(r.html).toContain('Re λ, 1000 samples');
  });

  it('cancels a run at the next edit and samples the new text', async () => {
    const uri = uriOf('wax.poise');
    const text = fs.readFileSync(path.join(EXAMPLES, 'wax_melter.poise'), 'utf8');
    await s.open(uri, text);
    s.settings = { digits: 4, activePoint: '', toleranceSamples: 20000 };
    await s.conn.sendNotification('workspace/didChangeConfiguration', { settings: { poise: s.settings } });
    // once the server has pulled the new settings, the hover starts a run of 20000 samples
    let first = '';
    for (let i = 0; i < 100 && !first.includes('20000'); i++) first = await hoverAt(uri, 'cpot =');
    expect(first).toContain('Sampling the tolerances: 20000 Latin hypercube samples');
    await s.change(uri, text.replace('± 5 %', '± 6 %'));
    await s.until(() => s.logs.some((l) => /tolerance samples melting: cancelled by an edit/.test(l)), 20000, 'the cancelled run');
    const again = await hoverAt(uri, 'cpot =');
    expect(again).toContain('Sampling the tolerances: 20000');
    await s.closeDoc(uri);
  });

  it('leaves sampling out with toleranceSamples = 0', async () => {
    s.settings = { digits: 4, activePoint: '', toleranceSamples: 0 };
    await s.conn.sendNotification('workspace/didChangeConfiguration', { settings: { poise: s.settings } });
    const uri = uriOf('grow0.poise');
    await s.open(uri, GROW);
    let md = await hoverAt(uri, 'a = 1');
    for (let i = 0; i < 100 && md.includes('Sampling the tolerances'); i++) md = await hoverAt(uri, 'a = 1');
    expect(md).toContain('**constant**');
    expect(md).not.toContain('Sampling the tolerances');
    expect(md).not.toContain('Tolerance bands at point');
  });
});

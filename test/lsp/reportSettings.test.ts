/**
 * The report's sampled-data section through the real server with `poise.reportHold` and `poise.reportDelay`
 * (docs/editor.md). The tower example's level pole is s = −demand'/area = −(0.5·540/(2·√4) L/min/m)/(12 m²)
 * = −0.005625 1/min (derived by hand from the model text), sampled at T = 15 s = 0.25 min:
 * - Tustin maps it to z = (1 + sT/2)/(1 − sT/2) (the bilinear map; Franklin, Powell & Workman, *Digital
 *   Control of Dynamic Systems*, ch. 6), not to e^{sT};
 * - a zero-order hold with an input delay of 0.3 of a sample adds one state per input, `INPUT@prev`, with its
 *   pole at z = 0 (the delayed input is one sample's memory; same text, ch. 4).
 * Independent route: the same figures from `poise sample --every 15[s] --hold tustin` on the command line.
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, describe, expect, it } from 'vitest';
import { EXAMPLES, runCli } from '../helpers/cli';
import { startSession, uriOf, type Session } from './session';

const TOWER = path.join(EXAMPLES, 'tower_level_loop.poise');
const s0 = -0.005625;
const T = 0.25;

const sessions: Session[] = [];
afterAll(async () => {
  for (const s of sessions) await s.shutdown();
});

async function report(settings: Record<string, unknown>): Promise<string> {
  const s = await startSession({ settings: { digits: 4, activePoint: '', reportSampleTime: '15[s]', ...settings } });
  sessions.push(s);
  const uri = uriOf('tower-settings.poise');
  await s.open(uri, fs.readFileSync(TOWER, 'utf8'));
  return (await s.request<{ html: string }>('poise/report', { uri, point: 'morning' })).html;
}

describe('poise.reportHold and poise.reportDelay', () => {
  it('samples by the bilinear map with reportHold = tustin', async () => {
    const html = await report({ reportHold: 'tustin' });
    // every row of the pole table: s, z, |z|; z = (1 + sT/2)/(1 − sT/2) for each real s (the bilinear map), not e^{sT}
    const rows = [...html.matchAll(/<tr><td class="num">\d+<\/td><td class="num mono">([^<]+)<\/td><td class="num mono">([^<]+)<\/td>/g)].map((m) => [Number(m[1].replace('−', '-')), Number(m[2].replace('−', '-'))]);
    expect(rows.length).toBe(3);
    for (const [sv, z] of rows) {
      expect(z).toBeCloseTo((1 + (sv * T) / 2) / (1 - (sv * T) / 2), 3);
      if (sv < -1) expect(Math.abs(z - Math.exp(sv * T))).toBeGreaterThan(0.01); // the fast poles tell the maps apart
    }
    // the level pole derived by hand
    expect(rows.some(([sv]) => Math.abs(sv - s0) < 1e-6)).toBe(true);
    // the command gives the same poles
    const cli = runCli(['sample', TOWER, '--point', 'morning', '--every', '15[s]', '--hold', 'tustin', '--format', 'json']);
    expect(cli.code, cli.stderr).toBe(0);
    const poles = (JSON.parse(cli.stdout) as { poles: { z: { re: number } }[] }).poles.map((p) => p.z.re).sort((x, y) => x - y);
    const page = rows.map((r) => r[1]).sort((x, y) => x - y);
    poles.forEach((z, k) => expect(page[k]).toBeCloseTo(z, 3));
  });

  it('adds the delayed inputs with reportDelay = 0.3 (zero-order hold), and leaves the delay out with the first-order hold', async () => {
    const html = await report({ reportDelay: 0.3 });
    expect(html).toContain('input delay 0.3·T');
    expect(html).toContain('held input (delay)');
    const foh = await report({ reportHold: 'foh', reportDelay: '30%' });
    expect(foh).toContain('<section id="sampled">');
    expect(foh).not.toContain('input delay');
    expect(foh).not.toContain('held input (delay)');
  });
});

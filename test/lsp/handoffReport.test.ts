/**
 * The report through the real server over stdio with the hand-off settings (`poise.reportSampleTime`,
 * `poise.reportReduce`): the page gains the sampled-data and smaller-model sections. The figures are
 * checked by hand: the tower example's level pole s = −demand'/area = −(0.5·540/(2·√4) L/min/m)/(12 m²)
 * = −0.005625 1/min, so z = e^{sT} at T = 15 s = 0.25 min (Franklin, Powell & Workman, ch. 4).
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EXAMPLES } from '../helpers/cli';
import { startSession, uriOf, type Session } from './session';

let s: Session;
beforeAll(async () => {
  s = await startSession({ settings: { digits: 4, activePoint: '', reportSampleTime: '15[s]', reportReduce: true } });
});
afterAll(async () => {
  await s?.shutdown();
});

describe('poise/report with the hand-off settings', () => {
  it('has the sampled-data section at T = 0.25 min and the smaller-model section', async () => {
    const uri = uriOf('tower-report.poise');
    await s.open(uri, fs.readFileSync(path.join(EXAMPLES, 'tower_level_loop.poise'), 'utf8'));
    const r = await s.request<{ html: string; title: string }>('poise/report', { uri, point: 'morning' });
    expect(r.html).toContain('<section id="sampled">');
    expect(r.html).toContain('sample time T = 0.25 min');
    const z = Math.exp(-0.005625 * 0.25);
    expect(r.html).toContain(`<td class="num">${Number(z.toPrecision(4))}</td>`);
    expect(r.html).toContain('<section id="reduced">');
    expect(r.html).toMatch(/Hankel singular values/);
  });
});

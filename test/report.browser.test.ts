/**
 * The report page in a real browser: Debian's headless Chromium (/usr/bin/chromium) driven by
 * playwright-core. For several reports (stable, marginal with an integrator, unstable; light and dark; the
 * webview variant with a nonce-based policy) it checks that every plot drew (non-empty paths with a
 * non-empty box on screen), that the axis labels are there, that nothing was logged to the console (a
 * blocked script or style under the content security policy is logged as an error) and that the inline
 * script ran (the cursor read-out); screenshots are kept in artifacts/report/NAME.png.
 *
 * Skipped, with a message, when /usr/bin/chromium is not installed (`apt-get install chromium`).
 */
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { chromium, type BrowserContext } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { buildReport } from '../server/src/core/analysis/report';
import { renderReportHtml } from '../server/src/core/present/reportHtml';

const CHROMIUM = '/usr/bin/chromium';
const ROOT = path.resolve(__dirname, '..');
const ARTIFACTS = path.join(ROOT, 'artifacts', 'report');
const have = fs.existsSync(CHROMIUM);
if (!have) console.warn(`report.browser.test: skipped — ${CHROMIUM} is not installed (apt-get install chromium)`);

interface Case {
  name: string;
  file: string;
  point: string;
  scheme: 'light' | 'dark';
  bodyClass?: string;
  nonce?: string;
}

const CASES: Case[] = [
  { name: 'buffer_tank-dry_day', file: 'examples/buffer_tank.poise', point: 'dry_day', scheme: 'light' },
  { name: 'gantry_crane-dark', file: 'examples/gantry_crane.poise', point: 'parked_in_wind', scheme: 'dark' },
  { name: 'belt_drive-slow', file: 'examples/belt_drive.poise', point: 'slow', scheme: 'light' },
  { name: 'glasshouse_loop-webview-dark', file: 'examples/glasshouse_loop.poise', point: 'night', scheme: 'light', bodyClass: 'vscode-dark', nonce: 'Zm9yLXRoZS10ZXN0' },
];

describe.skipIf(!have)(`report page in headless Chromium (${CHROMIUM})`, () => {
  let ctx: BrowserContext;
  let profile: string;
  let pages: string;
  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    profile = fs.mkdtempSync(path.join(os.tmpdir(), 'poise-chromium-'));
    pages = fs.mkdtempSync(path.join(os.tmpdir(), 'poise-pages-'));
    ctx = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
      viewport: { width: 1200, height: 900 },
    });
  }, 60_000);
  afterAll(async () => {
    await ctx?.close();
    for (const d of [profile, pages]) if (d) fs.rmSync(d, { recursive: true, force: true });
  });

  for (const c of CASES) {
    it(c.name, async () => {
      const a = analyze(fs.readFileSync(path.join(ROOT, c.file), 'utf8'));
      const data = buildReport(a, c.point, { title: path.basename(c.file) });
      expect(data.ok).toBe(true);
      let html = renderReportHtml(data, c.nonce ? { nonce: c.nonce, cspSource: 'https://*.vscode-cdn.net' } : {});
      if (c.bodyClass) html = html.replace('<body>', `<body class="${c.bodyClass}">`);
      const file = path.join(pages, `${c.name}.html`);
      fs.writeFileSync(file, html);

      const page = await ctx.newPage();
      const problems: string[] = [];
      page.on('console', (m) => {
        if (m.type() === 'error' || m.type() === 'warning') problems.push(`${m.type()}: ${m.text()}`);
      });
      page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
      page.on('request', (r) => {
        if (!r.url().startsWith('file:') && !r.url().startsWith('data:')) problems.push(`network request: ${r.url()}`);
      });
      await page.emulateMedia({ colorScheme: c.scheme });
      await page.goto(`file://${file}`);
      await page.waitForLoadState('load');

      const plots = await page.$$eval('svg.plot', (svgs) =>
        svgs.map((s) => {
          const r = s.getBoundingClientRect();
          const series = Array.from(s.querySelectorAll('path.series')).map((p) => {
            const b = (p as SVGPathElement).getBBox();
            return { d: p.getAttribute('d') ?? '', w: b.width, h: b.height };
          });
          const labels = Array.from(s.querySelectorAll('text.axis-label')).map((t) => t.textContent ?? '');
          const ticks = s.querySelectorAll('text.tick').length;
          return { w: r.width, h: r.height, series, labels, ticks, title: s.getAttribute('aria-label') };
        }),
      );
      // pole–zero map + 2 per pair (magnitude, phase) + step panels + validity plots
      const pairs = data.frequency!.pairs.filter((p) => p.magnitudeDb.some((v) => v !== null)).length;
      expect(plots.length).toBeGreaterThanOrEqual(1 + 2 * pairs + data.inputs.length);
      for (const p of plots) {
        expect(p.w, `${p.title} width`).toBeGreaterThan(200);
        expect(p.h, `${p.title} height`).toBeGreaterThan(100);
        expect(p.series.length, `${p.title} has a drawn series`).toBeGreaterThan(0);
        expect(p.series.some((s) => /^M[-\d.]+ [-\d.]+/.test(s.d) && (s.w > 0 || s.h > 0)), `${p.title}: a non-empty path`).toBe(true);
        expect(p.labels, `${p.title} axis labels`).toHaveLength(2);
        for (const l of p.labels) expect(l.trim().length).toBeGreaterThan(3);
        expect(p.ticks).toBeGreaterThanOrEqual(4);
      }
      // the cautions are on the page
      const text = await page.innerText('body');
      expect(text).toContain('A linear model describes the plant only near the operating point');
      expect(text).toContain('licensed professional practice');

      // the inline script ran (allowed by the policy): the read-out follows the cursor
      const box = await page.locator('svg.plot').nth(1).boundingBox();
      await page.locator('svg.plot').nth(1).scrollIntoViewIfNeeded();
      const box2 = (await page.locator('svg.plot').nth(1).boundingBox()) ?? box!;
      await page.mouse.move(box2.x + box2.width * 0.5, box2.y + box2.height * 0.45);
      const readout = await page.locator('svg.plot').nth(1).locator('text.readout').textContent();
      expect(readout ?? '').toMatch(/[-\d.e]+, [-\d.e]+/);

      // theme: dark pages get a dark background
      const bg = await page.evaluate(() => getComputedStyle(document.body).backgroundColor);
      const lum = (bg.match(/\d+/g) ?? ['0', '0', '0']).slice(0, 3).map(Number).reduce((s, v) => s + v, 0) / 3;
      if (c.scheme === 'dark' || c.bodyClass === 'vscode-dark') expect(lum, bg).toBeLessThan(80);
      else expect(lum, bg).toBeGreaterThan(200);

      await page.mouse.move(0, 0);
      await page.evaluate(() => window.scrollTo(0, 0));
      await page.screenshot({ path: path.join(ARTIFACTS, `${c.name}.png`), fullPage: true });
      await page.close();
      expect(problems).toEqual([]);
    }, 60_000);
  }
});

if (!have) {
  describe('report page in headless Chromium', () => {
    it.skip(`skipped: ${CHROMIUM} is not installed`, () => undefined);
  });
}

#!/usr/bin/env node
// End-to-end test of the packaged extension in a real VS Code (the browser-served build set up by
// test/e2e/setup-editor.sh), driven through headless Chromium with playwright-core.
//
// Usage:  node test/e2e/editor.e2e.mjs            (from the repository root; exits non-zero on any failure)
//
// Steps, each a function below, run in order; the run stops at the first failure:
//   host       set up (or reuse) the editor host                      test/e2e/setup-editor.sh
//   package    build poise-VERSION.vsix (npm run package), or take $POISE_VSIX
//   install    install the vsix into the editor host, check it landed in its extensions folder
//   workspace  copy examples/ into a fresh temporary workspace
//   editor     start the editor on a free port, open the workbench in Chromium
//   open       open an example .poise file; check the language mode says Poise and the text is coloured
//   lenses     wait for the Solve and Linearize code lenses                       (POISE_E2E_LENSES=0 skips)
//   linearize  click Linearize, save, read back the generated `linear` block     (POISE_E2E_LINEARIZE=0 skips)
//   hover      hover an equation line, read the local-gains table in the hover   (POISE_E2E_HOVER=0 skips)
//   report     click Report; in the webview (nested iframes) find SVG charts with drawn paths and axis
//              labels, check the page's Content-Security-Policy                   (POISE_E2E_REPORT=0 skips)
//   sweep      click the Run sweep lens of the file's declared `sweep` block; check the sweep page's charts
//              (against the swept name) and, for belt_drive, the stability change (POISE_E2E_SWEEP=0 skips)
// Environment:
//   POISE_EDITOR_HOST   editor host folder (default /tmp/poise-editor-host)
//   POISE_VSIX          use this vsix instead of packaging one
//   POISE_E2E_EXAMPLES  folder copied into the workspace (default: examples/)
//   POISE_E2E_FILE      the .poise file to open, relative to that folder (default: the first one with a point)
//   POISE_E2E_TIMEOUT   seconds to wait for each editor reaction (default 60)
// Screenshots go to artifacts/e2e/. The editor is always stopped by its pid (its process group).
import { execFileSync, spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const repo = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
const host = resolve(process.env.POISE_EDITOR_HOST || '/tmp/poise-editor-host');
const artifacts = join(repo, 'artifacts', 'e2e');
const timeout = Number(process.env.POISE_E2E_TIMEOUT || 60) * 1000;
const enabled = (name) => process.env[`POISE_E2E_${name}`] !== '0';
const pkg = JSON.parse(readFileSync(join(repo, 'package.json'), 'utf8'));

const state = { editorPid: undefined, browser: undefined, page: undefined, workspace: undefined, file: undefined };
const results = [];

function log(line) {
  console.log(line);
}

/** Polls `probe` until it returns a truthy value (returned) or the time is up (throws, naming `what`). */
async function until(what, probe, ms = timeout) {
  const end = Date.now() + ms;
  let last;
  for (let delay = 100; ; delay = Math.min(delay * 1.5, 1000)) {
    try {
      const value = await probe();
      if (value) return value;
    } catch (e) {
      last = e;
    }
    if (Date.now() > end) {
      throw new Error(`timed out after ${ms / 1000} s waiting for ${what}${last ? ` (last error: ${last.message})` : ''}`);
    }
    await new Promise((r) => setTimeout(r, delay));
  }
}

async function screenshot(name) {
  if (!state.page) return;
  mkdirSync(artifacts, { recursive: true });
  const path = join(artifacts, `${name}.png`);
  await state.page.screenshot({ path }).catch(() => {});
  log(`  screenshot: ${relative(repo, path)}`);
}

// ---------------------------------------------------------------------------------------------- steps

function stepHost() {
  const r = spawnSync('bash', [join(repo, 'test', 'e2e', 'setup-editor.sh'), host], { stdio: 'inherit' });
  if (r.status !== 0) throw new Error(`setup-editor.sh failed (exit ${r.status})`);
  for (const f of ['start.sh', 'install-extension.sh', 'node_modules/playwright-core/index.mjs']) {
    if (!existsSync(join(host, f))) throw new Error(`the editor host lacks ${f}`);
  }
  return `editor host ready in ${host}`;
}

function stepPackage() {
  if (process.env.POISE_VSIX) {
    state.vsix = resolve(process.env.POISE_VSIX);
    if (!existsSync(state.vsix)) throw new Error(`POISE_VSIX=${state.vsix} does not exist`);
    return `using ${state.vsix}`;
  }
  state.vsix = join(repo, `poise-${pkg.version}.vsix`);
  rmSync(state.vsix, { force: true });
  const r = spawnSync('npm', ['run', 'package'], { cwd: repo, stdio: 'inherit' });
  if (r.status !== 0 || !existsSync(state.vsix)) throw new Error(`npm run package failed (exit ${r.status})`);
  return `packaged ${relative(repo, state.vsix)} (${(statSync(state.vsix).size / 1024).toFixed(0)} KB)`;
}

function stepInstall() {
  const out = execFileSync(join(host, 'install-extension.sh'), [state.vsix], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
  const id = `${pkg.publisher}.${pkg.name}`;
  const folder = join(host, 'extensions', `${id}-${pkg.version}`);
  if (!existsSync(join(folder, 'package.json'))) throw new Error(`the extension is not in ${folder}:\n${out}`);
  for (const f of ['dist/extension.js', 'dist/server.js', 'syntaxes/poise.tmLanguage.json', 'language-configuration.json']) {
    if (!existsSync(join(folder, f))) throw new Error(`the installed extension lacks ${f}`);
  }
  return `installed ${id} ${pkg.version} into ${relative(host, folder)} (${out.trim().split('\n').pop()})`;
}

function findPoiseFiles(dir, base = dir) {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = join(dir, e.name);
    if (e.isDirectory()) return findPoiseFiles(p, base);
    return e.name.endsWith('.poise') ? [relative(base, p)] : [];
  });
}

function stepWorkspace() {
  const source = resolve(process.env.POISE_E2E_EXAMPLES || join(repo, 'examples'));
  const files = existsSync(source) ? findPoiseFiles(source).sort() : [];
  if (files.length === 0) throw new Error(`no .poise files in ${source}`);
  const file =
    process.env.POISE_E2E_FILE ||
    files.find((f) => /^point\s+\S+\s*:/m.test(readFileSync(join(source, f), 'utf8'))) ||
    files[0];
  if (!files.includes(file)) throw new Error(`${file} is not in ${source}`);
  state.workspace = mkdtempSync(join(tmpdir(), 'poise-e2e-ws-'));
  cpSync(source, state.workspace, { recursive: true });
  state.file = file;
  // drop generated `linear` blocks from the file under test, so that Linearize has to insert one
  const path = join(state.workspace, file);
  const lines = readFileSync(path, 'utf8').split('\n');
  const kept = [];
  let dropped = 0;
  for (let i = 0; i < lines.length; i++) {
    if (/^linear\s+\S+\s+digest\s+[0-9a-fA-F]+\s*:/.test(lines[i])) {
      dropped++;
      while (i + 1 < lines.length && /^\s+\S/.test(lines[i + 1])) i++;
    } else {
      kept.push(lines[i]);
    }
  }
  if (dropped) writeFileSync(path, kept.join('\n'));
  return `workspace ${state.workspace} with ${files.length} .poise file(s); testing ${file}` +
    (dropped ? ` (removed ${dropped} generated linear block(s) from it)` : '');
}

function freePort() {
  return new Promise((res, rej) => {
    const s = createServer();
    s.on('error', rej);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address();
      s.close(() => res(port));
    });
  });
}

async function stepEditor() {
  const port = await freePort();
  const r = spawnSync(join(host, 'start.sh'), [String(port), state.workspace], { encoding: 'utf8' });
  const pid = Number((r.stdout || '').trim().split('\n')[0]);
  if (Number.isInteger(pid) && pid > 0) state.editorPid = pid;
  if (r.status !== 0 || !state.editorPid) throw new Error(`start.sh failed (exit ${r.status}): ${r.stderr}`);
  const { chromium } = await import(join(host, 'node_modules', 'playwright-core', 'index.mjs'));
  state.browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking',
           '--disable-component-update', '--disable-sync'],
  });
  const page = await state.browser.newPage({ viewport: { width: 1400, height: 850 } });
  state.page = page;
  state.pageErrors = [];
  page.on('console', (m) => { if (m.type() === 'error') state.pageErrors.push(m.text().slice(0, 300)); });
  await page.goto(`http://127.0.0.1:${port}/?folder=${encodeURIComponent(state.workspace)}`);
  await page.waitForSelector('.monaco-workbench', { timeout });
  return `editor pid ${state.editorPid} on port ${port}; workbench loaded`;
}

/** The text of the tab, status-bar language mode etc. for the file under test. */
async function activeFileOpen(page, name) {
  const tab = await page.locator('.tab.active').first().innerText({ timeout: 500 }).catch(() => '');
  return tab.includes(name) && (await page.locator('.editor-instance .view-line').count()) > 0;
}

async function stepOpen() {
  const page = state.page;
  const name = state.file.split('/').pop();
  await until(`${state.file} to open in an editor`, async () => {
    if (await activeFileOpen(page, name)) return true;
    // quick open (Ctrl+P), type the path, accept; retried while the workbench is still busy starting
    await page.keyboard.press('Control+P');
    const input = page.locator('.quick-input-widget input');
    await input.waitFor({ state: 'visible', timeout: 3000 });
    await input.fill(state.file);
    await page.locator('.quick-input-list .monaco-list-row').first().waitFor({ timeout: 3000 });
    await page.keyboard.press('Enter');
    await page.locator('.tab.active').filter({ hasText: name }).waitFor({ timeout: 3000 });
    return activeFileOpen(page, name);
  });
  // the language mode in the status bar comes from the extension's `languages` contribution
  const mode = await until('the status bar to show the language mode Poise', async () => {
    const text = await page.locator('#status\\.editor\\.mode').innerText({ timeout: 500 });
    return text.trim() === 'Poise' ? text.trim() : false;
  });
  // colouring comes from the TextMate grammar: tokens of different scopes get different `mtkN` classes
  const colouring = await until('syntax colouring of the text', async () => {
    const info = await page.evaluate(() => {
      const spans = [...document.querySelectorAll('.editor-instance .view-line span span')];
      const byText = {};
      const classes = new Set();
      for (const s of spans) {
        const c = [...s.classList].find((k) => /^mtk\d+$/.test(k));
        if (!c) continue;
        classes.add(c);
        const t = s.textContent.trim();
        if (t && !(t in byText)) byText[t] = c;
      }
      return { classes: [...classes], byText };
    });
    const kw = info.byText.point ?? info.byText.state ?? info.byText.const;
    const comment = Object.entries(info.byText).find(([t]) => t.startsWith('#'))?.[1];
    return info.classes.length >= 3 && kw && comment && kw !== comment ? info : false;
  });
  await screenshot('01-opened');
  return `opened ${state.file}; language mode "${mode}"; ${colouring.classes.length} distinct token colours (keyword ≠ comment)`;
}

async function lensTexts(page) {
  return (await page.locator('.codelens-decoration a').allInnerTexts()).map((t) => t.trim()).filter(Boolean);
}

async function stepLenses() {
  const page = state.page;
  const texts = await until('the Solve and Linearize code lenses', async () => {
    const t = await lensTexts(page);
    return t.some((x) => /\bSolve\b/.test(x)) && t.some((x) => /\bLinearize\b/.test(x)) ? t : false;
  });
  await screenshot('02-lenses');
  return `code lenses: ${JSON.stringify([...new Set(texts)])}`;
}

function pointNames(text) {
  return [...text.matchAll(/^point\s+([^\s:]+)\s*:/gm)].map((m) => m[1]);
}

async function clickLens(page, title) {
  const lens = page.locator('.codelens-decoration a').filter({ hasText: new RegExp(`\\b${title}\\b`) }).first();
  await lens.waitFor({ timeout });
  await lens.click();
}

async function stepLinearize() {
  const page = state.page;
  const path = join(state.workspace, state.file);
  const before = readFileSync(path, 'utf8');
  const points = pointNames(before);
  const header = /^linear\s+(\S+)\s+digest\s+([0-9a-f]{8})\s*:.*$/gm;
  const countBefore = [...before.matchAll(header)].length;
  await clickLens(page, 'Linearize');
  // the server edits the document (workspace/applyEdit); save it and read the file back
  const after = await until('a new generated linear block in the saved file', async () => {
    await page.keyboard.press('Control+S'); // a workbench key binding: saves the active editor
    const text = readFileSync(path, 'utf8');
    return [...text.matchAll(header)].length > countBefore ? text : false;
  });
  const lines = after.split('\n');
  const old = new Set(before.split('\n'));
  const start = lines.findIndex((l) => /^linear\s/.test(l) && !old.has(l));
  const block = [lines[start]];
  for (let i = start + 1; i < lines.length && /^\s+\S/.test(lines[i]); i++) block.push(lines[i]);
  const m = /^linear\s+(\S+)\s+digest\s+([0-9a-f]{8})\s*:/.exec(block[0]);
  if (!m) throw new Error(`the generated header does not read "linear NAME digest HEX:": ${block[0]}`);
  if (!points.includes(m[1])) throw new Error(`the linear block names point '${m[1]}', which is not one of ${points.join(', ')}`);
  if (!block.some((l) => /^\s+at\s+\S+\s*=/.test(l))) throw new Error(`no "at name = value" line in:\n${block.join('\n')}`);
  if (!block.some((l) => /^\s+Δ\S+'\s*=/.test(l))) throw new Error(`no "Δx' = ..." line in:\n${block.join('\n')}`);
  await screenshot('03-linearized');
  log(block.map((l) => `    | ${l}`).join('\n'));
  return `Linearize inserted a ${block.length}-line block for point '${m[1]}' (digest ${m[2]})`;
}

/** The first equation line of the model (1-based line number and its text): top level, not a declaration. */
function equationLine(text) {
  const lines = text.split('\n');
  const i = lines.findIndex((l) => {
    const code = l.replace(/#.*/, '');
    return /^\S/.test(code) && code.includes('=') &&
      !/^(time|const|input|state|var|output|point|linear|sweep)\b/.test(code);
  });
  if (i < 0) throw new Error('the model has no equation line to hover');
  return { line: i + 1, text: lines[i] };
}

/** The centre of character `column` (0-based) of editor line `line` (1-based), which must be rendered. */
async function charPosition(page, line, column) {
  return page.evaluate(({ line, column }) => {
    const editor = document.querySelector('.editor-instance .monaco-editor');
    const gutter = [...editor.querySelectorAll('.line-numbers')].find((e) => e.textContent.trim() === String(line));
    if (!gutter) return null;
    const y = gutter.getBoundingClientRect().top;
    const row = [...editor.querySelectorAll('.view-line')].find((e) => Math.abs(e.getBoundingClientRect().top - y) < 2);
    if (!row) return null;
    const walker = document.createTreeWalker(row, NodeFilter.SHOW_TEXT);
    let offset = column;
    for (let node = walker.nextNode(); node; node = walker.nextNode()) {
      const len = node.textContent.length;
      if (offset < len) {
        const range = document.createRange();
        range.setStart(node, offset);
        range.setEnd(node, offset + 1);
        const r = range.getBoundingClientRect();
        return { x: r.left + r.width / 2, y: r.top + r.height / 2 };
      }
      offset -= len;
    }
    return null;
  }, { line, column });
}

async function stepHover() {
  const page = state.page;
  const text = readFileSync(join(state.workspace, state.file), 'utf8');
  const eq = equationLine(text);
  // candidate places on the line: the '=' (an equation's hover shows its local gains), then the names
  const firstName = eq.text.search(/[\p{L}_]/u);
  const equals = eq.text.indexOf('=');
  const afterEquals = equals + 1 + eq.text.slice(equals + 1).search(/[\p{L}_]/u);
  const table = await until(`a hover with a table on line ${eq.line}`, async () => {
    for (const column of [equals, equals - 1, firstName, afterEquals]) {
      // go to the line (Ctrl+G) so that it is rendered, then move the mouse over the character
      await page.keyboard.press('Escape');
      await page.keyboard.press('Control+G');
      const input = page.locator('.quick-input-widget input');
      await input.waitFor({ state: 'visible', timeout: 3000 });
      await input.fill(`:${eq.line}:${column + 1}`);
      await page.keyboard.press('Enter');
      const at = await charPosition(page, eq.line, column);
      if (!at) continue;
      await page.mouse.move(at.x - 40, at.y - 40);
      await page.mouse.move(at.x, at.y, { steps: 4 });
      const rows = await until('the hover', async () => {
        const hover = page.locator('.monaco-hover-content:visible');
        if (!(await hover.count())) return false;
        const r = await hover.first().evaluate((el) =>
          [...el.querySelectorAll('table tr')].map((tr) => [...tr.querySelectorAll('th,td')].map((c) => c.textContent.trim())));
        // the local-gains table names partial derivatives (∂)
        return r.length && JSON.stringify(r).includes('∂') ? r : false;
      }, 5000).catch(() => false);
      if (rows) return { rows, column };
    }
    return false;
  });
  // cells such as "0.001082 L/s per m" or "-1.5e-3": a number, optionally followed by a unit
  const numeric = table.rows.flat().filter((c) => /^[-+−]?(\d+\.?\d*|\.\d+)([eE][-+−]?\d+)?(\s|$)/.test(c.trim()));
  if (table.rows.length < 2 || numeric.length === 0) {
    throw new Error(`the hover table has no numeric entries: ${JSON.stringify(table.rows)}`);
  }
  await screenshot('04-hover');
  log(table.rows.map((r) => `    | ${r.join(' | ')} |`).join('\n'));
  return `hover on line ${eq.line} (column ${table.column + 1}) shows a ${table.rows.length}-row table with ${numeric.length} numbers`;
}

/**
 * What a webview page shows, read inside its frame. VS Code nests each webview in two iframes (the host
 * frame and the `active-frame` holding our page); page.frames() lists nested frames too, so every frame is
 * tried and the one whose document title matches `titlePattern` (a regular expression source) is taken.
 */
async function webviewInfo(page, titlePattern) {
  for (const frame of page.frames().filter((f) => f !== page.mainFrame())) {
    const info = await frame.evaluate((pattern) => {
      if (!new RegExp(pattern).test(document.title)) return null;
      const svgs = [...document.querySelectorAll('svg')];
      const plots = svgs.filter((s) => s.querySelector('text')); // charts, not the small legend swatches
      const drawn = (p) => (p.getAttribute('d') || '').trim().length > 2;
      // axis labels: text elements of a chart classed as labels/axes and holding words (e.g. "belt [m/s]")
      const labelOf = (t) => /label|axis/.test(t.getAttribute('class') || '') && /\p{L}/u.test(t.textContent || '');
      return {
        title: document.title,
        svgs: svgs.length,
        plots: plots.length,
        paths: [...document.querySelectorAll('svg path')].filter(drawn).length,
        // charts that have both a drawn path and an axis label
        labelled: plots.filter((s) => [...s.querySelectorAll('path')].some(drawn) && [...s.querySelectorAll('text')].some(labelOf)).length,
        labels: [...new Set(plots.flatMap((s) => [...s.querySelectorAll('text')].filter(labelOf).map((t) => t.textContent.trim())))],
        csp: document.querySelector('meta[http-equiv="Content-Security-Policy"]')?.getAttribute('content') || '',
        headings: [...document.querySelectorAll('h1, h2')].map((h) => h.textContent.trim()),
        changes: [...document.querySelectorAll('#summary li')].map((li) => li.textContent.trim()),
        summary: document.querySelector('#summary')?.textContent.trim() || '',
      };
    }, titlePattern).catch(() => null);
    if (info) return { ...info, frame };
  }
  return null;
}

/** Scrolls the page in `frame` so that `selector` is at the top, and waits until it is there. */
async function scrollFrameTo(frame, selector) {
  await until(`${selector} scrolled into view in the webview`, async () =>
    frame.evaluate((sel) => {
      const el = document.querySelector(sel);
      if (!el) return false;
      el.scrollIntoView({ block: 'start' });
      const top = el.getBoundingClientRect().top;
      return top >= -1 && top < window.innerHeight / 2;
    }, selector), 10000);
}

function checkCsp(csp, what) {
  if (!/script-src 'nonce-/.test(csp) || !/default-src 'none'/.test(csp)) {
    throw new Error(`the ${what} page lacks the extension's Content-Security-Policy: "${csp}"`);
  }
}

async function stepReport() {
  const page = state.page;
  await page.keyboard.press('Escape');
  await clickLens(page, 'Report');
  // the report page's title reads "FILE — point NAME"; the panel shows "Computing…" first
  const found = await until('SVG plots with drawn paths and axis labels in the report webview', async () => {
    const info = await webviewInfo(page, ' — point ');
    return info && info.plots > 0 && info.paths > 0 && info.labelled > 0 ? info : false;
  });
  checkCsp(found.csp, 'report');
  const tab = await until('the report tab', async () => {
    const t = await page.locator('.tab').filter({ hasText: /^Report: / }).first().innerText({ timeout: 500 });
    return t.trim() || false;
  });
  await scrollFrameTo(found.frame, 'svg:has(text)');
  await screenshot('05-report');
  return `report webview "${found.title}" (tab "${tab}"): ${found.plots} chart(s), ${found.paths} drawn path(s), ${found.labelled} chart(s) with axis labels (${found.labels.slice(0, 4).map((l) => `"${l}"`).join(', ')}…); CSP "${found.csp}"`;
}

/** The declared sweeps of a model: name, point, varied name and range as written. */
function declaredSweeps(text) {
  return [...text.matchAll(/^sweep\s+(\S+)\s+from\s+(\S+)\s*:[^\n]*\n\s+vary\s+(\S+)\s*=\s*([^\n#]*)/gm)].map((m) => ({ name: m[1], point: m[2], vary: m[3], range: m[4].trim() }));
}

async function stepSweep() {
  const page = state.page;
  const text = readFileSync(join(state.workspace, state.file), 'utf8');
  const sweeps = declaredSweeps(text);
  if (!sweeps.length) throw new Error(`${state.file} declares no sweep block to run (POISE_E2E_SWEEP=0 skips this step)`);
  const sw = sweeps[0];
  await page.keyboard.press('Escape');
  await clickLens(page, 'Run sweep');
  // the sweep page's title reads "FILE — sweep NAME of VARY"
  const found = await until(`the sweep page of "${sw.name}" with plots in a webview`, async () => {
    const info = await webviewInfo(page, ` — sweep ${sw.name} of `);
    return info && info.plots > 0 && info.paths > 0 && info.labelled > 0 && info.summary ? info : false;
  });
  checkCsp(found.csp, 'sweep');
  const tab = await until('the sweep tab', async () => {
    const t = await page.locator('.tab').filter({ hasText: `Sweep ${sw.name}` }).first().innerText({ timeout: 500 });
    return t.trim() || false;
  });
  if (!found.labels.some((l) => l.startsWith(sw.vary))) {
    throw new Error(`no chart is plotted against ${sw.vary}: axis labels ${JSON.stringify(found.labels)}`);
  }
  let crossing = '';
  if (state.file.split('/').pop() === 'belt_drive.poise') {
    // belt_drive: the arm's net damping damp − press·(mus−muk)·e^(−belt/vref)/vref vanishes at
    // belt = vref·ln(press·(mus−muk)/(damp·vref)) (derivative of an exponential, common practice), inside 0.05…3 m/s
    const c = (name) => Number(new RegExp(`^const\\s+${name}\\s*=\\s*([\\d.eE+-]+)`, 'm').exec(text)[1]);
    const expected = c('vref') * Math.log((c('press') * (c('mus') - c('muk'))) / (c('damp') * c('vref')));
    const li = found.changes.find((t) => /pair crosses the imaginary axis/.test(t));
    const at = li ? Number(/^belt = ([-\d.e+]+)/.exec(li)?.[1]) : NaN;
    if (!(Math.abs(at - expected) < 1e-4 * expected)) {
      throw new Error(`expected the pair to cross at belt = ${expected.toFixed(5)} m/s; the page lists: ${JSON.stringify(found.changes)}`);
    }
    crossing = `; stability change at belt = ${at} m/s (closed form ${expected.toFixed(5)})`;
  }
  await scrollFrameTo(found.frame, '#summary');
  await screenshot('06-sweep');
  await scrollFrameTo(found.frame, '#against');
  await screenshot('07-sweep-charts');
  return `sweep "${sw.name}" (vary ${sw.vary} = ${sw.range}) in tab "${tab}": ${found.plots} chart(s), ${found.paths} drawn path(s), ${found.labelled} with axis labels${crossing}`;
}

// ----------------------------------------------------------------------------------------------- main

const steps = [
  ['host', stepHost, true],
  ['package', stepPackage, true],
  ['install', stepInstall, true],
  ['workspace', stepWorkspace, true],
  ['editor', stepEditor, true],
  ['open', stepOpen, true],
  ['lenses', stepLenses, enabled('LENSES')],
  ['linearize', stepLinearize, enabled('LINEARIZE')],
  ['hover', stepHover, enabled('HOVER')],
  ['report', stepReport, enabled('REPORT')],
  ['sweep', stepSweep, enabled('SWEEP')],
];

function stopEditor() {
  const pid = state.editorPid;
  if (!pid) return;
  state.editorPid = undefined;
  // start.sh runs the editor with setsid: its pid leads a process group holding the extension host and the
  // language server; signal that group, by id
  for (const signal of ['SIGTERM', 'SIGKILL']) {
    try {
      process.kill(-pid, signal);
    } catch {
      return; // already gone
    }
    const end = Date.now() + 5000;
    while (Date.now() < end) {
      try {
        process.kill(-pid, 0);
      } catch {
        log(`editor (pid ${pid}) stopped`);
        return;
      }
      spawnSync('sleep', ['0.1']);
    }
  }
}

async function cleanup() {
  if (state.browser) await state.browser.close().catch(() => {});
  state.browser = undefined;
  stopEditor();
  if (state.workspace && process.env.POISE_E2E_KEEP !== '1') rmSync(state.workspace, { recursive: true, force: true });
}

for (const signal of ['SIGINT', 'SIGTERM']) {
  process.on(signal, () => {
    stopEditor();
    process.exit(130);
  });
}
process.on('exit', stopEditor);

let failed = false;
for (const [name, run, on] of steps) {
  if (failed) {
    results.push([name, 'not run']);
    continue;
  }
  if (!on) {
    results.push([name, 'skipped']);
    log(`- ${name}: skipped`);
    continue;
  }
  log(`> ${name}`);
  try {
    const detail = await run();
    results.push([name, 'ok']);
    log(`✔ ${name}: ${detail}`);
  } catch (e) {
    failed = true;
    results.push([name, 'FAILED']);
    log(`✘ ${name}: ${e instanceof Error ? e.message : e}`);
    await screenshot(`failure-${name}`);
    if (state.pageErrors?.length) log(`  page errors:\n    ${state.pageErrors.slice(-8).join('\n    ')}`);
    const serverLog = join(host, 'server.log');
    if (existsSync(serverLog)) log(`  editor log (last lines):\n    ${readFileSync(serverLog, 'utf8').trim().split('\n').slice(-15).join('\n    ')}`);
  }
}
await cleanup();
log(`\nsummary: ${results.map(([n, r]) => `${n} ${r}`).join(', ')}`);
const okCount = results.filter(([, r]) => r === 'ok').length;
log(`e2e: ${okCount} passed, ${results.length - okCount} failed`);
process.exit(failed ? 1 : 0);

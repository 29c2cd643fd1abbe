/**
 * Content security of the pages (CSP Level 3, W3C: hash sources 'sha256-…' over the UTF-8 text of an inline
 * element, §2.3.1; nonces): the standalone report and sweep pages allow their one style sheet and one
 * script by hash and nothing inline besides (no 'unsafe-inline'); the VS Code client stamps its nonce on the
 * page's own script only, never on another inline script in the HTML it is given.
 *
 * The SHA-256 of the core (it has no crypto library) is checked against the test vectors of FIPS 180-2
 * (appendix B.1 "abc", and the empty message, both widely published) and against Node's crypto module
 * (OpenSSL) on texts of many lengths and scripts (an independent implementation).
 */
import { createHash } from 'crypto';
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { secureHtml } from '../client/src/html';
import { buildReport } from '../server/src/core/analysis/report';
import { renderReportHtml } from '../server/src/core/present/reportHtml';
import { analyze } from '../server/src/core/pipeline/analysis';
import { cspHash, sha256Bytes } from '../server/src/core/present/sha256';
import { SCRIPT, htmlPage } from '../server/src/core/present/svgCharts';
import { EXAMPLES } from './helpers/cli';

const hex = (b: Uint8Array) => Buffer.from(b).toString('hex');
const nodeHash = (t: string) => `'sha256-${createHash('sha256').update(t, 'utf8').digest('base64')}'`;
const unescape = (s: string) => s.replace(/&#39;/g, "'").replace(/&quot;/g, '"').replace(/&amp;/g, '&');

function policy(html: string): string {
  const m = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(html);
  expect(m).not.toBeNull();
  return unescape(m![1]);
}

describe('SHA-256 of the core', () => {
  it('matches the FIPS 180-2 test vectors', () => {
    // FIPS 180-2, appendix B.1 (one block) and the empty message
    expect(hex(sha256Bytes('abc'))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(hex(sha256Bytes(''))).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
    // FIPS 180-2, appendix B.2 (two blocks)
    expect(hex(sha256Bytes('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq'))).toBe('248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1');
  });

  it('agrees with Node crypto (OpenSSL) on every length around the block size and on non-ASCII text', () => {
    for (let n = 0; n < 200; n++) {
      const t = 'aé€😀'.repeat(n).slice(0, n) + 'x'.repeat(n % 7);
      expect(cspHash(t)).toBe(nodeHash(t));
    }
    expect(cspHash(SCRIPT)).toBe(nodeHash(SCRIPT));
  });
});

describe('standalone pages', () => {
  const a = analyze(fs.readFileSync(path.join(EXAMPLES, 'buffer_tank.poise'), 'utf8'));
  const report = renderReportHtml(buildReport(a, 'dry_day', { title: 'buffer_tank.poise', validityBudgetMs: 200 }));
  const shell = htmlPage({ title: 'sweep', heading: 'Sweep', body: '<p>x</p>', css: '.extra{color:red}' });

  for (const [name, html] of [['report', report], ['page shell (sweep page)', shell]] as const) {
    it(`the ${name} allows its one script and style sheet by hash, nothing inline besides`, () => {
      const csp = policy(html);
      expect(csp).not.toContain('unsafe-inline');
      expect(csp).toContain("default-src 'none'");
      const scripts = [...html.matchAll(/<script\b[^>]*>([\s\S]*?)<\/script>/g)];
      expect(scripts).toHaveLength(1);
      expect(/script-src ([^;]*)/.exec(csp)![1].trim()).toBe(nodeHash(scripts[0][1]));
      const styles = [...html.matchAll(/<style\b[^>]*>([\s\S]*?)<\/style>/g)];
      expect(styles).toHaveLength(1);
      expect(/style-src ([^;]*)/.exec(csp)![1].trim()).toBe(nodeHash(styles[0][1]));
      expect(html).not.toMatch(/\sstyle="/); // style attributes would be blocked by a hash-only policy
    });
  }
});

describe('the VS Code client', () => {
  const page = htmlPage({ title: 't', heading: 'T', body: '<p>x</p>' });

  it('stamps its nonce on the page\'s own script only', () => {
    const injected = page.replace('<p>x</p>', '<p>x</p><script>alert(1)</script><script src="https://example.invalid/x.js"></script><script nonce="guess">alert(2)</script>');
    const out = secureHtml(injected, 'N0NCE');
    const scripts = [...out.matchAll(/<script\b([^>]*)>([\s\S]*?)<\/script>/g)];
    expect(scripts).toHaveLength(4);
    const stamped = scripts.filter((m) => /nonce=/.test(m[1]));
    expect(stamped).toHaveLength(1);
    expect(stamped[0][1]).toContain('nonce="N0NCE"');
    expect(stamped[0][2]).toBe(SCRIPT);
    // the page's own policy gives way to the webview's (one policy, with the nonce)
    const metas = out.match(/http-equiv="Content-Security-Policy"/g) ?? [];
    expect(metas).toHaveLength(1);
    expect(policy(out)).toContain("script-src 'nonce-N0NCE'");
  });

  it('gives no nonce to a page that declares no hash', () => {
    const out = secureHtml('<html><head></head><body><script>alert(1)</script></body></html>', 'N0NCE');
    expect(out).not.toContain('nonce="N0NCE"');
  });
});

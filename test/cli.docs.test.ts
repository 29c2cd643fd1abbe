/**
 * The README and docs match the command line (issue 10, sections 1 and 2): every `poise …` command shown
 * in a code block is accepted by the option tables; after the set-up the README uses the plain `poise`
 * command; the first two set-up commands stay as they are (a fresh machine runs them); the old colon
 * range of sweeps is gone from the documentation.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { commandSpec, parseCommandLine } from '../server/src/cli/options';
import { ROOT } from './helpers/cli';

const docs = ['README.md', ...fs.readdirSync(path.join(ROOT, 'docs')).filter((f) => f.endsWith('.md')).map((f) => `docs/${f}`)];
const read = (f: string) => fs.readFileSync(path.join(ROOT, f), 'utf8');

/** Shell words of a command line: double-quoted strings kept together, a trailing "# comment" dropped. */
function words(line: string): string[] {
  const out: string[] = [];
  const re = /"([^"]*)"|(\S+)/g;
  let m: RegExpExecArray | null;
  while ((m = re.exec(line))) {
    if (m[2]?.startsWith('#')) break;
    out.push(m[1] ?? m[2]);
  }
  return out;
}

function commandsIn(text: string): string[] {
  const blocks = [...text.matchAll(/```[a-z]*\n([\s\S]*?)```/g)].map((m) => m[1]);
  return blocks.flatMap((b) => b.split('\n')).map((l) => l.trim()).filter((l) => /^(npx )?poise [a-z]/.test(l) || /&& npx poise /.test(l));
}

describe('documented command lines', () => {
  it('every `poise …` line in a code block is accepted by the option tables', () => {
    let n = 0;
    for (const f of docs) {
      for (const line of commandsIn(read(f))) {
        const w = words(line.replace(/^.*&& /, '').replace(/^npx /, ''));
        const argv = w.slice(1).map((x) => x.replace(/[[\]]/g, '')).filter((x) => x !== '|' && !x.includes('…') && !/^(FORMAT|N)$/.test(x));
        // usage lines with [OPTIONAL] parts and alternatives are synopses, not runnable: check their options exist
        if (/\[--|\||[A-Z]{4}/.test(line)) {
          const spec = commandSpec(argv[0]);
          expect(spec, `${f}: ${line}`).toBeDefined();
          for (const o of argv.filter((x) => x.startsWith('--'))) expect(spec!.options.map((x) => x.name), `${f}: ${line}`).toContain(o.replace(/=.*/, ''));
        } else {
          expect(() => parseCommandLine(argv), `${f}: ${line}`).not.toThrow();
        }
        n++;
      }
    }
    expect(n).toBeGreaterThan(8);
  });

  it('the README keeps the two set-up commands and then uses the plain command', () => {
    const readme = read('README.md');
    const setup = [...readme.matchAll(/```sh\n([\s\S]*?)```/g)][0][1];
    expect(setup).toContain('npm ci && npx poise linearize examples/buffer_tank.poise --point dry_day');
    expect(setup).toMatch(/^npm test\b/m);
    expect(readme).toMatch(/npm install --global \.\/cli/);
    const after = readme.slice(readme.indexOf('## A short tour'));
    expect(after).not.toMatch(/npx poise/);
    expect(after).toMatch(/^poise check /m);
  });

  it('no colon range for sweeps in the docs', () => {
    for (const f of docs) expect(read(f), f).not.toMatch(/--vary\s+"?\w+\s*=\s*[^\s"]+:[^\s"]+:\d|FROM:TO:N/);
  });
});

describe('the VS Code export picker', () => {
  it('describes each format as docs/exports.md does (CSV: one row per number)', () => {
    const src = read('client/src/extension.ts');
    const desc = (f: string) => new RegExp(`format: '${f}', label: '[^']*', description: '([^']*)'`).exec(src)?.[1];
    const docs = read('docs/exports.md');
    const docRow = (f: string) => new RegExp(`^\\| \`${f}\` \\| (.*) \\|$`, 'm').exec(docs)?.[1] ?? '';
    expect(docRow('csv')).toMatch(/^one row per number: `kind,row,column,value,unit`/);
    expect(desc('csv')).toBe('one row per number: kind, row, column, value, unit');
    expect(desc('csv')).not.toMatch(/table per matrix/);
    for (const f of ['json', 'markdown', 'latex', 'numpy']) expect(desc(f), f).toBeTruthy();
  });
});

describe('README numbers are what the command prints', () => {
  it('the tour\'s operating point and deviation equation appear verbatim in `poise linearize`', async () => {
    const { main } = await import('../server/src/cli/main');
    let out = '';
    const code = await main(['linearize', path.join(ROOT, 'examples', 'buffer_tank.poise'), '--point', 'dry_day'], { out: (s) => (out += s + '\n'), err: () => undefined });
    expect(code).toBe(0);
    const readme = read('README.md');
    const quoted = /operating point \(`level\s+([0-9.]+) \[m\]`\)/.exec(readme);
    expect(quoted, 'README quotes the level').not.toBeNull();
    expect(out).toMatch(new RegExp(`^\\s+level\\s+${quoted![1].replace('.', '\\.')} \\[m\\]$`, 'm'));
    const eq = /^(Δlevel' = .*)$/m.exec(readme)![1];
    expect(out).toContain(eq);
  });
});

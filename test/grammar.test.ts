// The TextMate grammar (syntaxes/poise.tmLanguage.json) checked with vscode-tmgrammar-test, which tokenizes
// with the editor's own engine (vscode-textmate + vscode-oniguruma). The expected scopes are written in the
// test/grammar/*.poise files; scope names follow the TextMate manual's naming conventions (section 12.4,
// "Naming Conventions") and the syntax follows the Poise language reference.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = resolve(__dirname, '..');
const grammarPath = join(root, 'syntaxes', 'poise.tmLanguage.json');
const cli = join(root, 'node_modules', 'vscode-tmgrammar-test', 'dist', 'unit.js');

function runTool(pattern: string): { code: number; output: string } {
  try {
    const output = execFileSync(process.execPath, [cli, '-g', grammarPath, pattern], {
      cwd: root,
      encoding: 'utf8',
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    return { code: 0, output };
  } catch (e) {
    const err = e as { status: number | null; stdout?: string; stderr?: string };
    return { code: err.status ?? -1, output: `${err.stdout ?? ''}${err.stderr ?? ''}` };
  }
}

function scopeNames(node: unknown, out: string[] = []): string[] {
  if (Array.isArray(node)) {
    for (const item of node) scopeNames(item, out);
  } else if (node && typeof node === 'object') {
    for (const [key, value] of Object.entries(node)) {
      if ((key === 'name' || key === 'contentName') && typeof value === 'string') out.push(value);
      else scopeNames(value, out);
    }
  }
  return out;
}

describe('TextMate grammar', () => {
  it('passes every scope assertion in test/grammar/*.poise', () => {
    const files = readdirSync(join(root, 'test', 'grammar')).filter((f) => f.endsWith('.poise'));
    expect(files.length).toBeGreaterThanOrEqual(3);
    const { code, output } = runTool('test/grammar/*.poise');
    expect(output, output).not.toMatch(/failed/);
    expect(code, output).toBe(0);
    for (const f of files) expect(output).toContain(`test/grammar/${f} run successfuly`);
  });

  it('reports a wrong assertion (the check above can fail)', () => {
    const dir = mkdtempSync(join(tmpdir(), 'poise-grammar-'));
    try {
      // `point` opens a point block (language reference); it is not a comment
      writeFileSync(join(dir, 'wrong.poise'), '# SYNTAX TEST "source.poise"\npoint p:\n# <----- comment.line.number-sign.poise\n');
      const { code, output } = runTool(join(dir, '*.poise'));
      expect(code).not.toBe(0);
      expect(output).toMatch(/missing required scopes: comment\.line\.number-sign\.poise/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('uses only standard TextMate scope roots, each with the .poise suffix', () => {
    const grammar = JSON.parse(readFileSync(grammarPath, 'utf8')) as { scopeName: string };
    expect(grammar.scopeName).toBe('source.poise');
    const names = scopeNames(grammar).filter((n) => n !== 'Poise' && n !== 'source.poise');
    expect(names.length).toBeGreaterThan(20);
    // the roots of the TextMate naming conventions (TextMate manual 12.4), plus `punctuation`, which the
    // grammars bundled with VS Code use throughout (common practice)
    const roots = ['comment', 'constant', 'entity', 'invalid', 'keyword', 'markup', 'meta', 'storage', 'string', 'support', 'variable', 'punctuation'];
    for (const n of names) {
      expect(roots, n).toContain(n.split('.')[0]);
      expect(n, n).toMatch(/^[a-z][a-z-]*(\.([a-z0-9-]+|\$1))+\.poise$/);
    }
  });
});

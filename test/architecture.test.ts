/**
 * Architecture invariant: the analysis core (server/src/core/) is pure. It imports nothing from the
 * shells (lsp/, cli/, client/), the protocol libraries, `vscode`, `fs`, `process` or `child_process`.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';

const core = path.join(__dirname, '..', 'server', 'src', 'core');

function files(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(path.join(dir, e.name)) : e.name.endsWith('.ts') ? [path.join(dir, e.name)] : []));
}

const FORBIDDEN = [/^vscode/, /^fs$/, /^node:/, /^process$/, /^child_process$/, /^path$/, /^os$/, /\/lsp\//, /\/cli\//, /client/];

describe('the core is pure', () => {
  const all = files(core);
  it('has files', () => expect(all.length).toBeGreaterThan(10));
  for (const f of all) {
    it(path.relative(core, f), () => {
      const src = fs.readFileSync(f, 'utf8');
      const specs = [...src.matchAll(/(?:import|export)[^'"]*?from\s*['"]([^'"]+)['"]|require\(\s*['"]([^'"]+)['"]\s*\)/g)].map((m) => m[1] ?? m[2]);
      for (const s of specs) for (const bad of FORBIDDEN) expect(s, `${path.relative(core, f)} imports ${s}`).not.toMatch(bad);
      expect(src, 'uses process.*').not.toMatch(/\bprocess\.(env|argv|exit|stdout|stderr|cwd)\b/);
    });
  }
});

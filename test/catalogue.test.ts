/**
 * The one message catalogue (server/src/core/diagnostics.ts) against its users in server/src, read as
 * source text (common practice for catalogue checks: an entry nobody reports is dead text, a code nobody
 * defined is a crash or a bare code on screen):
 * - every code is written once in the catalogue's source (an object literal would silently keep the last
 *   of two equal keys) and no two entries carry the same sentence (one code per meaning);
 * - every catalogue entry is used somewhere in server/src outside the catalogue (diag('P…'),
 *   catalogueText('P…'), a code compared or listed);
 * - every code written in server/src ('P' and three digits in quotes) exists in the catalogue.
 * Independent route: the codes are counted both from the source text and from the runtime object.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { catalogue } from '../server/src/core/diagnostics';

const SRC = path.join(__dirname, '..', 'server', 'src');
const CATALOGUE_FILE = path.join(SRC, 'core', 'diagnostics.ts');

function files(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    return e.isDirectory() ? files(p) : e.name.endsWith('.ts') ? [p] : [];
  });
}

const catalogueSource = fs.readFileSync(CATALOGUE_FILE, 'utf8');
const body = catalogueSource.slice(catalogueSource.indexOf('export const catalogue = {'), catalogueSource.indexOf('} as const'));
const sourceCodes = [...body.matchAll(/^\s+(P\d{3}):/gm)].map((m) => m[1]);
const codeLiteral = /['"`](P\d{3})['"`]/g;

describe('the message catalogue', () => {
  it('holds each code once (in the source text and the runtime object alike)', () => {
    expect(sourceCodes.length).toBeGreaterThan(50);
    const dup = sourceCodes.filter((c, i) => sourceCodes.indexOf(c) !== i);
    expect(dup).toEqual([]);
    expect([...sourceCodes].sort()).toEqual(Object.keys(catalogue).sort());
  });

  it('gives each meaning one code: no two entries with the same sentence', () => {
    const byText = new Map<string, string[]>();
    for (const [code, e] of Object.entries(catalogue)) byText.set(e.text, [...(byText.get(e.text) ?? []), code]);
    expect([...byText.values()].filter((c) => c.length > 1)).toEqual([]);
  });

  const uses = new Map<string, string[]>();
  for (const f of files(SRC)) {
    const text = fs.readFileSync(f, 'utf8');
    const rest = f === CATALOGUE_FILE ? text.replace(body, '') : text;
    for (const m of rest.matchAll(codeLiteral)) uses.set(m[1], [...(uses.get(m[1]) ?? []), path.relative(SRC, f)]);
  }

  it('every entry is used somewhere in server/src', () => {
    expect(Object.keys(catalogue).filter((c) => !uses.has(c))).toEqual([]);
  });

  it('every code used in server/src exists in the catalogue', () => {
    const unknown = [...uses.entries()].filter(([c]) => !(c in catalogue)).map(([c, fs]) => `${c} in ${fs.join(', ')}`);
    expect(unknown).toEqual([]);
    expect(uses.size).toBeGreaterThan(50);
  });
});

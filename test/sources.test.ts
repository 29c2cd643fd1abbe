/**
 * Analyses of documents read through a source host (server/src/core/sources.ts): the core reads nothing
 * itself; `analyze(text)` is the one-document case of `analyzeDocuments(host, root)`.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze, analyzeDocuments } from '../server/src/core/pipeline/analysis';
import { layeredHost, memoryHost, UNTITLED } from '../server/src/core/sources';

const text = fs.readFileSync(path.join(__dirname, '..', 'examples', 'buffer_tank.poise'), 'utf8');

describe('source hosts', () => {
  it('analyses the root document of an in-memory set like analyze(text)', () => {
    const a = analyzeDocuments(memoryHost({ 'plant/tank.poise': text, 'other.poise': 'not read' }), 'plant/tank.poise')!;
    const b = analyze(text);
    expect(a.uri).toBe('plant/tank.poise');
    expect(a.text).toBe(text);
    expect(a.allDiagnostics()).toEqual(b.allDiagnostics());
    expect(a.sources.read('other.poise')).toBe('not read');
    expect(b.uri).toBe(UNTITLED);
    expect(b.sources.read(UNTITLED)).toBe(text);
  });

  it('has no analysis when the host has no root document', () => {
    expect(analyzeDocuments(memoryHost({}), 'missing.poise')).toBeUndefined();
  });

  it('asks layered hosts in order: open documents before the disk', () => {
    const open = memoryHost(new Map([['a', 'edited']]));
    const disk = memoryHost({ a: 'saved', b: 'only on disk' });
    const h = layeredHost(open, disk);
    expect(h.read('a')).toBe('edited');
    expect(h.read('b')).toBe('only on disk');
    expect(h.read('c')).toBeUndefined();
  });
});

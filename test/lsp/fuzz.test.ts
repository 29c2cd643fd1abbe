/**
 * Property: whatever random edits a user makes (insertions and deletions of random characters and
 * model-language snippets, sent as incremental didChange events), the server keeps answering hover, code
 * lens, completion and the other requests with well-formed results, logs no failed handler, never dies,
 * and still publishes the diagnostics of the final version.
 */
import fc from 'fast-check';
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeLens, CompletionList, Range } from 'vscode-languageserver-protocol';
import { EXAMPLES, REFERENCE } from '../helpers/cli';
import { startSession, uriOf, type Session } from './session';

const BASES = [
  ...['buffer_tank', 'gantry_crane', 'glasshouse_loop', 'belt_drive'].map((n) => fs.readFileSync(path.join(EXAMPLES, `${n}.poise`), 'utf8')),
  fs.readFileSync(path.join(REFERENCE, 'models', 'twotank.poise'), 'utf8'),
];

const SNIPPETS = [
  'point ', 'point q:\n', '  x ~ 1 [m]\n', '  level = 2\n', 'linear dry_day digest 436e7389:\n', '  at level = 1 [m]\n', "  Δlevel' = -0.1*Δlevel\n",
  'Δ', "'", "''", '[', ']', '[m^3/s]', '[degC]', '(', ')', '=', '~', ':', '#', '\n', '\r\n', '  ', '\t', ',', '*', '^', '-', '/',
  'sqrt(', 'max(a, ', 'const k = 2 [m]\n', 'state z\n', "z' = -z\n", 'output y = ', 'var ', 'input u [kW]\n', 'time [min]\n', 'time\n',
  '1e999', '0', '-1', 'pi', 'sweep s from ', 'vary x = 1 to 2 steps 3 log\n', '😀', 'é', '\u0394x', '((((', '))))',
];

const edit = fc.oneof(
  fc.record({ kind: fc.constant('insert' as const), at: fc.double({ min: 0, max: 1, noNaN: true }), text: fc.oneof(fc.constantFrom(...SNIPPETS), fc.string({ maxLength: 6 }), fc.string({ unit: 'grapheme', maxLength: 3 })) }),
  fc.record({ kind: fc.constant('delete' as const), at: fc.double({ min: 0, max: 1, noNaN: true }), len: fc.integer({ min: 1, max: 25 }) }),
);

let s: Session;
beforeAll(async () => {
  // a short debounce keeps the diagnostics runs (and their interruption by newer edits) inside the test
  s = await startSession({ settings: { digits: 4 }, initializationOptions: { debounceMs: 5 } });
});
afterAll(async () => {
  await s?.shutdown();
});

describe('random edits', () => {
  it('never stop the server from answering', async () => {
    let run = 0;
    await fc.assert(
      fc.asyncProperty(fc.nat({ max: BASES.length - 1 }), fc.array(edit, { minLength: 1, maxLength: 8 }), fc.double({ min: 0, max: 1, noNaN: true }), async (b, edits, probe) => {
        const uri = uriOf(`fuzz-${run++}.poise`);
        await s.open(uri, BASES[b]);
        for (const e of edits) {
          const doc = s.docs.get(uri)!;
          const n = doc.getText().length;
          const at = Math.floor(e.at * n);
          const range: Range = e.kind === 'insert'
            ? { start: doc.positionAt(at), end: doc.positionAt(at) }
            : { start: doc.positionAt(at), end: doc.positionAt(Math.min(n, at + e.len)) };
          await s.changeIncremental(uri, [{ range, text: e.kind === 'insert' ? e.text : '' }]);
        }
        const doc = s.docs.get(uri)!;
        const position = doc.positionAt(Math.floor(probe * doc.getText().length));
        const td = { textDocument: { uri } };
        const [hover, lenses, completion, symbols, folds, tokens, actions, pointAt] = await Promise.all([
          s.request<{ contents: { value: string } } | null>('textDocument/hover', { ...td, position }),
          s.request<CodeLens[]>('textDocument/codeLens', td),
          s.request<CompletionList>('textDocument/completion', { ...td, position }),
          s.request<unknown[]>('textDocument/documentSymbol', td),
          s.request<unknown[]>('textDocument/foldingRange', td),
          s.request<{ data: number[] }>('textDocument/semanticTokens/full', td),
          s.request<unknown[]>('textDocument/codeAction', { ...td, range: { start: position, end: position }, context: { diagnostics: [] } }),
          s.request<{ point: string | null }>('poise/pointAt', { uri, position }),
        ]);
        expect(hover === null || typeof hover.contents.value === 'string').toBe(true);
        expect(Array.isArray(lenses)).toBe(true);
        for (const l of lenses) expect(typeof l.command?.title).toBe('string');
        expect(Array.isArray(completion.items)).toBe(true);
        expect(Array.isArray(symbols) && Array.isArray(folds) && Array.isArray(actions)).toBe(true);
        expect(tokens.data.length % 5).toBe(0);
        expect(pointAt.point === null || typeof pointAt.point === 'string').toBe(true);
        // the final version's diagnostics arrive: the server is not stuck
        const ds = await s.diagnostics(uri);
        for (const d of ds) expect(d.code).toMatch(/^P\d{3}$/);
        await s.closeDoc(uri);
        expect(s.errors, 'failed handlers').toEqual([]);
        expect(s.exited).toBeUndefined();
      }),
      { numRuns: 60 },
    );
  });
});

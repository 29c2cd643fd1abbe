/**
 * Table-driven diagnostics checks. A snippet marks the ranges it expects with ⟦ and ⟧ (removed before
 * analysis; an empty pair ⟦⟧ marks a zero-width range; markers may nest and are numbered in the order
 * they open). Each expected diagnostic names its code and the
 * marker it points at (by default the i-th expectation uses the i-th marker), optionally its severity and
 * phrases its message must contain. The check is exact: the diagnostics reported (all of them, points
 * solved, minus codes listed in `ignore`) must be exactly the expected ones, ranges compared as
 * line:column (1-based) so a failure reads like an editor position.
 */
import { expect } from 'vitest';
import { analyze, type Analysis } from '../../server/src/core/pipeline/analysis';
import type { Diagnostic } from '../../server/src/core/diagnostics';
import { dedent } from './model';

export interface Expected {
  code: string;
  /** Index of the ⟦…⟧ marker this diagnostic points at (default: its own index in the list). */
  at?: number;
  severity?: 'error' | 'warning' | 'info';
  /** Phrases (or patterns) the message must contain. */
  message?: (string | RegExp)[];
}

export interface CheckOptions {
  warnUnused?: boolean;
  /** Codes not to compare (e.g. consequences reported elsewhere). */
  ignore?: string[];
}

const OPEN = '⟦';
const CLOSE = '⟧';

/** Removes the markers; returns the model text and the marked ranges (UTF-16 offsets). */
export function unmark(snippet: string): { text: string; ranges: { start: number; end: number }[] } {
  let text = '';
  const ranges: { start: number; end: number }[] = [];
  const open: number[] = []; // indices into ranges of the markers still open (they may nest)
  for (const ch of snippet) {
    if (ch === OPEN) {
      open.push(ranges.length);
      ranges.push({ start: text.length, end: -1 });
    } else if (ch === CLOSE) {
      const k = open.pop();
      if (k === undefined) throw new Error('⟧ without ⟦ in snippet');
      ranges[k].end = text.length;
    } else text += ch;
  }
  if (open.length) throw new Error('unclosed ⟦ in snippet');
  return { text, ranges };
}

function where(a: Analysis, s: { start: number; end: number }): string {
  const p = a.lines.position(s.start);
  const q = a.lines.position(s.end);
  return `${p.line + 1}:${p.character + 1}-${q.line + 1}:${q.character + 1}`;
}

/** Analyses the snippet (dedented), solves its points, and compares the diagnostics with `expected`. */
export function check(snippet: string, expected: Expected[], opts: CheckOptions = {}): { a: Analysis; diagnostics: Diagnostic[] } {
  const { text, ranges } = unmark(dedent(snippet));
  const a = analyze(text, { warnUnused: opts.warnUnused ?? false });
  const ignore = new Set(opts.ignore ?? []);
  const got = a.allDiagnostics().filter((d) => !ignore.has(d.code));
  const key = (code: string, at: string) => `${code} @ ${at}`;
  const gotKeys = got.map((d) => key(d.code, where(a, d.span))).sort();
  const wantKeys = expected.map((e, i) => {
    const r = ranges[e.at ?? i];
    if (!r) throw new Error(`expectation ${i} (${e.code}) refers to marker ${e.at ?? i}, but the snippet has ${ranges.length}`);
    return key(e.code, where(a, r));
  }).sort();
  expect(gotKeys, `diagnostics of:\n${text}\nmessages:\n${got.map((d) => `  ${d.code} ${where(a, d.span)} ${d.message}`).join('\n')}`).toEqual(wantKeys);
  for (const [i, e] of expected.entries()) {
    const r = ranges[e.at ?? i];
    const d = got.find((x) => x.code === e.code && x.span.start === r.start && x.span.end === r.end)!;
    if (e.severity) expect(d.severity, `${e.code} severity`).toBe(e.severity);
    for (const m of e.message ?? []) {
      if (typeof m === 'string') expect(d.message, `${e.code} message`).toContain(m);
      else expect(d.message, `${e.code} message`).toMatch(m);
    }
  }
  return { a, diagnostics: got };
}

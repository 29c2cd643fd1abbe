/**
 * `poise linearize` as text for a model whose matrices are too large for a table: the table is replaced by
 * one line with the size and the non-zero count (a 10,000-state A as a table is 900 MB of text, more than a
 * string can hold: it used to end in "Invalid string length").
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { formatLinearText, TABLE_CELL_LIMIT } from '../server/src/core/present/format';
import { tankChain } from '../bench/models';

function linearText(n: number): string {
  const a = analyze(tankChain(n));
  const sol = a.point()!;
  const lin = a.linear()!;
  expect(sol.ok && lin.ok).toBe(true);
  return formatLinearText(a, lin, a.values(sol), [], 5);
}

describe('text of a linear model too large for tables', () => {
  it('a chain of 3,163 tanks (A of 3163² > 10⁷ cells) gets the size line for A, tables for B, C, D', () => {
    expect(3163 * 3163).toBeGreaterThan(TABLE_CELL_LIMIT);
    const t = linearText(3163);
    // a chain of n tanks has 3n − 2 non-zeros in A (tridiagonal: the structure of the chain, common practice)
    expect(t).toContain(`A (3163×3163): ${3 * 3163 - 2} non-zero entries; too large for a table here`);
    expect(t).toMatch(/^B \(3163×1\)$/m);
    expect(t).toMatch(/^C \(1×3163\)$/m);
  });
  it('a chain of 20 tanks keeps its table', () => {
    const t = linearText(20);
    expect(t).toMatch(/^A \(20×20\)$/m);
    expect(t).not.toContain('too large for a table');
  });
});

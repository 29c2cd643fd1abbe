/**
 * In-process helpers over the analysis core: analyse a model text, solve a point, linearise it, and read
 * values and matrix entries by name (never by position).
 */
import { expect } from 'vitest';
import { analyze, located, type Analysis } from '../../server/src/core/pipeline/analysis';
import type { Diagnostic } from '../../server/src/core/diagnostics';
import { linearEigen } from '../../server/src/core/present/format';
import type { LinearModel } from '../../server/src/core/solve/linearizer';
import type { PointSolution } from '../../server/src/core/solve/pointSolver';

/** Strips the common indentation of a template literal, so snippets can be indented in test code. */
export function dedent(s: string): string {
  const lines = s.replace(/^\n/, '').replace(/\n[ \t]*$/, '\n').split('\n');
  const ind = Math.min(...lines.filter((l) => l.trim()).map((l) => /^[ \t]*/.exec(l)![0].length));
  return lines.map((l) => l.slice(Math.min(ind, /^[ \t]*/.exec(l)![0].length))).join('\n');
}

export function describeDiagnostics(a: Analysis, ds: Diagnostic[]): string {
  return located(a, ds).map((d) => `${d.start.line + 1}:${d.start.character + 1} ${d.severity} ${d.code}: ${d.message}`).join('\n');
}

export interface Solved {
  a: Analysis;
  sol: PointSolution;
  lin: LinearModel;
  /** Value of a variable or constant at the point, in its declared unit. */
  value(name: string): number;
  A(row: string, col: string): number;
  B(row: string, col: string): number;
  C(row: string, col: string): number;
  D(row: string, col: string): number;
  eig(): { re: number; im: number }[];
}

function entry(lin: LinearModel, m: 'A' | 'B' | 'C' | 'D', row: string, col: string): number {
  const rows = m === 'A' || m === 'B' ? lin.states : lin.outputs;
  const cols = m === 'A' || m === 'C' ? lin.states : lin.inputs;
  const i = rows.indexOf(row);
  const j = cols.indexOf(col);
  if (i < 0) throw new Error(`${m}: no row "${row}" (rows: ${rows.join(', ')})`);
  if (j < 0) throw new Error(`${m}: no column "${col}" (columns: ${cols.join(', ')})`);
  return lin[m][i * cols.length + j];
}

/** Analyses, solves and linearises; fails the test with the diagnostics when any step reports an error. */
export function solve(text: string, point?: string): Solved {
  return solveAnalysis(analyze(text), point);
}

/** `solve` of an analysis made otherwise (a model with parts in other files, read through a host). */
export function solveAnalysis(a: Analysis, point?: string): Solved {
  const errors = a.allDiagnostics().filter((d) => d.severity === 'error');
  if (errors.length) throw new Error(`model has errors:\n${describeDiagnostics(a, errors)}`);
  const sol = a.point(point);
  if (!sol || !sol.ok) throw new Error(`point did not solve:\n${describeDiagnostics(a, sol?.diagnostics ?? [])}`);
  const lin = a.linear(point);
  if (!lin || !lin.ok) throw new Error(`not linearised:\n${describeDiagnostics(a, lin?.diagnostics ?? [])}`);
  const values = a.values(sol);
  return {
    a, sol, lin,
    value(name) {
      const v = values.find((x) => x.name === name);
      if (!v) throw new Error(`no variable "${name}"`);
      return v.value;
    },
    A: (r, c) => entry(lin, 'A', r, c),
    B: (r, c) => entry(lin, 'B', r, c),
    C: (r, c) => entry(lin, 'C', r, c),
    D: (r, c) => entry(lin, 'D', r, c),
    eig: () => linearEigen(lin),
  };
}

/** |actual − expected| ≤ rel·|expected| + abs. */
export function expectClose(actual: number, expected: number, rel = 1e-9, abs = 0, what = ''): void {
  const ok = Math.abs(actual - expected) <= rel * Math.abs(expected) + abs;
  if (!ok) expect.fail(`${what ? what + ': ' : ''}${actual} is not within rel ${rel} (abs ${abs}) of ${expected}`);
}

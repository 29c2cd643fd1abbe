/**
 * Symbolic sparse Jacobian of the residual equations with respect to every non-constant slot,
 * built once per model and reused by the point solver, the linearizer and sweeps; evaluated from an
 * interpreted tape first and compiled to JavaScript once called often (model/tape.ts `lazyVector`).
 */
import type { VectorFn } from './compile';
import { lazyVector } from './tape';
import * as E from '../algebra/expr';
import type { LoweredModel } from './model';

export interface CompiledModel {
  nEq: number;
  residual: VectorFn;
  /** Nonzero pattern: entry k is ∂F[rows[k]]/∂v[cols[k]] (cols are slot ids). */
  rows: Int32Array;
  cols: Int32Array;
  nodes: E.Node[];
  jacobian: VectorFn;
  /** Entries of each row (indices into rows/cols). */
  rowEntries: number[][];
}

const compiledCache = new WeakMap<LoweredModel, CompiledModel>();

export function compileModel(lm: LoweredModel): CompiledModel {
  const hit = compiledCache.get(lm);
  if (hit) return hit;
  const rows: number[] = [];
  const cols: number[] = [];
  const nodes: E.Node[] = [];
  const rowEntries: number[][] = [];
  lm.equations.forEach((eq, r) => {
    const ent: number[] = [];
    const ids = [...E.slots(eq.residual)].filter((s) => lm.slots[s].kind !== 'const').sort((a, b) => a - b);
    for (const s of ids) {
      const d = E.derivative(eq.residual, s);
      if (E.isNum(d, 0)) continue;
      ent.push(nodes.length);
      rows.push(r);
      cols.push(s);
      nodes.push(d);
    }
    rowEntries.push(ent);
  });
  const cm: CompiledModel = {
    nEq: lm.equations.length,
    residual: lazyVector(lm.equations.map((e) => e.residual)),
    rows: Int32Array.from(rows),
    cols: Int32Array.from(cols),
    nodes,
    jacobian: lazyVector(nodes),
    rowEntries,
  };
  compiledCache.set(lm, cm);
  return cm;
}

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

/** The non-zero partial derivatives of one residual: ∂r/∂v[cols[k]] = nodes[k], cols ascending. */
interface RowDerivatives {
  slots: LoweredModel['slots'];
  cols: number[];
  nodes: E.Node[];
}
/**
 * Derivatives per residual node (and slot table), so that a residual shared by two models — the steady
 * model of the point keeps every equation without a derivative as it is — is differentiated once: the
 * point solver's and the linearizer's Jacobians hold the same derivative nodes for it.
 */
const rowCache = new WeakMap<E.Node, RowDerivatives>();

function rowDerivatives(lm: LoweredModel, residual: E.Node): RowDerivatives {
  const hit = rowCache.get(residual);
  if (hit && hit.slots === lm.slots) return hit;
  const cols: number[] = [];
  const nodes: E.Node[] = [];
  const ids = [...E.slots(residual)].filter((s) => lm.slots[s].kind !== 'const').sort((a, b) => a - b);
  for (const s of ids) {
    const d = E.derivative(residual, s);
    if (E.isNum(d, 0)) continue;
    cols.push(s);
    nodes.push(d);
  }
  const row: RowDerivatives = { slots: lm.slots, cols, nodes };
  rowCache.set(residual, row);
  return row;
}

export function compileModel(lm: LoweredModel): CompiledModel {
  const hit = compiledCache.get(lm);
  if (hit) return hit;
  const rows: number[] = [];
  const cols: number[] = [];
  const nodes: E.Node[] = [];
  const rowEntries: number[][] = [];
  lm.equations.forEach((eq, r) => {
    const ent: number[] = [];
    const row = rowDerivatives(lm, eq.residual);
    for (let k = 0; k < row.cols.length; k++) {
      ent.push(nodes.length);
      rows.push(r);
      cols.push(row.cols[k]);
      nodes.push(row.nodes[k]);
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

/**
 * Structure checker: counts equations against unknowns and, from a maximum bipartite matching
 * (equations × unknowns), names what is left over. The same matching serves the point solver.
 */
import { diag, type Diagnostic } from '../diagnostics';
import * as E from '../algebra/expr';
import type { LoweredModel } from './model';

export interface Matching {
  /** rowMatch[r] = matched column or -1. */
  rowMatch: Int32Array;
  colMatch: Int32Array;
  size: number;
}

/** Maximum bipartite matching by augmenting paths (iterative DFS, greedy start). */
export function maximumMatching(nRows: number, nCols: number, adj: ArrayLike<number>[]): Matching {
  const rowMatch = new Int32Array(nRows).fill(-1);
  const colMatch = new Int32Array(nCols).fill(-1);
  let size = 0;
  // greedy start
  for (let r = 0; r < nRows; r++) {
    const a = adj[r];
    for (let k = 0; k < a.length; k++) {
      const c = a[k];
      if (colMatch[c] < 0) {
        colMatch[c] = r;
        rowMatch[r] = c;
        size++;
        break;
      }
    }
  }
  const seen = new Int32Array(nCols).fill(-1);
  const stackRow = new Int32Array(nRows + 1);
  const stackIdx = new Int32Array(nRows + 1);
  const viaCol = new Int32Array(nRows + 1);
  for (let r0 = 0; r0 < nRows; r0++) {
    if (rowMatch[r0] >= 0) continue;
    let sp = 0;
    stackRow[0] = r0;
    stackIdx[0] = 0;
    viaCol[0] = -1;
    let found = -1;
    while (sp >= 0) {
      const r = stackRow[sp];
      const a = adj[r];
      if (stackIdx[sp] >= a.length) {
        sp--;
        continue;
      }
      const c = a[stackIdx[sp]++];
      if (seen[c] === r0) continue;
      seen[c] = r0;
      if (colMatch[c] < 0) {
        found = c;
        viaCol[sp + 1] = c;
        break;
      }
      sp++;
      stackRow[sp] = colMatch[c];
      stackIdx[sp] = 0;
      viaCol[sp] = c;
    }
    if (found < 0) continue;
    // augment along the stack: row stackRow[k] takes column viaCol[k+1]
    for (let k = sp; k >= 0; k--) {
      const r = stackRow[k];
      const c = viaCol[k + 1];
      rowMatch[r] = c;
      colMatch[c] = r;
    }
    size++;
  }
  return { rowMatch, colMatch, size };
}

/** Dulmage–Mendelsohn style: rows/cols reachable by alternating paths from unmatched rows (over-determined) and unmatched cols (under-determined). */
export function leftovers(nRows: number, nCols: number, adj: ArrayLike<number>[], mt: Matching): { overRows: number[]; overCols: number[]; underRows: number[]; underCols: number[] } {
  const colAdj: number[][] = Array.from({ length: nCols }, () => []);
  for (let r = 0; r < nRows; r++) for (let k = 0; k < adj[r].length; k++) colAdj[adj[r][k]].push(r);
  const overR = new Uint8Array(nRows);
  const overC = new Uint8Array(nCols);
  const queue: number[] = [];
  for (let r = 0; r < nRows; r++) if (mt.rowMatch[r] < 0) {
    overR[r] = 1;
    queue.push(r);
  }
  while (queue.length) {
    const r = queue.pop()!;
    for (let k = 0; k < adj[r].length; k++) {
      const c = adj[r][k];
      if (overC[c]) continue;
      overC[c] = 1;
      const r2 = mt.colMatch[c];
      if (r2 >= 0 && !overR[r2]) {
        overR[r2] = 1;
        queue.push(r2);
      }
    }
  }
  const underR = new Uint8Array(nRows);
  const underC = new Uint8Array(nCols);
  for (let c = 0; c < nCols; c++) if (mt.colMatch[c] < 0) {
    underC[c] = 1;
    queue.push(c);
  }
  while (queue.length) {
    const c = queue.pop()!;
    for (const r of colAdj[c]) {
      if (underR[r]) continue;
      underR[r] = 1;
      const c2 = mt.rowMatch[r];
      if (c2 >= 0 && !underC[c2]) {
        underC[c2] = 1;
        queue.push(c2);
      }
    }
  }
  const idx = (a: Uint8Array) => {
    const o: number[] = [];
    a.forEach((v, i) => v && o.push(i));
    return o;
  };
  return { overRows: idx(overR), overCols: idx(overC), underRows: idx(underR), underCols: idx(underC) };
}

export interface StructureResult {
  ok: boolean;
  /** Unknown slots of the dynamic system: highest derivatives, then algebraic. */
  unknowns: number[];
  diagnostics: Diagnostic[];
}

export function listNames(names: string[], max = 8): string {
  const q = names.map((n) => `"${n}"`);
  if (q.length <= max) return q.join(', ');
  return q.slice(0, max).join(', ') + ` and ${q.length - max} more`;
}

export function checkStructure(lm: LoweredModel): StructureResult {
  const diagnostics: Diagnostic[] = [];
  const highest = lm.highest.filter((h) => h >= 0);
  const unknowns = [...highest, ...lm.algebraic];
  const colOf = new Map<number, number>();
  unknowns.forEach((s, i) => colOf.set(s, i));
  const nR = lm.equations.length;
  const nC = unknowns.length;
  if (nR === 0 && nC === 0) return { ok: true, unknowns, diagnostics };
  if (lm.nModelEquations === 0 && (lm.stateComponents.length || lm.algebraic.length > lm.equations.length)) {
    diagnostics.push(diag('P405', { start: 0, end: 0 }));
    return { ok: false, unknowns, diagnostics };
  }
  const adj: number[][] = lm.equations.map((eq) => {
    const cols: number[] = [];
    for (const s of E.slots(eq.residual)) {
      const c = colOf.get(s);
      if (c !== undefined) cols.push(c);
    }
    return cols;
  });
  const mt = maximumMatching(nR, nC, adj);
  if (mt.size === nR && mt.size === nC) return { ok: true, unknowns, diagnostics };

  const lo = leftovers(nR, nC, adj, mt);
  const slotName = (c: number) => lm.slots[unknowns[c]].name;
  const kindWord = (c: number) => {
    const s = lm.slots[unknowns[c]];
    return s.kind === 'deriv' ? 'the derivative of state' : s.kind === 'var' ? 'var' : 'output';
  };
  const unmatchedRows = lo.overRows.filter((r) => mt.rowMatch[r] < 0);
  const unmatchedCols = lo.underCols.filter((c) => mt.colMatch[c] < 0);

  if (nR !== nC) {
    const nd = highest.length;
    const nv = lm.algebraic.length - lm.slots.filter((s) => s.kind === 'output').length;
    const no = lm.algebraic.length - nv;
    const detail = `${nd} highest derivative(s), ${nv} var(s), ${no} output(s)`;
    const advice = nR > nC
      ? `Remove ${nR - nC} equation(s) or declare ${nR - nC} more unknown(s); left over: ${counted(unmatchedRows.map((r) => lm.equations[r].label))}.`
      : `Add ${nC - nR} equation(s) for ${listNames(unmatchedCols.map(slotName))}, or remove them.`;
    diagnostics.push(diag('P401', { start: 0, end: 0 }, { equations: nR, unknowns: nC, detail, advice }));
  }
  for (const r of unmatchedRows) {
    if (adj[r].length === 0) {
      // only states, inputs and constants: a constraint on the states (a hidden, higher-index constraint)
      diagnostics.push(diag('P406', lm.equations[r].span));
      continue;
    }
    const over = lo.overCols.map(slotName);
    diagnostics.push(diag('P402', lm.equations[r].span, { unknowns: listNames(over) }));
  }
  for (const c of unmatchedCols) {
    const s = lm.slots[unknowns[c]];
    diagnostics.push(diag('P403', s.symbol.span, { what: kindWord(c), name: s.kind === 'deriv' ? s.symbol.name : s.name }, { data: { name: s.symbol.name } }));
  }
  if (nR === nC && lo.overRows.length && lo.overCols.length) {
    const eqs = lo.overRows.map((r) => `"${lm.equations[r].label}"`).join(', ');
    diagnostics.push(diag('P404', lm.equations[lo.overRows[0]].span, { equations: eqs, unknowns: listNames(lo.overCols.map(slotName)), advice: 'these equations over-determine those unknowns while others have no equation' }));
  }
  return { ok: false, unknowns, diagnostics };
}

/** Equation texts in quotes, one line of an each block left over for several elements said once with its count. */
function counted(labels: string[]): string {
  const n = new Map<string, number>();
  for (const l of labels) n.set(l, (n.get(l) ?? 0) + 1);
  return [...n].map(([l, k]) => (k > 1 ? `"${l}" (${k} times, one per element)` : `"${l}"`)).join(', ');
}

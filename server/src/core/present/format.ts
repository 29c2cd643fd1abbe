/**
 * Plain-text, Markdown and JSON renderings of the core's results, shared by the CLI, the language
 * server and the exports. Pure.
 */
import { nameRecord } from '../names';
import type { Analysis, VariableValue } from '../pipeline/analysis';
import { formatNumber } from '../algebra/expr';
import type { DeviationEquation, LinearModel } from '../solve/linearizer';
import type { IndexReductionSummary } from '../model/indexReduction';
import { eigenvalues, eigenvaluesSparse, sortEigen, stronglyConnectedCsr } from '../numeric/eigen';
import type { CsrMatrix } from '../numeric/csr';
import { unitSuffix, unitText } from '../semantics/units';
import { maxOf, pushAll } from '../arrays';
import { REPEAT_TOL } from '../analysis/dynamics/types';
import type { PlainSignals } from '../analysis/handoff/plain';

export interface LinearJson extends PlainSignals {
  point: string;
  values: Record<string, { value: number; unit: string }>;
  eigenvalues: { re: number; im: number }[];
  equations: string[];
  /** A constrained model's index reduction (differentiated equations, states chosen at the point). */
  indexReduction?: IndexReductionSummary;
}

/**
 * The one caution line of the linear model in text and in every export (as a comment where the format has
 * comments). The full cautions are in the README and the report.
 */
export const LINEAR_CAUTION =
  'Caution: valid only near this operating point; safety-related use follows licensed engineering practice and the local codes.';

export function rows(a: Float64Array, r: number, c: number): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < r; i++) out.push(Array.from(a.subarray(i * c, i * c + c)));
  return out;
}

export function linearEigen(lin: LinearModel): { re: number; im: number }[] {
  if (lin.n === 0) return [];
  // from the sparse A: split into diagonal blocks by its structure, never an n² matrix
  const e = eigenvaluesSparse(lin.sparse.A);
  return sortEigen(e.re, e.im);
}

/**
 * Work of A's eigenvalues estimated from its structure: Σ m² over its diagonal blocks (strongly connected
 * parts of m states each; a block costs about m² for a two-way chain, more when dense). `poise linearize`
 * computes the eigenvalues when this is at most EIGEN_WORK_LIMIT (every model of up to 3,162 states, and
 * larger ones made of smaller coupled blocks), otherwise only when asked (`--eigenvalues`). At the limit the
 * eigenvalues cost about 0.05 s, a small share of the command; a 10,000-state chain (Σ m² = 10⁸) costs about
 * 0.5 s, as much as a quarter of everything else, so there they are computed only when asked.
 */
export const EIGEN_WORK_LIMIT = 1e7;

/** Whether A's eigenvalues are cheap enough to compute unasked; the largest diagonal block otherwise. */
export function eigenWork(lin: LinearModel): { cheap: boolean; largest: number } {
  if (lin.n * lin.n <= EIGEN_WORK_LIMIT) return { cheap: true, largest: lin.n };
  const { start, count } = stronglyConnectedCsr(lin.sparse.A);
  let work = 0;
  let largest = 0;
  for (let k = 0; k < count; k++) {
    const m = start[k + 1] - start[k];
    work += m * m;
    if (m > largest) largest = m;
  }
  return { cheap: work <= EIGEN_WORK_LIMIT, largest };
}

/**
 * The eigenvalues of A as `poise linearize` writes them: computed when `ask` is true, or when undefined
 * and they are cheap (eigenWork); otherwise undefined with the note saying why and how to ask.
 */
export function linearEigenIfCheap(lin: LinearModel, ask?: boolean): { eig?: { re: number; im: number }[]; note?: string } {
  if (ask === true) return { eig: linearEigen(lin) };
  const w = ask === false ? { cheap: false, largest: lin.n } : eigenWork(lin);
  if (w.cheap) return { eig: linearEigen(lin) };
  const why = ask === false ? 'not asked for' : `A has ${lin.n} states and a coupled block of ${w.largest}, too large to compute them unasked`;
  return { note: `eigenvalues not computed (${why}); add --eigenvalues to compute them` };
}

export function linearJson(lin: LinearModel, values: VariableValue[], eqs: DeviationEquation[]): LinearJson {
  const v: LinearJson['values'] = nameRecord(); // a name such as __proto__ is an entry of its own
  for (const x of values) if (x.kind !== 'const') v[x.name] = { value: x.value, unit: x.unit };
  return {
    point: lin.point,
    values: v,
    states: lin.states,
    inputs: lin.inputs,
    outputs: lin.outputs,
    units: { states: lin.stateUnits.map(u1), inputs: lin.inputUnits.map(u1), outputs: lin.outputUnits.map(u1), time: lin.timeUnit },
    A: rows(lin.A, lin.n, lin.n),
    B: rows(lin.B, lin.n, lin.m),
    C: rows(lin.C, lin.p, lin.n),
    D: rows(lin.D, lin.p, lin.m),
    eigenvalues: linearEigen(lin),
    equations: eqs.map((e) => e.text),
    ...(lin.reduction ? { indexReduction: lin.reduction } : {}),
  };
}

const u1 = unitText;

/** The index reduction of a constrained model in words: what was differentiated and which states were chosen. */
export function indexReductionLines(s: IndexReductionSummary): string[] {
  const times = (k: number) => (k === 1 ? 'once' : k === 2 ? 'twice' : `${k} times`);
  return [
    `Index reduction (the model as written has index ${s.index}; Pantelides' algorithm, states by dummy derivatives):`,
    `  differentiated: ${s.differentiated.map((d) => `"${d.label}" ${times(d.times)}`).join(', ')}`,
    `  states: ${s.states.join(', ') || '(none)'}`,
    `  determined by the constraints: ${s.constrained.join(', ') || '(no declared state)'}; dummy derivatives (algebraic): ${s.dummies.join(', ')}`,
  ];
}

/** The same in one line (a lens title): the states chosen at the point and the differentiated equations. */
export function indexReductionBrief(s: IndexReductionSummary): string {
  const times = (k: number) => (k === 1 ? '' : k === 2 ? ' twice' : ` ${k} times`);
  return `index ${s.index} reduced: states ${s.states.join(', ') || '(none)'}; differentiated ${s.differentiated.map((d) => `"${d.label}"${times(d.times)}`).join(', ')}`;
}

export function formatValues(values: VariableValue[], digits = 6, withConstants = false): string {
  const shown = values.filter((v) => withConstants || v.kind !== 'const');
  const w = maxOf(shown.map((v) => v.name.length), 4);
  return shown
    .map((v) => `  ${v.name.padEnd(w)}  ${formatNumber(v.value, digits).padStart(12)} ${v.unit ? `[${v.unit}]` : ''}${v.role === 'fixed' ? '  (fixed)' : ''}`.trimEnd())
    .join('\n');
}

/** Why a matrix of the linear model has no entries, in words (its rows/columns are states, inputs or outputs). */
const EMPTY_REASON: Record<string, [rows: string, cols: string]> = {
  A: ['the model has no states', 'the model has no states'],
  B: ['the model has no states', 'the model declares no inputs'],
  C: ['the model declares no outputs', 'the model has no states'],
  D: ['the model declares no outputs', 'the model declares no inputs'],
};

/** "C (0×1): empty — the model declares no outputs": an empty matrix of the linear model, in words. */
export function emptyMatrixText(name: string, r: number, c: number): string {
  const why = EMPTY_REASON[name];
  const parts = why ? [...new Set([r === 0 ? why[0] : '', c === 0 ? why[1] : ''].filter(Boolean))] : ['no entries'];
  const reason = parts.length > 1 ? `${parts[0]} and ${parts[1].replace(/^the model (declares|has) /, '')}` : parts[0];
  return `${name} (${r}×${c}): empty — ${reason}`;
}

export function formatMatrix(name: string, a: Float64Array, r: number, c: number, rowNames: string[], colNames: string[], digits = 5): string {
  if (r === 0 || c === 0) return emptyMatrixText(name, r, c);
  const cells = rows(a, r, c).map((row) => row.map((x) => formatNumber(x, digits)));
  const w = maxOf(colNames.map((s) => s.length), maxOf(cells.flat().map((s) => s.length), 8));
  const rw = maxOf(rowNames.map((s) => s.length));
  const lines = [`${name} (${r}×${c})`, `  ${''.padEnd(rw)}  ${colNames.map((s) => s.padStart(w)).join(' ')}`];
  cells.forEach((row, i) => lines.push(`  ${rowNames[i].padEnd(rw)}  ${row.map((s) => s.padStart(w)).join(' ')}`));
  return lines.join('\n');
}

/**
 * Eigenvalues as a list; a repeated eigenvalue (equal within REPEAT_TOL of the spectral radius, common
 * practice for eigenvalues computed by QR) once, with its algebraic multiplicity: "-0.5 (×2)".
 */
export function formatEigen(eig: { re: number; im: number }[], digits = 5): string {
  const rho = eig.reduce((m, e) => Math.max(m, Math.hypot(e.re, e.im)), 0);
  const groups: { e: { re: number; im: number }; count: number }[] = [];
  for (const e of eig) {
    const g = groups.find((x) => Math.hypot(x.e.re - e.re, x.e.im - e.im) <= REPEAT_TOL * rho && (x.e.im > 0) === (e.im > 0) && (x.e.im < 0) === (e.im < 0));
    if (g) g.count++;
    else groups.push({ e, count: 1 });
  }
  const one = (e: { re: number; im: number }) => (e.im === 0 ? formatNumber(e.re, digits) : `${formatNumber(e.re, digits)} ${e.im < 0 ? '-' : '+'} ${formatNumber(Math.abs(e.im), digits)}i`);
  return groups.map((g) => `${one(g.e)}${g.count > 1 ? ` (×${g.count})` : ''}`).join(', ');
}

/** A direction in state space in Poise's notation: "0.707·h1 − 0.707·h2" (three significant digits). */
export function directionText(dir: { state: string; weight: number }[]): string {
  return dir
    .map((t, i) => `${i === 0 ? (t.weight < 0 ? '−' : '') : t.weight < 0 ? ' − ' : ' + '}${formatNumber(Math.abs(t.weight), 3)}·${t.state}`)
    .join('');
}

/** "", " (×2)" or " (×2, 1 eigenvector)" for a mode's algebraic and geometric multiplicity. */
export function multiplicityText(md: { algebraicMultiplicity: number; geometricMultiplicity: number }): string {
  if (md.algebraicMultiplicity <= 1) return '';
  const g = md.geometricMultiplicity < md.algebraicMultiplicity ? `, ${md.geometricMultiplicity} eigenvector${md.geometricMultiplicity === 1 ? '' : 's'}` : '';
  return ` (×${md.algebraicMultiplicity}${g})`;
}

/**
 * A matrix with more cells than this is not written as a table in text or Markdown: at 10⁷ cells the table is
 * already about 100 MB of text (a 10,000-state A would be 900 MB, more than a string can hold); its size and
 * non-zero count are written instead, with the formats that carry it (csv, json, json --sparse).
 */
export const TABLE_CELL_LIMIT = 1e7;

/** The line written in place of a matrix too large for a table. */
export function tableTooLargeText(name: string, m: CsrMatrix): string {
  const nnz = m.rowPtr[m.rows];
  return `${name} (${m.rows}×${m.cols}): ${nnz} non-zero entries; too large for a table here (more than ${TABLE_CELL_LIMIT.toExponential(0).replace('e+', 'e')} cells): write it with --format csv, json or json --sparse`;
}

export function formatLinearText(a: Analysis, lin: LinearModel, values: VariableValue[], eqs: DeviationEquation[], digits = 5, eigen?: boolean): string {
  const t = lin.timeUnit;
  const out: string[] = [];
  out.push(`Point ${lin.point} (time in ${t})`);
  out.push(formatValues(values, 6));
  out.push('');
  if (lin.reduction) pushAll(out, [...indexReductionLines(lin.reduction), '']);
  out.push('Deviation equations (Δv = v − v₀; v₀: the value at the point):');
  for (const e of eqs) out.push('  ' + e.text);
  out.push('');
  const sn = lin.states.map((s, i) => `Δ${s}${unitSuffix(lin.stateUnits[i])}`);
  const inn = lin.inputs.map((s, i) => `Δ${s}${unitSuffix(lin.inputUnits[i])}`);
  const on = lin.outputs.map((s, i) => `Δ${s}${unitSuffix(lin.outputUnits[i])}`);
  // the dense matrices are read only for tables that are written (lin.A of 10,000 states is 800 MB)
  const matrix = (name: 'A' | 'B' | 'C' | 'D', r: number, c: number, rn: string[], cn: string[]) =>
    r * c > TABLE_CELL_LIMIT ? tableTooLargeText(name, lin.sparse[name]) : formatMatrix(name, lin[name], r, c, rn, cn, digits);
  out.push(matrix('A', lin.n, lin.n, sn, sn));
  out.push(matrix('B', lin.n, lin.m, sn, inn));
  out.push(matrix('C', lin.p, lin.n, on, sn));
  out.push(matrix('D', lin.p, lin.m, on, inn));
  out.push('');
  const ev = linearEigenIfCheap(lin, eigen);
  out.push(ev.eig ? `Eigenvalues [1/${t}]: ${formatEigen(ev.eig, digits) || '(none)'}` : `Eigenvalues [1/${t}]: ${ev.note}`);
  out.push('', LINEAR_CAUTION);
  void a;
  return out.join('\n');
}

export function formatLinearMarkdown(lin: LinearModel, values: VariableValue[], eqs: DeviationEquation[], digits = 5): string {
  const out: string[] = [];
  out.push(`## Linear model at point \`${lin.point}\` (time in ${lin.timeUnit})`, '');
  out.push('| variable | value | unit | |', '|---|---:|---|---|');
  for (const v of values) if (v.kind !== 'const') out.push(`| ${v.name} | ${formatNumber(v.value, 6)} | ${v.unit} | ${v.role} |`);
  out.push('', '```');
  pushAll(out, eqs.map((e) => e.text));
  out.push('```', '');
  const table = (name: 'A' | 'B' | 'C' | 'D', r: number, c: number, rn: string[], cn: string[]) => {
    if (!r || !c) return;
    if (r * c > TABLE_CELL_LIMIT) {
      out.push(`**${name}**: ${tableTooLargeText(name, lin.sparse[name])}`, '');
      return;
    }
    const a = lin[name];
    out.push(`**${name}**`, '', `| | ${cn.map((x) => `Δ${x}`).join(' | ')} |`, `|---|${cn.map(() => '---:').join('|')}|`);
    rows(a, r, c).forEach((row, i) => out.push(`| Δ${rn[i]} | ${row.map((x) => formatNumber(x, digits)).join(' | ')} |`));
    out.push('');
  };
  table('A', lin.n, lin.n, lin.states, lin.states);
  table('B', lin.n, lin.m, lin.states, lin.inputs);
  table('C', lin.p, lin.n, lin.outputs, lin.states);
  table('D', lin.p, lin.m, lin.outputs, lin.inputs);
  out.push(`Eigenvalues [1/${lin.timeUnit}]: ${formatEigen(linearEigen(lin), digits) || '(none)'}`);
  return out.join('\n');
}

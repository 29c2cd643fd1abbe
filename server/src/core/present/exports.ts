/**
 * Exports of a linear model (names, units, point values, A, B, C, D) in the forms other tools read:
 * JSON (schema in docs/exports.md; the shape of `poise linearize --format json` plus a schema tag), CSV
 * (one row per number), a Markdown document with tables, LaTeX (bmatrix and an align block of the
 * deviation equations) and a Python/NumPy snippet. Numbers are written exactly (shortest text that reads
 * back to the same double) unless a number of significant digits is asked for. Pure.
 */
import type { Analysis, VariableValue } from '../pipeline/analysis';
import { formatNumber } from '../algebra/expr';
import { emptyMatrixText, LINEAR_CAUTION, linearEigen, linearJson, rows, type LinearJson } from './format';
import { deviationEquations, type LinearModel } from '../solve/linearizer';
import { coefficientUnit } from '../analysis/symbolic';
import { unitText } from '../semantics/units';
import { simplifyUnitText } from '../semantics/simplifyUnit';
import { pushAll } from '../arrays';

export const EXPORT_FORMATS = ['json', 'csv', 'markdown', 'latex', 'numpy'] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

export const LINEAR_SCHEMA = 'poise-linear/1';

export interface ExportOptions {
  /** Significant digits; undefined writes every number exactly (round-trips). */
  digits?: number;
  /** How the point was solved (JSON `solve` field): Newton iterations and the achieved relative residual. */
  solve?: PointSolveInfo;
}

export interface PointSolveInfo {
  iterations: number;
  residual: number;
}

export type LinearExportJson = { schema: typeof LINEAR_SCHEMA } & LinearJson & { caution: string; solve?: PointSolveInfo };

/**
 * The linear model at a point in one export format. Throws an Error whose message says what is wrong
 * when the point does not solve or the model cannot be linearized there.
 */
export function exportLinear(a: Analysis, point: string | undefined, format: ExportFormat, opts: ExportOptions = {}): string {
  const sol = a.point(point);
  if (!sol) throw new Error(point ? `no point named "${point}" (or the model has errors)` : 'no point to linearize at');
  if (!sol.ok) throw new Error(`point "${sol.name}" does not solve: ${sol.diagnostics.find((d) => d.severity === 'error')?.message ?? 'see the problems'}`);
  const lin = a.linear(sol.name);
  if (!lin || !lin.ok) throw new Error(`the linear model at point "${sol.name}" cannot be formed: ${lin?.diagnostics.find((d) => d.severity === 'error')?.message ?? 'see the problems'}`);
  return exportLinearModel(lin, a.values(sol), format, { solve: { iterations: sol.iterations, residual: sol.residual }, ...opts });
}

/** Same as exportLinear, from a linear model and the point's values. */
export function exportLinearModel(lin: LinearModel, values: VariableValue[], format: ExportFormat, opts: ExportOptions = {}): string {
  switch (format) {
    case 'json': return JSON.stringify(linearExportJson(lin, values, opts.solve), jsonNumbers, 1) + '\n';
    case 'csv': return linearCsv(lin, values, opts);
    case 'markdown': return linearMarkdown(lin, values, opts);
    case 'latex': return linearLatex(lin, values, opts);
    case 'numpy': return linearNumpy(lin, values, opts);
  }
}

export function linearExportJson(lin: LinearModel, values: VariableValue[], solve?: PointSolveInfo): LinearExportJson {
  const j: LinearExportJson = { schema: LINEAR_SCHEMA, ...linearJson(lin, values, deviationEquations(lin, 6)), caution: LINEAR_CAUTION };
  if (solve) j.solve = { iterations: solve.iterations, residual: solve.residual };
  return j;
}

/** JSON has no NaN or Infinity: they become null. */
function jsonNumbers(_k: string, v: unknown): unknown {
  return typeof v === 'number' && !Number.isFinite(v) ? null : v;
}

const fmt = (v: number, o: ExportOptions) => (o.digits === undefined ? String(v) : formatNumber(v, o.digits));
const u1 = unitText;

interface Matrix {
  name: 'A' | 'B' | 'C' | 'D';
  data: Float64Array;
  r: number;
  c: number;
  rowNames: string[];
  colNames: string[];
  rowUnits: string[];
  colUnits: string[];
  /** Row quantity is a time derivative (A, B). */
  rate: boolean;
}

function matrices(lin: LinearModel): Matrix[] {
  const su = lin.stateUnits.map(u1);
  const iu = lin.inputUnits.map(u1);
  const ou = lin.outputUnits.map(u1);
  return [
    { name: 'A', data: lin.A, r: lin.n, c: lin.n, rowNames: lin.states, colNames: lin.states, rowUnits: su, colUnits: su, rate: true },
    { name: 'B', data: lin.B, r: lin.n, c: lin.m, rowNames: lin.states, colNames: lin.inputs, rowUnits: su, colUnits: iu, rate: true },
    { name: 'C', data: lin.C, r: lin.p, c: lin.n, rowNames: lin.outputs, colNames: lin.states, rowUnits: ou, colUnits: su, rate: false },
    { name: 'D', data: lin.D, r: lin.p, c: lin.m, rowNames: lin.outputs, colNames: lin.inputs, rowUnits: ou, colUnits: iu, rate: false },
  ];
}

// ---------------------------------------------------------------- CSV

const csvCell = (s: string) => (/[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);

/**
 * CSV, one row per number: `kind,row,column,value,unit`. kind is `point` (row = the point's name),
 * `time` (unit = the time unit), `value` (row = a variable, column = fixed|solved, its value and unit),
 * or `A`…`D` (row and column = the deviation variables' names without Δ, the coefficient and its unit).
 */
export function linearCsv(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): string {
  const out = ['kind,row,column,value,unit'];
  const line = (cells: string[]) => out.push(cells.map(csvCell).join(','));
  line(['point', lin.point, '', '', '']);
  line(['time', '', '', '', lin.timeUnit]);
  line(['caution', LINEAR_CAUTION.replace(/^Caution: /, ''), '', '', '']);
  for (const v of values) if (v.kind !== 'const') line(['value', v.name, v.role, fmt(v.value, o), v.unit]);
  for (const M of matrices(lin)) {
    for (let i = 0; i < M.r; i++) {
      for (let j = 0; j < M.c; j++) {
        line([M.name, M.rowNames[i], M.colNames[j], fmt(M.data[i * M.c + j], o), coefficientUnit(M.rowUnits[i], M.colUnits[j], M.rate ? lin.timeUnit : undefined)]);
      }
    }
  }
  return out.join('\n') + '\n';
}

// ---------------------------------------------------------------- Markdown

const mdEscape = (s: string) => s.replace(/\|/g, '\\|');
const withUnit = (name: string, unit: string) => (unit ? `${name} [${unit}]` : name);

/** A Markdown document: the point's values, the deviation equations, and A, B, C, D as tables. */
export function linearMarkdown(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): string {
  const out: string[] = [];
  out.push(`## Linear model at point \`${lin.point}\``, '', `Time in ${lin.timeUnit}. Each Δ variable is the deviation from the point, in its declared unit.`, '');
  out.push('| variable | value | unit | role |', '|---|---:|---|---|');
  for (const v of values) if (v.kind !== 'const') out.push(`| ${mdEscape(v.name)} | ${fmt(v.value, o)} | ${mdEscape(v.unit)} | ${v.role} |`);
  out.push('', '```');
  pushAll(out, deviationLines(lin, o, 'text'));
  out.push('```', '');
  for (const M of matrices(lin)) {
    if (!M.r || !M.c) {
      out.push(`**${M.name}** ${emptyMatrixText(M.name, M.r, M.c).slice(M.name.length + 1)}`, '');
      continue;
    }
    out.push(`**${M.name}** (${M.r}×${M.c})`, '');
    out.push(`| | ${M.colNames.map((c, j) => mdEscape(withUnit(`Δ${c}`, M.colUnits[j]))).join(' | ')} |`, `|---|${M.colNames.map(() => '---:').join('|')}|`);
    rows(M.data, M.r, M.c).forEach((row, i) => out.push(`| ${mdEscape(withUnit(`Δ${M.rowNames[i]}${M.rate ? "'" : ''}`, M.rowUnits[i] ? (M.rate ? simplifyUnitText(`${M.rowUnits[i]}/${lin.timeUnit}`) : M.rowUnits[i]) : M.rate ? `1/${lin.timeUnit}` : ''))} | ${row.map((x) => fmt(x, o)).join(' | ')} |`));
    out.push('');
  }
  const eig = linearEigen(lin);
  out.push(`Eigenvalues of A [1/${lin.timeUnit}]: ${eig.length ? eig.map((e) => (e.im === 0 ? fmt(e.re, o) : `${fmt(e.re, o)} ${e.im < 0 ? '-' : '+'} ${fmt(Math.abs(e.im), o)}i`)).join(', ') : '(none)'}`);
  out.push("", `> ${LINEAR_CAUTION}`);
  return out.join('\n') + '\n';
}

/** Deviation equations with exact (or `digits`) coefficients, as plain text or LaTeX lines. */
function deviationLines(lin: LinearModel, o: ExportOptions, style: 'text' | 'latex'): string[] {
  const out: string[] = [];
  const { n, m } = lin;
  const name = (x: string, dot: number) => (style === 'text' ? `Δ${x}${"'".repeat(dot)}` : `\\Delta ${texVar(x, dot)}`);
  const num = (v: number) => (style === 'text' ? fmt(v, o) : texNumber(v, o));
  const emit = (lhs: string, terms: { c: number; v: string }[]) => {
    let s = '';
    terms.filter((t) => t.c !== 0).forEach((t, k) => {
      const neg = t.c < 0;
      const mag = Math.abs(t.c);
      const coef = mag === 1 ? '' : style === 'text' ? `${num(mag)}*` : `${num(mag)}\\,`;
      s += `${k === 0 ? (neg ? '-' : '') : neg ? ' - ' : ' + '}${coef}${t.v}`;
    });
    out.push(style === 'text' ? `${lhs} = ${s || '0'}` : `${lhs} &= ${s || '0'}`);
  };
  for (let i = 0; i < n; i++) {
    const next = lin.states.indexOf(lin.states[i] + "'");
    if (next >= 0) {
      let pure = lin.A[i * n + next] === 1;
      for (let k = 0; k < n && pure; k++) if (k !== next && lin.A[i * n + k] !== 0) pure = false;
      for (let k = 0; k < m && pure; k++) if (lin.B[i * m + k] !== 0) pure = false;
      if (pure) continue;
    }
    emit(name(lin.states[i], 1), [...lin.states.map((x, j) => ({ c: lin.A[i * n + j], v: name(x, 0) })), ...lin.inputs.map((x, j) => ({ c: lin.B[i * m + j], v: name(x, 0) }))]);
  }
  for (let i = 0; i < lin.p; i++) {
    emit(name(lin.outputs[i], 0), [...lin.states.map((x, j) => ({ c: lin.C[i * n + j], v: name(x, 0) })), ...lin.inputs.map((x, j) => ({ c: lin.D[i * m + j], v: name(x, 0) }))]);
  }
  return out;
}

// ---------------------------------------------------------------- LaTeX

const TEX_SPECIAL: Record<string, string> = { _: '\\_', '%': '\\%', '#': '\\#', '&': '\\&', $: '\\$', '{': '\\{', '}': '\\}', '~': '\\textasciitilde{}', '^': '\\textasciicircum{}', '\\': '\\textbackslash{}' };
const texText = (s: string) => s.replace(/[_%#&${}~^\\]/g, (c) => TEX_SPECIAL[c]);

/** A variable name in math mode; `dots` extra time derivatives on top of the primes in the name. */
function texVar(name: string, dots = 0): string {
  const m = /^(.*?)('*)$/.exec(name)!;
  const k = m[2].length + dots;
  const base = `\\mathrm{${texText(m[1])}}`;
  if (k === 0) return base;
  if (k === 1) return `\\dot{${base}}`;
  if (k === 2) return `\\ddot{${base}}`;
  return `${base}^{(${k})}`;
}

/** A number in LaTeX: 1.5e-7 → 1.5\times 10^{-7}. */
function texNumber(v: number, o: ExportOptions): string {
  if (Number.isNaN(v)) return '\\mathrm{NaN}';
  if (!Number.isFinite(v)) return v > 0 ? '\\infty' : '-\\infty';
  const s = fmt(v, o);
  const e = /^(-?[\d.]+)e([-+]?\d+)$/.exec(s);
  if (!e) return s;
  return `${e[1]}\\times 10^{${Number(e[2])}}`;
}

function texMatrix(M: Matrix, o: ExportOptions): string {
  if (!M.r || !M.c) return `% ${emptyMatrixText(M.name, M.r, M.c)}`;
  const body = rows(M.data, M.r, M.c).map((row) => '  ' + row.map((x) => texNumber(x, o)).join(' & ')).join(' \\\\\n');
  return `${M.name} = \\begin{bmatrix}\n${body}\n\\end{bmatrix}`;
}

/** LaTeX (amsmath): the state, input and output vectors, A, B, C, D as bmatrix, the deviation equations as align. */
export function linearLatex(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): string {
  const out: string[] = [];
  out.push(`% Linear model at point "${lin.point}" (generated by Poise; needs \\usepackage{amsmath}). Time in ${lin.timeUnit}.`);
  out.push(`% ${LINEAR_CAUTION}`);
  out.push('% Operating point (declared units):');
  for (const v of values) if (v.kind !== 'const') out.push(`%   ${v.name} = ${fmt(v.value, o)}${v.unit ? ` [${v.unit}]` : ''} (${v.role})`);
  const vec = (names: string[], units: string[]) => names.map((x, i) => `\\Delta ${texVar(x)}${units[i] ? `\\;\\text{[${texText(units[i])}]}` : ''}`);
  const ms = matrices(lin);
  out.push('\\begin{equation*}');
  out.push(`  \\dot{x} = A\\,x + B\\,u, \\quad y = C\\,x + D\\,u`);
  out.push('\\end{equation*}');
  for (const [label, names, units] of [['x', lin.states, ms[0].rowUnits], ['u', lin.inputs, ms[1].colUnits], ['y', lin.outputs, ms[2].rowUnits]] as const) {
    if (!names.length) {
      out.push(`% ${label} is empty`);
      continue;
    }
    out.push('\\begin{equation*}', `${label} = \\begin{bmatrix}\n  ${vec(names, units).join(' \\\\\n  ')}\n\\end{bmatrix}`, '\\end{equation*}');
  }
  for (const M of ms) {
    if (!M.r || !M.c) {
      out.push(texMatrix(M, o));
      continue;
    }
    out.push('\\begin{equation*}', texMatrix(M, o), '\\end{equation*}');
  }
  const eqs = deviationLines(lin, o, 'latex');
  if (eqs.length) {
    out.push('\\begin{align*}');
    out.push(eqs.map((e) => '  ' + e).join(' \\\\\n'));
    out.push('\\end{align*}');
  }
  return out.join('\n') + '\n';
}

// ---------------------------------------------------------------- Python / NumPy

const pyNum = (v: number, o: ExportOptions) => (Number.isNaN(v) ? 'float("nan")' : !Number.isFinite(v) ? (v > 0 ? 'float("inf")' : '-float("inf")') : fmt(v, o));
const pyStr = (s: string) => JSON.stringify(s);

/** A Python snippet that builds A, B, C, D as NumPy arrays, with the names and units as comments. */
export function linearNumpy(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): string {
  const out: string[] = [];
  out.push(`# Linear model at point ${pyStr(lin.point)}, generated by Poise.`);
  out.push(`# dx/dt = A x + B u,  y = C x + D u;  x, u, y are deviations from the point in declared units; time in ${lin.timeUnit}.`);
  out.push(`# ${LINEAR_CAUTION}`);
  out.push('import numpy as np', '');
  const list = (label: string, names: string[], units: string[]) => {
    out.push(`${label} = [${names.map(pyStr).join(', ')}]`);
    out.push(`${label}_units = [${units.map(pyStr).join(', ')}]`);
  };
  const ms = matrices(lin);
  list('states', lin.states, ms[0].rowUnits);
  list('inputs', lin.inputs, ms[1].colUnits);
  list('outputs', lin.outputs, ms[2].rowUnits);
  out.push(`time_unit = ${pyStr(lin.timeUnit)}`, '');
  out.push('# operating point, declared units');
  out.push('point = {');
  for (const v of values) if (v.kind !== 'const') out.push(`    ${pyStr(v.name)}: ${pyNum(v.value, o)},  # ${v.unit ? `[${v.unit}] ` : ''}${v.role}`);
  out.push('}', '');
  for (const M of ms) {
    const rowLabel = (i: number) => `d${M.rowNames[i]}/dt`;
    out.push(`# ${M.name}: rows ${M.rate ? 'd(state)/dt' : 'outputs'}, columns ${M.colNames.length ? M.colNames.join(', ') : '(none)'}`);
    if (!M.r || !M.c) {
      out.push(`# ${emptyMatrixText(M.name, M.r, M.c)}`, `${M.name} = np.zeros((${M.r}, ${M.c}))`, '');
      continue;
    }
    out.push(`${M.name} = np.array([`);
    rows(M.data, M.r, M.c).forEach((row, i) => out.push(`    [${row.map((x) => pyNum(x, o)).join(', ')}],  # ${M.rate ? rowLabel(i) : M.rowNames[i]}`));
    out.push('], dtype=float)', '');
  }
  return out.join('\n');
}

/**
 * Exports of a linear model (names, units, point values, A, B, C, D) in the forms other tools read:
 * JSON (schema in docs/exports.md; the shape of `poise linearize --format json` plus a schema tag), CSV
 * (one row per number), a Markdown document with tables, LaTeX (bmatrix and an align block of the
 * deviation equations) and a Python/NumPy snippet. Numbers are written exactly (shortest text that reads
 * back to the same double) unless a number of significant digits is asked for. Pure.
 */
import type { Analysis, VariableValue } from '../pipeline/analysis';
import { formatNumber } from '../algebra/expr';
import { emptyMatrixText, LINEAR_CAUTION, linearEigenIfCheap, linearJson, type LinearJson } from './format';
import { deviationEquations, impliedShift, type DeviationEquation, type LinearModel } from '../solve/linearizer';
import type { CsrMatrix } from '../numeric/csr';
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
  /**
   * Sparse form (json, csv, numpy): only the non-zero entries of A, B, C, D, in the layouts of
   * docs/exports.md. Dense output of a large model is n² numbers; this is proportional to the non-zeros.
   */
  sparse?: boolean;
  /** The deviation equations with 6 significant digits when the caller has them already (JSON). */
  equations?: DeviationEquation[];
  /** How the point was solved (JSON `solve` field): Newton iterations and the achieved relative residual. */
  solve?: PointSolveInfo;
  /**
   * Eigenvalues of A (json, markdown): true computes them, false leaves them out, undefined computes them
   * when cheap by A's structure (format.ts eigenWork); left out, JSON has `"eigenvalues": null` and an
   * `eigenvaluesNote` that says why.
   */
  eigenvalues?: boolean;
}

/** Formats that have a sparse form. */
export const SPARSE_FORMATS: readonly ExportFormat[] = ['json', 'csv', 'numpy'];

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
  let s = '';
  for (const chunk of exportChunks(lin, values, format, opts)) s += chunk;
  return s;
}

/**
 * The export as a sequence of pieces of text, each a whole number of lines, produced as they are written
 * (the CLI streams them to its output; nothing holds the whole text of a large model).
 */
export function exportChunks(lin: LinearModel, values: VariableValue[], format: ExportFormat, opts: ExportOptions = {}): Iterable<string> {
  switch (format) {
    case 'json': return linearJsonChunks(lin, values, opts);
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

/** Gathers lines into pieces of about this many characters. */
const CHUNK = 1 << 16;

/**
 * Runs a line producer and yields the gathered pieces. The producer yields between groups of lines (a
 * wide matrix row is a group by itself), so the pieces leave while they are young.
 */
function* gathered(produce: (emit: (line: string) => void) => Iterable<void>): Generator<string> {
  let piece = '';
  let ready: string[] = [];
  const emit = (line: string) => {
    piece += line + '\n';
    if (piece.length >= CHUNK) {
      ready.push(piece);
      piece = '';
    }
  };
  for (const _ of produce(emit)) {
    void _;
    if (ready.length) {
      yield* ready;
      ready = [];
    }
  }
  yield* ready;
  if (piece) yield piece;
}

/**
 * Row i of a sparse matrix as text: every column, numbers written by num and separated by sep. Runs of
 * zeros are repeated text, so a wide row costs little more than its non-zeros.
 */
export function rowText(M: CsrMatrix, i: number, num: (v: number) => string, sep: string): string {
  const z = num(0);
  const zeros = (from: number, to: number) => (to <= from ? '' : (from === 0 ? z + (sep + z).repeat(to - 1) : (sep + z).repeat(to - from)));
  let s = '';
  let col = 0;
  for (let t = M.rowPtr[i], e = M.rowPtr[i + 1]; t < e; t++) {
    const j = M.colIdx[t];
    s += zeros(col, j) + (j === 0 ? '' : sep) + num(M.values[t]);
    col = j + 1;
  }
  return s + zeros(col, M.cols);
}

/** JSON text of a number; JSON has no NaN or Infinity: they become null. */
const jnum = (v: number) => (Number.isFinite(v) ? String(v) : 'null');
/** A string that JSON writes as it is between quotes (no quote, backslash, control character or surrogate). */
const JSON_PLAIN = /^[^"\\\u0000-\u001f\ud800-\udfff]*$/;
const jstr = (s: string) => (JSON_PLAIN.test(s) ? `"${s}"` : JSON.stringify(s));
const jlist = (xs: string[]) => `[${xs.map(jstr).join(', ')}]`;

/**
 * JSON (schema in docs/exports.md), written as it is produced: one value or one matrix row per line.
 * With opts.sparse each matrix is an object in compressed-row form.
 */
function linearJsonChunks(lin: LinearModel, values: VariableValue[], o: ExportOptions): Iterable<string> {
  return gathered(function* (emit) {
    emit('{');
    emit(` "schema": ${jstr(LINEAR_SCHEMA)},`);
    emit(` "point": ${jstr(lin.point)},`);
    emit(' "values": {');
    const shown = values.filter((x) => x.kind !== 'const');
    const unitJson = new Map<string, string>(); // a model has few units and many values
    for (let k = 0; k < shown.length; k++) {
      const x = shown[k];
      let u = unitJson.get(x.unit);
      if (u === undefined) unitJson.set(x.unit, (u = jstr(x.unit)));
      emit(`  ${jstr(x.name)}: {"value": ${jnum(x.value)}, "unit": ${u}}${k < shown.length - 1 ? ',' : ''}`);
      if (k % 1024 === 1023) yield;
    }
    emit(' },');
    emit(` "states": ${jlist(lin.states)},`);
    emit(` "inputs": ${jlist(lin.inputs)},`);
    emit(` "outputs": ${jlist(lin.outputs)},`);
    emit(` "units": {"states": ${jlist(lin.stateUnits.map(u1))}, "inputs": ${jlist(lin.inputUnits.map(u1))}, "outputs": ${jlist(lin.outputUnits.map(u1))}, "time": ${jstr(lin.timeUnit)}},`);
    yield;
    for (const name of ['A', 'B', 'C', 'D'] as const) {
      const M = lin.sparse[name];
      if (o.sparse) {
        emit(` ${jstr(name)}: {"rows": ${M.rows}, "columns": ${M.cols},`);
        emit(`  "rowStart": [${Array.from(M.rowPtr).join(', ')}],`);
        emit(`  "column": [${Array.from(M.colIdx).join(', ')}],`);
        emit(`  "value": [${Array.from(M.values, jnum).join(', ')}]},`);
      } else if (!M.rows) emit(` ${jstr(name)}: [],`);
      else {
        emit(` ${jstr(name)}: [`);
        for (let i = 0; i < M.rows; i++) {
          emit(`  [${rowText(M, i, jnum, ', ')}]${i < M.rows - 1 ? ',' : ''}`);
          if (i % 256 === 255 || M.cols > 256) yield; // a wide row is a piece by itself: pieces leave as they fill
        }
        emit(' ],');
      }
      yield;
    }
    const ev = linearEigenIfCheap(lin, o.eigenvalues);
    const eig = ev.eig;
    if (eig) {
      emit(' "eigenvalues": [');
      eig.forEach((e, k) => emit(`  {"re": ${jnum(e.re)}, "im": ${jnum(e.im)}}${k < eig.length - 1 ? ',' : ''}`));
      emit(' ],');
    } else {
      emit(' "eigenvalues": null,');
      emit(` "eigenvaluesNote": ${jstr(ev.note ?? '')},`);
    }
    yield;
    const eqs = o.equations ?? deviationEquations(lin, 6);
    emit(' "equations": [');
    for (let k = 0; k < eqs.length; k++) {
      emit(`  ${jstr(eqs[k].text)}${k < eqs.length - 1 ? ',' : ''}`);
      if (k % 1024 === 1023) yield;
    }
    emit(' ],');
    if (o.solve) emit(` "solve": {"iterations": ${o.solve.iterations}, "residual": ${jnum(o.solve.residual)}},`);
    if (lin.reduction) emit(` "indexReduction": ${JSON.stringify(lin.reduction)},`); // a constrained model: differentiated equations, chosen states
    emit(` "caution": ${jstr(LINEAR_CAUTION)}`);
    emit('}');
  });
}

const fmt = (v: number, o: ExportOptions) => (o.digits === undefined ? String(v) : formatNumber(v, o.digits));
const u1 = unitText;

interface Matrix {
  name: 'A' | 'B' | 'C' | 'D';
  data: CsrMatrix;
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
  const S = lin.sparse;
  return [
    { name: 'A', data: S.A, r: lin.n, c: lin.n, rowNames: lin.states, colNames: lin.states, rowUnits: su, colUnits: su, rate: true },
    { name: 'B', data: S.B, r: lin.n, c: lin.m, rowNames: lin.states, colNames: lin.inputs, rowUnits: su, colUnits: iu, rate: true },
    { name: 'C', data: S.C, r: lin.p, c: lin.n, rowNames: lin.outputs, colNames: lin.states, rowUnits: ou, colUnits: su, rate: false },
    { name: 'D', data: S.D, r: lin.p, c: lin.m, rowNames: lin.outputs, colNames: lin.inputs, rowUnits: ou, colUnits: iu, rate: false },
  ];
}

// ---------------------------------------------------------------- CSV

const csvCell = (s: string) => (/[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);

/**
 * CSV, one row per number: `kind,row,column,value,unit`. kind is `point` (row = the point's name),
 * `time` (unit = the time unit), `value` (row = a variable, column = fixed|solved, its value and unit),
 * or `A`…`D` (row and column = the deviation variables' names without Δ, the coefficient and its unit).
 */
export function linearCsv(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): Iterable<string> {
  return gathered(function* (line) {
    const cells = (c: string[]) => line(c.map(csvCell).join(','));
    line('kind,row,column,value,unit');
    cells(['point', lin.point, '', '', '']);
    cells(['time', '', '', '', lin.timeUnit]);
    cells(['caution', LINEAR_CAUTION.replace(/^Caution: /, ''), '', '', '']);
    for (const v of values) if (v.kind !== 'const') cells(['value', v.name, v.role, fmt(v.value, o), v.unit]);
    for (const M of matrices(lin)) {
      const unitCache = new Map<string, string>();
      const unitOf = (i: number, j: number) => {
        const key = `${M.rowUnits[i]}\u0000${M.colUnits[j]}`;
        let u = unitCache.get(key);
        if (u === undefined) unitCache.set(key, (u = coefficientUnit(M.rowUnits[i], M.colUnits[j], M.rate ? lin.timeUnit : undefined)));
        return u;
      };
      const D = M.data;
      const row = new Float64Array(M.c);
      for (let i = 0; i < M.r; i++) {
        if (o.sparse) {
          for (let t = D.rowPtr[i]; t < D.rowPtr[i + 1]; t++) {
            const j = D.colIdx[t];
            cells([M.name, M.rowNames[i], M.colNames[j], fmt(D.values[t], o), unitOf(i, j)]);
          }
        } else {
          for (let t = D.rowPtr[i]; t < D.rowPtr[i + 1]; t++) row[D.colIdx[t]] = D.values[t];
          for (let j = 0; j < M.c; j++) cells([M.name, M.rowNames[i], M.colNames[j], fmt(row[j], o), unitOf(i, j)]);
          for (let t = D.rowPtr[i]; t < D.rowPtr[i + 1]; t++) row[D.colIdx[t]] = 0;
        }
        yield;
      }
    }
  });
}

// ---------------------------------------------------------------- Markdown

const mdEscape = (s: string) => s.replace(/\|/g, '\\|');
const withUnit = (name: string, unit: string) => (unit ? `${name} [${unit}]` : name);

/** A Markdown document: the point's values, the deviation equations, and A, B, C, D as tables. */
export function linearMarkdown(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): Iterable<string> {
  return gathered(function* (out) {
    out(`## Linear model at point \`${lin.point}\``);
    out('');
    out(`Time in ${lin.timeUnit}. Each Δ variable is the deviation from the point, in its declared unit.`);
    out('');
    out('| variable | value | unit | role |');
    out('|---|---:|---|---|');
    for (const v of values) if (v.kind !== 'const') out(`| ${mdEscape(v.name)} | ${fmt(v.value, o)} | ${mdEscape(v.unit)} | ${v.role} |`);
    out('');
    out('```');
    for (const l of deviationLines(lin, o, 'text')) out(l);
    out('```');
    out('');
    yield;
    for (const M of matrices(lin)) {
      if (!M.r || !M.c) {
        out(`**${M.name}** ${emptyMatrixText(M.name, M.r, M.c).slice(M.name.length + 1)}`);
        out('');
        continue;
      }
      out(`**${M.name}** (${M.r}×${M.c})`);
      out('');
      out(`| | ${M.colNames.map((c, j) => mdEscape(withUnit(`Δ${c}`, M.colUnits[j]))).join(' | ')} |`);
      out(`|---|${M.colNames.map(() => '---:').join('|')}|`);
      for (let i = 0; i < M.r; i++) {
        out(`| ${mdEscape(withUnit(`Δ${M.rowNames[i]}${M.rate ? "'" : ''}`, M.rowUnits[i] ? (M.rate ? simplifyUnitText(`${M.rowUnits[i]}/${lin.timeUnit}`) : M.rowUnits[i]) : M.rate ? `1/${lin.timeUnit}` : ''))} | ${rowText(M.data, i, (x) => fmt(x, o), ' | ')} |`);
        yield;
      }
      out('');
    }
    const ev = linearEigenIfCheap(lin, o.eigenvalues);
    const eig = ev.eig;
    out(`Eigenvalues of A [1/${lin.timeUnit}]: ${!eig ? ev.note : eig.length ? eig.map((e) => (e.im === 0 ? fmt(e.re, o) : `${fmt(e.re, o)} ${e.im < 0 ? '-' : '+'} ${fmt(Math.abs(e.im), o)}i`)).join(', ') : '(none)'}`);
    out('');
    out(`> ${LINEAR_CAUTION}`);
  });
}

/** Deviation equations with exact (or `digits`) coefficients, as plain text or LaTeX lines. */
function deviationLines(lin: LinearModel, o: ExportOptions, style: 'text' | 'latex'): string[] {
  const out: string[] = [];
  const { n } = lin;
  const S = lin.sparse;
  const name = (x: string, dot: number) => (style === 'text' ? `Δ${x}${"'".repeat(dot)}` : `\\Delta ${texVar(x, dot)}`);
  const num = (v: number) => (style === 'text' ? fmt(v, o) : texNumber(v, o));
  const emit = (lhs: string, M: CsrMatrix, N: CsrMatrix, i: number) => {
    const terms: { c: number; v: string }[] = [];
    for (let t = M.rowPtr[i]; t < M.rowPtr[i + 1]; t++) terms.push({ c: M.values[t], v: name(lin.states[M.colIdx[t]], 0) });
    for (let t = N.rowPtr[i]; t < N.rowPtr[i + 1]; t++) terms.push({ c: N.values[t], v: name(lin.inputs[N.colIdx[t]], 0) });
    let s = '';
    terms.filter((t) => t.c !== 0).forEach((t, k) => {
      const neg = t.c < 0;
      const mag = Math.abs(t.c);
      const coef = mag === 1 ? '' : style === 'text' ? `${num(mag)}*` : `${num(mag)}\\,`;
      s += `${k === 0 ? (neg ? '-' : '') : neg ? ' - ' : ' + '}${coef}${t.v}`;
    });
    out.push(style === 'text' ? `${lhs} = ${s || '0'}` : `${lhs} &= ${s || '0'}`);
  };
  const index = new Map<string, number>();
  lin.states.forEach((x, i) => index.set(x, i));
  for (let i = 0; i < n; i++) {
    const next = index.get(lin.states[i] + "'");
    if (next !== undefined && impliedShift(S, i, next, 1)) continue;
    emit(name(lin.states[i], 1), S.A, S.B, i);
  }
  for (let i = 0; i < lin.p; i++) emit(name(lin.outputs[i], 0), S.C, S.D, i);
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

/** The lines of one matrix as a bmatrix (a comment when it is empty). */
function* texMatrix(M: Matrix, o: ExportOptions, out: (line: string) => void): Generator<void> {
  if (!M.r || !M.c) return out(`% ${emptyMatrixText(M.name, M.r, M.c)}`);
  out(`${M.name} = \\begin{bmatrix}`);
  for (let i = 0; i < M.r; i++) {
    out(`  ${rowText(M.data, i, (x) => texNumber(x, o), ' & ')}${i < M.r - 1 ? ' \\\\' : ''}`);
    yield;
  }
  out('\\end{bmatrix}');
}

/** LaTeX (amsmath): the state, input and output vectors, A, B, C, D as bmatrix, the deviation equations as align. */
export function linearLatex(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): Iterable<string> {
  return gathered(function* (emit) {
  const out = { push: (...lines: string[]) => lines.forEach(emit) };
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
      yield* texMatrix(M, o, emit);
      continue;
    }
    out.push('\\begin{equation*}');
    yield* texMatrix(M, o, emit);
    out.push('\\end{equation*}');
  }
  const eqs = deviationLines(lin, o, 'latex');
  if (eqs.length) {
    out.push('\\begin{align*}');
    out.push(eqs.map((e) => '  ' + e).join(' \\\\\n'));
    out.push('\\end{align*}');
  }
  });
}

// ---------------------------------------------------------------- Python / NumPy

const pyNum = (v: number, o: ExportOptions) => (Number.isNaN(v) ? 'float("nan")' : !Number.isFinite(v) ? (v > 0 ? 'float("inf")' : '-float("inf")') : fmt(v, o));
const pyStr = (s: string) => JSON.stringify(s);

/**
 * A Python snippet that builds A, B, C, D as NumPy arrays (with opts.sparse: SciPy sparse matrices in
 * compressed-row form, one matrix row per line), with the names and units as comments.
 */
export function linearNumpy(lin: LinearModel, values: VariableValue[], o: ExportOptions = {}): Iterable<string> {
  return gathered(function* (emit) {
    const out = { push: (...lines: string[]) => lines.forEach(emit) };
    out.push(`# Linear model at point ${pyStr(lin.point)}, generated by Poise.`);
    out.push(`# dx/dt = A x + B u,  y = C x + D u;  x, u, y are deviations from the point in declared units; time in ${lin.timeUnit}.`);
    out.push(`# ${LINEAR_CAUTION}`);
    out.push('import numpy as np');
    if (o.sparse) {
      out.push('import scipy.sparse', '');
      out.push('def sparse_rows(shape, rows):');
      out.push('    """A compressed-row matrix from one (columns, values) pair per row."""');
      out.push('    ptr = np.cumsum([0] + [len(c) for c, _ in rows])');
      out.push('    cols = np.array([j for c, _ in rows for j in c], dtype=np.int64)');
      out.push('    vals = np.array([x for _, v in rows for x in v], dtype=float)');
      out.push('    return scipy.sparse.csr_matrix((vals, cols, ptr), shape=shape)');
    }
    out.push('');
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
    yield;
    for (const M of ms) {
      const last = M.name === 'D';
      const rowLabel = (i: number) => (M.rate ? `d${M.rowNames[i]}/dt` : M.rowNames[i]);
      out.push(`# ${M.name}: rows ${M.rate ? 'd(state)/dt' : 'outputs'}, columns ${M.colNames.length ? M.colNames.join(', ') : '(none)'}`);
      const D = M.data;
      if (o.sparse) {
        out.push(`${M.name} = sparse_rows((${M.r}, ${M.c}), [`);
        for (let i = 0; i < M.r; i++) {
          const cols: number[] = [];
          const vals: string[] = [];
          for (let t = D.rowPtr[i]; t < D.rowPtr[i + 1]; t++) {
            cols.push(D.colIdx[t]);
            vals.push(pyNum(D.values[t], o));
          }
          out.push(`    ([${cols.join(', ')}], [${vals.join(', ')}]),  # ${rowLabel(i)}`);
          if (i % 256 === 255) yield;
        }
        out.push('])');
      } else if (!M.r || !M.c) out.push(`# ${emptyMatrixText(M.name, M.r, M.c)}`, `${M.name} = np.zeros((${M.r}, ${M.c}))`);
      else {
        out.push(`${M.name} = np.array([`);
        for (let i = 0; i < M.r; i++) {
          out.push(`    [${rowText(D, i, (x) => pyNum(x, o), ', ')}],  # ${rowLabel(i)}`);
          yield;
        }
        out.push('], dtype=float)');
      }
      if (!last) out.push('');
      yield;
    }
  });
}

/**
 * Exports of the hand-off models — the sampled-data model (analysis/handoff/sampled.ts) and the reduced
 * model (analysis/handoff/reduced.ts) — in the formats of the linear model (docs/exports.md): JSON, CSV,
 * Markdown, LaTeX and a Python/NumPy snippet. Each carries what makes the model what it is: the sample
 * time with its unit, the hold method and the input delay; or the Hankel singular values, the error bound
 * and the orders. Numbers are written exactly unless a number of significant digits is asked for. Pure.
 */
import { formatNumber } from '../algebra/expr';
import type { ReducedModel } from '../analysis/handoff/reduced';
import type { SampledModel } from '../analysis/handoff/sampled';
import type { ExportFormat } from './exports';
import { emptyMatrixText, LINEAR_CAUTION } from './format';
import { coefficientUnit } from '../analysis/symbolic';
import { HOLD_NAMES, reducedPlain, sampledPlain, type ReducedPlain, type SampledPlain } from '../analysis/handoff/plain';

export const SAMPLED_SCHEMA = 'poise-sampled/1';
export const REDUCED_SCHEMA = 'poise-reduced/1';

export { HOLD_NAMES };

/** What the exports of a hand-off model need besides the model: the point and the digits. */
export interface HandoffExportOptions {
  point: string;
  /** Significant digits; undefined writes every number exactly (round-trips). */
  digits?: number;
}

type Handoff = { kind: 'sampled'; model: SampledModel } | { kind: 'reduced'; model: ReducedModel };

const num = (v: number, digits?: number) => (!Number.isFinite(v) ? 'null' : digits === undefined ? String(v) : formatNumber(v, digits));

interface Mat {
  name: 'A' | 'B' | 'C' | 'D';
  a: Float64Array;
  r: number;
  c: number;
  rowNames: string[];
  colNames: string[];
  /** Unit of entry (i, j). */
  unit: (i: number, j: number) => string;
}

function mats(h: Handoff): Mat[] {
  const s = h.model;
  const su = s.stateUnits, iu = s.inputUnits, ou = s.outputUnits;
  // sampled: x[k+1] in the unit of x[k], no time; reduced: rates per time unit, balanced states without a unit of their own
  const rate = h.kind === 'reduced' ? s.timeUnit : undefined;
  const balanced = h.kind === 'reduced';
  const u = (row: string, col: string, perTime?: string) => coefficientUnit(row, col, perTime);
  return [
    { name: 'A', a: s.A, r: s.n, c: s.n, rowNames: s.states, colNames: s.states, unit: (i, j) => (balanced ? (rate ? `1/${rate}` : '') : u(su[i], su[j], rate)) },
    { name: 'B', a: s.B, r: s.n, c: s.m, rowNames: s.states, colNames: s.inputs, unit: (i, j) => (balanced ? '' : u(su[i], iu[j], rate)) },
    { name: 'C', a: s.C, r: s.p, c: s.n, rowNames: s.outputs, colNames: s.states, unit: (i, j) => (balanced ? '' : u(ou[i], su[j])) },
    { name: 'D', a: s.D, r: s.p, c: s.m, rowNames: s.outputs, colNames: s.inputs, unit: (i, j) => u(ou[i], iu[j]) },
  ];
}

/** The JSON object of a sampled model (schema poise-sampled/1, docs/exports.md). */
export function sampledJson(s: SampledModel, point: string, digits?: number): { schema: string; point: string } & SampledPlain & { caution: string } {
  return { schema: SAMPLED_SCHEMA, point, ...sampledPlain(s, (v) => Number(num(v, digits))), caution: LINEAR_CAUTION };
}

/** The JSON object of a reduced model (schema poise-reduced/1, docs/exports.md). */
export function reducedJson(r: ReducedModel, point: string, digits?: number): { schema: string; point: string } & ReducedPlain & { caution: string } {
  return { schema: REDUCED_SCHEMA, point, ...reducedPlain(r, (v) => Number(num(v, digits))), caution: LINEAR_CAUTION };
}

/** One line describing the model: the method with T and the delay, or the orders with the bound. */
function headline(h: Handoff, o: HandoffExportOptions): string {
  if (h.kind === 'sampled') {
    const s = h.model;
    return `Discrete-time model at point "${o.point}" by ${HOLD_NAMES[s.hold]}, sample time T = ${num(s.sampleTime, o.digits)} ${s.timeUnit}${s.delayFraction ? `, input delay ${num(s.delayFraction, o.digits)}·T` : ''}`;
  }
  const r = h.model;
  return `Reduced model at point "${o.point}" by balanced truncation: ${r.order} of ${r.fullOrder} states (${r.kept} balanced, ${r.unstable} unstable or marginal kept exactly), error bound 2·Σ(discarded σ) = ${num(r.bound, o.digits)}`;
}

const csvCell = (s: string) => (/[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);

function handoffCsv(h: Handoff, o: HandoffExportOptions): string {
  const lines = ['kind,row,column,value,unit'];
  const cells = (c: string[]) => lines.push(c.map(csvCell).join(','));
  const s = h.model;
  cells(['point', o.point, '', '', '']);
  cells(['time', '', '', '', s.timeUnit]);
  if (h.kind === 'sampled') {
    cells(['sample_time', '', '', num(h.model.sampleTime, o.digits), s.timeUnit]);
    cells(['hold', h.model.hold, HOLD_NAMES[h.model.hold], '', '']);
    cells(['delay_fraction', '', '', num(h.model.delayFraction, o.digits), '']);
    h.model.poles.forEach((p, k) => {
      cells(['pole_z', String(k + 1), 're', num(p.z.re, o.digits), '']);
      cells(['pole_z', String(k + 1), 'im', num(p.z.im, o.digits), '']);
    });
    cells(['verdict', h.model.verdict, '', num(h.model.spectralRadius, o.digits), '']);
  } else {
    const r = h.model;
    cells(['order', 'reduced', '', String(r.order), '']);
    cells(['order', 'full', '', String(r.fullOrder), '']);
    cells(['order', 'unstable_kept', '', String(r.unstable), '']);
    cells(['order', 'suggested', '', String(r.suggested), '']);
    cells(['tolerance', '', '', num(r.tolerance, o.digits), '']);
    cells(['bound', '', '', num(r.bound, o.digits), '']);
    r.hankel.forEach((v, k) => cells(['hankel', String(k + 1), k < r.kept ? 'kept' : 'discarded', num(v, o.digits), '']));
  }
  cells(['caution', LINEAR_CAUTION.replace(/^Caution: /, ''), '', '', '']);
  for (const M of mats(h)) for (let i = 0; i < M.r; i++) for (let j = 0; j < M.c; j++) cells([M.name, M.rowNames[i], M.colNames[j], num(M.a[i * M.c + j], o.digits), M.unit(i, j)]);
  return lines.join('\n') + '\n';
}

const md = (s: string) => s.replace(/\|/g, '\\|');

function handoffMarkdown(h: Handoff, o: HandoffExportOptions): string {
  const out: string[] = [];
  const s = h.model;
  const sampled = h.kind === 'sampled';
  out.push(`## ${sampled ? 'Sampled-data' : 'Reduced'} model at point \`${o.point}\``, '');
  out.push(headline(h, o) + '.', '');
  out.push(sampled ? '`x[k+1] = A·x[k] + B·u[k]`, `y[k] = C·x[k] + D·u[k]`; deviations from the point in declared units.' : `\`dx/dt = A·x + B·u\`, \`y = C·x + D·u\`; time in ${s.timeUnit}; balanced states are combinations of the model's states.`, '');
  if (h.kind === 'sampled') {
    out.push(`| discrete pole z | \\|z\\| | from s [1/${s.timeUnit}] |`, '|---|---:|---|');
    for (const p of h.model.poles) out.push(`| ${complexText(p.z, o.digits)} | ${num(p.magnitude, o.digits)} | ${p.s ? complexText(p.s, o.digits) : 'held input'} |`);
    out.push('', `Verdict: **${h.model.verdict}** (largest |z| = ${num(h.model.spectralRadius, o.digits)}; stable when every pole is inside the unit circle).`, '');
  } else {
    const r = h.model;
    out.push('| σ | Hankel singular value | |', '|---:|---:|---|');
    r.hankel.forEach((v, k) => out.push(`| ${k + 1} | ${num(v, o.digits)} | ${k < r.kept ? 'kept' : 'discarded'} |`));
    out.push('', `Order suggested for a bound of ${num(r.tolerance, o.digits)}·σ₁: ${r.suggested}.`, '');
  }
  for (const M of mats(h)) {
    if (!M.r || !M.c) {
      out.push(`**${M.name}** ${emptyMatrixText(M.name, M.r, M.c).slice(M.name.length + 1)}`, '');
      continue;
    }
    out.push(`**${M.name}** (${M.r}×${M.c})`, '');
    out.push(`| | ${M.colNames.map(md).join(' | ')} |`, `|---|${M.colNames.map(() => '---:').join('|')}|`);
    for (let i = 0; i < M.r; i++) out.push(`| ${md(M.rowNames[i])} | ${Array.from(M.a.subarray(i * M.c, (i + 1) * M.c), (v) => num(v, o.digits)).join(' | ')} |`);
    out.push('');
  }
  out.push(`> ${LINEAR_CAUTION}`);
  return out.join('\n') + '\n';
}

const complexText = (z: { re: number; im: number }, digits?: number) => (z.im === 0 ? num(z.re, digits) : `${num(z.re, digits)} ${z.im < 0 ? '-' : '+'} ${num(Math.abs(z.im), digits)}i`);

function texNumber(v: number, digits?: number): string {
  const s = num(v, digits);
  const e = /^(-?[\d.]+)e([-+]?\d+)$/.exec(s);
  return e ? `${e[1]}\\times 10^{${Number(e[2])}}` : s;
}

function handoffLatex(h: Handoff, o: HandoffExportOptions): string {
  const out: string[] = [];
  out.push(`% ${headline(h, o).replace(/[%&#_]/g, (c) => `\\${c}`)} (generated by Poise; needs \\usepackage{amsmath}).`);
  out.push(`% ${LINEAR_CAUTION}`);
  if (h.kind === 'sampled') {
    out.push(`% T = ${num(h.model.sampleTime, o.digits)} ${h.model.timeUnit}; hold: ${h.model.hold}; input delay ${num(h.model.delayFraction, o.digits)} of a sample`);
    out.push('\\begin{equation*}', '  x_{k+1} = A\\,x_k + B\\,u_k, \\quad y_k = C\\,x_k + D\\,u_k, \\qquad T = ' + texNumber(h.model.sampleTime, o.digits) + `\\ \\mathrm{${h.model.timeUnit}}`, '\\end{equation*}');
  } else {
    const r = h.model;
    out.push(`% Hankel singular values: ${r.hankel.map((v) => num(v, o.digits)).join(', ')}`);
    out.push('\\begin{equation*}', `  \\dot{x} = A\\,x + B\\,u, \\quad y = C\\,x + D\\,u, \\qquad \\|G - G_r\\|_\\infty \\le 2\\sum_{i>${r.kept}} \\sigma_i = ${texNumber(r.bound, o.digits)}`, '\\end{equation*}');
  }
  for (const M of mats(h)) {
    if (!M.r || !M.c) {
      out.push(`% ${emptyMatrixText(M.name, M.r, M.c)}`);
      continue;
    }
    out.push('\\begin{equation*}', `${M.name} = \\begin{bmatrix}`);
    for (let i = 0; i < M.r; i++) out.push(`  ${Array.from(M.a.subarray(i * M.c, (i + 1) * M.c), (v) => texNumber(v, o.digits)).join(' & ')}${i < M.r - 1 ? ' \\\\' : ''}`);
    out.push('\\end{bmatrix}', '\\end{equation*}');
  }
  return out.join('\n') + '\n';
}

const py = (s: string) => JSON.stringify(s);

function handoffNumpy(h: Handoff, o: HandoffExportOptions): string {
  const out: string[] = [];
  const s = h.model;
  out.push(`# ${headline(h, o)}; generated by Poise.`);
  out.push(h.kind === 'sampled' ? '# x[k+1] = A x[k] + B u[k],  y[k] = C x[k] + D u[k];  deviations from the point in declared units.' : `# dx/dt = A x + B u,  y = C x + D u;  time in ${s.timeUnit}; balanced states are combinations of the model's states.`);
  out.push(`# ${LINEAR_CAUTION}`, 'import numpy as np', '');
  out.push(`states = [${s.states.map(py).join(', ')}]`, `state_units = [${s.stateUnits.map(py).join(', ')}]`);
  out.push(`inputs = [${s.inputs.map(py).join(', ')}]`, `input_units = [${s.inputUnits.map(py).join(', ')}]`);
  out.push(`outputs = [${s.outputs.map(py).join(', ')}]`, `output_units = [${s.outputUnits.map(py).join(', ')}]`);
  out.push(`time_unit = ${py(s.timeUnit)}`);
  if (h.kind === 'sampled') {
    out.push(`sample_time = ${num(h.model.sampleTime, o.digits)}  # [${s.timeUnit}]`);
    out.push(`hold = ${py(h.model.hold)}  # ${HOLD_NAMES[h.model.hold]}`);
    out.push(`delay_fraction = ${num(h.model.delayFraction, o.digits)}  # input delay as a fraction of a sample`);
  } else {
    const r = h.model;
    out.push(`hankel = np.array([${r.hankel.map((v) => num(v, o.digits)).join(', ')}])`);
    out.push(`bound = ${num(r.bound, o.digits)}  # ||G - Gr||_inf <= 2 * sum(hankel[${r.kept}:])`);
    out.push(`full_order, kept, unstable_kept, suggested = ${r.fullOrder}, ${r.kept}, ${r.unstable}, ${r.suggested}`);
  }
  out.push('');
  for (const M of mats(h)) {
    if (!M.r || !M.c) {
      out.push(`# ${emptyMatrixText(M.name, M.r, M.c)}`, `${M.name} = np.zeros((${M.r}, ${M.c}))`);
      continue;
    }
    out.push(`${M.name} = np.array([`);
    for (let i = 0; i < M.r; i++) out.push(`    [${Array.from(M.a.subarray(i * M.c, (i + 1) * M.c), (v) => num(v, o.digits)).join(', ')}],  # ${M.rowNames[i]}`);
    out.push('], dtype=float)');
  }
  return out.join('\n') + '\n';
}

function exportHandoff(h: Handoff, format: ExportFormat, o: HandoffExportOptions): string {
  switch (format) {
    case 'json': return JSON.stringify(h.kind === 'sampled' ? sampledJson(h.model, o.point, o.digits) : reducedJson(h.model, o.point, o.digits), null, 1) + '\n';
    case 'csv': return handoffCsv(h, o);
    case 'markdown': return handoffMarkdown(h, o);
    case 'latex': return handoffLatex(h, o);
    case 'numpy': return handoffNumpy(h, o);
  }
}

/** The sampled-data model in an export format. */
export function exportSampled(s: SampledModel, format: ExportFormat, o: HandoffExportOptions): string {
  return exportHandoff({ kind: 'sampled', model: s }, format, o);
}

/** The reduced model in an export format. */
export function exportReduced(r: ReducedModel, format: ExportFormat, o: HandoffExportOptions): string {
  return exportHandoff({ kind: 'reduced', model: r }, format, o);
}

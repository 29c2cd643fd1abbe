/** The sweep as a plain-text table, with the stability changes and where it stopped. */
import { maxOf, minOf, pushAll } from '../arrays';
import { formatNumber } from '../numbers';
import type { SweepPoint, SweepResult } from '../analysis/sweep';

function eigText(eig: { re: number; im: number }[], digits: number, max = 4): string {
  if (!eig.length) return '(none)';
  // the ones nearest instability first
  const shown: string[] = [];
  const sorted = [...eig].filter((e) => e.im >= 0).sort((x, y) => y.re - x.re);
  for (const e of sorted.slice(0, max)) shown.push(e.im === 0 ? formatNumber(e.re, digits) : `${formatNumber(e.re, digits)} ± ${formatNumber(e.im, digits)}i`);
  if (sorted.length > max) shown.push(`… ${sorted.length - max} more`);
  return shown.join(', ');
}

/** Plain-text table of a sweep, with the stability changes and where it stopped. */
export function formatSweepText(r: SweepResult, digits = 5): string {
  const u = (x: string) => (x ? ` [${x}]` : '');
  const out: string[] = [];
  const title = r.name ? `Sweep ${r.name} from point ${r.point}` : `Sweep from point ${r.point}`;
  out.push(`${title}: ${r.vary.name} from ${formatNumber(r.vary.from, 6)} to ${formatNumber(r.vary.to, 6)}${u(r.vary.unit)}, ${r.vary.steps + 1} values (${r.vary.log ? 'logarithmic' : 'linear'} spacing), time in ${r.timeUnit}`);
  const shownCols = r.columns.map((c, i) => ({ c, i })).filter(({ c }) => c.name !== r.vary.name).slice(0, 6);
  const headers = [`${r.vary.name}${u(r.vary.unit)}`, 'stability', `eigenvalues [1/${r.timeUnit}] (largest real part first)`, `slowest τ [${r.timeUnit}]`, 'min ζ', ...shownCols.map(({ c }) => `${c.name}${u(c.unit)}`)];
  const rows: string[][] = r.points.map((p) => {
    const timed = p.modes.filter((m) => m.timeConstant !== null);
    const slow = timed.length ? maxOf(timed.map((m) => m.timeConstant!)) : NaN;
    const pairs = p.modes.filter((m) => m.im > 0 && m.dampingRatio !== null);
    const zmin = pairs.length ? minOf(pairs.map((m) => m.dampingRatio!)) : NaN;
    return [
      formatNumber(p.value, 6), p.stability, eigText(p.eigenvalues, digits), Number.isNaN(slow) ? '-' : formatNumber(slow, digits), Number.isNaN(zmin) ? '-' : formatNumber(zmin, digits),
      ...shownCols.map(({ i }) => formatNumber(p.values[i], digits)),
    ];
  });
  const w = headers.map((h, j) => maxOf(rows.map((row) => row[j].length), h.length));
  out.push('  ' + headers.map((h, j) => h.padEnd(w[j])).join('  ').trimEnd());
  for (const row of rows) out.push('  ' + row.map((c, j) => (j === 1 || j === 2 ? c.padEnd(w[j]) : c.padStart(w[j]))).join('  ').trimEnd());
  if (r.columns.length - 1 > shownCols.length) out.push(`  (${r.columns.length - 1 - shownCols.length} more variables in --format json or csv)`);
  if (r.inputs.length && r.gainRows.length && r.points.length) {
    const last = r.points[r.points.length - 1];
    const first = r.points[0];
    const gu = (i: number, j: number) => (r.gainUnits?.[i]?.[j] ? ` ${r.gainUnits[i][j]}` : '');
    const g = (p: SweepPoint) => (p.dcGain ? p.dcGain.map((row, i) => row.map((v, j) => `${r.gainRows[i]}/${r.inputs[j]} ${formatNumber(v, digits)}${gu(i, j)}`).join(', ')).join(', ') : 'none (A is singular: an integrator)');
    out.push('', `DC gains at ${formatNumber(first.value, 6)}: ${g(first)}`, `DC gains at ${formatNumber(last.value, 6)}: ${g(last)}`);
  }
  out.push('');
  if (r.crossings.length) {
    out.push('Stability changes:');
    for (const c of r.crossings) out.push('  ' + c.message);
  } else out.push('No stability change over the points computed.');
  if (r.stop) out.push('', `Stopped: ${r.stop.message}`);
  const stateChanges = r.diagnostics.filter((d) => d.code === 'P412'); // a constrained model's states (index reduction)
  if (stateChanges.length) pushAll(out, ['', ...stateChanges.map((d) => d.message)]);
  out.push('', 'Each row is a linear model valid only near its own operating point; check conclusions on the nonlinear model and the plant.');
  return out.join('\n');
}

/** The sweep as CSV: one row per swept value (docs/sweeps.md). */
import type { SweepResult } from '../analysis/sweep';

const csvCell = (s: string) => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
const num = (v: number | null | undefined) => (v === null || v === undefined || Number.isNaN(v) ? '' : String(v));

/** One row per swept value: value, verdict, the operating point, eigenvalues (re, im, τ, ζ) and DC gains. */
export function sweepCsv(r: SweepResult): string {
  const u = (x: string) => (x ? ` [${x}]` : '');
  const n = r.states.length;
  const head = [`${r.vary.name}${u(r.vary.unit)}`, 'stability', 'unstable_count'];
  // the swept value is the first column; when it is a variable of the model it is not repeated
  const cols = r.columns.map((c, i) => ({ c, i })).filter(({ c }) => c.name !== r.vary.name);
  for (const { c } of cols) head.push(`${c.name}${u(c.unit)}`);
  for (let k = 0; k < n; k++) head.push(`eig${k + 1}_re [1/${r.timeUnit}]`, `eig${k + 1}_im [1/${r.timeUnit}]`, `eig${k + 1}_tau [${r.timeUnit}]`, `eig${k + 1}_zeta`);
  r.gainRows.forEach((row, i) => r.inputs.forEach((inp, j) => head.push(`gain ${row}/${inp}${u(r.gainUnits?.[i]?.[j] ?? '')}`)));
  const lines = [head.map(csvCell).join(',')];
  for (const p of r.points) {
    const cells = [num(p.value), p.stability, String(p.unstableCount), ...cols.map(({ i }) => num(p.values[i]))];
    for (let k = 0; k < n; k++) {
      const e = p.eigenvalues[k];
      if (!e) {
        cells.push('', '', '', '');
        continue;
      }
      const mag = Math.hypot(e.re, e.im);
      cells.push(num(e.re), num(e.im), e.re === 0 ? '' : num(1 / Math.abs(e.re)), e.im === 0 ? '' : num(-e.re / mag));
    }
    for (let i = 0; i < r.gainRows.length; i++) for (let j = 0; j < r.inputs.length; j++) cells.push(p.dcGain ? num(p.dcGain[i]?.[j]) : '');
    lines.push(cells.join(','));
  }
  return lines.join('\n') + '\n';
}

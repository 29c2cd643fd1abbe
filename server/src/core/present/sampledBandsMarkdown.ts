/**
 * The tolerance bands of a point as a hover section (Markdown): for the dominant modes the band of Re λ by
 * first order and by the samples, the share of unstable samples with its 95 % interval, and the gains'
 * bands. The editor shows it on a toleranced constant and on a point's name once the samples are in
 * (server/src/lsp/tolerances.ts).
 */
import type { GainBand, ModeBand, SensitivityReport } from '../analysis/sensitivity/bands';
import { formatNumber } from '../numbers';
import { unitSuffix } from '../semantics/units';
import { complexPlain } from './sensitivityText';

/** Modes and gains a hover shows at most (the page and `poise sensitivity` show them all). */
const HOVER_MODES = 6;
const HOVER_GAINS = 4;

const range = (lo: number, hi: number, d: number) => (Number.isFinite(lo) && Number.isFinite(hi) ? `${formatNumber(lo, d)} … ${formatNumber(hi, d)}` : '—');

export function sampledBandsMarkdown(r: SensitivityReport, d = 4): string {
  const sm = r.sampled;
  if (!r.ok || !sm) return '';
  const t = r.timeUnit;
  const out: string[] = [];
  out.push(`**Tolerance bands at point \`${r.point}\`** — ${sm.count} Latin hypercube samples (seed ${sm.seed}) of ${r.tolerances.map((c) => `\`${c.name}\` ${c.text}`).join(', ')}, each a re-solved point:`);
  out.push('', `| mode | λ (1/${t}) | Re λ, first order | Re λ, samples |`, '|---|---|---|---|');
  const row = (k: number, a: ModeBand | undefined, b: ModeBand) =>
    `| ${b.number} | ${complexPlain(b.eigenvalue, d)} | ${a ? range(a.re[0], a.re[1], d) : '—'} | ${range(b.re[0], b.re[1], d)}${b.crossesAxis ? ' (reaches the axis)' : ''} |`;
  sm.modes.slice(0, HOVER_MODES).forEach((b, k) => out.push(row(k, r.firstOrder?.modes[k], b)));
  if (sm.modes.length > HOVER_MODES) out.push('', `… and ${sm.modes.length - HOVER_MODES} more modes (the report page has them all).`);
  const ok = sm.count - sm.failed;
  const pc = (v: number) => formatNumber(100 * v, 3);
  out.push('', `Unstable: ${sm.unstable} of ${ok} samples, ${Number.isFinite(sm.probabilityUnstable) ? pc(sm.probabilityUnstable) : '—'} % (95 % interval ${pc(sm.interval[0])} … ${pc(sm.interval[1])} %)${sm.marginal ? `, ${sm.marginal} marginal` : ''}${sm.failed ? `; ${sm.failed} did not solve` : ''}.`);
  if (r.firstOrder) out.push(`First order: ${r.firstOrder.verdict}.`);
  const gains = sm.gains.filter((g) => g.value !== 0).slice(0, HOVER_GAINS);
  if (gains.length) {
    out.push('', 'Steady-state gains (samples):');
    for (const g of gains as GainBand[]) out.push(`- \`${g.input}\` → \`${g.output}\`: ${formatNumber(g.value, d)} in ${range(g.low, g.high, d)}${unitSuffix(g.unit)}`);
  }
  return out.join('\n');
}

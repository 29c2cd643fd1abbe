/**
 * Text renderings of the hand-off models: the sampled-data model (analysis/handoff/sampled.ts) and the
 * reduced model (analysis/handoff/reduced.ts), for `poise sample` and `poise reduce`.
 */
import type { ReducedModel } from '../analysis/handoff/reduced';
import type { SampledModel } from '../analysis/handoff/sampled';
import { formatEigen, formatMatrix, LINEAR_CAUTION } from './format';
import { formatNumber } from '../algebra/expr';

import { HOLD_NAMES as HOLD_WORDS } from '../analysis/handoff/plain';


export function formatSampledText(s: SampledModel, digits = 5): string {
  const t = s.timeUnit;
  const lines: string[] = [];
  lines.push(`Discrete-time model by ${HOLD_WORDS[s.hold]}, sample time T = ${formatNumber(s.sampleTime, digits)} ${t}${s.delayFraction ? `, input delay ${formatNumber(s.delayFraction, digits)}·T` : ''}`);
  lines.push('  x[k+1] = Ad·x[k] + Bd·u[k],  y[k] = Cd·x[k] + Dd·u[k]');
  if (s.delayFraction) lines.push(`  states ${s.inputs.map((u) => `${u}@prev`).join(', ')} hold the input of the previous sample`);
  lines.push('');
  lines.push(formatMatrix('Ad', s.A, s.n, s.n, s.states, s.states, digits));
  lines.push(formatMatrix('Bd', s.B, s.n, s.m, s.states, s.inputs, digits));
  lines.push(formatMatrix('Cd', s.C, s.p, s.n, s.outputs, s.states, digits));
  lines.push(formatMatrix('Dd', s.D, s.p, s.m, s.outputs, s.inputs, digits));
  lines.push('');
  lines.push(`Poles (z, |z|, from s in 1/${t}):`);
  for (const p of s.poles) {
    lines.push(`  ${formatEigen([p.z], digits).padEnd(28)} |z| = ${formatNumber(p.magnitude, digits).padEnd(10)} ${p.s ? `from s = ${formatEigen([p.s], digits)}` : 'held input'}`);
  }
  const word = s.verdict === 'stable' ? 'stable: every pole inside the unit circle' : s.verdict === 'marginal' ? 'marginal: a pole on the unit circle' : 'unstable: a pole outside the unit circle';
  lines.push(`Verdict: ${word} (largest |z| = ${formatNumber(s.spectralRadius, digits)})`);
  lines.push(LINEAR_CAUTION);
  return lines.join('\n') + '\n';
}

export function formatReducedText(r: ReducedModel, digits = 5): string {
  const lines: string[] = [];
  lines.push(`Reduced model by balanced truncation: ${r.order} of ${r.fullOrder} states (${r.kept} balanced${r.unstable ? `, ${r.unstable} unstable or marginal kept exactly` : ''})`);
  lines.push(`Error bound: ‖G − Gr‖∞ ≤ 2·Σ(discarded σ) = ${formatNumber(r.bound, digits)}`);
  lines.push(`Order for a bound of ${formatNumber(r.tolerance, digits)}·σ1: ${r.suggested}`);
  if (!r.hankel.length) lines.push('Hankel singular values: none (no stable part: every mode is kept exactly)');
  else {
    lines.push('Hankel singular values σ (kept | discarded):');
    const shown = r.hankel.slice(0, Math.max(r.kept + 5, 10));
    lines.push('  ' + shown.map((v, i) => `${i === r.kept ? '| ' : ''}${formatNumber(v, digits)}`).join('  ') + (r.hankel.length > shown.length ? `  … (${r.hankel.length - shown.length} more)` : ''));
  }
  lines.push('');
  lines.push(formatMatrix('Ar', r.A, r.n, r.n, r.states, r.states, digits));
  lines.push(formatMatrix('Br', r.B, r.n, r.m, r.states, r.inputs, digits));
  lines.push(formatMatrix('Cr', r.C, r.p, r.n, r.outputs, r.states, digits));
  lines.push(formatMatrix('Dr', r.D, r.p, r.m, r.outputs, r.inputs, digits));
  const parts = [r.kept ? 'balanced states bal1… are combinations of the model\'s states' : '', r.unstable ? 'kept1… span the unstable or marginal modes, unchanged' : ''].filter(Boolean).join('; ');
  lines.push(`${parts ? parts[0].toUpperCase() + parts.slice(1) + '; t' : 'T'}ime in ${r.timeUnit}.`);
  lines.push(LINEAR_CAUTION);
  return lines.join('\n') + '\n';
}

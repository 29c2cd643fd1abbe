/**
 * The sensitivity table and the tolerance bands as text (`poise sensitivity`, and the report's text when
 * it carries them): for each mode the constants ranked by what a 1 % larger value does to it, then the
 * gains, then the bands.
 */
import type { Complex } from '../analysis/dynamics/types';
import type { GainBand, ModeBand, SensitivityReport } from '../analysis/sensitivity/bands';
import { ILL_CONDITIONED } from '../analysis/sensitivity/sensitivity';
import { formatNumber, formatShort } from '../numbers';
import { maxOf } from '../arrays';
import { unitSuffix } from '../semantics/units';

const f = (v: number, d = 4) => formatNumber(v, d);
const signed = (v: number, d = 4) => (v > 0 ? '+' : '') + f(v, d);

export function complexPlain(c: Complex, d = 4): string {
  if (c.im === 0) return f(c.re, d);
  return `${f(c.re, d)} ${c.im < 0 ? '-' : '+'} ${f(Math.abs(c.im), d)}i`;
}

const pct = (v: number | null) => (v === null ? '—' : `${signed(v, 3)} %`);

export function formatSensitivityText(r: SensitivityReport, d = 4): string {
  const out: string[] = [];
  if (!r.ok) return `No sensitivities at point ${r.point}: ${r.problem}.`;
  const t = r.timeUnit;
  const s = r.sensitivities;
  out.push(`Sensitivities at point ${r.point} (time in ${t})`);
  // the constants that move something (a family's size, used only in indices, moves nothing)
  const moves = s.parameters.filter((_, k) => s.modes.some((m) => m.d[k].re !== 0 || m.d[k].im !== 0) || s.gains.some((g) => g.d[k] !== 0));
  out.push(`Constants: ${moves.map((p) => `${p.name} = ${f(p.value, d)}${unitSuffix(p.unit)}`).join(', ') || 'none'}`);
  for (const m of r.ranked) {
    const lam = m.eigenvalue;
    const tau = lam.re !== 0 ? `, time constant ${formatShort(1 / Math.abs(lam.re))} ${t}` : '';
    out.push('');
    out.push(`Mode ${m.number}: λ = ${complexPlain(lam, d)} 1/${t}${tau}${m.condition > ILL_CONDITIONED ? ' (nearly repeated eigenvalue: its derivative is unreliable)' : ''}`);
    if (!m.effects.length) {
      out.push('  no constant moves it');
      continue;
    }
    const w = maxOf(m.effects.map((e) => e.parameter.length), 12);
    out.push(`  ${'1 % larger'.padEnd(w)}  ${'moves λ by'.padEnd(24)}  ${'|Δλ|/|λ|'.padEnd(10)}  time constant`);
    for (const e of m.effects) {
      const sh = e.shift.im === 0 ? `${signed(e.shift.re, 3)}` : `${signed(e.shift.re, 3)} ${e.shift.im < 0 ? '-' : '+'} ${f(Math.abs(e.shift.im), 3)}i`;
      out.push(`  ${e.parameter.padEnd(w)}  ${(sh + ` 1/${t}`).padEnd(24)}  ${(e.eigenvaluePercent === null ? '—' : `${f(e.eigenvaluePercent, 3)} %`).padEnd(10)}  ${pct(e.timeConstantPercent)}`);
    }
  }
  const gains = r.rankedGains.filter((g) => g.effects.length);
  if (gains.length) {
    out.push('');
    out.push('Steady-state gains, change for a 1 % larger constant:');
    for (const g of gains) out.push(`  ${g.input} → ${g.output} (${f(g.value, d)}${unitSuffix(g.unit)}): ${g.effects.map((e) => `${e.parameter} ${signed(e.percent, 3)} %`).join(', ')}`);
  }
  if (r.tolerances.length) {
    out.push('');
    out.push('Tolerances:');
    for (const c of r.tolerances) out.push(`  ${c.name} = ${f(c.value, d)}${unitSuffix(c.unit)} ${c.text}  (${f(c.low, d)} … ${f(c.high, d)})`);
    const fo = r.firstOrder;
    const sm = r.sampled;
    out.push('');
    out.push(`Bands of the eigenvalues (Re λ … , Im λ …; 1/${t}):`);
    r.ranked.forEach((m, k) => {
      const a = fo?.modes[k];
      const b = sm?.modes[k];
      out.push(`  mode ${m.number} (${complexPlain(m.eigenvalue, d)}):`);
      if (a) out.push(`    first order   ${bandText(a, d)}${a.crossesAxis ? '   reaches the imaginary axis' : ''}`);
      if (b) out.push(`    ${`${sm!.count} samples`.padEnd(13)} ${bandText(b, d)}${b.crossesAxis ? '   reaches the imaginary axis' : ''}`);
    });
    const gb = (fo?.gains ?? []).filter((g) => g.value !== 0);
    if (gb.length) {
      out.push('');
      out.push('Bands of the steady-state gains:');
      gb.forEach((g) => {
        const b = sm?.gains.find((x) => x.input === g.input && x.output === g.output);
        out.push(`  ${g.input} → ${g.output}: ${gainText(g, d)} (first order)${b ? `; ${gainText(b, d)} (samples)` : ''}${unitSuffix(g.unit)}`);
      });
    }
    out.push('');
    if (fo) out.push(`Stability, first order: ${fo.verdict}.`);
    if (sm) {
      const ok = sm.count - sm.failed;
      out.push(`Stability, ${sm.count} Latin hypercube samples (seed ${sm.seed}): ${sm.unstable} of ${ok} unstable (${f(100 * sm.probabilityUnstable, 3)} %; 95 % interval ${f(100 * sm.interval[0], 3)} … ${f(100 * sm.interval[1], 3)} %)${sm.marginal ? `, ${sm.marginal} marginal` : ''}${sm.failed ? `; ${sm.failed} sample(s) did not solve` : ''}.`);
    }
  }
  return out.join('\n');
}

function bandText(b: ModeBand, d: number): string {
  const re = `${f(b.re[0], d)} … ${f(b.re[1], d)}`;
  return b.eigenvalue.im !== 0 || b.im[1] > 0 ? `${re},  ${f(b.im[0], d)} … ${f(b.im[1], d)}` : re;
}

function gainText(g: GainBand, d: number): string {
  return `${f(g.low, d)} … ${f(g.high, d)}`;
}

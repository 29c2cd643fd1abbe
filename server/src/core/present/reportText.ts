/** The dynamics report as readable text (transfer functions in the notation of analysis/transferText.ts). */
import { maxOf, pushAll } from '../arrays';
import { formatNumber } from '../algebra/expr';
import type { Complex, RankTest } from '../analysis/dynamics';
import { reducedReportText, sampledReportText } from './handoffReport';
import type { ReportData, ValidityLimit } from '../analysis/report';
import { transferLines } from '../analysis/transferText';
import { directionText, indexReductionLines, multiplicityText } from './format';

const f = (v: number | null | undefined, d = 4): string => (v === null || v === undefined ? '—' : formatNumber(v, d));
const u = (unit: string) => (unit ? ` ${unit}` : '');

export function complexText(c: Complex, d = 4): string {
  if (c.im === 0) return f(c.re, d);
  return `${f(c.re, d)} ${c.im < 0 ? '-' : '+'} ${f(Math.abs(c.im), d)}i`;
}

/** "mode 1 (direction 0.707·h1 − 0.707·h2)": a failing mode of a rank test with the directions it loses. */
function failingText(x: RankTest['failing'][number]): string {
  return x.directions.length ? `mode ${x.mode} (direction${x.directions.length > 1 ? 's' : ''} ${x.directions.map(directionText).join('; ')})` : `mode ${x.mode}`;
}

export function formatReportText(r: ReportData, d = 4): string {
  const out: string[] = [];
  const t = r.timeUnit;
  out.push(`${r.title} — report of point "${r.point}" (time in ${t})`);
  if (!r.ok) {
    pushAll(out, ['', 'The report could not be made:', ...r.problems.map((p) => `  ${p}`)]);
    return out.join('\n');
  }
  if (r.indexReduction) pushAll(out, ['', ...indexReductionLines(r.indexReduction)]);
  out.push('', 'Operating point:');
  const w = maxOf(r.values.filter((v) => v.kind !== 'const').map((v) => v.name.length), 4);
  for (const v of r.values) if (v.kind !== 'const') out.push(`  ${v.name.padEnd(w)}  ${f(v.value, 6).padStart(12)}${u(v.unit ? `[${v.unit}]` : '')}${v.role === 'fixed' ? '  (fixed)' : ''}`);
  out.push('', `Stability: ${r.stability!.verdict}. ${r.stability!.reason}`);
  out.push('', `Modes (eigenvalues in 1/${t}):`);
  for (const md of r.modes) {
    const lam = `${md.im > 0 ? `${f(md.re, d)} ± ${f(md.im, d)}i` : f(md.re, d)}${multiplicityText(md)}`;
    let desc = md.description;
    if (md.kind === 'real') desc += `, τ = ${f(md.timeConstant, d)} ${t}`;
    if (md.kind === 'oscillatory' || md.kind === 'undamped') desc += `, ωn = ${f(md.naturalFrequency, d)} rad/${t}, period ${f(md.period, d)} ${t}`;
    const flags = [!md.controllable ? 'uncontrollable' : '', !md.observable ? 'unobservable' : ''].filter(Boolean).join(', ');
    out.push(`  ${String(md.number).padStart(2)}. λ = ${lam}: ${desc}; participation: ${md.dominant.join(', ')}${flags ? ` [${flags}]` : ''}`);
  }
  if (!r.modes.length) out.push('  (none: the model has no states)');
  const ctl = r.controllability!;
  const obs = r.observability!;
  out.push('', `Controllability (PBH): rank ${ctl.rank} of ${ctl.n}${r.inputs.length ? '' : ' (the model has no inputs)'}${ctl.failing.length ? `; uncontrollable: ${ctl.failing.map(failingText).join(', ')}` : ''}`);
  out.push(`Observability (PBH): rank ${obs.rank} of ${obs.n}${obs.failing.length ? `; unobservable: ${obs.failing.map(failingText).join(', ')}` : ''}${r.outputsAreStates ? ' (no outputs declared: the states are the outputs)' : ''}`);
  const g = r.dcGain!;
  out.push('', `Steady-state gains (output change per input change${g.method === 'per-pair' ? '; A is singular, so pairs through an integrator have no steady state' : ''}):`);
  for (let i = 0; i < r.outputs.length; i++) {
    for (let j = 0; j < r.inputs.length; j++) {
      const v = g.gain[i][j];
      const integ = g.integrating.find((x) => x.input === r.inputs[j] && x.output === r.outputs[i]);
      const val = v !== null ? `${f(v, d)}${u(g.units[i][j])}` : integ ? `integrates${integ.rate !== null ? ` at ${f(integ.rate, d)} ${integ.rateUnit}` : ` (${integ.order} integrators)`}` : '—';
      out.push(`  Δ${r.outputs[i]} / Δ${r.inputs[j]}: ${val}`);
    }
  }
  if (!r.inputs.length) out.push('  (the model has no inputs)');
  out.push('', `Transfer functions G(s) = K·Π(s − z) / Π(s − p), s in 1/${t} (factored first; "=" the polynomials where they read differently):`);
  if (!r.inputs.length) out.push('  (the model has no inputs)');
  for (const tf of r.transfer) {
    const tl = transferLines(tf, d);
    out.push(`  ${tf.input} → ${tf.output}: ${tl.factored}${tf.unit ? `   [${tf.unit}]` : ''}`);
    if (!tf.identicallyZero && tf.order > 0) {
      if (tl.polynomial) out.push(`      = ${tl.polynomial}`);
      out.push(`      poles: ${tf.poles.map((x) => complexText(x, d)).join(', ') || 'none'}; zeros: ${tf.zeros.map((x) => complexText(x, d)).join(', ') || 'none'}${tf.cancelled ? `; ${tf.cancelled} mode(s) do not appear` : ''}`);
    }
  }
  if (r.frequency) {
    const w = r.frequency.omega;
    out.push('', `Frequency response: ${w.length} frequencies from ${f(w[0], 3)} to ${f(w[w.length - 1], 3)} ${r.frequency.unit} (in the JSON and HTML output).`);
  }
  out.push('', `Step responses over ${f(r.horizon!.value, d)} ${t} (${r.horizon!.reason}):`);
  if (!r.inputs.length) out.push('  (the model has no inputs)');
  for (const s of r.steps) {
    out.push(`  step of ${f(s.step, d)}${u(s.inputUnit)} in ${s.input} (${f(s.stepPercent, 3)} % of ${s.percentBasis === 'unit' ? 'one unit' : 'the operating value'}): ${s.status === 'ok' ? (s.error === null ? 'no linked output' : `linear vs nonlinear differ by ${f(100 * s.error, 3)} % of the change${s.withinTolerance ? ' (within tolerance)' : ' (beyond tolerance)'}`) : s.message ?? s.status}`);
    for (const o of s.outputs) {
      if (!o.linked) continue;
      const L = o.linear[o.linear.length - 1];
      const N = o.nonlinear.length === o.linear.length ? o.nonlinear[o.nonlinear.length - 1] : null;
      out.push(`      Δ${o.name} at the end: linear ${f(L, d)}, nonlinear ${N === null ? '—' : f(N, d)}${u(o.unit)}`);
    }
  }
  if (r.validity) {
    out.push('', `Validity range (linear within ${f(100 * r.tolerance, 3)} % of the nonlinear change over the horizon):`);
    for (const v of r.validity) {
      if (!v.up && !v.down) {
        out.push(`  ${v.input}: ${v.note ?? ''}`);
        continue;
      }
      const lim = (l: ValidityLimit | null, sign: string) =>
        !l ? '—' : l.limitedBy === 'nothing valid' ? `${sign}: no step found valid` : `${sign}${f(l.step, 3)}${u(v.unit)} (${f(l.percent, 3)} %)${l.limitedBy === 'search limit' || l.limitedBy === 'time budget' || l.limitedBy === 'work budget' ? ' or more' : l.limitedBy === 'domain' ? ', then out of the domain' : ''}`;
      const basis = v.percentBasis === 'unit' ? `% of one unit; the operating value is 0${u(v.unit)}` : `% of the operating value ${f(v.operatingValue, 4)}${u(v.unit)}`;
      out.push(`  ${v.input}: up to ${lim(v.up, '+')}, down to ${lim(v.down, '-')}  (${basis})`);
      const dm = v.up?.domainMessage ?? v.down?.domainMessage;
      if (dm) out.push(`      ${dm}`);
      if (v.note) out.push(`      ${v.note}`);
    }
  }
  if (r.skipped?.length) pushAll(out, ['', 'Left out or cut short:', ...r.skipped.map((x) => `  - ${x}`)]);
  pushAll(out, [...sampledReportText(r.sampled, d), ...reducedReportText(r.reduced, d)]);
  pushAll(out, ['', 'Cautions:', ...r.cautions.map((c) => `  - ${c}`)]);
  return out.join('\n');
}

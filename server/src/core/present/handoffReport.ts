/**
 * The report's sections on the hand-off models (when asked for): the sampled-data model (poles in the z
 * plane with the unit circle, each from its continuous eigenvalue, the stability test, the matrices) and
 * the reduced model (Hankel singular values on a log chart, kept and discarded, the error bound and the
 * suggested order, the matrices). HTML for present/reportHtml.ts, text for present/reportText.ts. Pure.
 */
import type { ReducedPlain, SampledPlain } from '../analysis/handoff/plain';
import { chart, esc, legend, num, type PageContext, type Series } from './svgCharts';
import { formatNumber } from '../numbers';
import { maxOf, minOf } from '../arrays';

const complex = (c: { re: number; im: number }, d = 4) => (c.im === 0 ? num(c.re, d) : `${num(c.re, d)} ${c.im < 0 ? '−' : '+'} ${num(Math.abs(c.im), d)}i`);
const plainNum = (v: number, d = 4) => formatNumber(v, d);
const complexPlain = (c: { re: number; im: number }, d = 4) => (c.im === 0 ? plainNum(c.re, d) : `${plainNum(c.re, d)} ${c.im < 0 ? '-' : '+'} ${plainNum(Math.abs(c.im), d)}i`);

function matrixTable(name: string, m: number[][], rows: string[], cols: string[]): string {
  if (!m.length || !m[0].length) return `<p class="note">${esc(name)}: empty (${m.length}×${m.length ? m[0].length : 0}).</p>`;
  return `<div class="scroll"><table class="data"><caption>${esc(name)}</caption><thead><tr><th></th>${cols.map((c) => `<th class="num">${esc(c)}</th>`).join('')}</tr></thead><tbody>${m
    .map((r, i) => `<tr><td class="name">${esc(rows[i])}</td>${r.map((v) => `<td class="num">${num(v, 5)}</td>`).join('')}</tr>`)
    .join('')}</tbody></table></div>`;
}

function matrices(s: SampledPlain | ReducedPlain, suffix: string): string {
  return `<details><summary>Matrices A${suffix}, B${suffix}, C${suffix}, D${suffix}</summary>
${matrixTable(`A${suffix}`, s.A, s.states, s.states)}${matrixTable(`B${suffix}`, s.B, s.states, s.inputs)}${matrixTable(`C${suffix}`, s.C, s.outputs, s.states)}${matrixTable(`D${suffix}`, s.D, s.outputs, s.inputs)}</details>`;
}

/** The sampled-data section, or a note when the model could not be formed. */
export function sampledSectionHtml(page: PageContext, s: SampledPlain | null | undefined): string {
  if (s === undefined) return '';
  if (s === null) return '<section id="sampled"><h2>Sampled-data model</h2><p>The bilinear map is singular for this sample time (an eigenvalue at s = 2/T); choose another.</p></section>';
  const t = s.sampleTime.unit;
  const rows = s.poles
    .map((p, k) => `<tr><td class="num">${k + 1}</td><td class="num mono">${p.s ? complex(p.s) : '—'}</td><td class="num mono">${complex(p.z)}</td><td class="num">${num(p.magnitude)}</td><td>${p.s ? '' : 'held input (delay)'}</td></tr>`)
    .join('');
  const circle = Array.from({ length: 181 }, (_, k) => (2 * Math.PI * k) / 180);
  let lim = 1.15;
  for (const p of s.poles) lim = Math.max(lim, 1.1 * Math.hypot(p.z.re, p.z.im));
  const series: Series[] = [
    { kind: 'dash', cls: 's2', x: circle.map(Math.cos), y: circle.map(Math.sin), label: 'unit circle (|z| = 1)' },
    { kind: 'poles', cls: 's0', x: s.poles.map((p) => p.z.re), y: s.poles.map((p) => p.z.im), label: 'discrete poles z' },
  ];
  const svg = chart(page, {
    id: 'zplane', title: 'Poles in the z plane', equalAspect: true, height: 300, series,
    x: { kind: 'lin', min: -lim, max: lim, label: 'real part of z' }, y: { kind: 'lin', min: -lim, max: lim, label: 'imaginary part of z' },
    vlines: [{ x: 0, cls: 'axis0' }], hlines: [{ y: 0, cls: 'axis0' }],
  });
  const mapWords = s.hold === 'tustin' ? 'z = (1 + sT/2)/(1 − sT/2)' : 'z = e<sup>sT</sup>';
  return `<section id="sampled"><h2>Sampled-data model</h2>
<p class="verdict"><span class="badge ${s.verdict}">${s.verdict}</span> largest |z| = ${num(s.spectralRadius)}; the discrete model is stable when every pole lies inside the unit circle.</p>
<p class="note">${esc(s.method)}, sample time T = ${num(s.sampleTime.value)} ${esc(t)}${s.delayFraction ? `, input delay ${num(s.delayFraction, 3)}·T (one held input per input, poles at z = 0)` : ''}. x[k+1] = A<sub>d</sub>·x[k] + B<sub>d</sub>·u[k], y[k] = C<sub>d</sub>·x[k] + D<sub>d</sub>·u[k]. Each continuous eigenvalue s maps to ${mapWords}.</p>
<div class="scroll"><table class="data"><thead><tr><th class="num">#</th><th class="num">s [1/${esc(t)}]</th><th class="num">z</th><th class="num">|z|</th><th></th></tr></thead><tbody>${rows}</tbody></table></div>
<figure class="chart wide">${svg}${legend(series.map((x) => ({ cls: x.cls, kind: x.kind, label: x.label! })))}</figure>
${matrices(s, 'd')}
</section>`;
}

/** The reduced-model section, or a note when the truncation failed. */
export function reducedSectionHtml(page: PageContext, r: ReducedPlain | null | undefined): string {
  if (r === undefined) return '';
  if (r === null) return '<section id="reduced"><h2>Smaller model</h2><p>Balanced truncation failed: an eigenvalue is too close to the imaginary axis to split the stable part off, or a Lyapunov equation has no solution.</p></section>';
  // values below n·ε·σ₁ are rounding, not the model (the rank tolerance of an SVD, as numpy.linalg.matrix_rank
  // uses): they are not drawn, and the note says how many
  const noise = r.hankel.length * 2.220446049250313e-16 * (r.hankel[0] ?? 0);
  const pos = r.hankel.map((v, i) => ({ i: i + 1, v })).filter((x) => x.v > noise);
  const hidden = r.hankel.length - pos.length;
  const noiseNote = hidden ? `<p class="note">${hidden} Hankel singular value${hidden === 1 ? '' : 's'} below n·ε·σ<sub>1</sub> = ${num(noise, 3)} (rounding of the Gramian factors, not the model) ${hidden === 1 ? 'is' : 'are'} not drawn.</p>` : '';
  let chartHtml = '';
  if (pos.length) {
    const lo = Math.min(minOf(pos.map((x) => x.v)), r.tolerance * r.hankel[0]);
    const hi = maxOf(pos.map((x) => x.v));
    const kept = pos.filter((x) => x.i <= r.kept);
    const dropped = pos.filter((x) => x.i > r.kept);
    const series: Series[] = [
      { kind: 'dots', cls: 's0', x: kept.map((x) => x.i), y: kept.map((x) => x.v), label: 'kept' },
      { kind: 'crosses', cls: 's1', x: dropped.map((x) => x.i), y: dropped.map((x) => x.v), label: 'discarded' },
    ];
    const svg = chart(page, {
      id: 'hankel', title: 'Hankel singular values', height: 260, series,
      x: { kind: 'lin', min: 0, max: r.hankel.length + 1, label: 'index i' },
      y: { kind: 'log', min: Math.pow(10, Math.floor(Math.log10(lo))), max: Math.pow(10, Math.ceil(Math.log10(hi))), label: 'Hankel singular value σ' },
      hlines: [{ y: r.tolerance * r.hankel[0], cls: 'axis0', label: `tolerance·σ₁` }],
      vlines: [{ x: r.kept + 0.5, cls: 'axis0' }],
    });
    chartHtml = `<figure class="chart wide">${svg}${legend(series.filter((x) => x.x.length).map((x) => ({ cls: x.cls, kind: x.kind, label: x.label! })))}</figure>`;
  }
  chartHtml += noiseNote;
  return `<section id="reduced"><h2>Smaller model</h2>
<p class="note">Balanced truncation (square-root method): ${r.order} of ${r.fullOrder} states — ${r.kept} balanced${r.unstable ? `, ${r.unstable} unstable or marginal kept exactly` : ''}. Error bound ‖G − G<sub>r</sub>‖<sub>∞</sub> ≤ 2·Σ(discarded σ) = ${num(r.bound)}. For a bound of ${num(r.tolerance, 3)}·σ<sub>1</sub> the order suggested is ${r.suggested}. Balanced states are combinations of the model's states; time in ${esc(r.units.time)}.</p>
${chartHtml}
${matrices(r, 'r')}
</section>`;
}

/** Text lines of the sampled-data section (empty when not asked for). */
export function sampledReportText(s: SampledPlain | null | undefined, d = 4): string[] {
  if (s === undefined) return [];
  if (s === null) return ['', 'Sampled-data model: the bilinear map is singular for this sample time (an eigenvalue at s = 2/T).'];
  const t = s.sampleTime.unit;
  const out = ['', `Sampled-data model: ${s.method}, T = ${plainNum(s.sampleTime.value, d)} ${t}${s.delayFraction ? `, input delay ${plainNum(s.delayFraction, 3)}·T` : ''}; ${s.verdict} (largest |z| = ${plainNum(s.spectralRadius, d)})`];
  for (const p of s.poles) out.push(`  z = ${complexPlain(p.z, d).padEnd(22)} |z| = ${plainNum(p.magnitude, d).padEnd(8)} ${p.s ? `from s = ${complexPlain(p.s, d)} 1/${t}` : 'held input'}`);
  return out;
}

/** Text lines of the reduced-model section (empty when not asked for). */
export function reducedReportText(r: ReducedPlain | null | undefined, d = 4): string[] {
  if (r === undefined) return [];
  if (r === null) return ['', 'Smaller model: balanced truncation failed (an eigenvalue too close to the imaginary axis, or a Lyapunov equation without a solution).'];
  const shown = r.hankel.slice(0, Math.max(r.kept + 4, 8));
  return [
    '',
    `Smaller model (balanced truncation): ${r.order} of ${r.fullOrder} states (${r.kept} balanced${r.unstable ? `, ${r.unstable} unstable or marginal kept exactly` : ''}); error bound 2·Σ(discarded σ) = ${plainNum(r.bound, d)}; order suggested for ${plainNum(r.tolerance, 3)}·σ1: ${r.suggested}`,
    `  Hankel singular values: ${shown.map((v, i) => `${i === r.kept ? '| ' : ''}${plainNum(v, d)}`).join('  ')}${r.hankel.length > shown.length ? `  … (${r.hankel.length - shown.length} more)` : ''}`,
  ];
}

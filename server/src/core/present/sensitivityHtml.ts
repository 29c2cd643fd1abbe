/**
 * The sensitivity section of a page: the ranked table per mode, the tolerance bands and the pole cloud
 * (every eigenvalue of every tolerance sample on the complex plane, the nominal ones on top).
 */
import type { SensitivityReport } from '../analysis/sensitivity/bands';
import { chart, esc, htmlPage, legend, linRange, newPage, type PageContext, type Series } from './svgCharts';
import { formatNumber } from '../numbers';
import { complexPlain } from './sensitivityText';
import { unitSuffix } from '../semantics/units';

const f = (v: number, d = 4) => formatNumber(v, d);
const signed = (v: number, d = 3) => (v > 0 ? '+' : '') + f(v, d);

export function sensitivitySection(page: PageContext, r: SensitivityReport): string {
  if (!r.ok) return `<section id="sensitivity"><h2>Sensitivities</h2><p>${esc(`None at this point: ${r.problem ?? ''}.`)}</p></section>`;
  const t = esc(r.timeUnit);
  const rows: string[] = [];
  for (const m of r.ranked) {
    const first = `<td rowspan="${Math.max(1, m.effects.length)}">${m.number}</td><td rowspan="${Math.max(1, m.effects.length)}" class="mono">${esc(complexPlain(m.eigenvalue))}</td>`;
    if (!m.effects.length) {
      rows.push(`<tr>${first}<td colspan="4" class="muted">no constant moves it</td></tr>`);
      continue;
    }
    m.effects.forEach((e, k) => {
      const sh = e.shift.im === 0 ? signed(e.shift.re) : `${signed(e.shift.re)} ${e.shift.im < 0 ? '−' : '+'} ${f(Math.abs(e.shift.im), 3)}i`;
      rows.push(`<tr>${k === 0 ? first : ''}<td class="mono">${esc(e.parameter)}</td><td class="num">${esc(sh)}</td><td class="num">${e.eigenvaluePercent === null ? '—' : `${f(e.eigenvaluePercent, 3)} %`}</td><td class="num">${e.timeConstantPercent === null ? '—' : `${signed(e.timeConstantPercent)} %`}</td></tr>`);
    });
  }
  const table = `<table><thead><tr><th>mode</th><th>λ [1/${t}]</th><th>a 1 % larger</th><th>moves λ by [1/${t}]</th><th>|Δλ|/|λ|</th><th>time constant</th></tr></thead><tbody>${rows.join('')}</tbody></table>`;
  let bands = '';
  if (r.tolerances.length) {
    const tol = `<ul>${r.tolerances.map((c) => `<li><span class="mono">${esc(c.name)}</span> = ${esc(f(c.value))}${esc(unitSuffix(c.unit))} ${esc(c.text)} (${esc(f(c.low))} … ${esc(f(c.high))})</li>`).join('')}</ul>`;
    const sm = r.sampled;
    const bandRows = r.ranked.map((m, k) => {
      const a = r.firstOrder?.modes[k];
      const b = sm?.modes[k];
      const cell = (x: typeof a) => (x ? `${esc(f(x.re[0]))} … ${esc(f(x.re[1]))}${x.crossesAxis ? ' <b>reaches the axis</b>' : ''}` : '—');
      return `<tr><td>${m.number}</td><td class="mono">${esc(complexPlain(m.eigenvalue))}</td><td>${cell(a)}</td><td>${cell(b)}</td></tr>`;
    });
    const verdict = [r.firstOrder ? `First order: ${esc(r.firstOrder.verdict)}.` : '', sm ? `${sm.count} Latin hypercube samples (seed ${sm.seed}): ${sm.unstable} of ${sm.count - sm.failed} unstable, ${esc(f(100 * sm.probabilityUnstable, 3))} % (95 % interval ${esc(f(100 * sm.interval[0], 3))} … ${esc(f(100 * sm.interval[1], 3))} %)${sm.failed ? `; ${sm.failed} did not solve` : ''}.` : ''].filter(Boolean).join(' ');
    bands = `<h3>Tolerances</h3>${tol}<table><thead><tr><th>mode</th><th>λ</th><th>Re λ, first order</th><th>Re λ, ${sm ? `${sm.count} samples` : 'samples'}</th></tr></thead><tbody>${bandRows.join('')}</tbody></table><p>${verdict}</p>${sm && sm.cloud.length ? poleCloud(page, r) : ''}`;
  }
  return `<section id="sensitivity"><h2>Sensitivities to the constants</h2>${table}<p class="note">∂λ/∂p = wᴴ·(∂A/∂p)·v / (wᴴ·v) with v, w the right and left eigenvectors and ∂A/∂p exact, including the shift of the operating point; the shift is for a 1 % larger constant. Time constant 1/|Re λ| in ${t}.</p>${bands}</section>`;
}

function poleCloud(page: PageContext, r: SensitivityReport): string {
  const sm = r.sampled!;
  // at most about 6000 marks on the page: every k-th eigenvalue of the samples beyond that
  const step = Math.max(1, Math.ceil(sm.cloud.length / 6000));
  const cloud = step === 1 ? sm.cloud : sm.cloud.filter((_, i) => i % step === 0);
  const nominal = r.sensitivities.modes.flatMap((m) => (m.eigenvalue.im > 0 ? [m.eigenvalue, { re: m.eigenvalue.re, im: -m.eigenvalue.im }] : [m.eigenvalue]));
  const xs = [...cloud.map((e) => e.re), ...nominal.map((e) => e.re), 0];
  const ys = [...cloud.map((e) => e.im), ...nominal.map((e) => e.im), 0];
  const t = r.timeUnit;
  const series: Series[] = [
    { kind: 'dots', cls: 's1', x: cloud.map((e) => e.re), y: cloud.map((e) => e.im), label: `eigenvalues of ${sm.count - sm.failed} samples${step > 1 ? ` (every ${step}th shown)` : ''}` },
    { kind: 'poles', cls: 's0', x: nominal.map((e) => e.re), y: nominal.map((e) => e.im), label: 'nominal eigenvalues' },
  ];
  const svg = chart(page, {
    id: 'cloud', x: linRange(xs, `real part [1/${t}]`, { pad: 0.08 }), y: linRange(ys, `imaginary part [rad/${t}]`, { pad: 0.08 }), series, height: 300, title: 'Pole cloud',
    xspans: [{ x0: 0, x1: Infinity, cls: 'rhp' }], vlines: [{ x: 0, cls: 'axis0' }], hlines: [{ y: 0, cls: 'axis0' }],
  });
  const items = series.map((s) => ({ cls: s.cls, kind: s.kind, label: s.label! }));
  items.push({ cls: 'rhp', kind: 'band', label: 'right half-plane (unstable)' });
  return `<figure class="chart wide">${svg}${legend(items)}</figure>`;
}

/** A standalone page of the sensitivities and bands (`poise sensitivity --html`). */
export function sensitivityPage(r: SensitivityReport, title: string): string {
  const page = newPage();
  return htmlPage({
    title: `${title} — sensitivities at point ${r.point}`,
    heading: `${esc(title)} · sensitivities at point <span class="mono">${esc(r.point)}</span>`,
    headerExtra: `<span class="meta">time in ${esc(r.timeUnit)}</span>`,
    body: sensitivitySection(page, r),
    footer: 'Generated by Poise from the model text. Eigenvalue derivatives by perturbation theory (left and right eigenvectors); bands by first order and by Latin hypercube sampling of re-solved points.',
  });
}

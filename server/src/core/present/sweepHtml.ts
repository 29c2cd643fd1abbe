/**
 * The sweep as one standalone HTML page: eigenvalue paths in the complex plane coloured by the swept
 * value, the dominant real part, time constants, damping and DC gains against the swept value, with the
 * stability changes and where the sweep stopped marked; a table of the points; the usual cautions.
 * Charts and page shell are the shared ones (svgCharts.ts). Pure: returns a string.
 */
import { CAUTIONS } from '../analysis/report';
import type { SweepResult } from '../analysis/sweep';
import { chart, colourRamp, esc, htmlPage, legend, linRange, newPage, num, PALETTE, type AxisSpec, type Series } from './svgCharts';
import { unitSuffix } from '../semantics/units';
import { maxOf, minOf } from '../arrays';

export interface SweepHtmlOptions {
  /** Shown in the heading, e.g. the model file's name. */
  title?: string;
  /** Significant digits in tables (default 4). */
  digits?: number;
  /** Nonce and cspSource for a VS Code webview. */
  nonce?: string;
  cspSource?: string;
}

/**
 * Sequential colours for the swept value, built from Poise's own palette (svgCharts.ts): from the deep
 * heading teal through the series teal to the caution amber in the light theme (dark → light), and from
 * the series teal to the warning amber in the dark theme (dim → bright).
 */
const BINS = 8;
export const SWEEP_RAMP_ANCHORS = { light: ['head', 's1', 'cline'], dark: ['s6', 's1', 'warn'] } as const;
export const SEQ_LIGHT = colourRamp(SWEEP_RAMP_ANCHORS.light.map((k) => PALETTE.light[k]), BINS);
export const SEQ_DARK = colourRamp(SWEEP_RAMP_ANCHORS.dark.map((k) => PALETTE.dark[k]), BINS);
const EXTRA_CSS =
  SEQ_LIGHT.map((c, i) => `.sv${i}{stroke:${c}}`).join('') +
  `@media (prefers-color-scheme:dark){${SEQ_DARK.map((c, i) => `.sv${i}{stroke:${c}}`).join('')}}` +
  `body.vscode-dark .sv0,body.vscode-high-contrast .sv0{stroke:${SEQ_DARK[0]}}` +
  SEQ_DARK.slice(1).map((c, i) => `body.vscode-dark .sv${i + 1},body.vscode-high-contrast .sv${i + 1}{stroke:${c}}`).join('') +
  `body.vscode-light .sv0{stroke:${SEQ_LIGHT[0]}}` +
  SEQ_LIGHT.slice(1).map((c, i) => `body.vscode-light .sv${i + 1}{stroke:${c}}`).join('') +
  '.series.mark.cross{stroke:var(--bad);stroke-width:2.2}';

export const SWEEP_CAUTIONS = [
  'Each swept value has its own linear model, valid only near that operating point; between the points and away from them the nonlinear model decides. A stability change found here is where the linear models change, located to the stated precision.',
  CAUTIONS[1],
  CAUTIONS[2],
];

const u = unitSuffix;

/** Axis for the swept value: logarithmic for a log sweep. */
function sweptAxis(r: SweepResult, values: number[]): AxisSpec {
  const label = `${r.vary.name}${u(r.vary.unit)}`;
  const lo = minOf(values, Math.min(r.vary.from, r.vary.to));
  const hi = maxOf(values, Math.max(r.vary.from, r.vary.to));
  if (r.vary.log && lo > 0) return { kind: 'log', min: lo, max: hi, label };
  return { ...linRange([lo, hi], label, { pad: 0 }), min: lo, max: hi };
}

/** Axis for values that may span decades: log when all positive and spread over more than two decades. */
function valueAxis(vals: number[], label: string): AxisSpec {
  const f = vals.filter((v) => Number.isFinite(v));
  const pos = f.filter((v) => v > 0);
  if (pos.length === f.length && pos.length && maxOf(pos) / minOf(pos) > 100) {
    const lo = Math.pow(10, Math.floor(Math.log10(minOf(pos))));
    const hi = Math.pow(10, Math.ceil(Math.log10(maxOf(pos))));
    return { kind: 'log', min: lo, max: hi === lo ? lo * 10 : hi, label };
  }
  return linRange(f, label);
}

function complexPlaneAxes(pts: { re: number; im: number }[], t: string): { x: AxisSpec; y: AxisSpec } {
  // a signed log scale only when the eigenvalues' sizes span decades (not when a part is merely near zero)
  let mx = 0;
  let mn = Infinity;
  for (const p of pts) {
    const a = Math.hypot(p.re, p.im);
    if (!Number.isFinite(a)) continue;
    mx = Math.max(mx, a);
    if (a > 0) mn = Math.min(mn, a);
  }
  if (!(mx > 0)) mx = 1;
  if (mn < Infinity && mx / mn > 200) {
    const c = Math.pow(10, Math.floor(Math.log10(mn)));
    const top = Math.pow(10, Math.ceil(Math.log10(mx * 1.2)));
    return {
      x: { kind: 'symlog', min: -top, max: top, c, label: `real part [1/${t}] (signed log scale)` },
      y: { kind: 'symlog', min: -top, max: top, c, label: `imaginary part [rad/${t}]` },
    };
  }
  // zoomed on the paths (the axes through the origin stay in view)
  return {
    x: linRange(pts.map((p) => p.re), `real part [1/${t}]`, { includeZero: true, pad: 0.08 }),
    y: linRange(pts.map((p) => p.im), `imaginary part [rad/${t}]`, { includeZero: true, pad: 0.08 }),
  };
}

export function sweepHtml(r: SweepResult, opts: SweepHtmlOptions = {}): string {
  const page = newPage();
  const d = opts.digits ?? 4;
  const t = r.timeUnit;
  const pts = r.points;
  const xs = pts.map((p) => p.value);
  const vname = `${r.vary.name}${u(r.vary.unit)}`;
  const marks = {
    vlines: [
      ...r.crossings.map((c) => ({ x: c.at, cls: 'tol', label: c.kind === 'complex' ? 'pair crosses' : 'real λ crosses' })),
      ...(r.stop && Number.isFinite(r.stop.at) ? [{ x: r.stop.at, cls: 'fail', label: r.stop.kind === 'fold' ? 'fold' : 'stops' }] : []),
    ],
  };
  const sections: string[] = [];

  // summary
  const changes = r.crossings.length
    ? `<ul>${r.crossings.map((c) => `<li>${esc(c.message)}</li>`).join('')}</ul>`
    : '<p>No stability change over the values computed.</p>';
  const stop = r.stop ? `<p class="warnmsg">Stopped: ${esc(r.stop.message)}</p>` : '';
  // a constrained model: the states chosen by index reduction, and where they change (P412)
  const firstStates = pts.find((p) => p.states)?.states;
  const stateChanges = r.diagnostics.filter((d) => d.code === 'P412');
  const states = firstStates
    ? `<p class="note">Index reduction: the states are ${esc(firstStates.join(', '))}${stateChanges.length ? ' at the first value' : ' all along the sweep'}.</p>${stateChanges.map((d) => `<p class="warnmsg">${esc(d.message)}</p>`).join('')}`
    : '';
  sections.push(`<section id="summary"><h2>Stability along the sweep</h2>${changes}${stop}${states}
<p class="note">${pts.length} of ${r.vary.steps + 1} values computed, each a steady state found by continuation from the previous one and linearized there. A change in the number of eigenvalues in the right half-plane between two values is located by bisection on ${esc(r.vary.name)}.</p></section>`);

  if (pts.length) {
    // eigenvalue paths, coloured by the swept value
    const all = pts.flatMap((p) => p.eigenvalues);
    const { x, y } = complexPlaneAxes([...all, ...r.crossings.map((c) => c.eigenvalue)], t);
    const lo = minOf(xs);
    const hi = maxOf(xs);
    const logBins = r.vary.log && lo > 0;
    const binOf = (v: number) => {
      const f = hi === lo ? 0 : logBins ? Math.log(v / lo) / Math.log(hi / lo) : (v - lo) / (hi - lo);
      return Math.min(BINS - 1, Math.max(0, Math.floor(f * BINS)));
    };
    const edge = (k: number) => (logBins ? lo * Math.pow(hi / lo, k / BINS) : lo + ((hi - lo) * k) / BINS);
    const series: Series[] = [];
    for (let k = 0; k < BINS; k++) {
      const inBin = pts.filter((p) => binOf(p.value) === k);
      if (!inBin.length) continue;
      const ev = inBin.flatMap((p) => p.eigenvalues);
      series.push({ kind: 'dots', cls: `sv${k}`, x: ev.map((e) => e.re), y: ev.map((e) => e.im), label: `${num(edge(k), 3)} – ${num(edge(k + 1), 3)}` });
    }
    const cross = r.crossings.flatMap((c) => [c.eigenvalue, { re: c.eigenvalue.re, im: -c.eigenvalue.im }]);
    if (cross.length) series.push({ kind: 'poles', cls: 'cross', x: cross.map((e) => e.re), y: cross.map((e) => e.im), label: 'at a stability change' });
    const svg = chart(page, {
      id: 'paths', x, y, series, height: 320, title: `Eigenvalues as ${r.vary.name} moves from ${num(r.vary.from, 4)} to ${num(r.vary.to, 4)}${u(r.vary.unit)}`,
      xspans: [{ x0: 0, x1: x.max, cls: 'rhp' }], vlines: [{ x: 0, cls: 'axis0' }], hlines: [{ y: 0, cls: 'axis0' }],
    });
    const items = series.map((s) => ({ cls: s.cls, kind: s.kind, label: s.label! }));
    items.push({ cls: 'rhp', kind: 'band', label: 'right half-plane (unstable)' });
    sections.push(`<section id="paths"><h2>Eigenvalue paths</h2><figure class="chart wide">${svg}<figcaption>Colour: ${esc(vname)} (dark = ${num(lo, 4)}, light = ${num(hi, 4)}).</figcaption>${legend(items)}</figure></section>`);

    // against the swept value
    const sx = sweptAxis(r, xs);
    const charts: string[] = [];
    const maxRe = pts.map((p) => (p.eigenvalues.length ? maxOf(p.eigenvalues.map((e) => e.re)) : NaN));
    if (pts.some((p) => p.eigenvalues.length)) {
      charts.push(
        `<figure class="chart card">${chart(page, {
          id: 'maxre', x: sx, y: linRange([...maxRe, 0], `largest real part [1/${t}]`), title: 'Largest real part (decay rate)',
          series: [{ kind: 'line', cls: 's1', x: xs, y: maxRe }, { kind: 'dots', cls: 's1', x: xs, y: maxRe }],
          hlines: [{ y: 0, cls: 'axis0' }], ...marks,
        })}</figure>`,
      );
    }
    // time constants: the k-th slowest mode at each value
    const nTau = Math.min(6, maxOf(pts.map((p) => p.modes.filter((m) => m.timeConstant !== null).length), 0));
    if (nTau > 0) {
      const taus = pts.map((p) => p.modes.map((m) => m.timeConstant).filter((v): v is number => v !== null).sort((a, b) => b - a));
      const series: Series[] = [];
      for (let k = 0; k < nTau; k++) series.push({ kind: 'line', cls: `s${(k % 6) + 1}`, x: xs, y: taus.map((row) => row[k] ?? null), label: k === 0 ? 'slowest' : `${k + 1}${k === 1 ? 'nd' : k === 2 ? 'rd' : 'th'} slowest` });
      const svg = chart(page, { id: 'tau', x: sx, y: valueAxis(taus.flat(), `time constant [${t}]`), title: 'Time constants 1/|Re λ|', series, ...marks });
      charts.push(`<figure class="chart card">${svg}${legend(series.map((s) => ({ cls: s.cls, kind: s.kind, label: s.label! })))}</figure>`);
    }
    // damping of the least-damped pair
    if (pts.some((p) => p.modes.some((m) => m.dampingRatio !== null))) {
      const z = pts.map((p) => {
        const ds = p.modes.map((m) => m.dampingRatio).filter((v): v is number => v !== null);
        return ds.length ? minOf(ds) : null;
      });
      charts.push(
        `<figure class="chart card">${chart(page, {
          id: 'zeta', x: sx, y: linRange([...z.filter((v): v is number => v !== null), 0], 'damping ratio ζ'), title: 'Damping ratio of the least-damped pair',
          series: [{ kind: 'line', cls: 's3', x: xs, y: z }], hlines: [{ y: 0, cls: 'axis0' }], ...marks,
        })}</figure>`,
      );
    }
    // DC gains, one chart per input → row pair
    const pairs: { i: number; j: number }[] = [];
    for (let i = 0; i < r.gainRows.length; i++) for (let j = 0; j < r.inputs.length; j++) pairs.push({ i, j });
    const shownPairs = pairs.filter(({ i, j }) => pts.some((p) => p.dcGain && p.dcGain[i][j] !== 0)).slice(0, 8);
    for (const { i, j } of shownPairs) {
      const g = pts.map((p) => (p.dcGain ? p.dcGain[i][j] : null));
      const svg = chart(page, {
        id: `gain${i}-${j}`, x: sx, y: linRange(g.filter((v): v is number => v !== null), `Δ${r.gainRows[i]}/Δ${r.inputs[j]}${r.gainUnits?.[i]?.[j] ? ` [${r.gainUnits[i][j]}]` : ''}`), title: `DC gain ${r.inputs[j]} → ${r.gainRows[i]}`,
        series: [{ kind: 'line', cls: 's2', x: xs, y: g }], hlines: [{ y: 0, cls: 'axis0' }], ...marks,
      });
      charts.push(`<figure class="chart card">${svg}</figure>`);
    }
    const gapNote = pts.some((p) => !p.dcGain) ? '<p class="note">Gaps in a gain curve are values where A is singular (an integrator or a value exactly at a real eigenvalue through zero): the DC gain does not exist there.</p>' : '';
    const moreNote = pairs.length > shownPairs.length ? `<p class="note">${pairs.length - shownPairs.length} more gain pair(s) (zero, or beyond the first 8) are in the JSON and CSV output.</p>` : '';
    sections.push(`<section id="against"><h2>Against ${esc(r.vary.name)}</h2><div class="grid">${charts.join('')}</div>${gapNote}${moreNote}</section>`);

    // table of points
    const cols = r.columns.map((c, k) => ({ c, k })).filter(({ c }) => c.name !== r.vary.name).slice(0, 6);
    const head = `<tr><th class="num">${esc(vname)}</th><th>stability</th><th class="num">largest Re λ [1/${esc(t)}]</th><th class="num">slowest τ [${esc(t)}]</th><th class="num">min ζ</th>${cols.map(({ c }) => `<th class="num">${esc(c.name)}${c.unit ? ` <span class="unit">[${esc(c.unit)}]</span>` : ''}</th>`).join('')}</tr>`;
    const body = pts
      .map((p, k) => {
        const taus = p.modes.map((m) => m.timeConstant).filter((v): v is number => v !== null);
        const zs = p.modes.map((m) => m.dampingRatio).filter((v): v is number => v !== null);
        return `<tr><td class="num">${num(p.value, 6)}</td><td><span class="dot ${p.stability}"></span>${p.stability}</td><td class="num">${num(maxRe[k], d)}</td><td class="num">${taus.length ? num(maxOf(taus), d) : '—'}</td><td class="num">${zs.length ? num(minOf(zs), d) : '—'}</td>${cols.map(({ k: c }) => `<td class="num">${num(p.values[c], d)}</td>`).join('')}</tr>`;
      })
      .join('');
    sections.push(`<section id="points"><h2>Points</h2><details${pts.length <= 25 ? ' open' : ''}><summary>${pts.length} operating points</summary><div class="scroll"><table class="data"><thead>${head}</thead><tbody>${body}</tbody></table></div></details></section>`);
  }

  const cautions = `<aside class="caution head" role="note"><b>Read before use.</b><ul>${SWEEP_CAUTIONS.map((c) => `<li>${esc(c)}</li>`).join('')}</ul></aside>`;
  const title = `${opts.title ? `${opts.title} — ` : ''}sweep${r.name ? ` ${r.name}` : ''} of ${r.vary.name}`;
  const same = pts.length && pts.every((p) => p.stability === pts[0].stability) ? pts[0].stability : undefined;
  const badge =
    (r.crossings.length ? '<span class="badge unstable">stability changes</span>' : same ? `<span class="badge ${same}">${same} at every value computed</span>` : '') +
    (r.stop ? ` <span class="badge marginal">${r.stop.kind === 'fold' ? 'stopped at a fold' : 'stopped early'}</span>` : '');
  const meta = `<span class="meta">from point ${esc(r.point)} · ${esc(r.vary.name)} ${num(r.vary.from, 6)} → ${num(r.vary.to, 6)}${esc(u(r.vary.unit))}, ${r.vary.steps + 1} values (${r.vary.log ? 'logarithmic' : 'linear'}) · time in ${esc(t)}</span>`;
  return htmlPage({
    title,
    heading: `${opts.title ? `${esc(opts.title)} · ` : ''}sweep${r.name ? ` <span class="mono">${esc(r.name)}</span>` : ''} of <span class="mono">${esc(r.vary.name)}</span>`,
    headerExtra: `${badge}${meta}`,
    nav: '<a href="#summary">Stability</a><a href="#paths">Eigenvalue paths</a><a href="#against">Margins, time constants, gains</a><a href="#points">Points</a>',
    body: `${cautions}\n${sections.join('\n')}\n${cautions.replace('caution head', 'caution foot')}`,
    footer: 'Generated by Poise from the model text. Steady states by continuation (Newton from the previous point, halving the step on failure); linearization at each point; eigenvalues by Hessenberg QR; stability changes by bisection on the swept value.',
    css: EXTRA_CSS,
    nonce: opts.nonce,
    cspSource: opts.cspSource,
  });
}

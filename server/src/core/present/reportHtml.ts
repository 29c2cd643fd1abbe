/**
 * One standalone HTML page from ReportData: inline styles, hand-written SVG plots and a small inline
 * script (cursor read-out only; the page is complete without it). No network access: the page carries a
 * content security policy that allows nothing from outside; in a VS Code webview the policy is
 * nonce-based. Theme-aware: light and dark from prefers-color-scheme, and VS Code's body classes and
 * --vscode-* colours when present. Pure: returns a string.
 */
import { formatNumber } from '../algebra/expr';
import type { Complex, TransferFunction } from '../analysis/dynamics';
import type { ReportData, StepReport, ValidityLimit, ValidityReport } from '../analysis/report';
import { factorsOf, transferLines } from '../analysis/transferText';
import { chart, esc, htmlPage, legend, linRange, num, newPage, r1, type AxisSpec, type PageContext, type Series } from './svgCharts';
import { unitSuffix } from '../semantics/units';
import { directionText, multiplicityText } from './format';
import { maxOf, minOf, pushAll } from '../arrays';
import { reducedSectionHtml, sampledSectionHtml } from './handoffReport';
import type { SensitivityReport } from '../analysis/sensitivity/bands';
import { sensitivitySection } from './sensitivityHtml';

export interface RenderOptions {
  /** Nonce for the inline style and script (webview). */
  nonce?: string;
  /** The webview's cspSource (allowed for styles and images besides the nonce). */
  cspSource?: string;
  /** Sensitivities to the constants and tolerance bands (analysis/sensitivity), shown as a section with the pole cloud. */
  sensitivity?: SensitivityReport;
}

// ------------------------------------------------------------------------------------- text helpers

const unitTxt = (u: string) => (u ? ` <span class="unit">${esc(u)}</span>` : '');
const bracket = unitSuffix;

function complexHtml(c: Complex, d = 4): string {
  if (c.im === 0) return num(c.re, d);
  return `${num(c.re, d)} ${c.im < 0 ? '−' : '+'} ${num(Math.abs(c.im), d)}i`;
}

/** Polynomial in s as HTML with superscripts. */
function polyHtml(c: number[], d = 4): string {
  const deg = c.length - 1;
  let out = '';
  c.forEach((a, k) => {
    if (a === 0) return;
    const pw = deg - k;
    const mag = Math.abs(a);
    const coef = mag === 1 && pw > 0 ? '' : num(mag, d);
    const sv = pw === 0 ? '' : `<i>s</i>${pw > 1 ? `<sup>${pw}</sup>` : ''}`;
    const term = coef && sv ? `${coef}·${sv}` : coef || sv;
    out += out ? ` ${a < 0 ? '−' : '+'} ${term}` : `${a < 0 ? '−' : ''}${term}`;
  });
  return out || '0';
}

function factorsHtml(rs: Complex[], d = 4): string[] {
  // the factors of the text notation (analysis/transferText.ts): repeated ones once, with a power
  return factorsOf(rs, d).map((f) => {
    const base =
      f.kind === 's'
        ? '<i>s</i>'
        : f.kind === 'linear'
          ? `(<i>s</i> ${f.coef[0] < 0 ? '−' : '+'} ${num(Math.abs(f.coef[0]), d)})`
          : `(<i>s</i><sup>2</sup> ${f.coef[0] === 0 ? '' : `${f.coef[0] < 0 ? '−' : '+'} ${num(Math.abs(f.coef[0]), d)}·<i>s</i> `}+ ${num(f.coef[1], d)})`;
    return f.power > 1 ? `${base}<sup>${f.power}</sup>` : base;
  });
}

function transferHtml(tf: TransferFunction): string {
  if (tf.identicallyZero) return '<span class="muted">0 (no path from this input to this output)</span>';
  const zs = factorsHtml(tf.zeros);
  const num1 = (zs.length && tf.gain === 1 ? zs : [num(tf.gain), ...zs]).join('·');
  const den = factorsHtml(tf.poles);
  if (!den.length) return num1;
  return `<span class="frac"><span class="nu">${num1}</span><span class="de">${den.join('·')}</span></span>`;
}

/** A fraction as a plain-text percentage for SVG text: "4.43 %", "< 0.001 %". */
function pctPlain(f: number): string {
  const p = 100 * f;
  if (p < 0.001) return '< 0.001 %';
  return `${Number(p.toPrecision(3))} %`;
}

// ------------------------------------------------------------------------------------- sections

const PAIR_LIMIT = 24;
const PANEL_LIMIT = 8;

function pairTitle(inp: string, out: string): string {
  return `${inp} → ${out}`;
}

function sectionPoint(d: ReportData): string {
  const rowsHtml = d.values
    .filter((v) => v.kind !== 'const')
    .map((v) => `<tr><td class="name">${esc(v.name)}</td><td>${esc(v.kind)}</td><td class="num">${num(v.value, 6)}</td><td>${esc(v.unit)}</td><td>${v.role === 'fixed' ? '<span class="tag">fixed</span>' : 'solved'}</td></tr>`)
    .join('');
  const consts = d.values.filter((v) => v.kind === 'const');
  return `<section id="point"><h2>Operating point</h2>
<table class="data"><thead><tr><th>variable</th><th>kind</th><th class="num">value</th><th>unit</th><th></th></tr></thead><tbody>${rowsHtml}</tbody></table>
${d.indexReduction ? indexReductionHtml(d.indexReduction) : ''}
${consts.length ? `<details><summary>Constants (${consts.length})</summary><table class="data"><tbody>${consts.map((v) => `<tr><td class="name">${esc(v.name)}</td><td class="num">${num(v.value, 6)}</td><td>${esc(v.unit)}</td></tr>`).join('')}</tbody></table></details>` : ''}
</section>`;
}

function indexReductionHtml(s: NonNullable<ReportData['indexReduction']>): string {
  const times = (k: number) => (k === 1 ? 'once' : k === 2 ? 'twice' : `${k} times`);
  return `<p class="note">Constrained model (index ${s.index} as written), reduced by Pantelides' algorithm with states chosen by dummy derivatives: differentiated ${s.differentiated.map((x) => `<code>${esc(x.label)}</code> ${times(x.times)}`).join(', ')}. States: <b>${esc(s.states.join(', ') || 'none')}</b>; determined by the constraints: ${esc(s.constrained.join(', ') || 'no declared state')} (dummy derivatives ${esc(s.dummies.join(', '))}).</p>`;
}

function verdictBadge(d: ReportData): string {
  const v = d.stability!.verdict;
  return `<span class="badge ${v}">${v}</span>`;
}

function sectionModes(page: PageContext, d: ReportData): string {
  const t = d.timeUnit;
  const st = d.stability!;
  const body = d.modes
    .map((m) => {
      const lam = `${m.im > 0 ? `${num(m.re)} ± ${num(m.im)}i` : num(m.re)}${esc(multiplicityText(m))}`;
      const part = m.participation
        .slice(0, 3)
        .filter((p, i) => i === 0 || p.factor >= 0.05)
        .map((p) => `<span class="part"><span class="pbar"><svg viewBox="0 0 40 6" aria-hidden="true"><path class="pfill" d="M0 0H${r1(40 * p.factor)}V6H0Z"/></svg></span>${esc(p.state)} ${Math.round(100 * p.factor)}&#8239;%</span>`)
        .join('');
      return `<tr><td class="num">${m.number}</td><td class="num mono">${lam}</td><td>${esc(KIND_WORDS[m.kind](m.re))}</td><td class="num">${num(m.timeConstant)}</td><td class="num">${num(m.naturalFrequency)}</td><td class="num">${num(m.dampingRatio, 3)}</td><td class="num">${num(m.period)}</td><td>${part}</td><td>${flag(m.controllable)}</td><td>${flag(m.observable)}</td><td><span class="dot ${m.stability}" title="${m.stability}"></span>${m.stability}</td></tr>`;
    })
    .join('');
  return `<section id="modes"><h2>Stability and modes</h2>
<p class="verdict">${verdictBadge(d)} ${esc(st.reason)}</p>
<p class="note">Eigenvalues λ of A in 1/${esc(t)}. τ = 1/|Re λ| (for a growing mode: the time to grow by a factor e); ωn = |λ|, ζ = −Re λ/|λ| for complex pairs. |Re λ| ≤ ${num(st.tolerance, 2)} counts as on the imaginary axis (10<sup>−9</sup> of the spectral radius ${num(st.spectralRadius)}). Participation factors |v<sub>ik</sub>w<sub>ik</sub>| (right and left eigenvectors) show how much each state takes part in a mode (the participation column).</p>
${d.modes.length ? `<div class="scroll"><table class="data"><thead><tr><th class="num">#</th><th class="num">λ [1/${esc(t)}]</th><th>kind</th><th class="num">τ [${esc(t)}]</th><th class="num">ωn [rad/${esc(t)}]</th><th class="num">ζ</th><th class="num">period [${esc(t)}]</th><th>participation</th><th>controllable</th><th>observable</th><th></th></tr></thead><tbody>${body}</tbody></table></div>` : '<p>The model has no states.</p>'}
${d.modes.length ? poleZeroMap(page, d) : ''}
</section>`;
}

const KIND_WORDS: Record<string, (re: number) => string> = {
  real: (re) => (re > 0 ? 'growing exponential' : 'decaying exponential'),
  oscillatory: (re) => (re > 0 ? 'growing oscillation' : 'damped oscillation'),
  integrator: () => 'integrator (λ = 0)',
  undamped: () => 'undamped oscillation',
};

const flag = (b: boolean) => (b ? '<span class="yes">yes</span>' : '<span class="no">no</span>');

function poleZeroMap(page: PageContext, d: ReportData): string {
  const t = d.timeUnit;
  const pts: Complex[] = [...d.eigenvalues];
  const zeroSets = d.transfer.filter((tf) => tf.zeros.length).slice(0, 6);
  for (const tf of zeroSets) pushAll(pts, tf.zeros);
  let mx = 0;
  let mn = Infinity;
  for (const p of pts) {
    for (const v of [p.re, p.im]) {
      const a = Math.abs(v);
      if (!Number.isFinite(a)) continue;
      mx = Math.max(mx, a);
      if (a > 0) mn = Math.min(mn, a);
    }
  }
  if (!(mx > 0)) mx = 1;
  const sym = mn < Infinity && mx / mn > 30;
  let x: AxisSpec;
  let y: AxisSpec;
  if (sym) {
    const c = Math.pow(10, Math.floor(Math.log10(mn)) - 0);
    const top = Math.pow(10, Math.ceil(Math.log10(mx * 1.2)));
    x = { kind: 'symlog', min: -top, max: top, c, label: `real part [1/${t}] (signed log scale)` };
    y = { kind: 'symlog', min: -top, max: top, c, label: `imaginary part [rad/${t}]` };
  } else {
    const lim = mx * 1.25;
    x = linRange([-lim, lim], `real part [1/${t}]`, { pad: 0 });
    y = linRange([-lim, lim], `imaginary part [rad/${t}]`, { pad: 0 });
  }
  const series: Series[] = [{ kind: 'poles', cls: 's0', x: d.eigenvalues.map((e) => e.re), y: d.eigenvalues.map((e) => e.im), label: 'eigenvalues (poles)' }];
  zeroSets.forEach((tf, k) => series.push({ kind: 'zeros', cls: `s${(k % 6) + 1}`, x: tf.zeros.map((z) => z.re), y: tf.zeros.map((z) => z.im), label: `zeros ${pairTitle(tf.input, tf.output)}` }));
  const svg = chart(page, {
    id: 'pz', x, y, series, height: 300, title: 'Pole–zero map', equalAspect: true,
    xspans: [{ x0: 0, x1: Infinity, cls: 'rhp' }], vlines: [{ x: 0, cls: 'axis0' }], hlines: [{ y: 0, cls: 'axis0' }],
  });
  const items = series.map((s) => ({ cls: s.cls, kind: s.kind, label: s.label! }));
  items.push({ cls: 'rhp', kind: 'band', label: 'right half-plane (unstable)' });
  const extra = d.transfer.filter((tf) => tf.zeros.length).length - zeroSets.length;
  return `<figure class="chart wide">${svg}${legend(items)}${extra > 0 ? `<figcaption>Zeros of ${extra} more pair(s) are listed with the transfer functions.</figcaption>` : ''}</figure>`;
}

function sectionGains(d: ReportData): string {
  const g = d.dcGain!;
  const head = d.inputs.map((i, j) => `<th class="num">Δ${esc(i)}${d.inputUnits[j] ? ` [${esc(d.inputUnits[j])}]` : ''}</th>`).join('');
  const body = d.outputs
    .map((o, i) => {
      const cells = d.inputs
        .map((inp, j) => {
          const v = g.gain[i][j];
          if (v !== null) return `<td class="num">${num(v)}${unitTxt(g.units[i][j])}</td>`;
          const it = g.integrating.find((x) => x.input === inp && x.output === o);
          if (it) return `<td class="num integ">integrates${it.rate !== null ? `: ${num(it.rate)}${unitTxt(it.rateUnit)}` : ` (${it.order}×)`}</td>`;
          return '<td class="num">—</td>';
        })
        .join('');
      return `<tr><th class="name">Δ${esc(o)}${d.outputUnits[i] ? ` [${esc(d.outputUnits[i])}]` : ''}</th>${cells}</tr>`;
    })
    .join('');
  const note = g.method === 'per-pair'
    ? 'A is singular (an integrator), so −C·A⁻¹·B + D does not exist as a whole; each pair is taken from its own minimal realisation. Pairs that pass through the integrator have no steady state: the output keeps changing at the rate shown (output unit per input unit per time unit).'
    : 'G(0) = −C·A⁻¹·B + D: the final change of each output per unit change of each input (for an unstable model the steady state is never reached; the number is formal).';
  return `<section id="gains"><h2>Steady-state gains</h2><p class="note">${esc(note)}</p>
<div class="scroll"><table class="data"><thead><tr><th></th>${head}</tr></thead><tbody>${body}</tbody></table></div></section>`;
}

function sectionTransfer(d: ReportData): string {
  const t = d.timeUnit;
  const items = d.transfer
    .map((tf) => {
      const poly = `(${polyHtml(tf.num)}) / (${polyHtml(tf.den)})`;
      // the polynomial form only when it reads differently from the factored form (docs/dynamics.md)
      const same = !transferLines(tf).polynomial;
      const det = tf.identicallyZero || tf.order === 0 ? '' : `${same ? '' : tf.order > 3 ? `<details class="poly"><summary>as polynomials in s</summary>= ${poly}</details>` : `<div class="poly">= ${poly}</div>`}
<div class="roots"><span>poles: ${tf.poles.map((x) => complexHtml(x)).join(', ') || 'none'}</span><span>zeros: ${tf.zeros.map((x) => complexHtml(x)).join(', ') || 'none'}</span>${tf.cancelled ? `<span class="muted">${tf.cancelled} mode(s) of A do not appear (uncontrollable from this input or unobservable in this output)</span>` : ''}</div>`;
      return `<div class="tf"><div class="tfhead">${esc(pairTitle(tf.input, tf.output))}${tf.unit ? ` <span class="unit">[${esc(tf.unit)}]</span>` : ''}</div><div class="tfexpr"><span><i>G</i>(<i>s</i>) =</span>${transferHtml(tf)}</div>${det}</div>`;
    })
    .join('');
  const c = d.controllability!;
  const o = d.observability!;
  const failing = (r: typeof c, word: string) => (r.failing.length ? `${word}: ${r.failing.map((x) => `mode ${x.mode} (λ = ${complexHtml({ re: x.re, im: x.im })}${x.directions.length ? `; direction ${x.directions.map((v) => esc(directionText(v))).join('; ')}` : ''})`).join(', ')}.` : `every mode is ${word.replace(/^un/, '')}.`);
  return `<section id="transfer"><h2>Transfer functions</h2>
<p class="note">Each pair from its controllable and observable part (orthogonal staircase reduction); poles are that part's eigenvalues, zeros the transmission zeros from the system matrix [[A, b], [c, d]] reduced to an ordinary eigenproblem; the gain K from the exact response at a test point. <i>s</i> in 1/${esc(t)}. ${d.outputsAreStates ? 'The model declares no outputs, so the state components serve as outputs.' : ''}</p>
${d.inputs.length ? items || '<p>No pairs.</p>' : '<p>The model has no inputs.</p>'}
<h3 id="ctrb">Controllability and observability</h3>
<p>Controllable subspace (PBH test, SVD rank of [λI − A, B] at each eigenvalue): <b>${c.rank} of ${c.n}</b>; ${failing(c, 'uncontrollable')}</p>
<p>Observable subspace (PBH test on [λI − A; C]): <b>${o.rank} of ${o.n}</b>; ${failing(o, 'unobservable')}</p>
</section>`;
}

function sectionBode(page: PageContext, d: ReportData): string {
  const fr = d.frequency!;
  const t = d.timeUnit;
  const pairs = fr.pairs.filter((p) => p.magnitudeDb.some((v) => v !== null));
  const shown = pairs.slice(0, PAIR_LIMIT);
  const omega = fr.omega;
  const cards = shown
    .map((p, k) => {
      const tf = d.transfer.find((x) => x.inputIndex === p.inputIndex && x.outputIndex === p.outputIndex);
      const unit = tf?.unit ? ` (${tf.unit})` : '';
      const mag = p.magnitudeDb.filter((v): v is number => v !== null);
      const ph = p.phaseDeg.filter((v): v is number => v !== null);
      let ym = linRange(mag, `magnitude [dB]${unit}`, { pad: 0.06 });
      if (ym.max - ym.min < 20) {
        const mid = (ym.max + ym.min) / 2;
        ym = { ...ym, min: Math.floor((mid - 10) / 5) * 5, max: Math.ceil((mid + 10) / 5) * 5 };
      }
      let yp = linRange(ph, 'phase [deg]', { pad: 0.06 });
      const span = maxOf(ph) - minOf(ph);
      const st = [15, 30, 45, 90, 180, 360, 720].find((x) => span / x <= 5) ?? 1440;
      yp = { ...yp, min: Math.floor(minOf(ph) / st) * st, max: Math.ceil(maxOf(ph) / st) * st, step: st };
      if (yp.max - yp.min < 2 * st) {
        yp.min -= st;
        yp.max += st;
      }
      const x: AxisSpec = { kind: 'log', min: omega[0], max: omega[omega.length - 1], label: `angular frequency ω [rad/${t}]` };
      const cls = `s${(k % 6) + 1}`;
      const mg = chart(page, { id: 'bm', x, y: ym, series: [{ kind: 'line', cls, x: omega, y: p.magnitudeDb }], height: 200, title: 'magnitude' });
      const pg = chart(page, { id: 'bp', x, y: yp, series: [{ kind: 'line', cls, x: omega, y: p.phaseDeg }], height: 180, title: 'phase' });
      return `<figure class="chart card"><figcaption class="cardhead">${esc(pairTitle(p.input, p.output))}</figcaption>${mg}${pg}</figure>`;
    })
    .join('');
  const more = pairs.length - shown.length;
  return `<section id="bode"><h2>Frequency response</h2>
<p class="note">G(jω) from (jωI − A)·X = B at ${omega.length} log-spaced frequencies, two decades beyond the smallest and the largest pole or zero; phase unwrapped along ω. ${more > 0 ? `${more} more pair(s) are in the JSON output.` : ''}</p>
${cards ? `<div class="grid">${cards}</div>` : '<p>No input reaches an output.</p>'}</section>`;
}

function stepCharts(page: PageContext, d: ReportData, s: StepReport): string {
  const t = d.timeUnit;
  let outs = s.outputs.filter((o) => o.linked);
  if (!outs.length) return '<p class="muted">No output responds to this input in the linear model.</p>';
  if (outs.length > PANEL_LIMIT) {
    const rel = (o: (typeof outs)[number]) => maxOf(o.linear.map(Math.abs)) / (maxOf(outs.flatMap((x) => x.linear.map(Math.abs))) || 1);
    outs = outs.slice().sort((a, b) => rel(b) - rel(a)).slice(0, PANEL_LIMIT);
  }
  const failT = s.status !== 'ok' && s.outputs[0] ? s.t[Math.max(0, s.outputs[0].nonlinear.length - 1)] : undefined;
  return outs
    .map((o) => {
      const nlT = s.t.slice(0, o.nonlinear.length);
      const lo = o.nonlinear.map((v) => v - o.band);
      const hi = o.nonlinear.map((v) => v + o.band);
      const y = linRange([...o.linear, ...lo, ...hi, 0], `Δ${o.name}${bracket(o.unit)}`);
      // both curves start from 0 just before the step, so a direct feedthrough shows as a jump at t = 0
      const series: Series[] = [
        { kind: 'band', cls: 'bandc', x: nlT, y: lo, y2: hi },
        { kind: 'line', cls: 's1', x: [0, ...nlT], y: [0, ...o.nonlinear] },
        { kind: 'dash', cls: 's2', x: [0, ...s.t], y: [0, ...o.linear] },
      ];
      const vlines = failT !== undefined ? [{ x: failT, cls: 'fail', label: 'nonlinear stops' }] : [];
      return `<figure class="chart card">${chart(page, { id: 'st', x: linRange(s.t, `time [${t}]`, { exact: true }), y, series, height: 230, title: `Δ${o.name}${o.error !== null ? ` — linear differs by ${pctPlain(o.error)} of the change` : ''}`, vlines, hlines: [{ y: 0, cls: 'axis0' }] })}</figure>`;
    })
    .join('');
}

function sectionSteps(page: PageContext, d: ReportData): string {
  const t = d.timeUnit;
  const h = d.horizon!;
  const blocks = d.steps
    .map((s) => {
      const status = s.status === 'ok'
        ? s.withinTolerance === null ? '' : `<span class="badge ${s.withinTolerance ? 'stable' : 'marginal'}">${s.withinTolerance ? 'within' : 'beyond'} tolerance</span>`
        : `<span class="badge unstable">${s.status === 'domain' ? 'out of domain' : 'failed'}</span>`;
      return `<div class="stepblock"><h3>Step of ${num(s.step)}${unitTxt(s.inputUnit)} in ${esc(s.input)} <span class="muted">(${num(s.stepPercent, 3)} % of ${s.percentBasis === 'unit' ? 'one unit' : 'the operating value'}, from ${num(s.operatingValue)}${unitTxt(s.inputUnit)})</span> ${status}</h3>
${s.message ? `<p class="warnmsg">${esc(s.message)}</p>` : ''}
<div class="grid">${stepCharts(page, d, s)}</div></div>`;
    })
    .join('');
  return `<section id="steps"><h2>Step responses: linear versus nonlinear</h2>
<p class="note">Deviations from the point after a step in one input at t = 0, over ${num(h.value)} ${esc(t)} (${esc(h.reason)}). Nonlinear: the full model, integrated with Rodas4 (implicit, error-controlled, analytic Jacobian). Linear: exact, by the matrix exponential. The band is ±${num(100 * d.tolerance, 3)} % of the nonlinear response's largest change.</p>
${legend([{ cls: 's1', kind: 'line', label: 'nonlinear model' }, { cls: 's2', kind: 'dash', label: 'linear model' }, { cls: 'bandc', kind: 'band', label: `validity band (±${num(100 * d.tolerance, 3)} %)` }])}
${d.inputs.length ? blocks : '<p>The model has no inputs.</p>'}</section>`;
}

function limText(l: ValidityLimit | null, v: ValidityReport, sign: string): string {
  if (!l) return '—';
  if (l.limitedBy === 'nothing valid') return '<span class="no">none found</span>';
  if ((l.limitedBy === 'time budget' || l.limitedBy === 'work budget') && l.step === 0) return '<span class="muted">not computed</span>';
  return `${sign}${num(l.step, 3)}${unitTxt(v.unit)} <span class="muted">(${num(l.percent, 3)} %)</span>${l.limitedBy === 'search limit' || l.limitedBy === 'time budget' || l.limitedBy === 'work budget' ? ' or more' : ''}`;
}

const LIMIT_WORDS: Record<ValidityLimit['limitedBy'], string> = {
  tolerance: 'tolerance',
  domain: 'leaves the domain',
  'search limit': 'none up to 1000 %',
  'nothing valid': 'tolerance at every size tried',
  'time budget': 'time budget (range at least this wide)',
  'work budget': 'work budget (range at least this wide)',
};

function sectionValidity(page: PageContext, d: ReportData): string {
  if (!d.validity) return '';
  const rowsHtml = d.validity
    .map((v) => {
      if (!v.up && !v.down) return `<tr><td class="name">${esc(v.input)}</td><td colspan="4" class="muted">${esc(v.note ?? '')}</td></tr>`;
      const by = [v.up, v.down].map((l) => (l ? LIMIT_WORDS[l.limitedBy] : '—'));
      const byText = by[0] === by[1] ? by[0] : `up: ${by[0]}; down: ${by[1]}`;
      return `<tr><td class="name">${esc(v.input)}</td><td class="num">${num(v.operatingValue)}${unitTxt(v.unit)}</td><td class="num">${limText(v.up, v, '+')}</td><td class="num">${limText(v.down, v, '−')}</td><td>${esc(byText)}${v.note ? `<div class="muted">${esc(v.note)}</div>` : ''}</td></tr>`;
    })
    .join('');
  const charts = d.validity
    .filter((v) => (v.up || v.down) && v.samples.some((s) => s.status === 'ok'))
    .map((v, k) => {
      const okS = v.samples.filter((s) => s.status === 'ok' && s.error !== null);
      const pos = okS.map((s) => Math.max(s.error!, 1e-6) * 100);
      const ymin = Math.pow(10, Math.floor(Math.log10(minOf(pos, v.tolerance * 100) * 0.8)));
      const ymax = Math.pow(10, Math.ceil(Math.log10(maxOf(pos, v.tolerance * 100) * 1.25)));
      const steps = v.samples.map((s) => s.step);
      const x = linRange([...steps, 0], `step in ${v.input}${bracket(v.unit)} from ${formatNumber(v.operatingValue, 4)}`);
      const y: AxisSpec = { kind: 'log', min: ymin, max: ymax, label: 'difference [% of the change]' };
      const ordered = okS.slice().sort((a, b) => a.step - b.step);
      const neg = ordered.filter((s) => s.step < 0);
      const posS = ordered.filter((s) => s.step > 0);
      const dom = v.samples.filter((s) => s.status !== 'ok');
      const series: Series[] = [
        { kind: 'line', cls: `s${(k % 6) + 1}`, x: neg.map((s) => s.step), y: neg.map((s) => Math.max(s.error!, 1e-6) * 100) },
        { kind: 'line', cls: `s${(k % 6) + 1}`, x: posS.map((s) => s.step), y: posS.map((s) => Math.max(s.error!, 1e-6) * 100) },
        { kind: 'dots', cls: `s${(k % 6) + 1}`, x: ordered.map((s) => s.step), y: ordered.map((s) => Math.max(s.error!, 1e-6) * 100) },
      ];
      if (dom.length) series.push({ kind: 'crosses', cls: 'failc', x: dom.map((s) => s.step), y: dom.map(() => ymax / 1.6) });
      const spans = [{ x0: v.down && v.down.step > 0 ? -v.down.step : 0, x1: v.up ? v.up.step : 0, cls: 'validspan' }];
      const svg = chart(page, { id: 'va', x, y, series, height: 240, title: `${v.input}: where the linear model holds`, xspans: spans, hlines: [{ y: v.tolerance * 100, cls: 'tol', label: `tolerance ${formatNumber(100 * v.tolerance, 3)} %` }], vlines: [{ x: 0, cls: 'axis0' }] });
      const items: { cls: string; kind: Series['kind']; label: string }[] = [
        { cls: `s${(k % 6) + 1}`, kind: 'dots', label: 'simulated step' },
        { cls: 'validspan', kind: 'band', label: 'valid range' },
      ];
      if (dom.length) items.push({ cls: 'failc', kind: 'crosses', label: 'left the domain / failed' });
      const msg = v.up?.domainMessage ?? v.down?.domainMessage;
      return `<figure class="chart card">${svg}${legend(items)}${msg ? `<figcaption class="warnmsg">${esc(msg)}</figcaption>` : ''}</figure>`;
    })
    .join('');
  return `<section id="validity"><h2>How far the linear model holds</h2>
<p class="note">For each input: the largest step, up and down, for which the linear step response stays within ${num(100 * d.tolerance, 3)} % of the nonlinear response's largest change over the whole horizon (all outputs the input reaches), found by bisection on the step size. Percentages are of the operating value (of one unit where that is 0). A step that drives the nonlinear model out of its domain counts as invalid.</p>
<div class="scroll"><table class="data"><thead><tr><th>input</th><th class="num">at the point</th><th class="num">largest step up</th><th class="num">largest step down</th><th>limited by</th></tr></thead><tbody>${rowsHtml}</tbody></table></div>
${charts ? `<div class="grid">${charts}</div>` : ''}</section>`;
}

function cautionsBox(d: ReportData, cls: string): string {
  return `<aside class="caution ${cls}" role="note"><b>Read before use.</b><ul>${d.cautions.map((c) => `<li>${esc(c)}</li>`).join('')}</ul></aside>`;
}

export function renderReportHtml(data: ReportData, opts: RenderOptions = {}): string {
  const page = newPage();
  const sections: string[] = [];
  if (!data.ok) {
    sections.push(`<section><h2>No report</h2><p>The report could not be made for this point:</p><ul class="problems">${data.problems.map((p) => `<li>${esc(p)}</li>`).join('')}</ul></section>`);
  } else {
    sections.push(sectionPoint(data), sectionModes(page, data), sectionGains(data), sectionTransfer(data), sectionBode(page, data), sectionSteps(page, data), sectionValidity(page, data));
    if (data.skipped?.length) sections.push(`<section id="skipped"><h2>Left out or cut short</h2><ul>${data.skipped.map((x) => `<li>${esc(x)}</li>`).join('')}</ul></section>`);
    sections.push(sampledSectionHtml(page, data.sampled), reducedSectionHtml(page, data.reduced));
    if (opts.sensitivity) sections.push(sensitivitySection(page, opts.sensitivity));
  }
  const nav = data.ok
    ? `<a href="#point">Point</a><a href="#modes">Stability &amp; modes</a><a href="#gains">Gains</a><a href="#transfer">Transfer functions</a><a href="#ctrb">Controllability</a><a href="#bode">Frequency response</a><a href="#steps">Step responses</a>${data.validity ? '<a href="#validity">Validity range</a>' : ''}${data.sampled !== undefined ? '<a href="#sampled">Sampled model</a>' : ''}${data.reduced !== undefined ? '<a href="#reduced">Smaller model</a>' : ''}${opts.sensitivity ? '<a href="#sensitivity">Sensitivities</a>' : ''}`
    : undefined;
  const meta = [`time in ${esc(data.timeUnit)}`, data.digest ? `model digest ${esc(data.digest)}` : '', data.ok ? `${data.states.length} state component(s), ${data.inputs.length} input(s), ${data.outputs.length} output(s)${data.outputsAreStates ? ' (the states)' : ''}` : '']
    .filter(Boolean)
    .join(' · ');
  return htmlPage({
    title: `${data.title} — point ${data.point}`,
    heading: `${esc(data.title)} · point <span class="mono">${esc(data.point)}</span>`,
    headerExtra: `${data.ok && data.stability ? verdictBadge(data) : ''}<span class="meta">${meta}</span>`,
    nav,
    body: `${cautionsBox(data, 'head')}\n${sections.join('\n')}\n${data.ok ? cautionsBox(data, 'foot') : ''}`,
    footer: 'Generated by Poise from the model text. Linearization at the point; eigenvalues by Hessenberg QR; zeros and poles per pair from a minimal realisation; frequency response by complex linear solves; step responses by the matrix exponential (linear) and Rodas4 (nonlinear).',
    nonce: opts.nonce,
    cspSource: opts.cspSource,
  });
}

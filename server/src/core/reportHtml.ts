/**
 * One standalone HTML page from ReportData: inline styles, hand-written SVG plots and a small inline
 * script (cursor read-out only; the page is complete without it). No network access: the page carries a
 * content security policy that allows nothing from outside; in a VS Code webview the policy is
 * nonce-based. Theme-aware: light and dark from prefers-color-scheme, and VS Code's body classes and
 * --vscode-* colours when present. Pure: returns a string.
 */
import { formatNumber } from './expr';
import type { Complex, TransferFunction } from './dynamics';
import type { ReportData, StepReport, ValidityLimit, ValidityReport } from './report';

export interface RenderOptions {
  /** Nonce for the inline style and script (webview). */
  nonce?: string;
  /** The webview's cspSource (allowed for styles and images besides the nonce). */
  cspSource?: string;
}

// ------------------------------------------------------------------------------------- text helpers

const esc = (s: string): string => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

/** Number for display: 4 significant digits, true minus sign. */
function num(v: number | null | undefined, d = 4): string {
  if (v === null || v === undefined || Number.isNaN(v)) return '—';
  if (!Number.isFinite(v)) return v > 0 ? '∞' : '−∞';
  const s = formatNumber(v, d);
  const m = /^(-?)([0-9.]+)e(-?[0-9]+)$/.exec(s);
  if (m) return `${m[1] ? '−' : ''}${m[2]}×10<sup>${m[3].replace('-', '−')}</sup>`;
  return s.replace('-', '−');
}

const unitTxt = (u: string) => (u ? ` <span class="unit">${esc(u)}</span>` : '');
const bracket = (u: string) => (u ? ` [${u}]` : '');

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
    const term = coef && sv ? `${coef}&#8239;${sv}` : coef || sv;
    out += out ? ` ${a < 0 ? '−' : '+'} ${term}` : `${a < 0 ? '−' : ''}${term}`;
  });
  return out || '0';
}

function factorsHtml(rs: Complex[], d = 4): string[] {
  const out: string[] = [];
  for (const r of rs) {
    if (r.im < 0) continue;
    if (r.im > 0) {
      const b = -2 * r.re;
      out.push(`(<i>s</i><sup>2</sup> ${b < 0 ? '−' : '+'} ${num(Math.abs(b), d)}&#8239;<i>s</i> + ${num(r.re * r.re + r.im * r.im, d)})`);
    } else if (r.re === 0) out.push('<i>s</i>');
    else out.push(`(<i>s</i> ${r.re > 0 ? '−' : '+'} ${num(Math.abs(r.re), d)})`);
  }
  return out;
}

function transferHtml(tf: TransferFunction): string {
  if (tf.identicallyZero) return '<span class="muted">0 (no path from this input to this output)</span>';
  const num1 = [num(tf.gain), ...factorsHtml(tf.zeros)].join('&#8239;');
  const den = factorsHtml(tf.poles);
  if (!den.length) return num1;
  return `<span class="frac"><span class="nu">${num1}</span><span class="de">${den.join('&#8239;')}</span></span>`;
}

// ------------------------------------------------------------------------------------- SVG charts

type ScaleKind = 'lin' | 'log' | 'symlog';

interface AxisSpec {
  kind: ScaleKind;
  min: number;
  max: number;
  label: string;
  /** Linear threshold of a symlog axis. */
  c?: number;
  /** Tick spacing of a linear axis (default: a nice step for about five ticks). */
  step?: number;
}

interface Series {
  kind: 'line' | 'dash' | 'band' | 'poles' | 'zeros' | 'dots' | 'crosses';
  cls: string;
  x: number[];
  y: (number | null)[];
  /** Upper edge for bands (y is the lower edge). */
  y2?: (number | null)[];
  label?: string;
}

interface ChartSpec {
  id: string;
  x: AxisSpec;
  y: AxisSpec;
  series: Series[];
  width?: number;
  height?: number;
  hlines?: { y: number; cls: string; label?: string }[];
  vlines?: { x: number; cls: string; label?: string }[];
  /** Shaded vertical spans (e.g. the valid range, the right half-plane). */
  xspans?: { x0: number; x1: number; cls: string }[];
  title?: string;
}

const tfm = (kind: ScaleKind, c: number, v: number): number => {
  if (kind === 'log') return Math.log10(v);
  if (kind === 'symlog') return Math.sign(v) * Math.log10(1 + Math.abs(v) / c);
  return v;
};

class Scale {
  private readonly a: number;
  private readonly b: number;
  constructor(readonly spec: AxisSpec, private readonly p0: number, private readonly p1: number) {
    const c = spec.c ?? 1;
    this.a = tfm(spec.kind, c, spec.min);
    this.b = tfm(spec.kind, c, spec.max);
  }
  px(v: number): number {
    const t = tfm(this.spec.kind, this.spec.c ?? 1, v);
    return this.p0 + ((t - this.a) / (this.b - this.a || 1)) * (this.p1 - this.p0);
  }
  /** Same as px, for a vertical scale (reads better at the call sites). */
  py(v: number): number {
    return this.px(v);
  }
}

function niceStep(range: number, target: number): number {
  const raw = range / Math.max(1, target);
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  const m = raw / p;
  return (m <= 1 ? 1 : m <= 2 ? 2 : m <= 2.5 ? 2.5 : m <= 5 ? 5 : 10) * p;
}

/** Linear axis range that includes the data, rounded to nice steps. */
function linRange(vals: number[], label: string, opts: { includeZero?: boolean; pad?: number; exact?: boolean } = {}): AxisSpec {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of vals) {
    if (!Number.isFinite(v)) continue;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  if (!(hi >= lo)) {
    lo = -1;
    hi = 1;
  }
  if (opts.includeZero) {
    lo = Math.min(lo, 0);
    hi = Math.max(hi, 0);
  }
  if (hi - lo <= 1e-12 * Math.max(Math.abs(hi), Math.abs(lo), 1e-300)) {
    const d = Math.abs(hi) > 0 ? Math.abs(hi) * 0.1 : 1;
    lo -= d;
    hi += d;
  }
  if (opts.exact) return { kind: 'lin', min: lo, max: hi, label };
  const pad = (hi - lo) * (opts.pad ?? 0.04);
  lo -= pad;
  hi += pad;
  const st = niceStep(hi - lo, 5);
  return { kind: 'lin', min: Math.floor(lo / st) * st, max: Math.ceil(hi / st) * st, label };
}

function ticksOf(ax: AxisSpec): { major: number[]; minor: number[] } {
  const major: number[] = [];
  const minor: number[] = [];
  if (ax.kind === 'lin') {
    const st = ax.step ?? niceStep(ax.max - ax.min, 5);
    for (let v = Math.ceil(ax.min / st - 1e-9) * st; v <= ax.max + st * 1e-9; v += st) major.push(Math.abs(v) < st * 1e-9 ? 0 : v);
    return { major, minor };
  }
  if (ax.kind === 'log') {
    const d0 = Math.ceil(Math.log10(ax.min) - 1e-9);
    const d1 = Math.floor(Math.log10(ax.max) + 1e-9);
    const every = Math.max(1, Math.ceil((d1 - d0 + 1) / 8));
    for (let d = d0; d <= d1; d++) if ((d - d0) % every === 0) major.push(Math.pow(10, d));
    if (d1 - d0 <= 7) {
      for (let d = d0 - 1; d <= d1; d++) for (let k = 2; k <= 9; k++) {
        const v = k * Math.pow(10, d);
        if (v > ax.min && v < ax.max) minor.push(v);
      }
    }
    return { major, minor };
  }
  // symlog: 0 and ±10^k above the threshold
  const c = ax.c ?? 1;
  major.push(0);
  const mx = Math.max(Math.abs(ax.min), Math.abs(ax.max));
  const k0 = Math.ceil(Math.log10(c) - 1e-9);
  const k1 = Math.floor(Math.log10(mx) + 1e-9);
  const every = Math.max(1, Math.ceil((k1 - k0 + 1) / 7));
  for (let k = k1; k >= k0; k -= every) {
    const v = Math.pow(10, k);
    if (v <= ax.max) major.push(v);
    if (-v >= ax.min) major.push(-v);
  }
  return { major, minor };
}

function tickLabel(v: number): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  const sign = v < 0 ? '−' : '';
  if (a >= 1e-3 && a < 1e5) return sign + String(Number(a.toPrecision(4)));
  const e = Math.floor(Math.log10(a) + 1e-9);
  const mant = Number((a / Math.pow(10, e)).toPrecision(3));
  const ex = `10<tspan class="sup" dy="-4">${e < 0 ? '−' : ''}${Math.abs(e)}</tspan>`;
  return `${sign}${mant === 1 ? '' : `${mant}×`}${ex}`;
}

const r1 = (v: number) => (Math.round(v * 10) / 10).toString();

/** Tick values whose labels do not overlap along x: 0 first, then the largest magnitudes. */
function thinLabels(ticks: number[], px: (v: number) => number): number[] {
  const width = (v: number) => tickLabel(v).replace(/<[^>]+>/g, '').length * 6.1 + 8;
  const order = ticks.slice().sort((a, b) => (a === 0 ? -1 : b === 0 ? 1 : Math.abs(b) - Math.abs(a)));
  const kept: number[] = [];
  for (const v of order) {
    const x = px(v);
    const w = width(v);
    if (kept.every((k) => Math.abs(px(k) - x) >= (w + width(k)) / 2)) kept.push(v);
  }
  return kept;
}

/** Tick values whose labels do not overlap along y (at least 12 px apart): 0 first, then the largest magnitudes. */
function thinVertical(ticks: number[], py: (v: number) => number): number[] {
  const order = ticks.slice().sort((a, b) => (a === 0 ? -1 : b === 0 ? 1 : Math.abs(b) - Math.abs(a)));
  const kept: number[] = [];
  for (const v of order) if (kept.every((k) => Math.abs(py(k) - py(v)) >= 12)) kept.push(v);
  return kept;
}

/** A fraction as a plain-text percentage for SVG text: "4.43 %", "< 0.001 %". */
function pctPlain(f: number): string {
  const p = 100 * f;
  if (p < 0.001) return '< 0.001 %';
  return `${Number(p.toPrecision(3))} %`;
}

function pathOf(xs: number[], ys: (number | null)[], sx: Scale, sy: Scale): string {
  let d = '';
  let pen = false;
  for (let k = 0; k < xs.length; k++) {
    const y = ys[k];
    const x = xs[k];
    if (y === null || y === undefined || !Number.isFinite(y) || !Number.isFinite(x)) {
      pen = false;
      continue;
    }
    const px = sx.px(x);
    const py = Math.max(-1e4, Math.min(1e4, sy.py(y)));
    d += `${pen ? 'L' : 'M'}${r1(px)} ${r1(py)}`;
    pen = true;
  }
  return d;
}

let chartCounter = 0;

function chart(spec: ChartSpec): string {
  const W = spec.width ?? 480;
  const H = spec.height ?? 260;
  const tx0 = ticksOf(spec.x);
  const ty0 = ticksOf(spec.y);
  const labelWidth = Math.max(0, ...ty0.major.map((v) => tickLabel(v).replace(/<[^>]+>/g, '').length * 6.1));
  const L = Math.round(Math.max(48, 30 + labelWidth));
  const R = 14;
  const T = spec.title ? 26 : 12;
  const B = 44;
  const sx = new Scale(spec.x, L, W - R);
  const sy = new Scale(spec.y, H - B, T);
  const id = `${spec.id}-${++chartCounter}`;
  const parts: string[] = [];
  const c = (v: number) => r1(v);
  // grid
  const tx = tx0;
  const ty = ty0;
  for (const v of tx.minor) parts.push(`<path class="grid minor" d="M${c(sx.px(v))} ${T}V${H - B}"/>`);
  for (const v of ty.minor) parts.push(`<path class="grid minor" d="M${L} ${c(sy.py(v))}H${W - R}"/>`);
  for (const v of tx.major) parts.push(`<path class="grid" d="M${c(sx.px(v))} ${T}V${H - B}"/>`);
  for (const v of ty.major) parts.push(`<path class="grid" d="M${L} ${c(sy.py(v))}H${W - R}"/>`);
  const clip = `<clipPath id="${id}-clip"><rect x="${L}" y="${T}" width="${W - L - R}" height="${H - T - B}"/></clipPath>`;
  const inner: string[] = [];
  for (const s of spec.xspans ?? []) {
    const a = Math.max(L, Math.min(W - R, sx.px(Math.max(s.x0, spec.x.min))));
    const b = Math.max(L, Math.min(W - R, sx.px(Math.min(s.x1, spec.x.max))));
    if (b > a) inner.push(`<path class="span ${s.cls}" d="M${c(a)} ${T}H${c(b)}V${H - B}H${c(a)}Z"/>`);
  }
  for (const hl of spec.hlines ?? []) {
    if (hl.y < spec.y.min || hl.y > spec.y.max) continue;
    const y = c(sy.py(hl.y));
    inner.push(`<path class="ref ${hl.cls}" d="M${L} ${y}H${W - R}"/>`);
    if (hl.label) parts.push(`<text class="reflabel" x="${W - R - 4}" y="${Number(y) - 4}" text-anchor="end">${esc(hl.label)}</text>`);
  }
  for (const vl of spec.vlines ?? []) {
    if (vl.x < spec.x.min || vl.x > spec.x.max) continue;
    const x = c(sx.px(vl.x));
    inner.push(`<path class="ref ${vl.cls}" d="M${x} ${T}V${H - B}"/>`);
    if (vl.label) parts.push(`<text class="reflabel" x="${Number(x) + 4}" y="${T + 12}">${esc(vl.label)}</text>`);
  }
  for (const s of spec.series) {
    if (s.kind === 'band' && s.y2) {
      let d = '';
      let seg: [number, number, number][] = [];
      const flush = () => {
        if (seg.length > 1) {
          d += `M${seg.map(([x, lo]) => `${c(x)} ${c(lo)}`).join('L')}`;
          d += `L${seg.slice().reverse().map(([x, , hi]) => `${c(x)} ${c(hi)}`).join('L')}Z`;
        }
        seg = [];
      };
      for (let k = 0; k < s.x.length; k++) {
        const lo = s.y[k];
        const hi = s.y2[k];
        if (lo === null || hi === null || !Number.isFinite(lo) || !Number.isFinite(hi)) {
          flush();
          continue;
        }
        seg.push([sx.px(s.x[k]), clampPx(sy.py(lo)), clampPx(sy.py(hi))]);
      }
      flush();
      if (d) inner.push(`<path class="series band ${s.cls}" d="${d}"/>`);
      continue;
    }
    if (s.kind === 'poles' || s.kind === 'zeros' || s.kind === 'crosses' || s.kind === 'dots') {
      let d = '';
      for (let k = 0; k < s.x.length; k++) {
        const y = s.y[k];
        if (y === null || !Number.isFinite(y) || !Number.isFinite(s.x[k])) continue;
        const px = sx.px(s.x[k]);
        const py = sy.py(y);
        if (s.kind === 'poles' || s.kind === 'crosses') {
          const r = s.kind === 'poles' ? 5 : 3.5;
          d += `M${c(px - r)} ${c(py - r)}L${c(px + r)} ${c(py + r)}M${c(px - r)} ${c(py + r)}L${c(px + r)} ${c(py - r)}`;
        } else {
          const r = s.kind === 'zeros' ? 5 : 2.6;
          d += `M${c(px - r)} ${c(py)}a${r} ${r} 0 1 0 ${2 * r} 0a${r} ${r} 0 1 0 ${-2 * r} 0`;
        }
      }
      if (d) inner.push(`<path class="series mark ${s.kind} ${s.cls}" d="${d}"/>`);
      continue;
    }
    const d = pathOf(s.x, s.y, sx, sy);
    if (d) inner.push(`<path class="series ${s.kind} ${s.cls}" d="${d}"/>`);
  }
  // axes and labels
  parts.push(`<path class="axis" d="M${L} ${T}V${H - B}H${W - R}"/>`);
  for (const v of thinLabels(tx.major, (v) => sx.px(v))) parts.push(`<text class="tick" x="${c(sx.px(v))}" y="${H - B + 15}" text-anchor="middle">${tickLabel(v)}</text>`);
  for (const v of thinVertical(ty.major, (v) => sy.py(v))) parts.push(`<text class="tick" x="${L - 6}" y="${c(sy.py(v) + 4)}" text-anchor="end">${tickLabel(v)}</text>`);
  parts.push(`<text class="axis-label" x="${c((L + W - R) / 2)}" y="${H - 8}" text-anchor="middle">${esc(spec.x.label)}</text>`);
  parts.push(`<text class="axis-label" transform="translate(14 ${c((T + H - B) / 2)}) rotate(-90)" text-anchor="middle">${esc(spec.y.label)}</text>`);
  if (spec.title) parts.push(`<text class="chart-title" x="${L}" y="16">${esc(spec.title)}</text>`);
  parts.push(`<text class="readout" x="${W - R - 4}" y="${T + 12}" text-anchor="end"></text>`);
  const data = [
    `data-l="${L}" data-r="${W - R}" data-t="${T}" data-b="${H - B}"`,
    `data-xk="${spec.x.kind}" data-x0="${spec.x.min}" data-x1="${spec.x.max}" data-xc="${spec.x.c ?? 1}"`,
    `data-yk="${spec.y.kind}" data-y0="${spec.y.min}" data-y1="${spec.y.max}" data-yc="${spec.y.c ?? 1}"`,
  ].join(' ');
  return `<svg class="plot" viewBox="0 0 ${W} ${H}" role="img" aria-label="${esc(spec.title ?? `${spec.y.label} against ${spec.x.label}`)}" ${data}><defs>${clip}</defs>${parts.join('')}<g clip-path="url(#${id}-clip)">${inner.join('')}</g></svg>`;
}

const clampPx = (v: number) => Math.max(-1e4, Math.min(1e4, v));

function legend(items: { cls: string; kind: Series['kind']; label: string }[]): string {
  const sw = (it: { cls: string; kind: Series['kind'] }) => {
    if (it.kind === 'band') return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series band ${it.cls}" d="M0 1H20V9H0Z"/></svg>`;
    if (it.kind === 'poles' || it.kind === 'crosses') return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series mark ${it.kind} ${it.cls}" d="M6 1L14 9M6 9L14 1"/></svg>`;
    if (it.kind === 'zeros' || it.kind === 'dots') return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series mark ${it.kind} ${it.cls}" d="M6 5a4 4 0 1 0 8 0a4 4 0 1 0 -8 0"/></svg>`;
    return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series ${it.kind} ${it.cls}" d="M0 5H20"/></svg>`;
  };
  return `<ul class="legend">${items.map((it) => `<li>${sw(it)}${esc(it.label)}</li>`).join('')}</ul>`;
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
${consts.length ? `<details><summary>Constants (${consts.length})</summary><table class="data"><tbody>${consts.map((v) => `<tr><td class="name">${esc(v.name)}</td><td class="num">${num(v.value, 6)}</td><td>${esc(v.unit)}</td></tr>`).join('')}</tbody></table></details>` : ''}
</section>`;
}

function verdictBadge(d: ReportData): string {
  const v = d.stability!.verdict;
  return `<span class="badge ${v}">${v}</span>`;
}

function sectionModes(d: ReportData): string {
  const t = d.timeUnit;
  const st = d.stability!;
  const body = d.modes
    .map((m) => {
      const lam = m.multiplicity === 2 ? `${num(m.re)} ± ${num(m.im)}i` : num(m.re);
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
<p class="note">Eigenvalues λ of A in 1/${esc(t)}. τ = 1/|Re λ| (for a growing mode: the time to grow by a factor e); ωn = |λ|, ζ = −Re λ/|λ| for complex pairs. |Re λ| ≤ ${num(st.tolerance, 2)} counts as on the imaginary axis (10<sup>−9</sup> of the spectral radius ${num(st.spectralRadius)}). Participation factors |v<sub>ik</sub>w<sub>ik</sub>| (right and left eigenvectors) show which states a mode lives in.</p>
${d.modes.length ? `<div class="scroll"><table class="data"><thead><tr><th class="num">#</th><th class="num">λ [1/${esc(t)}]</th><th>kind</th><th class="num">τ [${esc(t)}]</th><th class="num">ωn [rad/${esc(t)}]</th><th class="num">ζ</th><th class="num">period [${esc(t)}]</th><th>lives in</th><th>controllable</th><th>observable</th><th></th></tr></thead><tbody>${body}</tbody></table></div>` : '<p>The model has no states.</p>'}
${d.modes.length ? poleZeroMap(d) : ''}
</section>`;
}

const KIND_WORDS: Record<string, (re: number) => string> = {
  real: (re) => (re > 0 ? 'growing exponential' : 'decaying exponential'),
  oscillatory: (re) => (re > 0 ? 'growing oscillation' : 'damped oscillation'),
  integrator: () => 'integrator (λ = 0)',
  undamped: () => 'undamped oscillation',
};

const flag = (b: boolean) => (b ? '<span class="yes">yes</span>' : '<span class="no">no</span>');

function poleZeroMap(d: ReportData): string {
  const t = d.timeUnit;
  const pts: Complex[] = [...d.eigenvalues];
  const zeroSets = d.transfer.filter((tf) => tf.zeros.length).slice(0, 6);
  for (const tf of zeroSets) pts.push(...tf.zeros);
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
  const svg = chart({
    id: 'pz', x, y, series, height: 300, title: 'Pole–zero map',
    xspans: [{ x0: 0, x1: x.max, cls: 'rhp' }], vlines: [{ x: 0, cls: 'axis0' }], hlines: [{ y: 0, cls: 'axis0' }],
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
      const det = tf.identicallyZero || tf.order === 0 ? '' : `${tf.order > 3 ? `<details class="poly"><summary>as polynomials in s</summary>= ${poly}</details>` : `<div class="poly">= ${poly}</div>`}
<div class="roots"><span>poles: ${tf.poles.map((x) => complexHtml(x)).join(', ') || 'none'}</span><span>zeros: ${tf.zeros.map((x) => complexHtml(x)).join(', ') || 'none'}</span>${tf.cancelled ? `<span class="muted">${tf.cancelled} mode(s) of A do not appear (uncontrollable from this input or unobservable in this output)</span>` : ''}</div>`;
      return `<div class="tf"><div class="tfhead">${esc(pairTitle(tf.input, tf.output))}${tf.unit ? ` <span class="unit">[${esc(tf.unit)}]</span>` : ''}</div><div class="tfexpr"><span><i>G</i>(<i>s</i>) =</span>${transferHtml(tf)}</div>${det}</div>`;
    })
    .join('');
  const c = d.controllability!;
  const o = d.observability!;
  const failing = (r: typeof c, word: string) => (r.failing.length ? `${word}: ${r.failing.map((x) => `mode ${x.mode} (λ = ${complexHtml({ re: x.re, im: x.im })})`).join(', ')}.` : `every mode is ${word.replace(/^un/, '')}.`);
  return `<section id="transfer"><h2>Transfer functions</h2>
<p class="note">Each pair from its controllable and observable part (orthogonal staircase reduction); poles are that part's eigenvalues, zeros the transmission zeros from the system matrix [[A, b], [c, d]] reduced to an ordinary eigenproblem; the gain K from the exact response at a test point. <i>s</i> in 1/${esc(t)}. ${d.outputsAreStates ? 'The model declares no outputs, so the state components serve as outputs.' : ''}</p>
${d.inputs.length ? items || '<p>No pairs.</p>' : '<p>The model has no inputs.</p>'}
<h3 id="ctrb">Controllability and observability</h3>
<p>Controllable subspace (PBH test, SVD rank of [λI − A, B] at each eigenvalue): <b>${c.rank} of ${c.n}</b>; ${failing(c, 'uncontrollable')}</p>
<p>Observable subspace (PBH test on [λI − A; C]): <b>${o.rank} of ${o.n}</b>; ${failing(o, 'unobservable')}</p>
</section>`;
}

function sectionBode(d: ReportData): string {
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
      const span = Math.max(...ph) - Math.min(...ph);
      const st = [15, 30, 45, 90, 180, 360, 720].find((x) => span / x <= 5) ?? 1440;
      yp = { ...yp, min: Math.floor(Math.min(...ph) / st) * st, max: Math.ceil(Math.max(...ph) / st) * st, step: st };
      if (yp.max - yp.min < 2 * st) {
        yp.min -= st;
        yp.max += st;
      }
      const x: AxisSpec = { kind: 'log', min: omega[0], max: omega[omega.length - 1], label: `angular frequency ω [rad/${t}]` };
      const cls = `s${(k % 6) + 1}`;
      const mg = chart({ id: 'bm', x, y: ym, series: [{ kind: 'line', cls, x: omega, y: p.magnitudeDb }], height: 200, title: 'magnitude' });
      const pg = chart({ id: 'bp', x, y: yp, series: [{ kind: 'line', cls, x: omega, y: p.phaseDeg }], height: 180, title: 'phase' });
      return `<figure class="chart card"><figcaption class="cardhead">${esc(pairTitle(p.input, p.output))}</figcaption>${mg}${pg}</figure>`;
    })
    .join('');
  const more = pairs.length - shown.length;
  return `<section id="bode"><h2>Frequency response</h2>
<p class="note">G(jω) from (jωI − A)·X = B at ${omega.length} log-spaced frequencies, two decades beyond the smallest and the largest pole or zero; phase unwrapped along ω. ${more > 0 ? `${more} more pair(s) are in the JSON output.` : ''}</p>
${cards ? `<div class="grid">${cards}</div>` : '<p>No input reaches an output.</p>'}</section>`;
}

function stepCharts(d: ReportData, s: StepReport): string {
  const t = d.timeUnit;
  let outs = s.outputs.filter((o) => o.linked);
  if (!outs.length) return '<p class="muted">No output responds to this input in the linear model.</p>';
  if (outs.length > PANEL_LIMIT) {
    const rel = (o: (typeof outs)[number]) => Math.max(...o.linear.map(Math.abs)) / (Math.max(...outs.flatMap((x) => x.linear.map(Math.abs))) || 1);
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
      return `<figure class="chart card">${chart({ id: 'st', x: linRange(s.t, `time [${t}]`, { exact: true }), y, series, height: 230, title: `Δ${o.name}${o.error !== null ? ` — linear differs by ${pctPlain(o.error)} of the change` : ''}`, vlines, hlines: [{ y: 0, cls: 'axis0' }] })}</figure>`;
    })
    .join('');
}

function sectionSteps(d: ReportData): string {
  const t = d.timeUnit;
  const h = d.horizon!;
  const blocks = d.steps
    .map((s) => {
      const status = s.status === 'ok'
        ? s.withinTolerance === null ? '' : `<span class="badge ${s.withinTolerance ? 'stable' : 'marginal'}">${s.withinTolerance ? 'within' : 'beyond'} tolerance</span>`
        : `<span class="badge unstable">${s.status === 'domain' ? 'out of domain' : 'failed'}</span>`;
      return `<div class="stepblock"><h3>Step of ${num(s.step)}${unitTxt(s.inputUnit)} in ${esc(s.input)} <span class="muted">(${num(s.stepPercent, 3)} % of ${s.percentBasis === 'unit' ? 'one unit' : 'the operating value'}, from ${num(s.operatingValue)}${unitTxt(s.inputUnit)})</span> ${status}</h3>
${s.message ? `<p class="warnmsg">${esc(s.message)}</p>` : ''}
<div class="grid">${stepCharts(d, s)}</div></div>`;
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
  if (l.limitedBy === 'time budget' && l.step === 0) return '<span class="muted">not computed</span>';
  return `${sign}${num(l.step, 3)}${unitTxt(v.unit)} <span class="muted">(${num(l.percent, 3)} %)</span>${l.limitedBy === 'search limit' || l.limitedBy === 'time budget' ? ' or more' : ''}`;
}

const LIMIT_WORDS: Record<ValidityLimit['limitedBy'], string> = {
  tolerance: 'tolerance',
  domain: 'leaves the domain',
  'search limit': 'none up to 1000 %',
  'nothing valid': 'tolerance at every size tried',
  'time budget': 'time budget (range at least this wide)',
};

function sectionValidity(d: ReportData): string {
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
      const ymin = Math.pow(10, Math.floor(Math.log10(Math.min(...pos, v.tolerance * 100) * 0.8)));
      const ymax = Math.pow(10, Math.ceil(Math.log10(Math.max(...pos, v.tolerance * 100) * 1.25)));
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
      const svg = chart({ id: 'va', x, y, series, height: 240, title: `${v.input}: where the linear model holds`, xspans: spans, hlines: [{ y: v.tolerance * 100, cls: 'tol', label: `tolerance ${formatNumber(100 * v.tolerance, 3)} %` }], vlines: [{ x: 0, cls: 'axis0' }] });
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

// ------------------------------------------------------------------------------------- page

const LIGHT = `--bg:#f6f5f1;--card:#ffffff;--fg:#1c2130;--muted:#5d6474;--line:#d8d4ca;--grid:#e9e6de;--grid2:#f1efe9;--axis:#7a808c;
--s0:#1c2130;--s1:#13708a;--s2:#cf6d21;--s3:#7a55a8;--s4:#2e8a57;--s5:#bf3f66;--s6:#4d74b8;--bandc:rgba(19,112,138,.15);--valid:rgba(46,138,87,.15);--rhp:rgba(191,63,102,.08);
--ok:#2e8a57;--warn:#a86a0c;--bad:#b83228;--cbg:#fdf4df;--cline:#d9a53d;--head:#0f3f4d`;
const DARK = `--bg:#16191f;--card:#1e222a;--fg:#e3e6ec;--muted:#9aa2b1;--line:#353b47;--grid:#2c313b;--grid2:#242832;--axis:#8a92a0;
--s0:#e3e6ec;--s1:#4fc0d8;--s2:#f2994a;--s3:#b794e8;--s4:#5fcf8e;--s5:#f07199;--s6:#86a8f0;--bandc:rgba(79,192,216,.18);--valid:rgba(95,207,142,.16);--rhp:rgba(240,113,153,.10);
--ok:#5fcf8e;--warn:#f0b45a;--bad:#ff7b6e;--cbg:#2e2818;--cline:#a9822f;--head:#9fd9e6`;

const CSS = `
:root{color-scheme:light dark;${LIGHT};
--font:system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;--mono:ui-monospace,"SF Mono",Menlo,Consolas,monospace}
@media (prefers-color-scheme:dark){:root{${DARK}}}
body.vscode-light{${LIGHT}}
body.vscode-dark,body.vscode-high-contrast{${DARK}}
body.vscode-high-contrast-light{${LIGHT}}
*{box-sizing:border-box}
body{margin:0;background:var(--vscode-editor-background,var(--bg));color:var(--vscode-editor-foreground,var(--fg));font-family:var(--vscode-font-family,var(--font));font-size:14px;line-height:1.45}
main{max-width:1180px;margin:0 auto;padding:20px 24px 48px}
header.top{display:flex;flex-wrap:wrap;align-items:baseline;gap:6px 18px;border-bottom:2px solid var(--line);padding-bottom:10px}
header.top h1{font-size:21px;margin:0;color:var(--head);font-weight:650}
header.top .meta{color:var(--muted);font-size:12.5px}
nav{display:flex;flex-wrap:wrap;gap:4px 14px;margin:10px 0 4px;font-size:13px}
nav a{color:var(--vscode-textLink-foreground,var(--s1));text-decoration:none}nav a:hover{text-decoration:underline}
h2{font-size:17px;margin:30px 0 8px;color:var(--head);font-weight:640;border-bottom:1px solid var(--line);padding-bottom:4px}
h3{font-size:14.5px;margin:18px 0 6px;font-weight:620}
section{margin-top:6px}
.note{color:var(--muted);font-size:12.5px;max-width:980px}
.muted{color:var(--muted)}
.unit{color:var(--muted);font-size:.92em}
.mono{font-family:var(--mono);font-size:12.5px}
table.data{border-collapse:collapse;margin:6px 0 10px;font-size:13px;background:var(--card)}
table.data th,table.data td{padding:4px 10px;border-bottom:1px solid var(--line);text-align:left;vertical-align:top}
table.data thead th{font-weight:600;color:var(--muted);border-bottom:1.5px solid var(--axis);white-space:nowrap}
table.data td.num,table.data th.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
td.name,th.name{font-family:var(--mono);font-size:12.5px;white-space:nowrap}
.scroll{overflow-x:auto}
.tag{font-size:11px;border:1px solid var(--line);border-radius:3px;padding:0 5px;color:var(--muted)}
.badge{display:inline-block;font-size:11.5px;font-weight:650;letter-spacing:.03em;text-transform:uppercase;border-radius:3px;padding:1px 7px;border:1.5px solid currentColor;vertical-align:1px}
.badge.stable{color:var(--ok)}.badge.marginal{color:var(--warn)}.badge.unstable{color:var(--bad)}
.verdict{font-size:14px;margin:6px 0}
.dot{display:inline-block;width:8px;height:8px;border-radius:50%;margin-right:5px;vertical-align:0}
.dot.stable{background:var(--ok)}.dot.marginal{background:var(--warn)}.dot.unstable{background:var(--bad)}
.yes{color:var(--ok)}.no{color:var(--bad);font-weight:600}.integ{color:var(--warn)}
.part{display:inline-flex;align-items:center;gap:4px;margin-right:10px;white-space:nowrap;font-family:var(--mono);font-size:12px}
.pbar svg{width:40px;height:6px;display:block;background:var(--grid2);border-radius:2px}.pfill{fill:var(--s1)}
.caution{background:var(--cbg);border-left:4px solid var(--cline);padding:8px 14px;margin:14px 0;font-size:13px;border-radius:2px}
.caution ul{margin:4px 0 0 18px;padding:0}.caution li{margin:2px 0}
.warnmsg{color:var(--bad);font-size:12.5px}
.grid{display:grid;grid-template-columns:repeat(auto-fill,minmax(430px,1fr));gap:14px;margin:8px 0}
figure.chart{margin:0}
figure.card{background:var(--card);border:1px solid var(--line);border-radius:4px;padding:8px 10px 6px}
figure.wide{max-width:620px;background:var(--card);border:1px solid var(--line);border-radius:4px;padding:8px 10px 6px;margin-top:10px}
.cardhead{font-family:var(--mono);font-size:12.5px;font-weight:600;margin:0 0 2px 4px}
figcaption{font-size:12px;color:var(--muted);margin:2px 4px}
svg.plot{width:100%;height:auto;display:block;overflow:visible}
svg.plot text{fill:var(--muted);font-family:var(--vscode-font-family,var(--font));font-size:10.5px}
svg.plot text.axis-label{fill:var(--fg);font-size:11.5px}
svg.plot text.chart-title{fill:var(--fg);font-size:12px;font-weight:600}
svg.plot text.readout{fill:var(--fg);font-family:var(--mono);font-size:10.5px}
svg.plot .sup{font-size:8px}
.grid path.grid,svg.plot path.grid{stroke:var(--grid);stroke-width:1;fill:none}
svg.plot path.grid.minor{stroke:var(--grid2)}
svg.plot path.axis{stroke:var(--axis);stroke-width:1.2;fill:none}
svg.plot path.ref{fill:none;stroke-width:1}
path.ref.axis0{stroke:var(--axis);stroke-dasharray:2 3}
path.ref.tol{stroke:var(--bad);stroke-dasharray:6 3;stroke-width:1.3}
path.ref.fail{stroke:var(--bad);stroke-dasharray:3 3}
svg.plot text.reflabel{fill:var(--bad);font-size:10px;paint-order:stroke;stroke:var(--card);stroke-width:3px;stroke-linejoin:round}
path.span{stroke:none}path.span.rhp,.series.band.rhp{fill:var(--rhp)}path.span.validspan,.series.band.validspan{fill:var(--valid)}
.series{fill:none;stroke-width:1.8;stroke-linejoin:round;stroke-linecap:round}
.series.dash{stroke-dasharray:6 4;stroke-width:1.9}
.series.band{stroke:none}.series.band.bandc{fill:var(--bandc)}
.series.mark{stroke-width:1.7}.series.mark.zeros,.series.mark.dots{fill:var(--card)}
.series.mark.dots{stroke-width:1.5}
.s0{stroke:var(--s0)}.s1{stroke:var(--s1)}.s2{stroke:var(--s2)}.s3{stroke:var(--s3)}.s4{stroke:var(--s4)}.s5{stroke:var(--s5)}.s6{stroke:var(--s6)}.failc{stroke:var(--bad)}
ul.legend{list-style:none;display:flex;flex-wrap:wrap;gap:2px 16px;margin:4px 0 2px 4px;padding:0;font-size:12px;color:var(--muted)}
ul.legend li{display:flex;align-items:center;gap:5px}
svg.sw{width:20px;height:10px;overflow:visible}
.tf{background:var(--card);border:1px solid var(--line);border-radius:4px;padding:8px 12px;margin:8px 0}
.tfhead{font-family:var(--mono);font-size:12.5px;font-weight:600;margin-bottom:4px}
.tfexpr{font-size:15px;display:flex;align-items:center;gap:6px;flex-wrap:wrap}
.frac{display:inline-flex;flex-direction:column;text-align:center;vertical-align:middle}
.frac .nu{border-bottom:1px solid currentColor;padding:0 4px 1px}.frac .de{padding:1px 4px 0}
.poly{font-size:12.5px;color:var(--muted);margin-top:4px}details.poly summary{font-size:12px}
.roots{font-size:12.5px;display:flex;flex-wrap:wrap;gap:2px 18px;margin-top:3px}
details summary{cursor:pointer;color:var(--muted);font-size:13px}
.stepblock{margin-bottom:8px}
footer{margin-top:36px;color:var(--muted);font-size:12px;border-top:1px solid var(--line);padding-top:8px}
.problems li{color:var(--bad)}
@media print{nav{display:none}.grid{grid-template-columns:1fr 1fr}}
`;

/** Cursor read-out: data coordinates under the mouse in each plot. */
const SCRIPT = `(function(){
function inv(k,a,b,c,f){var t=function(v){return k==='log'?Math.log10(v):k==='symlog'?Math.sign(v)*Math.log10(1+Math.abs(v)/c):v};var u=t(a)+(t(b)-t(a))*f;
if(k==='log')return Math.pow(10,u);if(k==='symlog')return Math.sign(u)*c*(Math.pow(10,Math.abs(u))-1);return u}
function fmt(v){var a=Math.abs(v);return a!==0&&(a<1e-3||a>=1e5)?v.toExponential(2):String(Number(v.toPrecision(4)))}
var plots=document.querySelectorAll('svg.plot');
for(var i=0;i<plots.length;i++)(function(s){var ro=s.querySelector('text.readout');if(!ro)return;var d=s.dataset;
s.addEventListener('mousemove',function(e){var r=s.getBoundingClientRect(),vb=s.viewBox.baseVal,x=(e.clientX-r.left)*vb.width/r.width,y=(e.clientY-r.top)*vb.height/r.height;
var l=+d.l,rr=+d.r,t=+d.t,b=+d.b;if(x<l||x>rr||y<t||y>b){ro.textContent='';return}
var xv=inv(d.xk,+d.x0,+d.x1,+d.xc,(x-l)/(rr-l)),yv=inv(d.yk,+d.y0,+d.y1,+d.yc,(b-y)/(b-t));ro.textContent=fmt(xv)+', '+fmt(yv)});
s.addEventListener('mouseleave',function(){ro.textContent=''})})(plots[i])})();`;

export function renderReportHtml(data: ReportData, opts: RenderOptions = {}): string {
  chartCounter = 0;
  const nonce = opts.nonce;
  const csp = nonce
    ? `default-src 'none'; img-src ${opts.cspSource ?? ''} data:; style-src ${opts.cspSource ?? ''} 'nonce-${nonce}'; script-src 'nonce-${nonce}'; font-src ${opts.cspSource ?? ''}; base-uri 'none'; form-action 'none'`
    : "default-src 'none'; img-src data:; style-src 'unsafe-inline'; script-src 'unsafe-inline'; base-uri 'none'; form-action 'none'";
  const na = nonce ? ` nonce="${esc(nonce)}"` : '';
  const title = `${data.title} — point ${data.point}`;
  const sections: string[] = [];
  if (!data.ok) {
    sections.push(`<section><h2>No report</h2><p>The report could not be made for this point:</p><ul class="problems">${data.problems.map((p) => `<li>${esc(p)}</li>`).join('')}</ul></section>`);
  } else {
    sections.push(sectionPoint(data), sectionModes(data), sectionGains(data), sectionTransfer(data), sectionBode(data), sectionSteps(data), sectionValidity(data));
  }
  const nav = data.ok
    ? `<nav aria-label="sections"><a href="#point">Point</a><a href="#modes">Stability &amp; modes</a><a href="#gains">Gains</a><a href="#transfer">Transfer functions</a><a href="#ctrb">Controllability</a><a href="#bode">Frequency response</a><a href="#steps">Step responses</a>${data.validity ? '<a href="#validity">Validity range</a>' : ''}</nav>`
    : '';
  const meta = [`time in ${esc(data.timeUnit)}`, data.digest ? `model digest ${esc(data.digest)}` : '', data.ok ? `${data.states.length} state component(s), ${data.inputs.length} input(s), ${data.outputs.length} output(s)${data.outputsAreStates ? ' (the states)' : ''}` : '']
    .filter(Boolean)
    .join(' · ');
  return `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${esc(csp)}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="Poise">
<title>${esc(title)}</title>
<style${na}>${CSS}</style></head>
<body><main>
<header class="top"><h1>${esc(data.title)} · point <span class="mono">${esc(data.point)}</span></h1>${data.ok && data.stability ? verdictBadge(data) : ''}<span class="meta">${meta}</span></header>
${nav}
${cautionsBox(data, 'head')}
${sections.join('\n')}
${data.ok ? cautionsBox(data, 'foot') : ''}
<footer>Generated by Poise from the model text. Linearisation at the point; eigenvalues by Hessenberg QR; zeros and poles per pair from a minimal realisation; frequency response by complex linear solves; step responses by the matrix exponential (linear) and Rodas4 (nonlinear).</footer>
</main>
<script${na}>${SCRIPT}</script>
</body></html>
`;
}

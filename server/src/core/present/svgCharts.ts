/**
 * Hand-written SVG charts and the standalone HTML page shell shared by the HTML pages (the point report,
 * reportHtml.ts, and the sweep page, sweepReport.ts): the one home of the chart code, the style sheet and
 * the cursor script, so both pages look alike. Pure: returns strings.
 */
import { cspHash } from './sha256';
import { formatNumber } from '../algebra/expr';
import { maxOf } from '../arrays';

export const esc = (s: string): string => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

/** Number for display: 4 significant digits, true minus sign. */
export function num(v: number | null | undefined, d = 4): string {
  if (v === null || v === undefined || Number.isNaN(v)) return '—';
  if (!Number.isFinite(v)) return v > 0 ? '∞' : '−∞';
  const s = formatNumber(v, d);
  const m = /^(-?)([0-9.]+)e(-?[0-9]+)$/.exec(s);
  if (m) return `${m[1] ? '−' : ''}${m[2]}×10<sup>${m[3].replace('-', '−')}</sup>`;
  return s.replace('-', '−');
}

// ------------------------------------------------------------------------------------- SVG charts

export type ScaleKind = 'lin' | 'log' | 'symlog';

export interface AxisSpec {
  kind: ScaleKind;
  min: number;
  max: number;
  label: string;
  /** Linear threshold of a symlog axis. */
  c?: number;
  /** Tick spacing of a linear axis (default: a nice step for about five ticks). */
  step?: number;
}

export interface Series {
  kind: 'line' | 'dash' | 'band' | 'poles' | 'zeros' | 'dots' | 'crosses';
  cls: string;
  x: number[];
  y: (number | null)[];
  /** Upper edge for bands (y is the lower edge). */
  y2?: (number | null)[];
  label?: string;
}

export interface ChartSpec {
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
  /** One unit is the same length on both axes (a map of the complex plane): the ranges are widened to fit. */
  equalAspect?: boolean;
}

const tfm = (kind: ScaleKind, c: number, v: number): number => {
  if (kind === 'log') return Math.log10(v);
  if (kind === 'symlog') return Math.sign(v) * Math.log10(1 + Math.abs(v) / c);
  return v;
};

/** The inverse of tfm. */
const untfm = (kind: ScaleKind, c: number, t: number): number => {
  if (kind === 'log') return Math.pow(10, t);
  if (kind === 'symlog') return Math.sign(t) * c * (Math.pow(10, Math.abs(t)) - 1);
  return t;
};

/**
 * Widens the axis ranges (about their middles, in the axes' own transformed coordinates) so that one unit
 * spans as many pixels across as up: `w` × `h` is the plot area in pixels.
 */
export function equalAspectAxes(x: AxisSpec, y: AxisSpec, w: number, h: number): { x: AxisSpec; y: AxisSpec } {
  const cx = x.c ?? 1;
  const cy = y.c ?? 1;
  const [x0, x1] = [tfm(x.kind, cx, x.min), tfm(x.kind, cx, x.max)];
  const [y0, y1] = [tfm(y.kind, cy, y.min), tfm(y.kind, cy, y.max)];
  const u = Math.max((x1 - x0) / w, (y1 - y0) / h);
  if (!(u > 0) || !Number.isFinite(u)) return { x, y };
  const mx = (x0 + x1) / 2;
  const my = (y0 + y1) / 2;
  return {
    x: { ...x, min: untfm(x.kind, cx, mx - (u * w) / 2), max: untfm(x.kind, cx, mx + (u * w) / 2), step: undefined },
    y: { ...y, min: untfm(y.kind, cy, my - (u * h) / 2), max: untfm(y.kind, cy, my + (u * h) / 2), step: undefined },
  };
}

export class Scale {
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

export function niceStep(range: number, target: number): number {
  const raw = range / Math.max(1, target);
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  const m = raw / p;
  return (m <= 1 ? 1 : m <= 2 ? 2 : m <= 2.5 ? 2.5 : m <= 5 ? 5 : 10) * p;
}

/** Linear axis range that includes the data, rounded to nice steps. */
export function linRange(vals: number[], label: string, opts: { includeZero?: boolean; pad?: number; exact?: boolean } = {}): AxisSpec {
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

export function ticksOf(ax: AxisSpec): { major: number[]; minor: number[] } {
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

export function tickLabel(v: number): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  const sign = v < 0 ? '−' : '';
  if (a >= 1e-3 && a < 1e5) return sign + String(Number(a.toPrecision(4)));
  const e = Math.floor(Math.log10(a) + 1e-9);
  const mant = Number((a / Math.pow(10, e)).toPrecision(3));
  const ex = `10<tspan class="sup" dy="-4">${e < 0 ? '−' : ''}${Math.abs(e)}</tspan>`;
  return `${sign}${mant === 1 ? '' : `${mant}×`}${ex}`;
}

export const r1 = (v: number) => (Math.round(v * 10) / 10).toString();

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

/** What the charts of one page share: the numbering of their ids (a new context per page, so a page renders the same twice). */
export interface PageContext {
  /** A page-unique element id from a base name: "bm-1", "bp-2", … */
  chartId(base: string): string;
}

export function newPage(): PageContext {
  let charts = 0;
  return { chartId: (base) => `${base}-${++charts}` };
}

export function chart(page: PageContext, spec0: ChartSpec): string {
  let spec = spec0;
  const W = spec.width ?? 480;
  const H = spec.height ?? 260;
  let tx0 = ticksOf(spec.x);
  let ty0 = ticksOf(spec.y);
  const labelWidth = maxOf(ty0.major.map((v) => tickLabel(v).replace(/<[^>]+>/g, '').length * 6.1), 0);
  const L = Math.round(Math.max(48, 30 + labelWidth));
  const R = 14;
  const T = spec.title ? 26 : 12;
  const B = 44;
  if (spec.equalAspect) {
    spec = { ...spec, ...equalAspectAxes(spec.x, spec.y, W - L - R, H - T - B) };
    tx0 = ticksOf(spec.x);
    ty0 = ticksOf(spec.y);
  }
  const sx = new Scale(spec.x, L, W - R);
  const sy = new Scale(spec.y, H - B, T);
  const id = page.chartId(spec.id);
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

export function legend(items: { cls: string; kind: Series['kind']; label: string }[]): string {
  const sw = (it: { cls: string; kind: Series['kind'] }) => {
    if (it.kind === 'band') return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series band ${it.cls}" d="M0 1H20V9H0Z"/></svg>`;
    if (it.kind === 'poles' || it.kind === 'crosses') return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series mark ${it.kind} ${it.cls}" d="M6 1L14 9M6 9L14 1"/></svg>`;
    if (it.kind === 'zeros' || it.kind === 'dots') return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series mark ${it.kind} ${it.cls}" d="M6 5a4 4 0 1 0 8 0a4 4 0 1 0 -8 0"/></svg>`;
    return `<svg class="sw" viewBox="0 0 20 10" aria-hidden="true"><path class="series ${it.kind} ${it.cls}" d="M0 5H20"/></svg>`;
  };
  return `<ul class="legend">${items.map((it) => `<li>${sw(it)}${esc(it.label)}</li>`).join('')}</ul>`;
}

// ------------------------------------------------------------------------------------- page

const LIGHT = `--bg:#f6f5f1;--card:#ffffff;--fg:#1c2130;--muted:#5d6474;--line:#d8d4ca;--grid:#e9e6de;--grid2:#f1efe9;--axis:#7a808c;
--s0:#1c2130;--s1:#13708a;--s2:#cf6d21;--s3:#7a55a8;--s4:#2e8a57;--s5:#bf3f66;--s6:#4d74b8;--bandc:rgba(19,112,138,.15);--valid:rgba(46,138,87,.15);--rhp:rgba(191,63,102,.08);
--ok:#2e8a57;--warn:#a86a0c;--bad:#b83228;--cbg:#fdf4df;--cline:#d9a53d;--head:#0f3f4d`;
const DARK = `--bg:#16191f;--card:#1e222a;--fg:#e3e6ec;--muted:#9aa2b1;--line:#353b47;--grid:#2c313b;--grid2:#242832;--axis:#8a92a0;
--s0:#e3e6ec;--s1:#4fc0d8;--s2:#f2994a;--s3:#b794e8;--s4:#5fcf8e;--s5:#f07199;--s6:#86a8f0;--bandc:rgba(79,192,216,.18);--valid:rgba(95,207,142,.16);--rhp:rgba(240,113,153,.10);
--ok:#5fcf8e;--warn:#f0b45a;--bad:#ff7b6e;--cbg:#2e2818;--cline:#a9822f;--head:#9fd9e6`;

/** Poise's palette: CSS variable name (without "--") → colour, for the light and the dark theme. */
export const PALETTE: { light: Record<string, string>; dark: Record<string, string> } = {
  light: Object.fromEntries([...LIGHT.matchAll(/--([\w-]+):([^;]+)/g)].map((m) => [m[1], m[2].trim()])),
  dark: Object.fromEntries([...DARK.matchAll(/--([\w-]+):([^;]+)/g)].map((m) => [m[1], m[2].trim()])),
};

/** `n` colours evenly along the path through the `anchors` (hex colours), interpolated in sRGB. */
export function colourRamp(anchors: string[], n: number): string[] {
  const rgb = anchors.map((h) => [1, 3, 5].map((k) => parseInt(h.slice(k, k + 2), 16)));
  const out: string[] = [];
  for (let i = 0; i < n; i++) {
    const f = n === 1 ? 0 : (i / (n - 1)) * (rgb.length - 1);
    const k = Math.min(rgb.length - 2, Math.floor(f));
    const t = f - k;
    out.push('#' + rgb[k].map((a, c) => Math.round(a + (rgb[k + 1][c] - a) * t).toString(16).padStart(2, '0')).join(''));
  }
  return out;
}

export const CSS = `
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
export const SCRIPT = `(function(){
function inv(k,a,b,c,f){var t=function(v){return k==='log'?Math.log10(v):k==='symlog'?Math.sign(v)*Math.log10(1+Math.abs(v)/c):v};var u=t(a)+(t(b)-t(a))*f;
if(k==='log')return Math.pow(10,u);if(k==='symlog')return Math.sign(u)*c*(Math.pow(10,Math.abs(u))-1);return u}
function fmt(v){var a=Math.abs(v);return a!==0&&(a<1e-3||a>=1e5)?v.toExponential(2):String(Number(v.toPrecision(4)))}
var plots=document.querySelectorAll('svg.plot');
for(var i=0;i<plots.length;i++)(function(s){var ro=s.querySelector('text.readout');if(!ro)return;var d=s.dataset;
s.addEventListener('mousemove',function(e){var r=s.getBoundingClientRect(),vb=s.viewBox.baseVal,x=(e.clientX-r.left)*vb.width/r.width,y=(e.clientY-r.top)*vb.height/r.height;
var l=+d.l,rr=+d.r,t=+d.t,b=+d.b;if(x<l||x>rr||y<t||y>b){ro.textContent='';return}
var xv=inv(d.xk,+d.x0,+d.x1,+d.xc,(x-l)/(rr-l)),yv=inv(d.yk,+d.y0,+d.y1,+d.yc,(b-y)/(b-t));ro.textContent=fmt(xv)+', '+fmt(yv)});
s.addEventListener('mouseleave',function(){ro.textContent=''})})(plots[i])})();`;

/** The content-security-policy source of SCRIPT (its SHA-256), for standalone pages. */
/** The CSP hash of SCRIPT, computed when a page is first written (not at every start of the command). */
let scriptHash: string | undefined;
export const scriptHashOf = (): string => (scriptHash ??= cspHash(SCRIPT));

export interface PageOptions {
  /** Text of the <title>. */
  title: string;
  /** Inner HTML of the page heading (<h1>). */
  heading: string;
  /** Inner HTML after the heading (badges, meta line). */
  headerExtra?: string;
  /** Inner HTML of the section navigation (<a> links), if any. */
  nav?: string;
  /** The page body (sections). */
  body: string;
  /** Footer text (plain). */
  footer?: string;
  /** Extra CSS appended to the shared style sheet. */
  css?: string;
  /** Nonce for the inline style and script (webview). */
  nonce?: string;
  /** The webview's cspSource (allowed for styles and images besides the nonce). */
  cspSource?: string;
}

/** A complete standalone page: content security policy that allows nothing from outside, the shared CSS and cursor script. */
export function htmlPage(o: PageOptions): string {
  const nonce = o.nonce;
  const style = `${CSS}${o.css ?? ''}`;
  // standalone: the one style sheet and the one script are allowed by their hashes, nothing else inline
  const csp = nonce
    ? `default-src 'none'; img-src ${o.cspSource ?? ''} data:; style-src ${o.cspSource ?? ''} 'nonce-${nonce}'; script-src 'nonce-${nonce}'; font-src ${o.cspSource ?? ''}; base-uri 'none'; form-action 'none'`
    : `default-src 'none'; img-src data:; style-src ${cspHash(style)}; script-src ${scriptHashOf()}; base-uri 'none'; form-action 'none'`;
  const na = nonce ? ` nonce="${esc(nonce)}"` : '';
  return `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${esc(csp)}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="Poise">
<title>${esc(o.title)}</title>
<style${na}>${style}</style></head>
<body><main>
<header class="top"><h1>${o.heading}</h1>${o.headerExtra ?? ''}</header>
${o.nav ? `<nav aria-label="sections">${o.nav}</nav>` : ''}
${o.body}
${o.footer ? `<footer>${esc(o.footer)}</footer>` : ''}
</main>
<script${na}>${SCRIPT}</script>
</body></html>
`;
}

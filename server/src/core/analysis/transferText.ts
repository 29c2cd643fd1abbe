/**
 * Poise's text notation of a transfer function (docs/dynamics.md, "How transfer functions are written"):
 *
 *   factored, first:  K·(s + a)·(s² + b·s + c) / (s·(s + d)²)
 *   polynomials:      (n₂·s² + n₁·s + n₀) / (s³ + d₂·s² + d₁·s + d₀)   — only when it reads differently
 *
 * A real root r gives the factor (s − r) (just s for r = 0), a complex pair re ± im·i the quadratic
 * (s² − 2·re·s + re² + im²). Factors that print the same are written once with a superscript power;
 * factors and coefficients are joined by "·"; a denominator of more than one factor is put in
 * parentheses. K = 1 is left out when there are zero factors to carry the numerator. Pure.
 */
import { formatNumber } from '../algebra/expr';
import type { Complex, TransferFunction } from './dynamics';

const SUP: Record<string, string> = { '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻' };

/** A whole number as superscript digits: 12 → "¹²". */
export function superscript(k: number): string {
  return String(k).split('').map((ch) => SUP[ch] ?? ch).join('');
}

/** One factor of a factored polynomial, with how often it occurs. */
export interface Factor {
  /** 's' (a root at zero), 'linear' (s + a), 'quadratic' (s² + b·s + c). */
  kind: 's' | 'linear' | 'quadratic';
  /** linear: the constant a; quadratic: [b, c]. */
  coef: number[];
  power: number;
}

/**
 * The factors of the monic polynomial with these roots (a complex pair listed with both signs of im is
 * taken once, from its im > 0 member). Factors that print the same at `d` digits are merged into one
 * with a power.
 */
export function factorsOf(roots: Complex[], d = 4): Factor[] {
  const out: Factor[] = [];
  const key = (f: Factor) => `${f.kind}:${f.coef.map((c) => formatNumber(c, d)).join(',')}`;
  const seen = new Map<string, Factor>();
  for (const r of roots) {
    if (r.im < 0) continue;
    const f: Factor = r.im > 0 ? { kind: 'quadratic', coef: [-2 * r.re, r.re * r.re + r.im * r.im], power: 1 } : r.re === 0 ? { kind: 's', coef: [], power: 1 } : { kind: 'linear', coef: [-r.re], power: 1 };
    const k = key(f);
    const had = seen.get(k);
    if (had) had.power++;
    else {
      seen.set(k, f);
      out.push(f);
    }
  }
  return out;
}

const signed = (v: number, d: number): string => `${v < 0 ? '-' : '+'} ${formatNumber(Math.abs(v), d)}`;

/** A factor as text: "s", "(s + 0.5)", "(s² + 0.4·s + 4)", with its power as a superscript. */
export function factorText(f: Factor, d = 4): string {
  const base = f.kind === 's' ? 's' : f.kind === 'linear' ? `(s ${signed(f.coef[0], d)})` : `(s² ${f.coef[0] === 0 ? '' : `${signed(f.coef[0], d)}·s `}${signed(f.coef[1], d)})`;
  return f.power > 1 ? `${base}${superscript(f.power)}` : base;
}

/** The factored form: "0.75·(s + 2) / (s·(s + 1)²)"; "0" when the pair has no path. */
export function factoredText(tf: TransferFunction, d = 4): string {
  if (tf.identicallyZero) return '0';
  const num = factorsOf(tf.zeros, d).map((f) => factorText(f, d));
  const den = factorsOf(tf.poles, d).map((f) => factorText(f, d));
  const k = formatNumber(tf.gain, d);
  const top = num.length ? (tf.gain === 1 ? num.join('·') : tf.gain === -1 ? `-${num.join('·')}` : [k, ...num].join('·')) : k;
  if (!den.length) return top;
  const bottom = den.length > 1 ? `(${den.join('·')})` : den[0];
  return `${top} / ${bottom}`;
}

/** A polynomial in s (coefficients in descending powers): "0.7568·s³ + 5.118·s² + 2·s + 1". */
export function polyText(c: number[], d = 4, v = 's'): string {
  const deg = c.length - 1;
  const parts: string[] = [];
  c.forEach((a, k) => {
    if (a === 0) return;
    const pw = deg - k;
    const mag = Math.abs(a);
    const coef = mag === 1 && pw > 0 ? '' : formatNumber(mag, d);
    const sv = pw === 0 ? '' : pw === 1 ? v : `${v}${superscript(pw)}`;
    const term = coef && sv ? `${coef}·${sv}` : coef || sv;
    parts.push(`${parts.length ? (a < 0 ? ' - ' : ' + ') : a < 0 ? '-' : ''}${term}`);
  });
  return parts.join('') || '0';
}

/** The polynomial form: "(n) / (d)", the numerator without parentheses when it is one term. */
export function polynomialText(tf: TransferFunction, d = 4): string {
  if (tf.identicallyZero) return '0';
  const n = polyText(tf.num, d);
  const den = polyText(tf.den, d);
  const oneTerm = (t: string) => !/ [+-] /.test(t);
  const top = oneTerm(n) ? n : `(${n})`;
  if (tf.den.length <= 1) return n;
  return `${top} / ${oneTerm(den) ? den : `(${den})`}`;
}

/**
 * The lines of a transfer function in text output: the factored form first, then the polynomial form
 * only when it reads differently (a first-order lag, for one, reads the same either way).
 */
export function transferLines(tf: TransferFunction, d = 4): { factored: string; polynomial?: string } {
  const factored = factoredText(tf, d);
  if (tf.identicallyZero || tf.order === 0) return { factored };
  const polynomial = polynomialText(tf, d);
  return polynomial === factored ? { factored } : { factored, polynomial };
}

/**
 * The one home of number text in the core: every message, hover, table and export writes numbers through
 * these functions (the charts' in-page script keeps its own copy, as it runs in the browser).
 */

/**
 * `digits` significant digits, plain between 1e-4 and 1e7, otherwise in exponent form without a plus
 * sign or trailing zeros (1.5e-7); without `digits`, JavaScript's shortest round-trip text.
 */
export function formatNumber(v: number, digits?: number): string {
  if (!Number.isFinite(v)) return String(v);
  if (digits === undefined) return String(v);
  if (v === 0) return '0';
  const s = Number(v.toPrecision(digits));
  const a = Math.abs(s);
  if (a >= 1e-4 && a < 1e7) return String(s);
  return s.toExponential().replace(/\.?0+e/, 'e').replace('e+', 'e');
}

/**
 * Four significant digits for sentences (stability reasons, simulation and solver messages): plain
 * between 1e-3 and 1e6, otherwise `toExponential(3)`. `keepZeros` keeps trailing zeros ("1.000", and
 * 0 as "0.000e+0").
 */
export function formatShort(v: number, keepZeros = false): string {
  if (!keepZeros && v === 0) return '0';
  const a = Math.abs(v);
  if (a < 1e-3 || a >= 1e6) return v.toExponential(3);
  return keepZeros ? v.toPrecision(4) : String(Number(v.toPrecision(4)));
}

/** A complex number in the short form: "re" or "re ± |im|i". */
export function formatComplexShort(c: { re: number; im: number }): string {
  return c.im === 0 ? formatShort(c.re) : `${formatShort(c.re)} ${c.im < 0 ? '−' : '+'} ${formatShort(Math.abs(c.im))}i`;
}

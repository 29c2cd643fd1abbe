/**
 * Units: unit text → dimension vector, scale and offset to SI (mathjs parses the text once per
 * distinct unit; everything after that is arithmetic on small vectors). The radian is dimensionless
 * (SI Brochure, 9th ed.), so mathjs's angle dimension is dropped.
 */
import { create, unitDependencies } from 'mathjs';

// Only the unit machinery of mathjs (a bundler keeps just that part: start-up ~0.1 s instead of ~0.4 s).
const math = create({ unitDependencies });
const mathUnit = (v: number, text: string): unknown => (math as unknown as { unit(v: number, t: string): unknown }).unit(v, text);

/** Exponents of kg, m, s, A, K, cd, mol, bit. */
export type Dims = number[];
export const NDIM = 8;
const SI_SYMBOLS = ['kg', 'm', 's', 'A', 'K', 'cd', 'mol', 'bit'];
const MATHJS_TO_OURS = [0, 1, 2, 3, 4, 5, 6, -1, 7]; // mathjs order: MASS LENGTH TIME CURRENT TEMPERATURE LUMINOUS AMOUNT ANGLE BIT

export interface UnitInfo {
  text: string;
  dims: Dims;
  /** value_SI = value*scale + offset */
  scale: number;
  offset: number;
}

export const DIMENSIONLESS: Dims = new Array(NDIM).fill(0);
export const ONE_UNIT: UnitInfo = { text: '1', dims: DIMENSIONLESS, scale: 1, offset: 0 };

const cache = new Map<string, UnitInfo | string>();

/** Parses unit text; returns a UnitInfo or an error message. */
export function parseUnit(text: string): UnitInfo | string {
  const t = text.trim();
  const hit = cache.get(t);
  if (hit !== undefined) return hit;
  let r: UnitInfo | string;
  if (t === '' || t === '1' || t === '-') r = { ...ONE_UNIT, text: t || '1' };
  else if (t === '%') r = { text: '%', dims: DIMENSIONLESS, scale: 0.01, offset: 0 };
  else if (t === 'ppm') r = { text: 'ppm', dims: DIMENSIONLESS, scale: 1e-6, offset: 0 };
  else {
    try {
      // mathjs reads "1/year" but not a leading "/": normalise "1/x" forms it accepts anyway
      const u = mathUnit(1, t) as {
        dimensions: number[];
        units: { unit: { value: number; offset: number }; prefix: { value: number }; power: number }[];
      };
      const dims = new Array(NDIM).fill(0);
      u.dimensions.forEach((p, i) => {
        const k = MATHJS_TO_OURS[i];
        if (k >= 0) dims[k] = p;
      });
      let scale = 1;
      for (const x of u.units) scale *= Math.pow(x.unit.value * x.prefix.value, x.power);
      const only = u.units.length === 1 && u.units[0].power === 1 ? u.units[0] : undefined;
      const offset = only && only.unit.offset ? only.unit.offset * only.unit.value : 0;
      r = { text: t, dims, scale, offset };
    } catch (e) {
      r = e instanceof Error ? e.message.replace(/^Unit "(.*)" not found\.?$/, 'no unit named "$1"') : 'not a unit';
      if (!/[a-zA-Z]/.test(t)) r = 'write a unit such as m, kg/s, L/min or degC';
    }
  }
  cache.set(t, r);
  return r;
}

export function dimsEqual(a: Dims, b: Dims): boolean {
  for (let i = 0; i < NDIM; i++) if (Math.abs(a[i] - b[i]) > 1e-9) return false;
  return true;
}
export const isDimensionless = (a: Dims): boolean => dimsEqual(a, DIMENSIONLESS);
export const dimsMul = (a: Dims, b: Dims): Dims => a.map((x, i) => x + b[i]);
export const dimsDiv = (a: Dims, b: Dims): Dims => a.map((x, i) => x - b[i]);
export const dimsPow = (a: Dims, p: number): Dims => a.map((x) => x * p);

function fmtPow(p: number): string {
  const r = Math.round(p * 1000) / 1000;
  return r === 1 ? '' : `^${r}`;
}

/** SI text of a dimension vector, e.g. "m^3/s"; "1" when dimensionless. */
export function formatDims(d: Dims): string {
  const num: string[] = [];
  const den: string[] = [];
  d.forEach((p, i) => {
    if (Math.abs(p) < 1e-9) return;
    if (p > 0) num.push(SI_SYMBOLS[i] + fmtPow(p));
    else den.push(SI_SYMBOLS[i] + fmtPow(-p));
  });
  if (!num.length && !den.length) return '1 (dimensionless)';
  let s = num.length ? num.join('*') : '1';
  if (den.length === 1) s += '/' + den[0];
  else if (den.length > 1) s += '/(' + den.join('*') + ')';
  return s;
}

/** Unit text to show for a variable: its declared text, or "1". */
export function unitLabel(u: UnitInfo | undefined): string {
  return u && u.text && u.text !== '1' ? u.text : '';
}

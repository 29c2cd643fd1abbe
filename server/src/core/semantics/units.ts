/**
 * Units: unit text → dimension vector, scale and offset to SI (each distinct unit text is read once;
 * everything after that is arithmetic on small vectors). The radian is dimensionless (SI Brochure,
 * 9th ed.), so mathjs's angle dimension is dropped.
 *
 * mathjs is the authority on unit names, prefixes and grammar, but creating it costs ~80 ms of start-up.
 * So unit text is first read here with a copy of mathjs's unit grammar over a table generated from mathjs
 * (unitTable.generated.ts, by scripts/gen-unit-table.mjs); only text this cannot read (typos, odd syntax)
 * goes to mathjs itself, created on first need, which then gives the answer or the error message.
 */
import { create, unitDependencies } from 'mathjs';
import { UNIT_BASE_DIMENSIONS, UNIT_DIMENSIONS, UNIT_PREFIX_SETS, UNIT_TABLE } from './unitTable.generated';

// Only the unit machinery of mathjs (a bundler keeps just that part), created on first need.
let math: { unit(v: number, t: string): unknown } | undefined;
const mathUnit = (v: number, text: string): unknown => {
  math ??= create({ unitDependencies }) as unknown as { unit(v: number, t: string): unknown };
  return math.unit(v, text);
};

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
    // mathjs's unit grammar has no power of a parenthesised group: (m^3/h)^2 is read as (m^6/h^2)
    const u = /\)\s*\^/.test(t) ? distributePowers(t) : t;
    r = scaledUnit(u) ?? parseUnitFast(u) ?? parseUnitMathjs(u);
    if (typeof r === 'object' && u !== t) r = { ...r, text: t };
  }
  cache.set(t, r);
  return r;
}

const POWER = /\(((?:[^()]|\([^()]*\))*)\)\s*\^\s*([+-]?\d+(?:\.\d+)?)/;

/**
 * Unit text with every power of a parenthesised group moved onto the units inside it, innermost first:
 * `m/(m^3/h)^2` → `m/(m^6/h^2)`, `(kg*m/s^2)^0.5` → `(kg^0.5*m^0.5/s^1)`. A group holding a number is left
 * as written (mathjs then words the error).
 */
export function distributePowers(text: string): string {
  let t = text;
  for (let guard = 0; guard < 100; guard++) {
    const m = POWER.exec(t);
    if (!m || /\d/.test(m[1].replace(/\^\s*[+-]?\d+(?:\.\d+)?/g, '').replace(/[\p{L}_][\p{L}\p{N}_]*/gu, ''))) return t;
    const p = Number(m[2]);
    const inner = m[1].replace(/([\p{L}_][\p{L}\p{N}_]*)(?:\s*\^\s*([+-]?\d+(?:\.\d+)?))?/gu, (_, name: string, e?: string) => `${name}^${Number(((e === undefined ? 1 : Number(e)) * p).toPrecision(12))}`);
    t = t.slice(0, m.index) + `(${inner})` + t.slice(m.index + m[0].length);
  }
  return t;
}

/** A number written first in unit text ("1000" of "1000 kg/s"), as mathjs's unit grammar reads one. */
export function leadingNumber(t: string): { value: number; text: string } | undefined {
  const m = /^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)/.exec(t);
  return m ? { value: Number(m[1]), text: m[1] } : undefined;
}

/** Marks the error messages of a scaled unit (P311 rather than P301). */
export const SCALED_UNIT_PROBLEM = 'scale: ';

/**
 * A number inside the bracket scales the unit: `[1000 kg/s]` is a unit of 1000 kg/s, so 2 [1000 kg/s] is
 * 2000 kg/s and a variable declared in it shows its values as multiples of 1000 kg/s. (mathjs's unit
 * grammar reads such a number and then ignores it; it must never be dropped.) undefined when the text has
 * no leading number other than 1 (as in "1/s"); an error message (starting with SCALED_UNIT_PROBLEM) for an
 * offset unit or a scale that is not a positive finite number.
 */
function scaledUnit(t: string): UnitInfo | string | undefined {
  const lead = leadingNumber(t);
  if (!lead || lead.value === 1) return undefined;
  const rest = t.slice(t.indexOf(lead.text) + lead.text.length);
  const base = parseUnit('1' + rest);
  if (typeof base === 'string') return undefined; // not a unit after the number: mathjs words the error for the whole text
  if (base.dims.every((d) => d === 0) && !/[a-zA-Z%]/.test(rest)) return `${SCALED_UNIT_PROBLEM}"${t}" has a number but no unit; write the number outside the bracket`;
  if (base.offset !== 0) return `${SCALED_UNIT_PROBLEM}an offset unit (${rest.trim()}) cannot be scaled; write the number before the bracket, e.g. ${lead.text} [${rest.trim()}]`;
  const scale = lead.value * base.scale;
  if (!(lead.value > 0) || !Number.isFinite(scale) || scale === 0) return `${SCALED_UNIT_PROBLEM}the number in the bracket must be a positive, finite scale (e.g. [1000 kg/s] for units of 1000 kg/s), not ${lead.text}`;
  return { text: t, dims: base.dims, scale, offset: 0 };
}

/** One factor of a unit product: (value·prefix)^power, as mathjs lists them. */
interface UnitFactor {
  value: number;
  prefix: number;
  offset: number;
  power: number;
}

/** UnitInfo from mathjs's dimension vector (its order) and factor list. */
function unitInfo(text: string, mathjsDims: readonly number[], factors: readonly UnitFactor[]): UnitInfo {
  const dims = new Array(NDIM).fill(0);
  mathjsDims.forEach((p, i) => {
    const k = MATHJS_TO_OURS[i];
    if (k >= 0) dims[k] = p;
  });
  let scale = 1;
  for (const x of factors) scale *= Math.pow(x.value * x.prefix, x.power);
  const only = factors.length === 1 && factors[0].power === 1 ? factors[0] : undefined;
  const offset = only && only.offset ? only.offset * only.value : 0;
  return { text, dims, scale, offset };
}

/**
 * Reads trimmed unit text with mathjs itself (created on the first call); an error message when mathjs
 * rejects it. parseUnit uses this for the text parseUnitFast cannot read. Exported for tests.
 */
export function parseUnitMathjs(t: string): UnitInfo | string {
  try {
    const u = mathUnit(1, t) as {
      dimensions: number[];
      units: { unit: { value: number; offset: number }; prefix: { value: number }; power: number }[];
    };
    // unit.value can be a mathjs Fraction (degF...): `*` in unitInfo turns it into a number
    const factors = u.units.map((x) => ({ value: x.unit.value, prefix: x.prefix.value, offset: x.unit.offset, power: x.power }));
    return unitInfo(t, u.dimensions, factors);
  } catch (e) {
    let r = e instanceof Error ? e.message.replace(/^Unit "(.*)" not found\.?$/, 'no unit named "$1"') : 'not a unit';
    if (!/[a-zA-Z]/.test(t)) r = 'write a unit such as m, kg/s, L/min or degC';
    return r;
  }
}

/** True once mathjs has been created (some unit text needed it). For tests and diagnostics. */
export const mathjsCreated = (): boolean => math !== undefined;

// ---- the fast path: mathjs's unit grammar (Unit.parse in mathjs 15) over the generated table ----

interface TableUnit {
  dims: readonly number[];
  value: number;
  offset: number;
  prefixes: ReadonlyMap<string, number>;
}
/** Units by name, and in mathjs's order (the order its prefix split tries them); built on first use. */
let unitsByName: Map<string, TableUnit> | undefined;
let unitsInOrder: [string, TableUnit][] = [];
const MATHJS_DIMENSIONS = ['MASS', 'LENGTH', 'TIME', 'CURRENT', 'TEMPERATURE', 'LUMINOUS_INTENSITY', 'AMOUNT_OF_SUBSTANCE', 'ANGLE', 'BIT'];

function unitTable(): Map<string, TableUnit> {
  if (unitsByName) return unitsByName;
  unitsByName = new Map();
  // a table whose dimension order is not the one MATHJS_TO_OURS maps stays empty: everything goes to mathjs
  if (UNIT_BASE_DIMENSIONS.join() !== MATHJS_DIMENSIONS.join()) return unitsByName;
  const sets = new Map(Object.entries(UNIT_PREFIX_SETS).map(([k, v]) => [k, new Map(Object.entries(v))]));
  for (const [name, set, quantity, value, offset] of UNIT_TABLE) {
    const prefixes = sets.get(set);
    const dims = Object.hasOwn(UNIT_DIMENSIONS, quantity) ? UNIT_DIMENSIONS[quantity] : undefined;
    // an inconsistent table (it is generated, so only by hand-editing) is not used at all
    if (!prefixes || !dims) return (unitsByName = new Map());
    unitsByName.set(name, { dims, value, offset, prefixes });
  }
  unitsInOrder = [...unitsByName];
  return unitsByName;
}

/** mathjs's lookup: the exact name first, else the first unit (in table order) that ends the name and accepts the rest as a prefix. */
function findUnit(name: string): { unit: TableUnit; prefix: number } | undefined {
  const exact = unitTable().get(name);
  if (exact) {
    const prefix = exact.prefixes.get('');
    return prefix === undefined ? undefined : { unit: exact, prefix };
  }
  for (const [unitName, unit] of unitsInOrder) {
    if (name.length > unitName.length && name.endsWith(unitName)) {
      const prefix = unit.prefixes.get(name.slice(0, name.length - unitName.length));
      if (prefix !== undefined) return { unit, prefix };
    }
  }
  return undefined;
}

const isDigit = (c: string): boolean => c >= '0' && c <= '9';
const isAlpha = (c: string): boolean => (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z');

/**
 * Reads trimmed unit text the way `math.unit(1, text)` does, without mathjs: the same grammar (an optional
 * leading number, which mathjs ignores here, then units joined by `*`, `/`, juxtaposition and parentheses,
 * each with an optional `^number`) and the same name lookup. undefined when mathjs would reject the text or
 * the table lacks something, so that mathjs decides (and words the error). Exported for tests.
 */
export function parseUnitFast(text: string): UnitInfo | undefined {
  let index = -1;
  let c = '';
  // c is the character at index ('' past the end); each move assigns c where TypeScript can see it
  const at = (i: number): string => {
    index = i;
    return text.charAt(i);
  };
  const skipWhitespace = (): void => {
    while (c === ' ' || c === '\t') c = at(index + 1);
  };
  // mathjs's parseNumber: [+-] digits [. digits] [e [+-] digits], or .digits; null (position kept) if none
  const parseNumber = (): string | null => {
    let number = '';
    const oldIndex = index;
    if (c === '+') c = at(index + 1);
    else if (c === '-') {
      number += c;
      c = at(index + 1);
    }
    if (!(isDigit(c) || c === '.')) {
      c = at(oldIndex);
      return null;
    }
    if (c === '.') {
      number += c;
      c = at(index + 1);
      if (!isDigit(c)) {
        c = at(oldIndex);
        return null;
      }
    } else {
      while (isDigit(c)) {
        number += c;
        c = at(index + 1);
      }
      if (c === '.') {
        number += c;
        c = at(index + 1);
      }
    }
    while (isDigit(c)) {
      number += c;
      c = at(index + 1);
    }
    if (c === 'E' || c === 'e') {
      let tentative = c;
      const tentativeIndex = index;
      c = at(index + 1);
      if (c === '+' || c === '-') {
        tentative += c;
        c = at(index + 1);
      }
      if (!isDigit(c)) {
        c = at(tentativeIndex); // the e starts a unit name
        return number;
      }
      number += tentative;
      while (isDigit(c)) {
        number += c;
        c = at(index + 1);
      }
    }
    return number;
  };
  const parseCharacter = (ch: string): boolean => {
    if (c !== ch) return false;
    c = at(index + 1);
    return true;
  };

  const dims: number[] = MATHJS_DIMENSIONS.map(() => 0);
  const factors: UnitFactor[] = [];
  let powerMultiplierCurrent = 1;
  let expectingUnit = false;
  c = at(index + 1);
  skipWhitespace();
  if (parseNumber()) {
    // mathjs parses a leading number (e.g. the 1 of "1/s") and then ignores it in math.unit(1, text)
    skipWhitespace();
    if (parseCharacter('*')) {
      powerMultiplierCurrent = 1;
      expectingUnit = true;
    } else if (parseCharacter('/')) {
      powerMultiplierCurrent = -1;
      expectingUnit = true;
    }
  }
  const powerMultiplierStack: number[] = [];
  let powerMultiplierStackProduct = 1;
  for (;;) {
    skipWhitespace();
    while (c === '(') {
      powerMultiplierStack.push(powerMultiplierCurrent);
      powerMultiplierStackProduct *= powerMultiplierCurrent;
      powerMultiplierCurrent = 1;
      c = at(index + 1);
      skipWhitespace();
    }
    if (!c) break;
    let name = '';
    while (isDigit(c) || isAlpha(c)) {
      name += c;
      c = at(index + 1);
    }
    if (!isAlpha(name.charAt(0))) return undefined; // mathjs: Unexpected "..."
    const found = findUnit(name);
    if (!found) return undefined; // mathjs: Unit "..." not found
    let power = powerMultiplierCurrent * powerMultiplierStackProduct;
    skipWhitespace();
    if (parseCharacter('^')) {
      skipWhitespace();
      const p = parseNumber();
      if (p === null) return undefined; // mathjs: "^" must be followed by a number
      power *= Number(p);
    }
    const { unit, prefix } = found;
    factors.push({ value: unit.value, prefix, offset: unit.offset, power });
    for (let i = 0; i < dims.length; i++) dims[i] += (unit.dims[i] || 0) * power;
    skipWhitespace();
    while (c === ')') {
      const popped = powerMultiplierStack.pop();
      if (popped === undefined) return undefined; // mathjs: Unmatched ")"
      powerMultiplierStackProduct /= popped;
      c = at(index + 1);
      skipWhitespace();
    }
    expectingUnit = false;
    if (parseCharacter('*')) {
      powerMultiplierCurrent = 1;
      expectingUnit = true;
    } else if (parseCharacter('/')) {
      powerMultiplierCurrent = -1;
      expectingUnit = true;
    } else powerMultiplierCurrent = 1; // juxtaposition multiplies
  }
  skipWhitespace();
  // mathjs's errors: characters left, a trailing * or /, an unclosed "(", no unit at all
  if (c || expectingUnit || powerMultiplierStack.length !== 0 || factors.length === 0) return undefined;
  return unitInfo(text, dims, factors);
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

/** Unit text to show for a variable: its declared text; unit 1 shows as empty. */
export function unitLabel(u: UnitInfo | undefined): string {
  return unitText(u?.text);
}

/** A unit's text as shown to people: unit 1 (a plain number) and no unit show as empty. */
export function unitText(text: string | undefined): string {
  return text && text !== '1' ? text : '';
}

/** " [unit]" to follow a name or a number; nothing for unit 1 or no unit. */
export function unitSuffix(text: string | undefined): string {
  const t = unitText(text);
  return t ? ` [${t}]` : '';
}

/**
 * The label of the model's time unit. A model without units (or with a bare `time`) has dimensionless
 * time: its rates are per time unit, never per second (docs/language.md, "time").
 */
export const NONDIMENSIONAL_TIME = 'time unit';
export const timeUnitLabel = (text: string): string => text || NONDIMENSIONAL_TIME;

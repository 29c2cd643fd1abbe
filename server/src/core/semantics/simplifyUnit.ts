/**
 * Simplifies unit text built by composing units (a coefficient's unit, a rate of a rate): each unit name
 * is a factor with an exponent, equal names are combined and cancelled, and the result is written back as
 * `numerator/denominator` — `m/(s*(m/s))` → `` (dimensionless), `m/s/s` → `m/s^2`, `kg*m/s/kg` → `m/s`.
 * Different names of one dimension are left alone (`cm/(L/s)` stays: it reads as "per L/s"); the text is
 * rewritten only when that makes it shorter in factors. Text it cannot read is returned unchanged. Pure.
 */

type Factors = Map<string, number>;

interface Parser {
  s: string;
  i: number;
}

const ws = (p: Parser) => {
  while (p.i < p.s.length && p.s[p.i] === ' ') p.i++;
};

function number(p: Parser): number | undefined {
  ws(p);
  if (p.s[p.i] === '(') {
    p.i++;
    const a = number(p);
    ws(p);
    let v = a;
    if (p.s[p.i] === '/') {
      p.i++;
      const b = number(p);
      v = a !== undefined && b !== undefined && b !== 0 ? a / b : undefined;
    }
    ws(p);
    if (p.s[p.i] !== ')') return undefined;
    p.i++;
    return v;
  }
  const m = /^[-+]?(\d+\.?\d*|\.\d+)/.exec(p.s.slice(p.i));
  if (!m) return undefined;
  p.i += m[0].length;
  return Number(m[0]);
}

function add(into: Factors, from: Factors, k: number): void {
  for (const [n, e] of from) into.set(n, (into.get(n) ?? 0) + k * e);
}

/** factor = NAME [^ number] | ( product ) [^ number] | 1 */
function factor(p: Parser, count: { n: number }): Factors | undefined {
  ws(p);
  let f: Factors | undefined;
  if (p.s[p.i] === '(') {
    p.i++;
    f = product(p, count);
    ws(p);
    if (!f || p.s[p.i] !== ')') return undefined;
    p.i++;
  } else {
    const m = /^[A-Za-z_°µΩ][A-Za-z0-9_°µΩ]*/.exec(p.s.slice(p.i));
    if (m) {
      p.i += m[0].length;
      f = new Map([[m[0], 1]]);
      count.n++;
    } else if (p.s[p.i] === '1') {
      p.i++;
      f = new Map();
    } else return undefined;
  }
  ws(p);
  if (p.s[p.i] === '^') {
    p.i++;
    const e = number(p);
    if (e === undefined) return undefined;
    const g: Factors = new Map();
    add(g, f, e);
    f = g;
  }
  return f;
}

/** product = factor ((* | / | space) factor)* */
function product(p: Parser, count: { n: number }): Factors | undefined {
  const out: Factors = new Map();
  const first = factor(p, count);
  if (!first) return undefined;
  add(out, first, 1);
  for (;;) {
    ws(p);
    const c = p.s[p.i];
    if (c === '*' || c === '/') {
      p.i++;
      const f = factor(p, count);
      if (!f) return undefined;
      add(out, f, c === '*' ? 1 : -1);
    } else if (c !== undefined && c !== ')' && /[A-Za-z_(°µΩ]/.test(c)) {
      const f = factor(p, count);
      if (!f) return undefined;
      add(out, f, 1);
    } else return out;
  }
}

const expText = (e: number) => {
  const v = Number(e.toPrecision(12));
  return v === 1 ? '' : `^${v}`;
};

/** The simplified text of a unit (see the file comment); `1` and empty text stay as they are. */
export function simplifyUnitText(text: string): string {
  const t = text.trim();
  if (!t || t === '1') return text;
  const p: Parser = { s: t, i: 0 };
  const count = { n: 0 };
  const f = product(p, count);
  ws(p);
  if (!f || p.i !== t.length) return text;
  const num: string[] = [];
  const den: string[] = [];
  for (const [n, e] of f) {
    if (Math.abs(e) < 1e-12) continue;
    if (e > 0) num.push(`${n}${expText(e)}`);
    else den.push(`${n}${expText(-e)}`);
  }
  if (num.length + den.length >= count.n) return text;
  const top = num.join('*') || (den.length ? '1' : '');
  if (!den.length) return top;
  return `${top}/${den.length > 1 ? `(${den.join('*')})` : den[0]}`;
}

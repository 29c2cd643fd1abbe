/**
 * One-dimensional lookup tables: piecewise linear, or monotone piecewise cubic Hermite.
 *
 * Monotone cubic: F. N. Fritsch & R. E. Carlson, "Monotone piecewise cubic interpolation", SIAM J. Numer.
 * Anal. 17(2), 1980 — a cubic Hermite interpolant whose node slopes are chosen so that it is monotone on
 * every interval where the data are. The node slopes are the weighted harmonic mean of the neighbouring
 * secants (F. N. Fritsch & J. Butland, "A method for constructing local monotone piecewise cubic
 * interpolants", SIAM J. Sci. Stat. Comput. 5(2), 1984), zero where the secants change sign, and the
 * shape-preserving three-point formula at the two ends — the same choices as SciPy's
 * `PchipInterpolator`, so the two agree to rounding.
 *
 * Outside the breakpoints a table holds its end value (slope zero); whether that is acceptable is the
 * caller's decision (a warning names the table and the value).
 */

export type InterpolationKind = 'linear' | 'monotone';

export interface Table1D {
  kind: InterpolationKind;
  x: Float64Array;
  y: Float64Array;
  /** Node slopes (monotone cubic only). */
  d?: Float64Array;
}

/** Why a table cannot be built, or undefined when it can. */
export function tableProblem(x: ArrayLike<number>, y: ArrayLike<number>): string | undefined {
  if (x.length !== y.length) return `the table has ${x.length} breakpoints but ${y.length} values`;
  if (x.length < 2) return 'a table needs at least two rows';
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) return `row ${i + 1} holds a value that is not a finite number`;
    if (i > 0 && !(x[i] > x[i - 1])) return `the breakpoints must increase strictly (row ${i + 1}: ${x[i]} after ${x[i - 1]})`;
  }
  return undefined;
}

const sign = (v: number): number => (v > 0 ? 1 : v < 0 ? -1 : 0);

function edgeSlope(h0: number, h1: number, m0: number, m1: number): number {
  const d = ((2 * h0 + h1) * m0 - h0 * m1) / (h0 + h1);
  if (sign(d) !== sign(m0)) return 0;
  if (sign(m0) !== sign(m1) && Math.abs(d) > Math.abs(3 * m0)) return 3 * m0;
  return d;
}

function monotoneSlopes(x: Float64Array, y: Float64Array): Float64Array {
  const n = x.length;
  const d = new Float64Array(n);
  const h = new Float64Array(n - 1);
  const m = new Float64Array(n - 1);
  for (let k = 0; k < n - 1; k++) {
    h[k] = x[k + 1] - x[k];
    m[k] = (y[k + 1] - y[k]) / h[k];
  }
  if (n === 2) {
    d[0] = d[1] = m[0];
    return d;
  }
  for (let k = 1; k < n - 1; k++) {
    if (sign(m[k - 1]) * sign(m[k]) <= 0) {
      d[k] = 0;
      continue;
    }
    const w1 = 2 * h[k] + h[k - 1];
    const w2 = h[k] + 2 * h[k - 1];
    d[k] = (w1 + w2) / (w1 / m[k - 1] + w2 / m[k]);
  }
  d[0] = edgeSlope(h[0], h[1], m[0], m[1]);
  d[n - 1] = edgeSlope(h[n - 2], h[n - 3], m[n - 2], m[n - 3]);
  return d;
}

/** Builds a table; throws RangeError with {@link tableProblem}'s sentence when the data are not usable. */
export function makeTable(x: ArrayLike<number>, y: ArrayLike<number>, kind: InterpolationKind): Table1D {
  const problem = tableProblem(x, y);
  if (problem) throw new RangeError(problem);
  const xs = Float64Array.from(x);
  const ys = Float64Array.from(y);
  return { kind, x: xs, y: ys, d: kind === 'monotone' ? monotoneSlopes(xs, ys) : undefined };
}

/** Index k of the interval [x_k, x_{k+1}] holding q (q inside the range), by bisection. */
function interval(x: Float64Array, q: number): number {
  let lo = 0, hi = x.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (x[mid] <= q) lo = mid;
    else hi = mid;
  }
  return lo;
}

/** Whether q lies outside the breakpoints. */
export function outsideTable(t: Table1D, q: number): boolean {
  return q < t.x[0] || q > t.x[t.x.length - 1];
}

/** The table's value at q (end values held outside). */
export function tableValue(t: Table1D, q: number): number {
  const n = t.x.length;
  if (!(q > t.x[0])) return q === t.x[0] || q < t.x[0] ? t.y[0] : NaN;
  if (q >= t.x[n - 1]) return t.y[n - 1];
  const k = interval(t.x, q);
  const h = t.x[k + 1] - t.x[k];
  const s = (q - t.x[k]) / h;
  if (t.kind === 'linear') return t.y[k] + s * (t.y[k + 1] - t.y[k]);
  const d = t.d!;
  const s2 = s * s, s3 = s2 * s;
  return (2 * s3 - 3 * s2 + 1) * t.y[k] + (s3 - 2 * s2 + s) * h * d[k] + (-2 * s3 + 3 * s2) * t.y[k + 1] + (s3 - s2) * h * d[k + 1];
}

/** Slope on the interval [x_k, x_{k+1}] at q. */
function slopeOn(t: Table1D, k: number, q: number): number {
  const h = t.x[k + 1] - t.x[k];
  if (t.kind === 'linear') return (t.y[k + 1] - t.y[k]) / h;
  const d = t.d!;
  const s = (q - t.x[k]) / h;
  const s2 = s * s;
  return ((6 * s2 - 6 * s) * t.y[k]) / h + (3 * s2 - 4 * s + 1) * d[k] + ((-6 * s2 + 6 * s) * t.y[k + 1]) / h + (3 * s2 - 2 * s) * d[k + 1];
}

/**
 * The one-sided slopes at q: equal away from breakpoints; at an interior breakpoint of a linear table
 * they are the two neighbouring secants; outside the range (and on the far side of an end) zero.
 */
export function tableSlopes(t: Table1D, q: number): { left: number; right: number } {
  const n = t.x.length;
  if (q < t.x[0] || q > t.x[n - 1]) return { left: 0, right: 0 };
  if (q === t.x[0]) return { left: 0, right: slopeOn(t, 0, q) };
  if (q === t.x[n - 1]) return { left: slopeOn(t, n - 2, q), right: 0 };
  const k = interval(t.x, q);
  if (q === t.x[k]) return { left: slopeOn(t, k - 1, q), right: slopeOn(t, k, q) };
  const v = slopeOn(t, k, q);
  return { left: v, right: v };
}

/** The slope the linear model uses: the mean of the one-sided slopes (the slope itself where they agree). */
export function tableSlope(t: Table1D, q: number): number {
  const { left, right } = tableSlopes(t, q);
  return left === right ? left : (left + right) / 2;
}

/**
 * The k-th derivative of the table at q as the model's expressions use it: k = 0 the value, k = 1 the slope
 * the linear model uses ({@link tableSlope}), k = 2 and 3 the second and third derivative on the interval that
 * holds q (the one to the right at a breakpoint); 0 outside the range and beyond the interpolant's degree.
 */
export function tableDerivative(t: Table1D, q: number, k: number): number {
  if (k === 0) return tableValue(t, q);
  if (k === 1) return tableSlope(t, q);
  const n = t.x.length;
  if (t.kind === 'linear' || k > 3 || !(q >= t.x[0] && q <= t.x[n - 1])) return q === q ? 0 : NaN;
  const j = q >= t.x[n - 1] ? n - 2 : interval(t.x, q);
  const h = t.x[j + 1] - t.x[j];
  const d = t.d!;
  const dy = (t.y[j] - t.y[j + 1]) / h;
  if (k === 3) return (12 * dy + 6 * d[j] + 6 * d[j + 1]) / (h * h);
  const s = (q - t.x[j]) / h;
  return ((12 * s - 6) * dy + (6 * s - 4) * d[j] + (6 * s - 2) * d[j + 1]) / h;
}

/**
 * Reads a table from CSV text: two numeric columns (breakpoint, value); a first line that is not numeric
 * is a header; blank lines and lines starting with `#` are skipped. Returns the columns, or the line
 * number and sentence of the first problem.
 */
export function parseTableCsv(text: string): { x: number[]; y: number[] } | { line: number; problem: string } {
  const x: number[] = [];
  const y: number[] = [];
  const lines = text.split(/\r\n|\r|\n/);
  let sawData = false;
  for (let i = 0; i < lines.length; i++) {
    const raw = lines[i].trim();
    if (!raw || raw.startsWith('#')) continue;
    const cells = raw.split(/[,;\t]/).map((c) => c.trim());
    const nums = cells.map((c) => (c === '' ? NaN : Number(c)));
    if (nums.length < 2 || nums.slice(0, 2).some((v) => Number.isNaN(v))) {
      if (!sawData && x.length === 0 && i === lines.findIndex((l) => l.trim() && !l.trim().startsWith('#'))) continue; // header
      return { line: i + 1, problem: `expected two numbers (breakpoint, value), found "${raw.length > 40 ? raw.slice(0, 40) + '…' : raw}"` };
    }
    sawData = true;
    x.push(nums[0]);
    y.push(nums[1]);
  }
  return { x, y };
}

/**
 * The search for the validity limit of one input in one direction (report.ts): the largest step whose
 * nonlinear response stays within the tolerance of the linear one, bracketed to a ratio of 1.04.
 *
 * Two searches over the same trial (a nonlinear simulation at one step size, at a loose or the careful
 * integration tolerance):
 *  - `carefulLimit`: doubling or halving from the first step, then geometric bisection, every trial at the
 *    careful tolerance (about eleven simulations per direction);
 *  - `fastLimit`: the same bracketing done with loose trials guided by the way the error grows with the
 *    step (a power law fitted in log–log, safeguarded regula falsi), then careful trials only next to the
 *    predicted limit until two careful trials, one valid and one not, lie within the ratio (two to four
 *    careful simulations per direction). The limit is read from the careful trials only, so it is the
 *    careful search's answer within the search's own ratio whenever the error grows with the step.
 * Pure; no model knowledge.
 */

export interface Trial {
  /** Magnitude of the step (> 0). */
  mag: number;
  error: number | null;
  status: 'ok' | 'domain' | 'failed';
  message?: string;
  /** Simulated at the careful tolerance. */
  careful: boolean;
}

export interface LimitSearch {
  /** One simulation at magnitude `mag` (positive), loose or careful; memoised by the caller. */
  trial(mag: number, careful: boolean): Trial;
  tolerance: number;
  /** First step tried. */
  start: number;
  /** Largest step tried. */
  cap: number;
  /** True when the caller's budget ran out (stop searching). */
  stopped(): boolean;
}

/** Bracket ratio the searches stop at. */
export const SEARCH_RATIO = 1.04;

export interface LimitFound {
  /** Largest magnitude found valid (0 when none). */
  lo: number;
  /** Smallest magnitude found invalid above it (Infinity when none). */
  hi: number;
}

/** The loose phase stops once it brackets the limit this closely (loose errors are off by up to a tenth; the careful phase takes over). */
const LOOSE_RATIO = 3;
const validTrial = (x: Trial, tol: number): boolean => x.status === 'ok' && x.error !== null && x.error <= tol;

/** Doubling or halving, then bisection; every trial careful (the search before the fast one). */
export function carefulLimit(s: LimitSearch): LimitFound {
  const ok = (x: Trial) => validTrial(x, s.tolerance);
  let lo = 0;
  let hi = Infinity;
  let m = s.start;
  const first = s.trial(m, true);
  // a smaller step shows how the difference falls off towards the point
  s.trial(m / 2, true);
  if (ok(first)) {
    lo = m;
    while (m < s.cap) {
      m = Math.min(s.cap, 2 * m);
      if (ok(s.trial(m, true))) lo = m;
      else {
        hi = m;
        break;
      }
    }
  } else {
    hi = m;
    for (let k = 0; k < 16; k++) {
      m /= 2;
      if (ok(s.trial(m, true))) {
        lo = m;
        break;
      }
      hi = m;
    }
  }
  if (lo > 0 && hi < Infinity) {
    for (let k = 0; k < 12 && hi / lo > SEARCH_RATIO && !s.stopped(); k++) {
      const mid = Math.sqrt(lo * hi);
      if (ok(s.trial(mid, true))) lo = mid;
      else hi = mid;
    }
  }
  return { lo, hi };
}

/** Exponent of the power law through two trials (err ∝ mag^q), or undefined when they do not fix one. */
function slope(a: Trial, b: Trial): number | undefined {
  if (a.error === null || b.error === null || !(a.error > 0) || !(b.error > 0) || a.status !== 'ok' || b.status !== 'ok') return undefined;
  const r = Math.log(b.mag / a.mag);
  if (Math.abs(r) < 0.01) return undefined;
  const q = Math.log(b.error / a.error) / r;
  return Number.isFinite(q) && q > 0.2 && q < 8 ? q : undefined;
}

/** Magnitude where the power law through trial x with exponent q reaches the tolerance. */
function predictFrom(x: Trial, q: number, tol: number): number | undefined {
  if (x.status !== 'ok' || x.error === null || !(x.error > 0)) return undefined;
  const p = x.mag * Math.pow(tol / x.error, 1 / q);
  return Number.isFinite(p) && p > 0 ? p : undefined;
}

/**
 * The prediction of the limit from a set of trials: the power law through the largest valid and the
 * smallest invalid trial when both have errors, else through the two trials nearest the tolerance, else
 * from the nearest one with the exponent `q0`.
 */
function predict(trials: Trial[], tol: number, q0: number): { at?: number; q: number } {
  const withErr = trials.filter((x) => x.status === 'ok' && x.error !== null && x.error > 0).sort((x, y) => x.mag - y.mag);
  if (!withErr.length) return { q: q0 };
  const below = withErr.filter((x) => x.error! <= tol);
  const above = withErr.filter((x) => x.error! > tol);
  const a = below.length ? below[below.length - 1] : undefined;
  const b = above.length ? above[0] : undefined;
  let pair: [Trial, Trial] | undefined;
  if (a && b) pair = [a, b];
  else if (withErr.length >= 2) {
    const near = withErr.slice().sort((x, y) => Math.abs(Math.log(x.error! / tol)) - Math.abs(Math.log(y.error! / tol)));
    pair = [near[0], near[1]];
  }
  const q = (pair && slope(pair[0], pair[1])) ?? q0;
  const nearest = withErr.slice().sort((x, y) => Math.abs(Math.log(x.error! / tol)) - Math.abs(Math.log(y.error! / tol)))[0];
  return { at: predictFrom(nearest, q, tol), q };
}

/** Half the bracket ratio, geometrically: a pair of trials at p/H and p·H are SEARCH_RATIO apart (a hair less). */
const HALF = Math.sqrt(SEARCH_RATIO) * (1 - 1e-4);

/**
 * Loose trials find the neighbourhood of the limit, careful trials next to the prediction close it.
 * Returns the limit as read from the careful trials alone.
 */
export function fastLimit(s: LimitSearch): LimitFound {
  const tol = s.tolerance;
  const floor = s.start / 65536; // the careful search halves at most 16 times
  const ok = (x: Trial) => validTrial(x, tol);
  const loose: Trial[] = [];
  const careful: Trial[] = [];
  const run = (mag: number, isCareful: boolean): Trial => {
    const x = s.trial(mag, isCareful);
    (x.careful ? careful : loose).push(x);
    return x;
  };
  const clamp = (x: number) => Math.min(s.cap, Math.max(floor, x));

  // loose phase: bracket the limit to a ratio of LOOSE_RATIO
  let a = 0;
  let b = Infinity;
  const take = (x: Trial) => {
    if (ok(x)) a = Math.max(a, x.mag);
    else b = Math.min(b, x.mag);
  };
  take(run(s.start, false));
  run(s.start / 2, false); // for the chart, and the first slope
  let q = 1;
  for (let k = 0; k < 10 && !s.stopped(); k++) {
    if (a >= b) b = Infinity; // not monotonic here: keep looking above
    if (a > 0 && b < Infinity && b / a <= LOOSE_RATIO) break;
    if (a >= s.cap || (b <= floor && a === 0)) break;
    const pr = predict(loose, tol, q);
    q = pr.q;
    let next: number;
    if (a > 0 && b < Infinity) {
      const r = Math.pow(b / a, 0.15);
      next = pr.at !== undefined ? Math.min(b / r, Math.max(a * r, pr.at)) : Math.sqrt(a * b);
    } else if (a > 0) {
      next = pr.at !== undefined ? Math.min(8 * a, Math.max(1.25 * a, pr.at * 1.2)) : 2 * a;
    } else {
      next = pr.at !== undefined ? Math.max(b / 8, Math.min(b / 1.25, pr.at / 1.2)) : b / 2;
    }
    next = clamp(next);
    if (loose.some((x) => x.mag === next)) break;
    take(run(next, false));
  }

  // careful phase: trials beside the prediction until a valid and an invalid one are within the ratio
  let guess: number;
  {
    const pr = predict(loose, tol, q);
    q = pr.q;
    if (a > 0 && b < Infinity) guess = pr.at !== undefined ? Math.min(b, Math.max(a, pr.at)) : Math.sqrt(a * b);
    else if (a > 0) guess = s.cap;
    else guess = floor;
  }
  let lo = 0;
  let hi = Infinity;
  const takeCareful = (x: Trial) => {
    if (ok(x)) lo = Math.max(lo, x.mag);
    else hi = Math.min(hi, x.mag);
    if (hi <= lo) hi = Infinity; // not monotonic: the careful search would have gone on above
  };
  let both = 0;
  for (let k = 0; k < 16 && !s.stopped(); k++) {
    if (lo > 0 && hi < Infinity && hi / lo <= SEARCH_RATIO) break;
    if (lo >= s.cap || (hi <= floor && lo === 0)) break;
    let p = guess;
    if (careful.length) {
      const pr = predict(careful, tol, q);
      if (pr.at !== undefined) p = pr.at;
    }
    let next: number;
    if (lo === 0 && hi === Infinity) next = p >= s.cap ? s.cap : p <= floor ? floor : p / HALF;
    else if (hi === Infinity) next = p / HALF > lo * SEARCH_RATIO ? p / HALF : lo * HALF * HALF;
    else if (lo === 0) next = p * HALF < hi / SEARCH_RATIO ? p * HALF : hi / (HALF * HALF);
    else {
      both++;
      const r = hi / lo;
      if (both > 2 || r <= SEARCH_RATIO * SEARCH_RATIO) next = Math.sqrt(lo * hi);
      else next = Math.min(hi / HALF / HALF, Math.max(lo * HALF * HALF, p < Math.sqrt(lo * hi) ? p / HALF : p * HALF));
    }
    next = clamp(next);
    if (careful.some((x) => x.mag === next)) next = lo > 0 && hi < Infinity ? Math.sqrt(lo * hi) : next;
    if (careful.some((x) => x.mag === next)) break;
    takeCareful(run(next, true));
  }
  return { lo, hi };
}

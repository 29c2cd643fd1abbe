/**
 * Array helpers that never spread an array into a call. `Math.max(...xs)` and `out.push(...xs)` pass every
 * element as an argument and throw a RangeError once an array is long (around 10^5 elements: a model with
 * many states, a sweep with many steps); these loop instead. test/robust.test.ts keeps server/src free
 * of spreads into calls.
 */

/** The largest of `xs` and `start`, like Math.max (NaN if any is NaN; `start` -Infinity by default). */
export function maxOf(xs: ArrayLike<number>, start = -Infinity): number {
  let m = start;
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i];
    if (x !== x) return NaN;
    if (x > m) m = x;
  }
  return m;
}

/** The smallest of `xs` and `start`, like Math.min (NaN if any is NaN; `start` Infinity by default). */
export function minOf(xs: ArrayLike<number>, start = Infinity): number {
  let m = start;
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i];
    if (x !== x) return NaN;
    if (x < m) m = x;
  }
  return m;
}

/** Appends every item of `items` to `out` (in place) and returns `out`. */
export function pushAll<T>(out: T[], items: Iterable<T>): T[] {
  for (const x of items) out.push(x);
  return out;
}

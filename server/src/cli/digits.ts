/**
 * Validation of `--digits`: significant digits of a number, a whole number from 1 to 17 (17 significant
 * digits always give back the same double). Checked before any output, so a bad value prints nothing
 * but the usage error (exit 2).
 */
export const MAX_DIGITS = 17;

/** The digits asked for, or the message of the usage error; `fallback` when the option is not given. */
export function parseDigits(text: string | undefined, fallback: number): number | { error: string } {
  if (text === undefined) return fallback;
  const t = text.trim();
  const v = /^[0-9]+$/.test(t) ? Number(t) : NaN;
  if (!Number.isInteger(v) || v < 1 || v > MAX_DIGITS) {
    return { error: `--digits takes a whole number of significant digits from 1 to ${MAX_DIGITS}, not "${text}"` };
  }
  return v;
}

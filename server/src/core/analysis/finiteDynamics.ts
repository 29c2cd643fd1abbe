/**
 * The last guard against non-finite numbers: a linear model whose entries are all within range (see
 * solve/scaling.ts) can still overflow in products of many of them (the coefficients of a characteristic
 * polynomial grow like the product of the eigenvalues). Every number of the dynamics that a report prints
 * (eigenvalues, modes, gains, transfer functions) must be finite (or a deliberate null); otherwise the
 * report is refused with P513 on the point, never printed with Infinity or NaN in it.
 */
import { diag, type Diagnostic } from '../diagnostics';
import type { Span } from '../text';
import type { Dynamics } from './dynamics';

const bad = (v: number | null | undefined): boolean => typeof v === 'number' && !Number.isFinite(v);

/** What in `dyn` is not finite (the first few), as words for a message; empty when everything is. */
export function nonFiniteDynamics(dyn: Dynamics): string[] {
  const out: string[] = [];
  if (dyn.eigenvalues.some((e) => bad(e.re) || bad(e.im))) out.push('an eigenvalue');
  if (dyn.modes.some((m) => [m.re, m.im, m.timeConstant, m.naturalFrequency, m.dampingRatio, m.dampedFrequency, m.period].some(bad) || m.participation.some((p) => bad(p.factor)))) out.push('a mode');
  if (dyn.dcGain && dyn.dcGain.gain.some((r) => r.some(bad))) out.push('a steady-state gain');
  for (const tf of dyn.transfer) {
    if ([...tf.num, ...tf.den, tf.gain, tf.dcGain].some(bad) || [...tf.poles, ...tf.zeros].some((z) => bad(z.re) || bad(z.im))) {
      out.push(`the transfer function ${tf.input} → ${tf.output}`);
      break;
    }
  }
  return out;
}

/** P513 on the point when the dynamics of its linear model hold a number that is not finite. */
export function dynamicsProblem(dyn: Dynamics, point: string, span: Span): Diagnostic | undefined {
  const what = nonFiniteDynamics(dyn);
  return what.length ? diag('P513', span, { point, what: what.join(', ') }) : undefined;
}

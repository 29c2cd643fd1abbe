/**
 * The hand-off lines of the point hover: how far the model at the point can be reduced (Hankel singular
 * values and the order that keeps the balanced-truncation bound within 10⁻³·σ₁) and the commands that make
 * the smaller and the sampled model. Pure; only for models small enough to answer within a hover.
 */
import { linearSystem } from '../analysis/dynamics';
import { reducedModel } from '../analysis/handoff/reduced';
import type { LinearModel } from '../solve/linearizer';
import { formatNumber } from '../numbers';

/** Largest model the hover reduces (two Schur forms and an SVD of this order). */
export const HANDOFF_HOVER_MAX_STATES = 80;

/** Tolerance of the suggested order, relative to σ₁ (the default of `poise reduce`). */
const TOLERANCE = 1e-3;

/** Markdown lines (empty when the model is too large, has no states, or the truncation fails). */
export function handoffHoverLines(lin: LinearModel, fastestTimeConstant: number | undefined, digits: number): string[] {
  if (lin.n === 0 || lin.n > HANDOFF_HOVER_MAX_STATES) return [];
  const out: string[] = [];
  let red;
  try {
    red = reducedModel(linearSystem(lin), { tolerance: TOLERANCE });
  } catch {
    red = undefined;
  }
  if (red && red.hankel.length) {
    const shown = red.hankel.slice(0, 5).map((v) => formatNumber(v, digits)).join(', ');
    const order = red.suggested + red.unstable;
    out.push(
      `Smaller model: Hankel singular values ${shown}${red.hankel.length > 5 ? ', …' : ''}; ${order < red.fullOrder ? `**${order} of ${red.fullOrder}** states keep` : 'every state is needed to keep'} the error within 10⁻³·σ₁${red.unstable ? ` (${red.unstable} unstable or marginal kept exactly)` : ''} — \`poise reduce\`.`,
    );
  }
  out.push(`Sampled model: \`poise sample --every T\` (zero-order hold, first-order hold or Tustin)${fastestTimeConstant !== undefined ? `; the fastest time constant is ${formatNumber(fastestTimeConstant, digits)} ${lin.timeUnit}` : ''}.`);
  return out;
}

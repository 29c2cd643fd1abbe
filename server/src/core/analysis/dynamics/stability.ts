/** The stability verdict of the modes, and the horizon of the step responses that follows from them. */
import { timeUnitLabel } from '../../semantics/units';
import type { Complex, Horizon, LinearSystem, Mode, StabilityVerdict } from './types';
import { RANK_TOL } from './types';
import { complexRank } from './pbh';
import { formatComplexShort, formatShort } from '../../numbers';

export function verdict(sys: LinearSystem, modes: Mode[], rho: number, tol: number, raw: Complex[]): StabilityVerdict {
  const n = sys.n;
  let maxRe = -Infinity;
  for (const md of modes) maxRe = Math.max(maxRe, md.re);
  if (n === 0) return { verdict: 'stable', spectralRadius: 0, tolerance: 0, maxRealPart: 0, reason: 'The model has no states: it responds instantly (static).' };
  const t = sys.timeUnit;
  const unstable = modes.filter((m) => m.stability === 'unstable');
  if (unstable.length) {
    const u = unstable[0];
    return {
      verdict: 'unstable', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
      reason: `${unstable.length === 1 ? 'Mode' : `${unstable.length} modes grow; the fastest, mode`} ${u.number} grows with e-folding time ${formatShort(u.timeConstant!)} ${t}${u.kind === 'oscillatory' ? ' while oscillating' : ''} (largest real part ${formatShort(maxRe)} 1/${t}).`,
    };
  }
  const marginal = modes.filter((m) => m.stability === 'marginal');
  if (marginal.length) {
    // repeated eigenvalues on the axis grow like t^k unless A is diagonalisable there
    for (const md of marginal) {
      // the mode stands for its repeated copies (algebraic multiplicity); raw eigenvalues as a fallback
      const near = raw.filter((e) => Math.hypot(e.re - md.re, e.im - md.im) <= Math.max(tol, 1e-9 * rho)).length;
      const same = { length: Math.max(md.algebraicMultiplicity ?? 1, near) };
      if (same.length > 1) {
        const geo = n - complexRank(sys.A, n, { re: md.re, im: md.im }, RANK_TOL * Math.max(rho, 1e-300) * 10);
        if (geo < same.length) {
          return {
            verdict: 'unstable', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
            reason: `λ = ${formatComplexShort(md)} is repeated ${same.length} times on the imaginary axis without enough eigenvectors, so deviations grow like a power of time (e.g. a double integrator).`,
          };
        }
      }
    }
    const names = marginal.map((m) => `${m.number} (${m.kind === 'integrator' ? 'integrator' : 'undamped oscillation'})`).join(', ');
    return {
      verdict: 'marginal', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
      reason: `Mode${marginal.length > 1 ? 's' : ''} ${names} ${marginal.length > 1 ? 'lie' : 'lies'} on the imaginary axis; deviations neither die out nor grow there, the other modes decay.`,
    };
  }
  const slow = modes.reduce((a, b) => (b.re > a.re ? b : a));
  return {
    verdict: 'stable', spectralRadius: rho, tolerance: tol, maxRealPart: maxRe,
    reason: `Every eigenvalue has a negative real part; the slowest mode (${slow.number}) decays with time constant ${formatShort(slow.timeConstant!)} ${t}.`,
  };
}

/** Length of the step responses: a few slowest time constants, bounded for unstable and oscillating models. */
export function stepHorizon(modes: Mode[], rho: number, timeUnit = 's'): Horizon {
  const t = timeUnitLabel(timeUnit);
  const h = (value: number, reason: string): Horizon => ({ value, unit: t, reason });
  if (!modes.length) return h(1, `static model: a fixed horizon of 1 ${t}`);
  const stable = modes.filter((m) => m.stability === 'stable');
  const unstable = modes.filter((m) => m.stability === 'unstable');
  const undamped = modes.filter((m) => m.kind === 'undamped');
  let tauMax = 0;
  let slowest: Mode | undefined;
  for (const m of stable) if (m.timeConstant! > tauMax) {
    tauMax = m.timeConstant!;
    slowest = m;
  }
  if (unstable.length) {
    let growth = Infinity;
    let fastest: Mode | undefined;
    for (const m of unstable) if (m.timeConstant! < growth) {
      growth = m.timeConstant!;
      fastest = m;
    }
    let T = 3 * growth;
    if (fastest && fastest.period && T > 20 * fastest.period) T = 20 * fastest.period;
    return h(T, `unstable: 3 e-folding times of the fastest-growing mode (${formatShort(growth)} ${t} each)${T < 3 * growth ? ' (limited to 20 of its periods)' : ''}`);
  }
  if (slowest) {
    let T = 5 * tauMax;
    let reason = `5 × the slowest time constant of ${formatShort(tauMax)} ${t}`;
    if (slowest.period && T > 20 * slowest.period) {
      let tauReal = 0;
      for (const m of stable) if (m.kind === 'real') tauReal = Math.max(tauReal, m.timeConstant!);
      T = Math.max(20 * slowest.period, 5 * tauReal);
      reason = `lightly damped oscillation (ζ = ${slowest.dampingRatio!.toPrecision(2)}): 20 of its periods of ${formatShort(slowest.period)} ${t}${tauReal ? ' or 5 × the slowest real time constant' : ''}`;
    }
    if (undamped.length || modes.some((m) => m.kind === 'integrator')) reason += '; modes on the imaginary axis never settle';
    return h(T, reason);
  }
  if (undamped.length) {
    let per = 0;
    for (const m of undamped) per = Math.max(per, m.period!);
    return h(3 * per, `undamped oscillation: 3 periods of the slowest one (${formatShort(per)} ${t} each)`);
  }
  return h(rho > 0 ? 10 / rho : 10, 'integrators only: a fixed horizon');
}

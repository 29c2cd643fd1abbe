/**
 * Eigenvalues and modes: one mode per real eigenvalue or complex pair, dominant first, with time constant,
 * natural frequency, damping ratio, participation factors (left and right eigenvectors) and a description.
 */
import { eigenvalues, eigenvectors } from '../../numeric/eigen';
import { AXIS_TOL, REPEAT_TOL, type Complex, type LinearSystem, type Mode, type ModeKind, type StabilityClass } from './types';
import { complexRank } from './pbh';
import { frob } from './system';

/** The spectrum of A: every eigenvalue, one per mode, the spectral radius and the axis tolerance. */
export interface Spectrum {
  /** Every eigenvalue, dominant first (largest real part first; a complex pair +i then −i). */
  eigenvalues: Complex[];
  /** One eigenvalue per mode (a complex pair by its +i member), dominant first; a repeated eigenvalue once. */
  modal: Complex[];
  /** Algebraic multiplicity of each modal eigenvalue (for a pair: of its +i member). */
  modalCount: number[];
  /** Largest |λ|. */
  rho: number;
  /** |Re λ| at or below this counts as on the imaginary axis (AXIS_TOL·ρ). */
  axisTol: number;
}

export function spectrum(sys: LinearSystem): Spectrum {
  const { n } = sys;
  // eigenvalues (accurate: block triangularisation first)
  const ev = eigenvalues({ rows: n, cols: n, data: sys.A });
  const eig: Complex[] = [];
  for (let i = 0; i < n; i++) eig.push({ re: ev.re[i], im: ev.im[i] });
  let rho = 0;
  for (const e of eig) rho = Math.max(rho, Math.hypot(e.re, e.im));
  const axisTol = AXIS_TOL * rho;

  // modes: one per real eigenvalue, one per complex pair; dominant (largest real part) first
  const raw: Complex[] = [];
  for (let i = 0; i < n; i++) {
    if (eig[i].im > 0 || (eig[i].im === 0)) raw.push(eig[i]);
  }
  raw.sort((a, b) => b.re - a.re || b.im - a.im);
  const eigSorted: Complex[] = [];
  for (const e of raw) {
    eigSorted.push(e);
    if (e.im > 0) eigSorted.push({ re: e.re, im: -e.im });
  }
  // a repeated eigenvalue once, with its algebraic multiplicity (the mean of the copies: a defective
  // eigenvalue of multiplicity k comes out of QR spread by about ε^(1/k)·‖A‖ around it)
  const modal: Complex[] = [];
  const modalCount: number[] = [];
  const sums: Complex[] = [];
  const rtol = REPEAT_TOL * rho;
  for (const e of raw) {
    const k = modal.findIndex((x) => Math.hypot(x.re - e.re, x.im - e.im) <= rtol && (x.im > 0) === (e.im > 0));
    if (k < 0) {
      modal.push({ ...e });
      modalCount.push(1);
      sums.push({ ...e });
    } else {
      modalCount[k]++;
      sums[k].re += e.re;
      sums[k].im += e.im;
      modal[k] = { re: sums[k].re / modalCount[k], im: sums[k].im / modalCount[k] };
    }
  }
  return { eigenvalues: eigSorted, modal, modalCount, rho, axisTol };
}

/** Stable, marginal (|Re λ| ≤ tol) or unstable; a real part that is not a number counts as unstable (nothing is known). */
export function stabilityOf(re: number, tol: number): StabilityClass {
  return !(re <= tol) ? 'unstable' : re >= -tol ? 'marginal' : 'stable';
}

/** The figures of one eigenvalue λ: time constant 1/|Re λ| (null on the axis), and for a complex pair |λ| and ζ = −Re λ/|λ|. */
export function eigenFigures(e: Complex, onAxis: boolean): { timeConstant: number | null; naturalFrequency: number | null; dampingRatio: number | null } {
  const pair = e.im > 0;
  const mag = Math.hypot(e.re, e.im);
  return {
    timeConstant: onAxis ? null : 1 / Math.abs(e.re),
    naturalFrequency: pair ? mag : null,
    dampingRatio: pair && mag > 0 ? -e.re / mag : null,
  };
}

/** The modes of the spectrum; `ctrlDef`/`obsDef` are the PBH deficiencies per mode (0: controllable/observable). */
export function buildModes(sys: LinearSystem, sp: Spectrum, ctrlDef: number[], obsDef: number[]): Mode[] {
  const { n } = sys;
  const { modal: raw, axisTol } = sp;
  const vec = n > 0 ? eigenvectors({ rows: n, cols: n, data: sys.A }) : undefined;
  const used = new Uint8Array(n);
  const participationOf = (e: Complex): { p: Float64Array; method: Mode['participationMethod'] } => {
    const p = new Float64Array(n);
    if (!vec || !vec.converged) return { p, method: 'right-only' };
    let best = -1;
    let bd = Infinity;
    for (let k = 0; k < n; k++) {
      if (used[k]) continue;
      const d = Math.hypot(vec.re[k] - e.re, vec.im[k] - e.im);
      if (d < bd) {
        bd = d;
        best = k;
      }
    }
    if (best < 0) return { p, method: 'right-only' };
    used[best] = 1;
    let leftOk = true;
    for (let i = 0; i < n; i++) {
      const v = Math.hypot(vec.vrRe.data[i * n + best], vec.vrIm.data[i * n + best]);
      const w = Math.hypot(vec.vlRe.data[i * n + best], vec.vlIm.data[i * n + best]);
      if (!Number.isFinite(w)) leftOk = false;
      p[i] = v * w;
    }
    if (!leftOk) for (let i = 0; i < n; i++) p[i] = Math.hypot(vec.vrRe.data[i * n + best], vec.vrIm.data[i * n + best]) ** 2;
    let s = 0;
    for (let i = 0; i < n; i++) s += p[i];
    if (s > 0) for (let i = 0; i < n; i++) p[i] /= s;
    return { p, method: leftOk ? 'left-right' : 'right-only' };
  };

  return raw.map((e, k) => {
    const pair = e.im > 0;
    const onAxis = Math.abs(e.re) <= axisTol;
    const stability: StabilityClass = onAxis ? 'marginal' : e.re > 0 ? 'unstable' : 'stable';
    const kind: ModeKind = pair ? (onAxis ? 'undamped' : 'oscillatory') : onAxis ? 'integrator' : 'real';
    const count = sp.modalCount[k] ?? 1;
    // a repeated eigenvalue: the participation of all its eigenvectors together
    const p = new Float64Array(n);
    let method: Mode['participationMethod'] = 'left-right';
    for (let c = 0; c < count; c++) {
      const one = participationOf(e);
      if (pair) participationOf({ re: e.re, im: -e.im }); // consume the conjugate
      for (let i = 0; i < n; i++) p[i] += one.p[i] / count;
      if (one.method === 'right-only') method = 'right-only';
    }
    // geometric multiplicity n − rank(λI − A), at the rank tolerance of the PBH test (only when repeated)
    const geometric = count > 1 ? Math.max(1, n - complexRank(sys.A, n, e, 1e-9 * Math.max(frob(sys.A), 1e-300))) : 1;
    const part = sys.states.map((s, i) => ({ state: s, factor: p[i] })).sort((a, b) => b.factor - a.factor);
    const dominant = part.filter((x, i) => i === 0 || x.factor >= 0.1).slice(0, 4).map((x) => x.state);
    const fig = eigenFigures(e, onAxis);
    const zeta = fig.dampingRatio;
    let description: string;
    switch (kind) {
      case 'integrator': description = 'integrator (λ = 0)'; break;
      case 'undamped': description = 'undamped oscillation'; break;
      case 'oscillatory': description = `${e.re > 0 ? 'growing' : 'damped'} oscillation, ζ = ${zeta!.toPrecision(3)}`; break;
      default: description = e.re > 0 ? 'growing exponential' : 'decaying exponential';
    }
    return {
      number: k + 1, kind, re: e.re, im: pair ? e.im : 0, multiplicity: (pair ? 2 : 1) * count, algebraicMultiplicity: count,
      geometricMultiplicity: Math.min(count, geometric), stability,
      timeConstant: fig.timeConstant,
      naturalFrequency: fig.naturalFrequency, dampingRatio: zeta, dampedFrequency: pair ? e.im : null, period: pair ? (2 * Math.PI) / e.im : null,
      participation: part, dominant, participationMethod: method,
      controllable: ctrlDef[k] === 0, observable: obsDef[k] === 0, description,
    };
  });
}


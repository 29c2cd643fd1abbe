/**
 * Sensitivities of the modes and the steady-state gains at a point to every constant (eigenvalue
 * perturbation theory): for a simple eigenvalue λ with right vector v and left vector w,
 * ∂λ/∂p = wᴴ·(∂A/∂p)·v / (wᴴ·v), with ∂A/∂p exact from derivatives.ts (operating-point shift included).
 * Gains G = −C·A⁻¹·B + D: ∂G = −∂C·Y + Zᵀ·∂A·Y − Zᵀ·∂B + ∂D with Y = A⁻¹B and Zᵀ = C·A⁻¹.
 * Everything is per declared unit of the constant; `relative` figures are for a 1 % larger constant.
 */
import type { eigenvectors } from '../../numeric/eigen';
import { blockEigenpairs } from './blockEigenpairs';
import { eigenpairs } from './eigenpairs';
import { sparseLU, type SparseLUResult } from '../../numeric/sparseLU';
import type { CsrMatrix } from '../../numeric/csr';
import type { Analysis } from '../../pipeline/analysis';
import { linearSystem, perUnit } from '../dynamics/system';
import { stabilityOf } from '../dynamics/modes';
import { AXIS_TOL, type Complex } from '../dynamics/types';
import { pointDerivatives, type ParameterInfo, type PointDerivative } from './derivatives';

export interface ModeSensitivity {
  /** 1-based, dominant first (the numbering of the report's modes). */
  number: number;
  eigenvalue: Complex;
  /** ‖w‖·‖v‖/|wᴴv|: large for an eigenvalue close to a repeated one (its derivative is then unreliable). */
  condition: number;
  /** ∂λ/∂p per declared unit of each parameter (same order as `parameters`). */
  d: Complex[];
}

export interface GainSensitivity {
  output: string;
  input: string;
  value: number;
  unit: string;
  /** ∂G/∂p per declared unit of each parameter. */
  d: number[];
}

export interface Sensitivities {
  ok: boolean;
  problem?: string;
  point: string;
  timeUnit: string;
  parameters: ParameterInfo[];
  modes: ModeSensitivity[];
  /** Empty when A is singular (an integrator): those gains do not exist as numbers. */
  gains: GainSensitivity[];
  /** Axis tolerance (|Re λ| at or below counts as on the axis). */
  axisTol: number;
}

/** Conditions beyond this mark an eigenvalue as (nearly) defective: its first-order derivative means little. */
export const ILL_CONDITIONED = 1e8;

/** `sparseEigenvectors`: the inverse-iteration route at any size, 'lu' without its band LU (tests compare the routes). */
export function sensitivities(a: Analysis, pointName?: string, params?: ParameterInfo[], opts: { sparseEigenvectors?: boolean | 'lu' } = {}): Sensitivities {
  const pd = pointDerivatives(a, pointName, params);
  const empty = (problem: string): Sensitivities => ({ ok: false, problem, point: pd.point, timeUnit: '', parameters: [], modes: [], gains: [], axisTol: 0 });
  if (!pd.ok || !pd.lin) return empty(pd.problem ?? 'no linear model');
  const lin = pd.lin;
  const sys = linearSystem(lin);
  const { n, m, p } = sys;
  const parameters = pd.derivatives.map((d) => d.parameter);
  // a block-triangular A (with every ∂A/∂p): each block's own vectors (blockEigenpairs.ts), else the whole matrix's
  const ev = (!opts.sparseEigenvectors && blockEigenpairs(sys.A, n, pd.derivatives.map((d) => d.dA))) || eigenpairs(sys.A, lin.sparse.A, n, opts.sparseEigenvectors);
  if (!ev.converged) return { ...empty('the eigenvalues did not converge'), timeUnit: lin.timeUnit };
  let rho = 0;
  for (let k = 0; k < n; k++) rho = Math.max(rho, Math.hypot(ev.re[k], ev.im[k]));
  const axisTol = AXIS_TOL * rho;
  // one per mode (a pair by its +i member), dominant first
  const order: number[] = [];
  for (let k = 0; k < n; k++) if (ev.im[k] >= 0) order.push(k);
  order.sort((x, y) => ev.re[y] - ev.re[x] || ev.im[y] - ev.im[x]);
  const modes: ModeSensitivity[] = order.map((k, idx) => {
    let nv = 0, nw = 0;
    for (let i = 0; i < n; i++) {
      nv += ev.vrRe.data[i * n + k] ** 2 + ev.vrIm.data[i * n + k] ** 2;
      nw += ev.vlRe.data[i * n + k] ** 2 + ev.vlIm.data[i * n + k] ** 2;
    }
    const d = pd.derivatives.map((der) => eigenDerivative(der, ev, n, k));
    return { number: idx + 1, eigenvalue: { re: ev.re[k], im: ev.im[k] }, condition: Math.sqrt(nv * nw), d };
  });
  return { ok: true, point: pd.point, timeUnit: lin.timeUnit, parameters, modes, gains: gainSensitivities(sys, pd.derivatives, n, m, p, lin.sparse.A), axisTol };
}

/** wᴴ·dA·v over the non-zeros of dA (w normalised so that wᴴv = 1), per declared unit of the parameter. */
function eigenDerivative(der: PointDerivative, ev: ReturnType<typeof eigenvectors>, n: number, k: number): Complex {
  let re = 0, im = 0;
  const { rows, cols, vals } = der.dA;
  for (let t = 0; t < vals.length; t++) {
    const i = rows[t], j = cols[t];
    const wr = ev.vlRe.data[i * n + k], wi = -ev.vlIm.data[i * n + k]; // conj(w_i)
    const vr = ev.vrRe.data[j * n + k], vi = ev.vrIm.data[j * n + k];
    re += vals[t] * (wr * vr - wi * vi);
    im += vals[t] * (wr * vi + wi * vr);
  }
  const s = der.parameter.scale;
  // a real eigenvalue of a real matrix stays real: its derivative is real (what is left is rounding)
  return { re: re * s, im: ev.im[k] === 0 ? 0 : im * s };
}

function gainSensitivities(sys: ReturnType<typeof linearSystem>, ders: PointDerivative[], n: number, m: number, p: number, Acsr: CsrMatrix): GainSensitivity[] {
  if (!m || !p) return [];
  // one sparse LU of A serves both Y = A⁻¹B (n×m, column j) and Zᵀ = C·A⁻¹ (p×n, row i: Aᵀ z = c_iᵀ)
  let lu: SparseLUResult | undefined;
  if (n) {
    const nnz = Acsr.rowPtr[n];
    const rows = new Int32Array(nnz);
    for (let i = 0; i < n; i++) rows.fill(i, Acsr.rowPtr[i], Acsr.rowPtr[i + 1]);
    lu = sparseLU(n, { rows, cols: Int32Array.from(Acsr.colIdx.subarray(0, nnz)), vals: Float64Array.from(Acsr.values.subarray(0, nnz)), nnz });
    if (!lu.ok) return [];
  }
  const Y: Float64Array[] = [];
  for (let j = 0; j < m; j++) {
    const b = new Float64Array(n);
    for (let k = 0; k < n; k++) b[k] = sys.B[k * m + j];
    Y.push(lu ? lu.solve(b) : b);
  }
  const Z: Float64Array[] = [];
  for (let i = 0; i < p; i++) {
    const c = new Float64Array(n);
    for (let k = 0; k < n; k++) c[k] = sys.C[i * n + k];
    Z.push(lu ? lu.solveTranspose(c) : c);
  }
  const out: GainSensitivity[] = [];
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < m; j++) {
      let g = sys.D[i * m + j];
      for (let k = 0; k < n; k++) g -= sys.C[i * n + k] * Y[j][k];
      const d = ders.map((der) => {
        let v = 0;
        // −dC·Y (outputs as states: C = I does not move)
        if (!sys.outputsAreStates) {
          for (let t = 0; t < der.dC.vals.length; t++) if (der.dC.rows[t] === i) v -= der.dC.vals[t] * Y[j][der.dC.cols[t]];
          for (let t = 0; t < der.dD.vals.length; t++) if (der.dD.rows[t] === i && der.dD.cols[t] === j) v += der.dD.vals[t];
        }
        for (let t = 0; t < der.dA.vals.length; t++) v += Z[i][der.dA.rows[t]] * der.dA.vals[t] * Y[j][der.dA.cols[t]];
        for (let t = 0; t < der.dB.vals.length; t++) if (der.dB.cols[t] === j) v -= Z[i][der.dB.rows[t]] * der.dB.vals[t];
        return v * der.parameter.scale;
      });
      out.push({ output: sys.outputs[i], input: sys.inputs[j], value: g, unit: perUnit(sys.outputUnits[i], sys.inputUnits[j]), d });
    }
  }
  return out;
}

/** One row of a ranked table: what a 1 % larger constant does to one mode. */
export interface RankedEffect {
  parameter: string;
  /** Shift of λ for a 1 % larger constant (1/time unit). */
  shift: Complex;
  /** Relative change of the time constant 1/|Re λ| in % (for a 1 % larger constant); null on the axis. */
  timeConstantPercent: number | null;
  /** |Δλ|/|λ| in % (null for λ = 0). */
  eigenvaluePercent: number | null;
}

/** For each mode, the constants ranked by how far a 1 % larger value moves the eigenvalue (largest first). */
export function rankedEffects(s: Sensitivities, mode: ModeSensitivity, top = Infinity): RankedEffect[] {
  const lam = mode.eigenvalue;
  const mag = Math.hypot(lam.re, lam.im);
  const onAxis = stabilityOf(lam.re, s.axisTol) === 'marginal';
  const rows = s.parameters.map((par, k): RankedEffect => {
    const f = 0.01 * par.value;
    const shift = { re: mode.d[k].re * f, im: mode.d[k].im * f };
    return {
      parameter: par.name, shift,
      timeConstantPercent: onAxis ? null : (-shift.re / lam.re) * 100,
      eigenvaluePercent: mag > 0 ? (Math.hypot(shift.re, shift.im) / mag) * 100 : null,
    };
  });
  rows.sort((x, y) => Math.hypot(y.shift.re, y.shift.im) - Math.hypot(x.shift.re, x.shift.im));
  return rows.filter((r) => r.shift.re !== 0 || r.shift.im !== 0).slice(0, top);
}

/**
 * Fold (turning point, saddle-node) location by the extended system of the steady-state equations and a
 * null-vector condition, solved by Newton's method on both at once:
 *
 *   F(x, p) = 0,   J(x, p)·v = 0,   cᵀv = 1
 *
 * with x the unknowns of the point problem, p the swept value, J = ∂F/∂x and c a fixed vector (the first
 * estimate of the null vector, scaled so that cᵀv₀ = 1). At a quadratic fold this system of 2n + 1
 * equations is regular (the direct method for turning points: R. Seydel, Practical Bifurcation and
 * Stability Analysis, Springer, the extended/branching system for turning points; W. Govaerts, Numerical
 * Methods for Bifurcations of Dynamical Equilibria, SIAM 2000 — from memory), so Newton converges
 * quadratically to the fold itself, to the precision of the arithmetic, and a steady state exists at the
 * returned value (F(x*, p*) = 0 is one of the equations solved).
 *
 * The Jacobian of the extended system: ∂F/∂x is the model's symbolic Jacobian; ∂(J·v)/∂x uses the
 * symbolic second derivatives of the Jacobian entries (compiled here once per call); the columns for p
 * are central differences through the point set-up (p may be a constant that other constants are
 * computed from). Those difference columns only steer Newton; the residuals are evaluated exactly, so the
 * located fold does not depend on them. Everything is scaled: x by the magnitude of each unknown, p by its
 * own, each equation by its largest sensitivity at the start. Pure.
 */
import type * as A from '../syntax/ast';
import type { BoundModel } from '../semantics/binder';
import * as E from '../algebra/expr';
import { compileVector } from '../model/compile';
import { compileModel } from '../model/jacobian';
import type { LoweredModel } from '../model/model';
import { steadyIncidence, steadyModel } from '../model/steady';
import { sparseLU, type SparseEntry } from '../numeric/sparseLU';
import { pointSetup } from '../solve/pointSolver';

export interface FoldLocation {
  /** The swept value at the fold (SI). */
  p: number;
  /** SI values of every slot at the fold (the steady state there). */
  values: Float64Array;
  /** The null vector of the steady-state Jacobian at the fold, over the point's unknowns (∞-norm 1). */
  nullVector: Float64Array;
  /** Newton iterations on the extended system. */
  iterations: number;
  /** Largest scaled residual of the extended system at the end. */
  residual: number;
}

export interface FoldOptions {
  maxIterations?: number;
  /** Largest accepted distance of the fold from the starting value, SI (default: unlimited). */
  maxDistance?: number;
  /** Largest accepted relative change of any unknown from the starting state (default 0.5). */
  maxRelativeChange?: number;
}

/**
 * Newton on the extended system from a steady state `start` (values SI, the point's unknown slots
 * `unknowns`) near a fold, at the swept value `p0` (SI) of slot `id`. Undefined when it does not converge
 * (or converges to something too far from the start to be this fold).
 */
export function locateFold(
  m: BoundModel, lm: LoweredModel, block: A.PointBlock, id: number, p0: number,
  start: Float64Array, unknowns: readonly number[], opts: FoldOptions = {},
): FoldLocation | undefined {
  const n = unknowns.length;
  if (n === 0 || !Number.isFinite(p0)) return undefined;
  const sm = steadyModel(lm);
  const cm = compileModel(sm);
  const { active } = steadyIncidence(sm, unknowns);
  if (active.length !== n) return undefined;
  const colOf = new Map<number, number>();
  unknowns.forEach((s, j) => colOf.set(s, j));
  const rowOf = new Int32Array(cm.nEq).fill(-1);
  active.forEach((r, i) => (rowOf[r] = i));

  // Jacobian entries of the point problem, and the second derivatives of each of them
  const jk: number[] = []; // index into cm.nodes
  const ji: number[] = [];
  const jj: number[] = [];
  for (let k = 0; k < cm.nodes.length; k++) {
    const i = rowOf[cm.rows[k]];
    const j = colOf.get(cm.cols[k]);
    if (i < 0 || j === undefined) continue;
    jk.push(k);
    ji.push(i);
    jj.push(j);
  }
  const hNodes: E.Node[] = [];
  const hEntry: number[] = []; // which Jacobian entry (index into jk)
  const hCol: number[] = []; // derivative with respect to unknown hCol
  jk.forEach((k, e) => {
    for (const s of E.slots(cm.nodes[k])) {
      const l = colOf.get(s);
      if (l === undefined) continue;
      const d = E.derivative(cm.nodes[k], s);
      if (E.isNum(d, 0)) continue;
      hNodes.push(d);
      hEntry.push(e);
      hCol.push(l);
    }
  });
  const hess = compileVector(hNodes);

  // values at (x, p): constants and fixed values from the point set-up at p, the unknowns from x
  const setupCache = new Map<number, Float64Array>();
  const valuesAt = (x: Float64Array, p: number): Float64Array => {
    let base = setupCache.get(p);
    if (!base) {
      base = pointSetup(m, lm, block, new Map([[id, p]])).values;
      if (setupCache.size > 64) setupCache.clear();
      setupCache.set(p, base);
    }
    const v = Float64Array.from(base);
    for (let j = 0; j < n; j++) v[unknowns[j]] = x[j];
    return v;
  };
  const Fall = new Float64Array(cm.nEq);
  const Jall = new Float64Array(cm.nodes.length);
  const Hall = new Float64Array(hNodes.length);
  const resid = (v: Float64Array, out: Float64Array) => {
    cm.residual(v, Fall);
    for (let i = 0; i < n; i++) out[i] = Fall[active[i]];
  };
  const jac = (v: Float64Array, out: Float64Array) => {
    cm.jacobian(v, Jall);
    for (let e = 0; e < jk.length; e++) out[e] = Jall[jk[e]];
  };

  // scales
  const x = new Float64Array(n);
  for (let j = 0; j < n; j++) x[j] = start[unknowns[j]];
  const xs = new Float64Array(n);
  for (let j = 0; j < n; j++) xs[j] = Math.max(Math.abs(x[j]), Math.abs(lm.slots[unknowns[j]].scale), 1e-300);
  const ps = Math.max(Math.abs(p0), Math.abs(lm.slots[id].scale), 1e-300);
  const Je = new Float64Array(jk.length);
  jac(valuesAt(x, p0), Je);
  for (let e = 0; e < jk.length; e++) if (!Number.isFinite(Je[e])) return undefined;
  const R = new Float64Array(n);
  for (let e = 0; e < jk.length; e++) R[ji[e]] = Math.max(R[ji[e]], Math.abs(Je[e] * xs[jj[e]]));
  for (let i = 0; i < n; i++) R[i] = R[i] > 0 ? 1 / R[i] : 1;

  // first null vector estimate: inverse iteration on the scaled Jacobian (shifted when exactly singular)
  const scaled = (shift: number): SparseEntry[] => {
    const es: SparseEntry[] = [];
    for (let e = 0; e < jk.length; e++) es.push({ row: ji[e], col: jj[e], val: R[ji[e]] * Je[e] * xs[jj[e]] });
    if (shift) for (let i = 0; i < n; i++) es.push({ row: i, col: i, val: shift });
    return es;
  };
  let lu = sparseLU(n, scaled(0));
  if (!lu.ok) lu = sparseLU(n, scaled(1e-10));
  if (!lu.ok) return undefined;
  let w: Float64Array = new Float64Array(n).fill(1);
  for (let it = 0; it < 4; it++) {
    w = lu.solve(w);
    const mx = w.reduce((a, b) => Math.max(a, Math.abs(b)), 0);
    if (!(mx > 0) || !Number.isFinite(mx)) return undefined;
    for (let j = 0; j < n; j++) w[j] /= mx;
  }
  // normalisation cᵀw = 1 with c = w₀/‖w₀‖²
  let nn = 0;
  for (let j = 0; j < n; j++) nn += w[j] * w[j];
  const c = Float64Array.from(w, (v) => v / nn);

  // unknowns z = (y, w, q): x = xs∘y, v = xs∘w, p = ps·q
  const N = 2 * n + 1;
  const y = Float64Array.from(x, (v, j) => v / xs[j]);
  let q = p0 / ps;
  const Fv = new Float64Array(n);
  const G = (yy: Float64Array, ww: Float64Array, qq: number, out: Float64Array): boolean => {
    const xx = Float64Array.from(yy, (v, j) => v * xs[j]);
    const v = valuesAt(xx, qq * ps);
    resid(v, Fv);
    jac(v, Je);
    for (let i = 0; i < n; i++) out[i] = R[i] * Fv[i];
    for (let i = 0; i < n; i++) out[n + i] = 0;
    for (let e = 0; e < jk.length; e++) out[n + ji[e]] += R[ji[e]] * Je[e] * xs[jj[e]] * ww[jj[e]];
    let s = -1;
    for (let j = 0; j < n; j++) s += c[j] * ww[j];
    out[2 * n] = s;
    for (let i = 0; i < N; i++) if (!Number.isFinite(out[i])) return false;
    return true;
  };
  const norm = (a: Float64Array) => a.reduce((s, b) => Math.max(s, Math.abs(b)), 0);
  const g = new Float64Array(N);
  if (!G(y, w, q, g)) return undefined;
  let gn = norm(g);
  const maxIt = opts.maxIterations ?? 40;
  const Jp = new Float64Array(jk.length);
  const Jm = new Float64Array(jk.length);
  const Fp = new Float64Array(n);
  const Fm = new Float64Array(n);
  let it = 0;
  let converged = false;
  for (; it < maxIt; it++) {
    const xx = Float64Array.from(y, (v, j) => v * xs[j]);
    const p = q * ps;
    const v = valuesAt(xx, p);
    jac(v, Je);
    hess(v, Hall);
    // p columns by central differences
    const h = 1e-6 * ps;
    const vp = valuesAt(xx, p + h);
    const vm = valuesAt(xx, p - h);
    resid(vp, Fp);
    resid(vm, Fm);
    jac(vp, Jp);
    jac(vm, Jm);
    const es: SparseEntry[] = [];
    const dJvdp = new Float64Array(n);
    for (let e = 0; e < jk.length; e++) {
      const i = ji[e];
      const j = jj[e];
      const a = R[i] * Je[e] * xs[j];
      es.push({ row: i, col: j, val: a }); // ∂F/∂y
      es.push({ row: n + i, col: n + j, val: a }); // ∂(Jv)/∂w
      dJvdp[i] += ((Jp[e] - Jm[e]) / (2 * h)) * xs[j] * w[j];
    }
    for (let i = 0; i < n; i++) {
      es.push({ row: i, col: 2 * n, val: (R[i] * ((Fp[i] - Fm[i]) / (2 * h))) * ps });
      es.push({ row: n + i, col: 2 * n, val: R[i] * dJvdp[i] * ps });
    }
    // ∂(J·v)_i/∂y_l = R_i·xs_l·Σ_j ∂J_ij/∂x_l·xs_j·w_j
    for (let t = 0; t < hNodes.length; t++) {
      const e = hEntry[t];
      const l = hCol[t];
      es.push({ row: n + ji[e], col: l, val: R[ji[e]] * Hall[t] * xs[jj[e]] * w[jj[e]] * xs[l] });
    }
    for (let j = 0; j < n; j++) es.push({ row: 2 * n, col: n + j, val: c[j] });
    const big = sparseLU(N, es);
    if (!big.ok) break;
    const rhs = Float64Array.from(g, (v2) => -v2);
    const dz = big.solve(rhs);
    if (dz.some((d) => !Number.isFinite(d))) break;
    // damped step: halve while the residual does not fall (near the fold it falls quadratically)
    let alpha = 1;
    let accepted = false;
    const yt = new Float64Array(n);
    const wt = new Float64Array(n);
    const gt = new Float64Array(N);
    for (let ls = 0; ls < 12; ls++) {
      for (let j = 0; j < n; j++) {
        yt[j] = y[j] + alpha * dz[j];
        wt[j] = w[j] + alpha * dz[n + j];
      }
      const qt = q + alpha * dz[2 * n];
      if (G(yt, wt, qt, gt) && norm(gt) <= Math.max(gn * (1 - 1e-4 * alpha), 1e-15)) {
        y.set(yt);
        w.set(wt);
        q = qt;
        g.set(gt);
        gn = norm(gt);
        accepted = true;
        break;
      }
      alpha /= 2;
    }
    let step = 0;
    for (let j = 0; j < n; j++) step = Math.max(step, Math.abs(dz[j]));
    step = Math.max(step, Math.abs(dz[2 * n]));
    if (!accepted) {
      // at the limit of the arithmetic the residual no longer falls: done if it is already tiny
      if (gn <= 1e-12) converged = true;
      break;
    }
    if (alpha === 1 && step <= 1e-15 * Math.max(1, norm(y), Math.abs(q))) {
      converged = true;
      it++;
      break;
    }
  }
  if (!converged && gn <= 1e-13) converged = true;
  if (!converged) return undefined;
  const p = q * ps;
  const xx = Float64Array.from(y, (v, j) => v * xs[j]);
  if (opts.maxDistance !== undefined && !(Math.abs(p - p0) <= opts.maxDistance)) return undefined;
  const maxRel = opts.maxRelativeChange ?? 0.5;
  for (let j = 0; j < n; j++) {
    const sc = Math.max(Math.abs(x[j]), Math.abs(xx[j]), Math.abs(lm.slots[unknowns[j]].scale));
    if (Math.abs(xx[j] - x[j]) > maxRel * sc) return undefined;
  }
  const mx = norm(w);
  const nullVector = Float64Array.from(w, (v, j) => (v * xs[j]) / (mx || 1));
  const nv = nullVector.reduce((a, b) => Math.max(a, Math.abs(b)), 0);
  for (let j = 0; j < n; j++) nullVector[j] /= nv || 1;
  return { p, values: valuesAt(xx, p), nullVector, iterations: it, residual: gn };
}

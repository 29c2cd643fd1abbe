/**
 * Numerical references for the tests, written independently of the core's own numerics: central finite
 * differences with Richardson extrapolation, and a dense Newton solve that uses only residual
 * evaluations and ml-matrix's LU (a reference library, not our code).
 */
import { Matrix, solve as mlSolve } from 'ml-matrix';

/**
 * Derivative of f at x by central differences with one Richardson step:
 * D(h) = (f(x+h) − f(x−h))/(2h), result (4·D(h/2) − D(h))/3, error O(h⁴) (common practice; any numerical
 * analysis text, e.g. Burden & Faires, Numerical Analysis, §4.2). Also returns the difference between the
 * two estimates, a measure of how far the result can be trusted.
 */
export function centralDiff(f: (x: number) => number, x: number, h: number): { d: number; spread: number } {
  const d1 = (f(x + h) - f(x - h)) / (2 * h);
  const d2 = (f(x + h / 2) - f(x - h / 2)) / h;
  const d = (4 * d2 - d1) / 3;
  return { d, spread: Math.abs(d2 - d1) };
}

/**
 * Solves g(z) = 0 for z (length n) by Newton's method with a forward-difference Jacobian and ml-matrix's
 * dense solve, starting from z0. Returns undefined when it does not converge.
 */
export function newtonFD(g: (z: Float64Array) => Float64Array, z0: Float64Array, typical: Float64Array, maxIt = 50): Float64Array | undefined {
  const n = z0.length;
  const z = Float64Array.from(z0);
  for (let it = 0; it < maxIt; it++) {
    const f = g(z);
    const J = Matrix.zeros(n, n);
    for (let j = 0; j < n; j++) {
      const h = 1e-7 * Math.max(Math.abs(z[j]), typical[j]);
      const save = z[j];
      z[j] = save + h;
      const fp = g(z);
      z[j] = save - h;
      const fm = g(z);
      z[j] = save;
      for (let i = 0; i < n; i++) J.set(i, j, (fp[i] - fm[i]) / (2 * h));
    }
    const dz = mlSolve(J, Matrix.columnVector(Array.from(f, (v) => -v)));
    let rel = 0;
    for (let j = 0; j < n; j++) {
      const step = dz.get(j, 0);
      z[j] += step;
      rel = Math.max(rel, Math.abs(step) / Math.max(Math.abs(z[j]), typical[j]));
    }
    if (!z.every(Number.isFinite)) return undefined;
    if (rel < 1e-13) return z;
  }
  return undefined;
}

/** Diagonal scaling of the system before the rank decisions. */
import type { LinearSystem } from './types';
import { frob } from './system';

export interface Balanced {
  A: Float64Array;
  B: Float64Array;
  C: Float64Array;
  /** Factors applied to the columns of B and the rows of C (so D scales by inScale[j]·outScale[i]). */
  inScale: Float64Array;
  outScale: Float64Array;
  n: number;
  m: number;
  p: number;
}

/**
 * Diagonal state scaling T (powers of two) of the system matrix, with the columns of B and the rows of C
 * first normalised to the size of A: Ã = T⁻¹AT, B̃ = T⁻¹B, C̃ = CT. Similarity keeps eigenvalues, poles
 * and zeros; the scaling only improves the rank decisions (cf. SLICOT TB01ID).
 */
export function balanceSystem(sys: LinearSystem): Balanced {
  const { n, m, p } = sys;
  const A = Float64Array.from(sys.A);
  const B = Float64Array.from(sys.B);
  const C = Float64Array.from(sys.C);
  const na = frob(A) || 1;
  const inScale = new Float64Array(m);
  const outScale = new Float64Array(p);
  for (let j = 0; j < m; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += B[i * m + j] ** 2;
    const f = s > 0 ? pow2(na / Math.sqrt(s)) : 1;
    inScale[j] = f;
    for (let i = 0; i < n; i++) B[i * m + j] *= f;
  }
  for (let i = 0; i < p; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += C[i * n + j] ** 2;
    const f = s > 0 ? pow2(na / Math.sqrt(s)) : 1;
    outScale[i] = f;
    for (let j = 0; j < n; j++) C[i * n + j] *= f;
  }
  for (let sweep = 0; sweep < 40; sweep++) {
    let changed = false;
    for (let i = 0; i < n; i++) {
      let c = 0;
      let r = 0;
      for (let j = 0; j < n; j++) {
        if (j === i) continue;
        c += Math.abs(A[j * n + i]);
        r += Math.abs(A[i * n + j]);
      }
      for (let k = 0; k < p; k++) c += Math.abs(C[k * n + i]);
      for (let k = 0; k < m; k++) r += Math.abs(B[i * m + k]);
      if (c === 0 || r === 0) continue;
      const f = pow2(Math.sqrt(r / c));
      if (f === 1 || (c * f + r / f) >= 0.95 * (c + r)) continue;
      changed = true;
      // t_i *= f: row i of A and B divided by f, column i of A and C multiplied by f
      for (let j = 0; j < n; j++) {
        A[i * n + j] /= f;
        A[j * n + i] *= f;
      }
      for (let k = 0; k < m; k++) B[i * m + k] /= f;
      for (let k = 0; k < p; k++) C[k * n + i] *= f;
    }
    if (!changed) break;
  }
  return { A, B, C, inScale, outScale, n, m, p };
}

function pow2(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  return Math.pow(2, Math.round(Math.log2(x)));
}

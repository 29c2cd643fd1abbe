/**
 * The iteration matrix E = c·I − J of the linearly implicit (Rosenbrock) integrators in ode.ts, factorised
 * and solved with: dense (partial pivoting, flatlu.ts) for a dense or small Jacobian, or sparse when the
 * problem gives the pattern of J and it is sparse enough, through PatternLU (the pivot order of sparseLU
 * kept from step to step while it stays acceptable, values refactorised in place: no allocation per step).
 */
import { luFactorInPlace, luSolveInPlace } from './flatlu';
import { PatternLU } from './patternLU';

/** A sparse ∂f/∂x: the pattern in compressed rows, and a writer of the values in that order. */
export interface SparseJacobian {
  /** Row i's columns are colIdx[rowPtr[i] … rowPtr[i+1]−1]. */
  rowPtr: Int32Array;
  colIdx: Int32Array;
  /** Writes ∂f/∂x at (t, x) into vals (pattern order); false when x is outside the model's domain. */
  values(t: number, x: Float64Array, vals: Float64Array): boolean;
}

/** Density of J (non-zeros over n²) above which the dense factorisation is used. */
const SPARSE_DENSITY = 0.3;

export interface StiffMatrix {
  /** Storage of J: dense row-major n×n, or the values of the sparse pattern. */
  readonly J: Float64Array;
  readonly sparse: boolean;
  /** Evaluates J at (t, x) through the sparse Jacobian (sparse matrices only). */
  evaluate(t: number, x: Float64Array): boolean;
  /** Factorises E = c·I − J; false when singular (or not finite). */
  factor(c: number): boolean;
  /** b ← E⁻¹ b. */
  solve(b: Float64Array): void;
}

/** The iteration matrix for a problem of size n: sparse when `sj` is given and sparse enough, else dense. */
export function stiffMatrix(n: number, sj?: SparseJacobian): StiffMatrix {
  if (sj && sj.rowPtr[n] <= SPARSE_DENSITY * n * n) return new SparseStiff(n, sj);
  return new DenseStiff(n, sj);
}

class DenseStiff implements StiffMatrix {
  readonly J: Float64Array;
  readonly sparse = false;
  private readonly E: Float64Array;
  private readonly piv: Int32Array;
  private readonly vals: Float64Array | undefined;

  constructor(private readonly n: number, private readonly sj?: SparseJacobian) {
    this.J = new Float64Array(n * n);
    this.E = new Float64Array(n * n);
    this.piv = new Int32Array(n);
    this.vals = sj ? new Float64Array(sj.rowPtr[n]) : undefined;
  }

  evaluate(t: number, x: Float64Array): boolean {
    const { sj, vals, J, n } = this;
    if (!sj || !vals || !sj.values(t, x, vals)) return false;
    J.fill(0);
    for (let i = 0; i < n; i++) for (let p = sj.rowPtr[i]; p < sj.rowPtr[i + 1]; p++) J[i * n + sj.colIdx[p]] += vals[p];
    return true;
  }

  factor(c: number): boolean {
    const { n, J, E } = this;
    for (let k = 0; k < n * n; k++) E[k] = -J[k];
    for (let i = 0; i < n; i++) E[i * n + i] += c;
    return luFactorInPlace(E, n, this.piv);
  }

  solve(b: Float64Array): void {
    luSolveInPlace(this.E, this.n, this.piv, b);
  }
}

class SparseStiff implements StiffMatrix {
  readonly J: Float64Array;
  readonly sparse = true;
  private readonly nnz: number;
  /** Triplets of E: the entries of J, then the diagonal. */
  private readonly rows: Int32Array;
  private readonly cols: Int32Array;
  private readonly evals: Float64Array;
  private lu: PatternLU | undefined;

  constructor(private readonly n: number, private readonly sj: SparseJacobian) {
    const nnz = sj.rowPtr[n];
    this.nnz = nnz;
    this.J = new Float64Array(nnz);
    this.rows = new Int32Array(nnz + n);
    this.cols = new Int32Array(nnz + n);
    this.evals = new Float64Array(nnz + n);
    for (let i = 0; i < n; i++) {
      for (let p = sj.rowPtr[i]; p < sj.rowPtr[i + 1]; p++) {
        this.rows[p] = i;
        this.cols[p] = sj.colIdx[p];
      }
      this.rows[nnz + i] = i;
      this.cols[nnz + i] = i;
    }
  }

  evaluate(t: number, x: Float64Array): boolean {
    return this.sj.values(t, x, this.J);
  }

  factor(c: number): boolean {
    const { nnz, n, J, evals } = this;
    for (let p = 0; p < nnz; p++) evals[p] = -J[p];
    for (let i = 0; i < n; i++) evals[nnz + i] = c;
    if (this.lu && this.lu.refactor(evals)) return true;
    // first factorisation, or the kept pivot order no longer acceptable: choose a new one
    this.lu = PatternLU.analyse(n, { rows: this.rows, cols: this.cols, vals: evals, nnz: nnz + n });
    return this.lu !== undefined;
  }

  solve(b: Float64Array): void {
    this.lu!.solve(b, b);
  }
}

/**
 * The linear-algebra interface of the network solver: a matrix is factored once into a
 * `LinearFactor`, whose `solve(b)` can be called many times. Two factorisations share it, the
 * sparse LU (`sparseLu.ts`, for real networks) and a dense LU on ml-matrix (`denseLu.ts`, small
 * systems and cross-checks). Exports the interface, `SingularMatrixError`, the named tolerances,
 * `factorize` and, for convenience, everything a caller needs from the other solver files.
 * Failures carry the index of the equation that failed; turning it into a node name is the
 * caller's job.
 */

import { columnMaxAbs, type SparseMatrix } from './sparseMatrix.js';
import { factorizeSparse } from './sparseLu.js';
import { factorizeDense } from './denseLu.js';

export { TripletBuilder, type SparseMatrix } from './sparseMatrix.js';
export { factorizeSparse, SparseLuSymbolic, type SparseLuOptions, type SparseLuFactor } from './sparseLu.js';
export { factorizeDense } from './denseLu.js';
export { approximateMinimumDegree } from './ordering.js';

/** A factored square matrix A. */
export interface LinearFactor {
  /** x with A·x = b, as a new array; `b` is left untouched. */
  solve(b: Float64Array): Float64Array;
}

export const LINEAR_DEFAULTS = {
  /**
   * Threshold partial pivoting: the diagonal entry is kept as pivot while
   * |a_kk| ≥ pivotThreshold · max_i |a_ik| over the candidate rows (Davis, 2006, ch. 6), which
   * keeps the fill-reducing order; 1 is plain partial pivoting.
   */
  pivotThreshold: 0.1,
  /**
   * A pivot candidate x_i = a_ij − Σ_k l_ik·u_kj counts as zero when
   * |x_i| ≤ singularTolerance · (|a_ij| + Σ_k |l_ik·u_kj|): it is then what is left after the
   * terms cancelled. A floating sub-network (a Laplacian block without a fixed pressure) leaves
   * such a pivot instead of an exact zero: measured on floating grids of 10⁴–10⁵ nodes with
   * conductances spread over six decades, it is 1e-14 to 2e-12 of its terms, so a pivot below
   * 1e-11 of its terms may have no correct digit left. The test compares a value with the terms
   * that made it, so it does not depend on how rows or columns are scaled (pressures in Pa next
   * to flows in m³/s).
   */
  singularTolerance: 1e-11,
} as const;

/** The matrix is singular; `index` is the equation (row, and in a network also column) to blame. */
export class SingularMatrixError extends Error {
  readonly index: number;

  constructor(index: number) {
    super(`matrix is singular at equation ${index}`);
    this.name = 'SingularMatrixError';
    this.index = index;
  }

  /**
   * The error for a factorisation in which the pivot of `column` failed and `row` was left
   * without a pivot. An empty column means unknown `column` appears in no equation, so it is
   * the one to name; otherwise the column only failed because earlier columns used up the
   * independent rows, and the equation that was never needed (a repeated row, or one node of a
   * floating sub-network) is named instead.
   */
  static blame(a: SparseMatrix, column: number, row: number): SingularMatrixError {
    return new SingularMatrixError(columnMaxAbs(a, column) === 0 || row < 0 ? column : row);
  }
}

/** Factors `a` by the chosen method, with default options. */
export function factorize(a: SparseMatrix, method: 'sparse' | 'dense'): LinearFactor {
  return method === 'dense' ? factorizeDense(a) : factorizeSparse(a);
}

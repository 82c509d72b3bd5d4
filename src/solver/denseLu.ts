/**
 * Dense LU with partial pivoting, on ml-matrix's `LuDecomposition` (Doolittle form with row
 * interchanges), behind the same `LinearFactor` interface as the sparse LU. For small systems
 * and for cross-checking the sparse path: it takes n² memory and n³ time (about a second for
 * n = 1,000), so it must not be the default for whole networks. Exports `factorizeDense`.
 */

import { LuDecomposition, Matrix } from 'ml-matrix';
import { LINEAR_DEFAULTS, SingularMatrixError, type LinearFactor } from './linear.js';
import type { SparseMatrix } from './sparseMatrix.js';

/**
 * Factors `a` densely. Throws `SingularMatrixError` when a pivot is zero (ml-matrix's
 * `isSingular()`) or no more than round-off by the test of `LINEAR_DEFAULTS.singularTolerance`.
 */
export function factorizeDense(a: SparseMatrix): LinearFactor {
  const { n } = a;
  const dense = new Matrix(n, n);
  for (let j = 0; j < n; j++) {
    for (let p = a.colPtr[j]; p < a.colPtr[j + 1]; p++) dense.set(a.rowIdx[p], j, dense.get(a.rowIdx[p], j) + a.values[p]);
  }
  const lu = new LuDecomposition(dense);

  // The same test as the sparse LU: u_jj = a_rj − Σ_k l_jk·u_kj counts as zero when it is
  // within the tolerance of the terms that made it (which includes every exact zero that
  // `isSingular()` reports).
  const rowAt = lu.pivotPermutationVector;
  const lower = lu.lowerTriangularMatrix;
  const upper = lu.upperTriangularMatrix;
  for (let j = 0; j < n; j++) {
    let terms = Math.abs(dense.get(rowAt[j], j));
    for (let k = 0; k < j; k++) terms += Math.abs(lower.get(j, k) * upper.get(k, j));
    if (Math.abs(upper.get(j, j)) <= LINEAR_DEFAULTS.singularTolerance * terms) {
      // ml-matrix keeps the columns in place, so column j is the one that failed; the row left
      // at position j is the one the elimination could not use.
      throw SingularMatrixError.blame(a, j, rowAt[j]);
    }
  }

  return {
    solve(b: Float64Array): Float64Array {
      if (b.length !== n) throw new RangeError(`right-hand side has length ${b.length}, expected ${n}`);
      if (n === 0) return new Float64Array(0);
      return Float64Array.from(lu.solve(Matrix.columnVector(Array.from(b))).getColumn(0));
    },
  };
}

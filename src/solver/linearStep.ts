/**
 * One linear solve of the Newton system: the sparse LU, or the dense LU, and a sweep of
 * iterative refinement. Exports `FactorCache` (an explicit object, owned by whoever runs a
 * sequence of solves) and `linearStep`. Knows nothing of networks.
 *
 * Each Newton matrix is factored: the ordering of its pattern is kept from one solve to the
 * next, and within a solve the pivots too where the search would choose them again (a
 * refactorisation, sparseLu.ts: the same factors to the bit, at about a third of the cost).
 * Refinement sweeps against the last factors were tried before factoring: with
 * refactorisation they no longer pay (one step of a 64-contactor tolerance realisation and of
 * a 4096-contactor solve cost as much or more with them, measured).
 */
import { factorize, SparseLuSymbolic, type LinearFactor, type SparseMatrix } from './linear.js';

/** The symbolic analyses (by pattern) of a sequence of solves, with the pivots of the current one. */
export class FactorCache {
  private readonly symbolics: Array<{ pattern: SparseMatrix; symbolic: SparseLuSymbolic }> = [];
  /** Patterns kept: a sweep alternates between at most a few (with and without compositions). */
  private static readonly PATTERNS = 4;

  /**
   * Forgets the pivot sequences, keeps the orderings. Results do not depend on it (a
   * refactorisation gives the factors of a search, to the bit); cost does: the matrices of a new
   * solve are further from the last solve's than from each other, and pivots kept from one
   * tolerance realisation to the next failed more often than they served (422 failures for 20
   * searches saved in 200 realisations, measured).
   */
  startSolve(): void {
    for (const { symbolic } of this.symbolics) symbolic.forgetPivots();
  }

  solve(matrix: SparseMatrix, rhs: Float64Array): Float64Array {
    // One sweep of iterative refinement (Wilkinson; Higham, Accuracy and Stability of Numerical
    // Algorithms, 2nd ed., 2002, §12.1): chips whose feeds are far more conductive than their
    // contactors give badly scaled systems, and the refined step is markedly better there.
    return refinedSolve(matrix, this.factor(matrix), rhs);
  }

  /**
   * Numeric factors of `matrix`, from the symbolic analysis of its pattern when one is kept
   * (and its pivots when this solve has factored that pattern): also for solves with many
   * right-hand sides at a settled state (sensitivities), where the solve that settled it has
   * already ordered the same pattern.
   */
  factor(matrix: SparseMatrix): LinearFactor {
    return this.symbolicFor(matrix).factor(matrix);
  }

  private symbolicFor(matrix: SparseMatrix): SparseLuSymbolic {
    const found = this.symbolics.find((s) => samePattern(s.pattern, matrix));
    if (found) return found.symbolic;
    const symbolic = new SparseLuSymbolic(matrix);
    this.symbolics.unshift({ pattern: matrix, symbolic });
    if (this.symbolics.length > FactorCache.PATTERNS) this.symbolics.pop();
    return symbolic;
  }
}

/** The Newton step for `matrix`·step = `rhs`. */
export function linearStep(matrix: SparseMatrix, rhs: Float64Array, linear: 'sparse' | 'dense', cache: FactorCache): Float64Array {
  if (linear === 'dense') return refinedSolve(matrix, factorize(matrix, 'dense'), rhs);
  return cache.solve(matrix, rhs);
}

/** x with matrix·x ≈ rhs from `factor` of this matrix and one refinement sweep x += factor⁻¹(rhs − matrix·x). */
function refinedSolve(matrix: SparseMatrix, factor: LinearFactor, rhs: Float64Array): Float64Array {
  const n = rhs.length;
  const step = factor.solve(rhs);
  const r = rhs.slice();
  for (let j = 0; j < n; j++) {
    const xj = step[j]!;
    if (xj === 0) continue;
    for (let k = matrix.colPtr[j]!; k < matrix.colPtr[j + 1]!; k++) r[matrix.rowIdx[k]!] -= matrix.values[k]! * xj;
  }
  const correction = factor.solve(r);
  for (let i = 0; i < n; i++) step[i] += correction[i]!;
  return step;
}

function samePattern(a: SparseMatrix, b: SparseMatrix): boolean {
  // Matrices compressed from the same positions share their pattern arrays (sparseMatrix.ts).
  if (a.colPtr === b.colPtr && a.rowIdx === b.rowIdx) return true;
  if (a.n !== b.n || a.rowIdx.length !== b.rowIdx.length) return false;
  for (let j = 0; j <= a.n; j++) if (a.colPtr[j] !== b.colPtr[j]) return false;
  for (let k = 0; k < a.rowIdx.length; k++) if (a.rowIdx[k] !== b.rowIdx[k]) return false;
  return true;
}

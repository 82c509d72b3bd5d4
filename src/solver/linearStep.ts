/**
 * One linear solve of the Newton system: the sparse LU with factor reuse, or the dense LU, and
 * iterative refinement. Exports `FactorCache` (an explicit object, owned by whoever runs a
 * sequence of solves) and `linearStep`. Knows nothing of networks.
 *
 * A Jacobian changes little from one iterate, or one sweep point, to the next, so the last
 * factors serve as the preconditioner of a few refinement sweeps against the current matrix;
 * when those do not bring the linear residual below LINEAR_ACCURACY the matrix is factored
 * afresh (reusing its symbolic analysis when the pattern is the same). The step is therefore
 * always accurate to that level, whatever the cache held.
 */
import { factorize, SparseLuSymbolic, type LinearFactor, type SparseMatrix } from './linear.js';

/** Relative linear residual that a Newton step must reach. */
const LINEAR_ACCURACY = 1e-10;
/** Refinement sweeps tried with stale factors, and uses of one factorisation at most. */
const STALE_SWEEPS = 4;
const STALE_USES = 8;

interface CachedFactor {
  pattern: SparseMatrix;
  symbolic: SparseLuSymbolic;
  factor: LinearFactor;
  uses: number;
}

/** The symbolic analyses (by pattern) and the last numeric factor of a sequence of solves. */
export class FactorCache {
  private last: CachedFactor | undefined;
  private readonly symbolics: Array<{ pattern: SparseMatrix; symbolic: SparseLuSymbolic }> = [];
  /** Patterns kept: a sweep alternates between at most a few (with and without compositions). */
  private static readonly PATTERNS = 4;

  /**
   * Forgets the last numeric factors, keeps the symbolic analyses: a new solve then depends only
   * on its own iterates (stale factors change a result in its last digits), whatever ran before.
   */
  startSolve(): void {
    this.last = undefined;
  }

  solve(matrix: SparseMatrix, rhs: Float64Array): Float64Array {
    const last = this.last;
    if (last && last.uses < STALE_USES && samePattern(last.pattern, matrix)) {
      last.uses++;
      const step = refinedSolve(matrix, last.factor, rhs, STALE_SWEEPS, LINEAR_ACCURACY);
      if (step) return step;
    }
    const symbolic = this.symbolicFor(matrix);
    const factor = symbolic.factor(matrix);
    this.last = { pattern: matrix, symbolic, factor, uses: 0 };
    // One sweep of iterative refinement (Wilkinson; Higham, Accuracy and Stability of Numerical
    // Algorithms, 2nd ed., 2002, §12.1): chips whose feeds are far more conductive than their
    // contactors give badly scaled systems, and the refined step is markedly better there.
    return refinedSolve(matrix, factor, rhs, 1)!;
  }

  /**
   * Fresh numeric factors of `matrix`, from the symbolic analysis of its pattern when one is
   * kept: for solves with many right-hand sides at a settled state (sensitivities), where the
   * solve that settled it has already ordered the same pattern.
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
  if (linear === 'dense') return refinedSolve(matrix, factorize(matrix, 'dense'), rhs, 1)!;
  return cache.solve(matrix, rhs);
}

/**
 * x with matrix·x ≈ rhs from `factor` (of this matrix or of a nearby one) and up to `sweeps`
 * refinement sweeps x += factor⁻¹(rhs − matrix·x). With `accuracy`, returns undefined unless
 * ‖rhs − matrix·x‖∞ ≤ accuracy·‖rhs‖∞ at the end.
 */
function refinedSolve(matrix: SparseMatrix, factor: LinearFactor, rhs: Float64Array, sweeps: number, accuracy?: number): Float64Array | undefined {
  const n = rhs.length;
  const step = factor.solve(rhs);
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(rhs[i]!));
  const residual = (): { r: Float64Array; worst: number } => {
    const r = rhs.slice();
    for (let j = 0; j < n; j++) {
      const xj = step[j]!;
      if (xj === 0) continue;
      for (let k = matrix.colPtr[j]!; k < matrix.colPtr[j + 1]!; k++) r[matrix.rowIdx[k]!] -= matrix.values[k]! * xj;
    }
    let worst = 0;
    for (let i = 0; i < n; i++) worst = Math.max(worst, Math.abs(r[i]!));
    return { r, worst };
  };
  for (let sweep = 0; sweep < sweeps; sweep++) {
    const { r, worst } = residual();
    if (accuracy !== undefined && worst <= accuracy * scale) return step;
    if (!Number.isFinite(worst)) return undefined;
    const correction = factor.solve(r);
    for (let i = 0; i < n; i++) step[i] += correction[i]!;
  }
  if (accuracy === undefined) return step;
  return residual().worst <= accuracy * scale ? step : undefined;
}

function samePattern(a: SparseMatrix, b: SparseMatrix): boolean {
  // Matrices compressed from the same positions share their pattern arrays (sparseMatrix.ts).
  if (a.colPtr === b.colPtr && a.rowIdx === b.rowIdx) return true;
  if (a.n !== b.n || a.rowIdx.length !== b.rowIdx.length) return false;
  for (let j = 0; j <= a.n; j++) if (a.colPtr[j] !== b.colPtr[j]) return false;
  for (let k = 0; k < a.rowIdx.length; k++) if (a.rowIdx[k] !== b.rowIdx[k]) return false;
  return true;
}

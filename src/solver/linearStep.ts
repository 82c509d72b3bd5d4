/**
 * One linear solve of the Newton system: the sparse LU, or the dense LU, and a sweep of
 * iterative refinement. Exports `FactorCache` (an explicit object, owned by whoever runs a
 * sequence of solves) and `linearStep`. Knows nothing of networks.
 *
 * Each Newton matrix is factored: the ordering of its pattern is kept from one solve to the
 * next, and within a solve the pivots too while they pass the threshold test (a
 * refactorisation, sparseLu.ts, at about a third of the cost of a search); a sweep may prime
 * the pivots each solve starts from (`FactorCache.keepPivotsAsStart`).
 * Refinement sweeps against the last factors were tried before factoring: with
 * refactorisation they no longer pay (one step of a 64-contactor tolerance realisation and of
 * a 4096-contactor solve cost as much or more with them, measured).
 */
import { factorize, SparseLuSymbolic, type LinearFactor, type SparseMatrix } from './linear.js';
import { approximateMinimumDegree, normalEquationsPattern } from './ordering.js';

/** The symbolic analyses (by pattern) of a sequence of solves, with the pivots of the current one. */
export class FactorCache {
  private readonly symbolics: Array<{ pattern: SparseMatrix; symbolic: SparseLuSymbolic }> = [];
  /** Patterns kept besides the primed ones: a sweep alternates between a few (with and without compositions). */
  private static readonly PATTERNS = 4;

  /**
   * Every pattern starts again from its primed pivots (`keepPivotsAsStart`), or searches when it
   * has none; the orderings are kept. A solve's result therefore does not depend on the solves
   * before it (its factors are those of its own sequence from fixed starting pivots), and its
   * cost does: a solve's first factorisation refactors from the primed pivots where they pass
   * the threshold test. Pivots carried from one tolerance realisation to the next would make a
   * realisation's rounding depend on the one solved before it.
   */
  startSolve(): void {
    for (const { symbolic } of this.symbolics) symbolic.restartPivots();
    this.last = undefined;
  }

  /** This solve's last factors (`solveNear`), and the size of their matrix. */
  private last: { factor: LinearFactor; n: number } | undefined;

  /**
   * matrix·x = rhs from this solve's last factors (of a nearby matrix: the Newton matrix of the
   * step before) and two sweeps of iterative refinement against `matrix`, or undefined when the
   * residual left is above NEAR_RESIDUAL of rhs (then the caller factors `matrix`). Near a
   * solution the Newton matrix hardly changes from one step to the next, and the refined step
   * is Newton's to that share, for two triangular solves instead of a factorisation.
   */
  solveNear(matrix: SparseMatrix, rhs: Float64Array): Float64Array | undefined {
    const last = this.last;
    if (!last || last.n !== matrix.n) return undefined;
    const n = rhs.length;
    const x = last.factor.solve(rhs);
    for (let sweep = 0; sweep < 2; sweep++) {
      const r = residualOf(matrix, x, rhs);
      const correction = last.factor.solve(r);
      for (let i = 0; i < n; i++) x[i] += correction[i]!;
    }
    const r = residualOf(matrix, x, rhs);
    let left = 0;
    let size = 0;
    for (let i = 0; i < n; i++) {
      left = Math.max(left, Math.abs(r[i]!));
      size = Math.max(size, Math.abs(rhs[i]!));
    }
    return left <= NEAR_RESIDUAL * size ? x : undefined;
  }

  /**
   * The pivots of the last factorisation of every pattern become the ones each later solve
   * starts from (`startSolve`), and those patterns are never dropped from the cache (dropping
   * one would make later solves' starting pivots depend on which patterns came in between).
   */
  keepPivotsAsStart(): void {
    for (const { symbolic } of this.symbolics) symbolic.keepPivotsForRestart();
  }

  /**
   * Patterns met from now on are ordered for a sweep: minimum degree on AᵀA (ordering.ts
   * `normalEquationsPattern`), less fill for the unsymmetric composition rows at twice the
   * ordering time, which the many solves of a sweep win back and a single solve does not.
   */
  orderForSweeps(): void {
    this.sweep = true;
  }

  private sweep = false;

  /** `unsymmetric`: a new pattern is ordered as for sweeps (see `orderForSweeps`). */
  solve(matrix: SparseMatrix, rhs: Float64Array, unsymmetric = false): Float64Array {
    // One sweep of iterative refinement (Wilkinson; Higham, Accuracy and Stability of Numerical
    // Algorithms, 2nd ed., 2002, §12.1): chips whose feeds are far more conductive than their
    // contactors give badly scaled systems, and the refined step is markedly better there.
    return refinedSolve(matrix, this.factor(matrix, unsymmetric), rhs);
  }

  /**
   * Numeric factors of `matrix`, from the symbolic analysis of its pattern when one is kept
   * (and its pivots when this solve has factored that pattern): also for solves with many
   * right-hand sides at a settled state (sensitivities), where the solve that settled it has
   * already ordered the same pattern.
   */
  factor(matrix: SparseMatrix, unsymmetric = false): LinearFactor {
    const factor = this.symbolicFor(matrix, unsymmetric).factor(matrix);
    this.last = { factor, n: matrix.n };
    return factor;
  }

  private symbolicFor(matrix: SparseMatrix, unsymmetric: boolean): SparseLuSymbolic {
    const found = this.symbolics.find((s) => samePattern(s.pattern, matrix));
    if (found) return found.symbolic;
    const symbolic = new SparseLuSymbolic(matrix, this.sweep || unsymmetric ? { ordering: approximateMinimumDegree(normalEquationsPattern(matrix)) } : {});
    this.symbolics.unshift({ pattern: matrix, symbolic });
    const unprimed = this.symbolics.filter((s) => !s.symbolic.hasRestartPivots);
    if (unprimed.length > FactorCache.PATTERNS) this.symbolics.splice(this.symbolics.indexOf(unprimed[unprimed.length - 1]!), 1);
    return symbolic;
  }
}

/**
 * The Newton step for `matrix`·step = `rhs`. `unsymmetric`: the matrix has the composition rows
 * (transport, far from symmetric, and factored at every step of the composition stage), so a new
 * pattern is ordered on AᵀA (FactorCache.orderForSweeps).
 */
export function linearStep(matrix: SparseMatrix, rhs: Float64Array, linear: 'sparse' | 'dense', cache: FactorCache, unsymmetric = false): Float64Array {
  if (linear === 'dense') return refinedSolve(matrix, factorize(matrix, 'dense'), rhs);
  return cache.solve(matrix, rhs, unsymmetric);
}

/**
 * A step from the last factors is kept when it leaves at most this share of the right-hand side:
 * an inexact Newton step of forcing term 1e-6 (Dembo, Eisenstat & Steihaug, 1982, SIAM J. Numer.
 * Anal. 19:400), which keeps the convergence of the steps near a solution where it is tried.
 */
const NEAR_RESIDUAL = 1e-6;

/** rhs − matrix·x. */
function residualOf(matrix: SparseMatrix, x: Float64Array, rhs: Float64Array): Float64Array {
  const r = rhs.slice();
  for (let j = 0; j < x.length; j++) {
    const xj = x[j]!;
    if (xj === 0) continue;
    for (let k = matrix.colPtr[j]!; k < matrix.colPtr[j + 1]!; k++) r[matrix.rowIdx[k]!] -= matrix.values[k]! * xj;
  }
  return r;
}

/** x with matrix·x ≈ rhs from `factor` of this matrix and one refinement sweep x += factor⁻¹(rhs − matrix·x). */
function refinedSolve(matrix: SparseMatrix, factor: LinearFactor, rhs: Float64Array): Float64Array {
  const n = rhs.length;
  const step = factor.solve(rhs);
  const r = residualOf(matrix, step, rhs);
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

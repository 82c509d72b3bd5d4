/**
 * Named tolerances and caps of the network solver, in one place, each with its reason.
 * Exports `SOLVER_DEFAULTS` and `SolverOptions`.
 */
export const SOLVER_DEFAULTS = {
  /**
   * Mass residual at every port, relative to the smaller of the two phase throughputs: 1e-12
   * leaves three to four digits above double-precision rounding on a chip of ~10⁴ ports.
   */
  relativeTolerance: 1e-12,
  /**
   * Pseudo-time steps at most. Every chip of the benchmark families settles in under 100; the
   * cap only bounds the work on a system that has no steady state.
   */
  maxIterations: 400,
  /**
   * Steps at most of an attempt from a warm start; a sweep, whose warm starts come from a
   * neighbouring point, asks for fewer (a warm start that has not settled in a few dozen steps
   * is one a cold start settles sooner).
   */
  maxWarmIterations: 400,
  /**
   * Pseudo-time step, in units of each row's own relaxation time (its throughflow conductance
   * over its compliance), taken once a Newton step fails its line search, then cut by 4 at each
   * further failure.
   */
  fallbackPseudoStep: 16,
  /** Beyond this pseudo-time step the iteration is Newton's method. */
  maxPseudoStep: 1e14,
  /** Shortest step of the backtracking line search before the pseudo-time step is cut instead. */
  minStep: 1 / 64,
  /** A step that raises the merit above this multiple is rejected and the pseudo-time step cut by 4. */
  rejectGrowth: 4,
  /**
   * Attempts at most (solver/newton.ts `solveNetwork`: merit weightings × warm and cold start);
   * a sweep that can move on to the next point asks for fewer.
   */
  maxAttempts: Infinity,
  linear: 'sparse' as 'sparse' | 'dense',
};

export type SolverOptions = Partial<typeof SOLVER_DEFAULTS>;

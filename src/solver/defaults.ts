/**
 * Named tolerances and caps of the network solver, in one place.
 */
export const SOLVER_DEFAULTS = {
  /** Mass residual at every port, relative to the smaller of the two phase throughputs. */
  relativeTolerance: 1e-12,
  /** Newton iterations per settling of compositions and split states. */
  maxNewtonIterations: 60,
  /** Times compositions or split states may be updated before the solve gives up. */
  maxStateRounds: 60,
  /** Smallest line-search step before a step is taken anyway. */
  minStep: 1 / 1024,
  /** Fraction of the distance to α = 0 or 1 that one step may cover. */
  holdupBoundaryFraction: 0.9,
  linear: 'sparse' as 'sparse' | 'dense',
};

export type SolverOptions = Partial<typeof SOLVER_DEFAULTS>;

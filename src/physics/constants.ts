/**
 * Constants the physics shares, each with its source. Exports `GRAVITY` and
 * `SATURATED_HALF_ARGUMENT`.
 */

/** Standard gravity, m/s² (CGPM 1901, exact by definition). */
export const GRAVITY = 9.80665;

/**
 * tanh(x) equals 1 in double precision for x > 19 (1 − tanh x ≈ 2e^(−2x), and 2e^(−38) < 2^−53):
 * the series of the rectangular duct and of the two-layer section stop summing terms there.
 */
export const SATURATED_HALF_ARGUMENT = 19;

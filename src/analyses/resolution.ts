/**
 * What a solution resolves: the size below which a computed value is rounding and solver
 * tolerance, not a result, so that reports print it as 0. Exports `pressureResolution`,
 * `RELATIVE_PRESSURE_RESOLUTION`, `RELATIVE_FLOW_RESOLUTION`. No I/O.
 */
import { max as maxOf } from 'd3-array';
import type { ChipSolution } from './chip.js';

/**
 * Pressures are known to about this share of the highest pressure in the chip. The solver settles
 * mass balances to 1e-12 of the throughput (DEVELOPERS.md, "The solver in one paragraph"), which
 * fixes pressures to about 1e-12 of the pressure scale, and a difference of two pressures of size
 * P carries their rounding, about 2·2.2e-16·P (IEEE 754 double); 1e-9 leaves a factor of 1000 for
 * the conditioning of the network.
 */
export const RELATIVE_PRESSURE_RESOLUTION = 1e-9;

/**
 * Flows are known to about this share of the throughput, for the same reasons: mass balances
 * settled to 1e-12, a factor of 1000 for conditioning. A spread between contactors (a CV, or its
 * standard deviation over realisations) below it is rounding, not a spread.
 */
export const RELATIVE_FLOW_RESOLUTION = 1e-9;

/** The smallest pressure difference the solution resolves, Pa (e.g. a split's margin). */
export function pressureResolution(result: Pick<ChipSolution, 'nodes'>): number {
  const highest = maxOf(result.nodes, (n) => Math.max(Math.abs(n.pressure), Math.abs(n.pressureA ?? 0), Math.abs(n.pressureB ?? 0))) ?? 0;
  return RELATIVE_PRESSURE_RESOLUTION * highest;
}

/**
 * The network solve with curved interfaces: every contactor's lanes depend on its phase pressure
 * difference Δ = p_far − p_near through the arc's curvature κ = Δ/γ (physics/curvedLanes.ts).
 * Exports `solveCurvedInterface`, `CURVATURE_TOLERANCE`, `MAX_CURVATURE_ROUNDS`. Iterates
 * solveNetwork; knows nothing of files or reports.
 *
 * Method: an outer fixed point on κ. Round 0 is the flat solve (κ = 0 everywhere), whose
 * holdups are kept as the flat reference; each further round sets every contactor's κ from
 * the last solution's Δ (the same at both ends of a contactor, since its lanes feel one drop)
 * and solves again from it (warm start). It settles when no contactor's dimensionless
 * curvature κ·D/2 moves by more than CURVATURE_TOLERANCE between rounds (the flows move by about
 * a third of that, below the network's own tolerance), and stops unsettled after
 * MAX_CURVATURE_ROUNDS. Δ does not enter the Newton Jacobian of a round (κ is fixed there):
 * the fixed point converges linearly, at the rate of the loop gain (how far a change of the
 * lanes through κ moves Δ back). Where the splits fix Δ (pinned at a window limit, or set by the
 * outlets) the gain is zero and one round settles it, as on the bundled aqueous chip. The
 * Newton coupling of Δ (the lanes' ∂k/∂κ, which curvedLanes.ts returns, into the Jacobian) is
 * the next step.
 */
import type { Network } from '../network/assemble.js';
import type { SolverOptions } from './defaults.js';
import { solveNetwork, SolverWorkspace, type NetworkSolution, type WarmStart } from './newton.js';
import { CURVATURE_LIMIT } from '../physics/interfaceArc.js';
import { sectionProfile } from '../physics/curvedSection.js';

export const CURVATURE_TOLERANCE = 1e-11;
export const MAX_CURVATURE_ROUNDS = 40;

export interface CurvedInterfaceResult {
  /** Near-lane holdup of every contactor with a flat interface (round 0). */
  flatHoldup: Float64Array;
  /** Curvature of every contactor's interface at the end, 1/m, and its κ·D/2. */
  curvature: Float64Array;
  dimensionless: Float64Array;
  /** Rounds after the flat one, and whether the last change was within CURVATURE_TOLERANCE. */
  rounds: number;
  settled: boolean;
  /** Largest change of κ·D/2 in the last round. */
  lastChange: number;
  /** Contactors whose |κ|·D/2 exceeds the tables' limit (held at it). */
  held: number[];
}

export function solveCurvedInterface(net: Network, tension: number, options: SolverOptions = {}, warm?: WarmStart, workspace = new SolverWorkspace()): { raw: NetworkSolution; curved: CurvedInterfaceResult } {
  const n = net.contactors.length;
  for (const el of net.contactors) el.curvature = 0;
  let raw = solveNetwork(net, options, warm, workspace);
  const flatHoldup = Float64Array.from(raw.holdup);
  const halfDepth = net.contactors.map((el) => 0.5 * sectionProfile(el.section).depth);
  const curvature = new Float64Array(n);
  const dimensionless = new Float64Array(n);
  let rounds = 0;
  let lastChange = Infinity;
  while (raw.converged && rounds < MAX_CURVATURE_ROUNDS) {
    lastChange = 0;
    net.contactors.forEach((el, c) => {
      const delta = 0.5 * (raw.pressure[el.farIn]! - raw.pressure[el.nearIn]! + raw.pressure[el.farOut]! - raw.pressure[el.nearOut]!);
      const kappa = delta / tension;
      lastChange = Math.max(lastChange, Math.abs(kappa - el.curvature) * halfDepth[c]!);
      el.curvature = kappa;
      curvature[c] = kappa;
      dimensionless[c] = kappa * halfDepth[c]!;
    });
    if (lastChange <= CURVATURE_TOLERANCE) break;
    raw = solveNetwork(net, options, raw, workspace);
    rounds++;
  }
  const held: number[] = [];
  dimensionless.forEach((c, i) => {
    if (Math.abs(c) > CURVATURE_LIMIT) held.push(i);
  });
  return { raw, curved: { flatHoldup, curvature, dimensionless, rounds, settled: raw.converged && lastChange <= CURVATURE_TOLERANCE, lastChange, held } };
}

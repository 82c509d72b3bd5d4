/**
 * The network solve with curved interfaces: every contactor's lanes depend on its phase pressure
 * difference Δ = p_far − p_near through the arc's curvature κ = Δ/γ (physics/curvedLanes.ts).
 * Exports `solveCurvedInterface`, `CURVATURE_TOLERANCE`, `MAX_CURVATURE_ROUNDS`. Iterates
 * solveNetwork; knows nothing of files or reports.
 *
 * Method: first the flat solve (κ = 0 everywhere), whose holdups are kept as the flat reference.
 * Then the coupled solve from it (warm start): with `network.curvedTension` set, the assembly
 * (assembly.ts) takes every contactor's κ from the iterate's Δ and puts ∂k/∂κ·∂κ/∂p of both
 * lanes into the Newton Jacobian, so the solver's own convergence test covers the arc. Should
 * the coupled solve not settle, an outer fixed point on κ takes over: each round sets every κ
 * from the last solution's Δ and solves with κ fixed (warm start), until no κ·D/2 moves by more
 * than CURVATURE_TOLERANCE between rounds (the flows move by about a third of that, below the
 * network's own tolerance), or stops unsettled after MAX_CURVATURE_ROUNDS.
 */
import type { Network } from '../network/assemble.js';
import type { SolverOptions } from './defaults.js';
import { solveNetwork, SolverWorkspace, type NetworkSolution, type WarmStart } from './newton.js';
import { CURVATURE_LIMIT } from '../physics/interfaceArc.js';
import { sectionProfile } from '../physics/curvedSection.js';

export const CURVATURE_TOLERANCE = 1e-11;
export const MAX_CURVATURE_ROUNDS = 40;

export interface CurvedInterfaceResult {
  /** Near-lane holdup of every contactor with a flat interface (the first solve). */
  flatHoldup: Float64Array;
  /** Curvature of every contactor's interface at the end, 1/m, and its κ·D/2. */
  curvature: Float64Array;
  dimensionless: Float64Array;
  /** `newton`: the coupled solve settled; `fixed-point`: the outer iteration did the work. */
  method: 'newton' | 'fixed-point';
  /** Rounds of the fixed point (0 when the coupled solve settled), and whether the answer settled. */
  rounds: number;
  settled: boolean;
  /** Largest change of κ·D/2 in the last round of the fixed point (0 after the coupled solve). */
  lastChange: number;
  /** Contactors whose |κ|·D/2 exceeds the tables' limit (held at it). */
  held: number[];
}

const deltaOf = (net: Network, raw: NetworkSolution, c: number) => {
  const el = net.contactors[c]!;
  return 0.5 * (raw.pressure[el.farIn]! - raw.pressure[el.nearIn]! + raw.pressure[el.farOut]! - raw.pressure[el.nearOut]!);
};

/** `coupled` false skips the coupled solve and goes straight to the fixed point (to check one against the other). */
export function solveCurvedInterface(net: Network, tension: number, options: SolverOptions = {}, warm?: WarmStart, workspace = new SolverWorkspace(), coupled = true): { raw: NetworkSolution; curved: CurvedInterfaceResult } {
  const n = net.contactors.length;
  for (const el of net.contactors) el.curvature = 0;
  net.curvedTension = undefined;
  const flat = solveNetwork(net, options, warm, workspace);
  const flatHoldup = Float64Array.from(flat.holdup);
  const halfDepth = net.contactors.map((el) => 0.5 * sectionProfile(el.section).depth);

  let raw = flat;
  if (coupled) {
    net.curvedTension = tension;
    try {
      raw = solveNetwork(net, options, flat.converged ? flat : warm, workspace);
    } finally {
      net.curvedTension = undefined;
    }
  }
  let method: CurvedInterfaceResult['method'] = 'newton';
  let rounds = 0;
  let lastChange = 0;
  if (!coupled || !raw.converged) {
    method = 'fixed-point';
    raw = flat;
    lastChange = Infinity;
    while (raw.converged && rounds < MAX_CURVATURE_ROUNDS) {
      lastChange = 0;
      net.contactors.forEach((el, c) => {
        const kappa = deltaOf(net, raw, c) / tension;
        lastChange = Math.max(lastChange, Math.abs(kappa - el.curvature) * halfDepth[c]!);
        el.curvature = kappa;
      });
      if (lastChange <= CURVATURE_TOLERANCE) break;
      raw = solveNetwork(net, options, raw, workspace);
      rounds++;
    }
  }
  const curvature = new Float64Array(n);
  const dimensionless = new Float64Array(n);
  const held: number[] = [];
  net.contactors.forEach((el, c) => {
    curvature[c] = method === 'newton' ? deltaOf(net, raw, c) / tension : el.curvature;
    // The coupled solution's κ stays with the network, so that work at the solution (hold tolerances) sees it.
    el.curvature = curvature[c]!;
    dimensionless[c] = curvature[c]! * halfDepth[c]!;
    if (Math.abs(dimensionless[c]!) > CURVATURE_LIMIT) held.push(c);
  });
  const settled = raw.converged && lastChange <= CURVATURE_TOLERANCE;
  return { raw, curved: { flatHoldup, curvature, dimensionless, method, rounds, settled, lastChange, held } };
}

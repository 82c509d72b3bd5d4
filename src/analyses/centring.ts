/**
 * Centring the splits with the free settings alone: the values of a few settings (an outlet's
 * back-pressure, say) that bring every split's p_B − p_A as near the middle of its window as
 * they can, in the least-squares sense. What `make` does to a generated chip, and the first
 * stage of a design from a start where splits leak (a leaking split's sensitivities to widths
 * say little until the chip is near its windows). Exports `centreSplits`. No I/O, no units.
 *
 * Gauss–Newton with a Levenberg–Marquardt weight (Moré, 1978, "The Levenberg–Marquardt
 * algorithm: implementation and theory", Numerical Analysis, Springer, pp. 105–116) on the residuals r_s = (t_s − mid_s)/half_s, with t_s = Δ_s + ℓ_s/κ_s the split law's own
 * trial value (Δ while pinned; past a limit, by how much the leak pushes), whose slopes in each
 * setting come from the factored Jacobian (solver/sensitivity.ts). A step is kept where ‖r‖²
 * falls; the weight starts at 0 (Gauss–Newton: Δ is linear in the settings while the splits
 * are pinned), grows to a quarter and then fourfold after each refused step (the trial value
 * past a limit is only roughly linear), and falls tenfold after each kept one.
 */
import { Matrix, solve } from 'ml-matrix';
import { NetworkTangents } from '../solver/sensitivity.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip } from '../network/model.js';
import { solveChip, warmStartFrom, type SolvedChip } from './chip.js';
import { withSettings, type Setting } from './settings.js';

export interface Centred {
  solved: SolvedChip;
  /** The settings' values (as a layout holds them: a pressure without its reservoir head). */
  values: number[];
  /** Each split's position in its window at the end, −1 at the low limit, +1 at the high. */
  positions: number[];
  /** Chip solves made. */
  solves: number;
}

const MAX_STEPS = 30;
/** A position change below this (a millionth of a half window) ends the iteration. */
const SETTLED = 1e-6;

function positionsOf(solved: SolvedChip): number[] {
  const { network: net, raw, result } = solved;
  return net.splits.map((sp, s) => {
    const [low, high] = sp.window;
    const sign = sp.nearPhase === 'A' ? 1 : -1;
    const trial = result.splits[s]!.pressureDifference + (sign * raw.leak[s]!) / sp.contactor.scale;
    return (trial - (low + high) / 2) / ((high - low) / 2);
  });
}

/** `start` are the settings' values in `chip`; `bounds` their allowed ranges. */
export function centreSplits(chip: Chip, settings: Setting[], start: number[], bounds: Array<[number, number]>, solver: SolverOptions = {}, first?: SolvedChip): Centred {
  let solved = first ?? solveChip(chip, solver);
  let values = start.slice();
  let r = positionsOf(solved);
  const sumSquares = (v: number[]) => v.reduce((a, x) => a + x * x, 0);
  let weight = 0;
  let solves = 0;
  const centredAlready = (v: number[]) => v.every((x) => Math.abs(x) < SETTLED);
  for (let step = 0; step < MAX_STEPS && solved.raw.converged && !centredAlready(r); step++) {
    const tangents = new NetworkTangents(solved.network, solved.raw, solved.workspace);
    const net = solved.network;
    // dr_s/dθ_k, from dΔ and dℓ along each setting.
    const J = settings.map((s) => {
      const t = tangents.tangent({ port: net.portsOf.get(s.node)![0]!, quantity: s.quantity });
      return net.splits.map((sp, i) => {
        const sign = sp.nearPhase === 'A' ? 1 : -1;
        return (t.splitDelta[i]! + (sign * t.leak[i]!) / sp.contactor.scale) / ((sp.window[1] - sp.window[0]) / 2);
      });
    });
    const n = settings.length;
    const normal = new Matrix(n, n);
    const rhs = new Matrix(n, 1);
    for (let a = 0; a < n; a++) {
      let g = 0;
      for (let i = 0; i < r.length; i++) g += J[a]![i]! * r[i]!;
      rhs.set(a, 0, -g);
      for (let b = 0; b < n; b++) {
        let h = 0;
        for (let i = 0; i < r.length; i++) h += J[a]![i]! * J[b]![i]!;
        normal.set(a, b, h);
      }
    }
    let accepted = false;
    while (!accepted && weight < 1e8) {
      const damped = normal.clone();
      for (let a = 0; a < n; a++) damped.set(a, a, normal.get(a, a) * (1 + weight) + 1e-300);
      const d = solve(damped, rhs).getColumn(0);
      const next = values.map((v, k) => Math.min(bounds[k]![1], Math.max(bounds[k]![0], v + d[k]!)));
      const trial = solveChip(withSettings(chip, settings.map((s, k) => [s, next[k]!] as const)), solver, warmStartFrom(solved), solved.workspace);
      solves++;
      const rNext = trial.raw.converged ? positionsOf(trial) : undefined;
      if (rNext && sumSquares(rNext) < sumSquares(r)) {
        let moved = 0;
        rNext.forEach((x, i) => (moved = Math.max(moved, Math.abs(x - r[i]!))));
        [solved, values, r] = [trial, next, rNext];
        weight /= 10;
        accepted = true;
        if (moved < SETTLED) return { solved, values, positions: r, solves };
      } else {
        weight = Math.max(4 * weight, 0.25);
      }
    }
    if (!accepted) break;
  }
  return { solved, values, positions: r, solves };
}

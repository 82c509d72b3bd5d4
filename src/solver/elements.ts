/**
 * The element laws of the two-phase network, each as a value with the partial derivatives the
 * Newton system needs. Exports `plainLaw`, `laneLaw`, `splitLaw`, `mergeState` and their result
 * types. Pure functions of numbers: no network, no numbering, no allocation of arrays.
 *
 * Units: pressures Pa, flows m³/s, viscosities Pa·s. Every complementarity row is written in
 * flow units, so that one tolerance (a flow) judges all rows.
 */
import type { LaneConductances } from '../physics/lanes.js';

export interface PlainLaw {
  /** Flow from → to, m³/s. */
  q: number;
  /** dQ/d(p_from) = −dQ/d(p_to), m³/(Pa·s). */
  g: number;
  /** dQ/dx_up through the viscosity of the upstream composition, m³/s. */
  dqDx: number;
}

/**
 * Plain segment carrying a liquid of A-fraction x: Q = Δp/(r0·μ(x)), μ(x) = xμ_A + (1 − x)μ_B,
 * the homogeneous (flow-weighted by volume) viscosity after Cicchitti et al. (1960); for one
 * phase it is Hagen–Poiseuille or the rectangular-duct series (r0 = L/k per unit viscosity).
 */
export function plainLaw(dp: number, r0: number, x: number, muA: number, muB: number): PlainLaw {
  const mu = x * muA + (1 - x) * muB;
  const g = 1 / (r0 * mu);
  const q = dp * g;
  return { q, g, dqDx: (-q * (muA - muB)) / mu };
}

export interface LaneLaw {
  qNear: number;
  qFar: number;
  /** dQ/d(drop) of each lane, m³/(Pa·s). */
  gNear: number;
  gFar: number;
  /** dQ/dα of each lane, m³/s. */
  dNearDAlpha: number;
  dFarDAlpha: number;
  /** dQ/dx of each lane through the near and the far lane's viscosity, m³/s. */
  dNearDxNear: number;
  dNearDxFar: number;
  dFarDxNear: number;
  dFarDxFar: number;
}

/**
 * Contactor lanes: Q_near = d_near·k_near(α)/L, Q_far = d_far·k_far(α)/L, with d the pressure
 * drop along each lane, k from the two-layer series (physics/lanes.ts) and the lane viscosities
 * μ(x) of the compositions that enter them.
 */
export function laneLaw(dNear: number, dFar: number, length: number, k: LaneConductances, muA: number, muB: number): LaneLaw {
  const dMu = muA - muB;
  return {
    qNear: (dNear * k.kNear) / length,
    qFar: (dFar * k.kFar) / length,
    gNear: k.kNear / length,
    gFar: k.kFar / length,
    dNearDAlpha: (dNear * k.dkNear) / length,
    dFarDAlpha: (dFar * k.dkFar) / length,
    dNearDxNear: (dNear * k.dkNearDMuNear * dMu) / length,
    dNearDxFar: (dNear * k.dkNearDMuFar * dMu) / length,
    dFarDxNear: (dFar * k.dkFarDMuNear * dMu) / length,
    dFarDxFar: (dFar * k.dkFarDMuFar * dMu) / length,
  };
}

export type SplitBranch = 'pinned' | 'high' | 'low';

/**
 * The clamp mid(low, y, high) smoothed with width ε > 0, and its slope in y:
 * low + φ(y − low) − φ(y − high), φ(t) = ½(t + √(t² + 4ε²)), the Chen–Harker–Kanzow–Smale
 * smoothing of max(0, t) (Kanzow, 1996, SIAM J. Matrix Anal. Appl. 17:851). It lies within ε
 * of the clamp, is infinitely differentiable for ε > 0 and equals the clamp at ε = 0; a
 * smoothing Newton method drives ε to 0 along the iteration (Qi, Sun & Zhou, 2000, Math.
 * Program. 87:1).
 */
export function smoothMid(y: number, low: number, high: number, eps: number): { value: number; slope: number } {
  const a = y - low;
  const b = y - high;
  const ra = Math.sqrt(a * a + 4 * eps * eps);
  const rb = Math.sqrt(b * b + 4 * eps * eps);
  // φ(t) written as 2ε²/(√(t² + 4ε²) − t) for t < 0, which does not cancel.
  const phi = (t: number, r: number) => (t >= 0 ? 0.5 * (t + r) : (2 * eps * eps) / (r - t));
  return { value: low + phi(a, ra) - phi(b, rb), slope: 0.5 * (a / ra - b / rb) };
}

export interface ComplementarityRow<Branch> {
  branch: Branch;
  /** Residual, m³/s. */
  F: number;
  /** d/d(bounded quantity) and d/d(multiplier flow). */
  dBounded: number;
  dFlow: number;
}

/**
 * Split: the interface stays pinned (no leak) while Δ = p_B − p_A lies inside the Young–Laplace
 * window, and is held at a window limit while the higher-pressure phase breaks through
 * (a continuous model). As one semismooth equation (an active-set method that Newton switches
 * by itself; Qi & Sun, 1993, Math. Program. 58:353):
 *   Δ = clamp(Δ + ℓ_A/κ, low, high),  ℓ_A the leak toward A's outlet, κ a conductance scale.
 * Written in flow units: inside, F = −ℓ_A; at a limit, F = κ·(Δ − limit). `branch` imposes
 * one (an active-set prediction). With `eps` > 0 the clamp is smoothed (`smoothMid`, width eps
 * in Pa): F = κ·(Δ − mid_ε(Δ + ℓ_A/κ)), smooth in both unknowns; `branch` is then ignored and
 * the one returned is the clamp's.
 */
export function splitLaw(delta: number, leakA: number, kappa: number, low: number, high: number, branch?: SplitBranch, eps = 0): ComplementarityRow<SplitBranch> {
  const trial = delta + leakA / kappa;
  if (eps > 0) {
    const mid = smoothMid(trial, low, high, eps);
    return { branch: trial >= high ? 'high' : trial <= low ? 'low' : 'pinned', F: kappa * (delta - mid.value), dBounded: kappa * (1 - mid.slope), dFlow: -mid.slope };
  }
  if (branch === 'high' || branch === 'low') return { branch, F: kappa * (delta - (branch === 'high' ? high : low)), dBounded: kappa, dFlow: 0 };
  if (branch === 'pinned' || (trial > low && trial < high)) return { branch: 'pinned', F: -leakA, dBounded: 0, dFlow: -1 };
  const limit = trial >= high ? high : low;
  return { branch: trial >= high ? 'high' : 'low', F: kappa * (delta - limit), dBounded: kappa, dFlow: 0 };
}

/**
 * A contactor is `open` while both phases enter it. When the network cannot supply one feed,
 * that phase's layer thins to nothing: the other phase fills the channel (`nearFills`,
 * α = 1, or `farFills`, α = 0) and the crossover χ (near → far at the merge) carries it back
 * into the starved feed line.
 */
export type FeedBranch = 'open' | 'nearFills' | 'farFills';

export interface MergeState {
  branch: FeedBranch;
  /** Near-lane holdup α = mid(0, z, 1) and its slope in z. */
  alpha: number;
  dAlpha: number;
  /** Crossover χ = κ·(z − α), near → far at the merge, m³/s, and its slope in z. */
  cross: number;
  dCross: number;
  /** The slopes are those of the open piece (both lanes move with z). */
  openSlopes: boolean;
}

/**
 * Merge: the box complementarity between the holdup α ∈ [0, 1] and the crossover χ
 * (χ = 0 while 0 < α < 1, χ ≥ 0 at α = 1, χ ≤ 0 at α = 0), solved through one unknown z per
 * contactor: α = mid(0, z, 1), χ = κ·(z − α), which satisfies it for every z (Robinson's normal
 * map, 1992, Math. Oper. Res. 17:691). A line search along z passes through the change of state
 * continuously, and the Jacobian column of z is the α-column inside and κ times the χ-column
 * outside, never empty. κ is a flow scale. `slopesOf` takes the slopes of another piece while
 * the value stays z's own (an active-set prediction for the next Newton step). With `eps` > 0,
 * α = mid_ε(0, z, 1) (`smoothMid`) and `slopesOf` is ignored: every piece then has slopes in
 * both α and χ.
 */
export function mergeState(z: number, kappa: number, slopesOf?: FeedBranch, eps = 0): MergeState {
  const branch: FeedBranch = z >= 1 ? 'nearFills' : z <= 0 ? 'farFills' : 'open';
  if (eps > 0) {
    const mid = smoothMid(z, 0, 1, eps);
    return { branch, alpha: mid.value, dAlpha: mid.slope, cross: kappa * (z - mid.value), dCross: kappa * (1 - mid.slope), openSlopes: branch === 'open' };
  }
  const alpha = Math.min(1, Math.max(0, z));
  // The slopes are those of the piece `slopesOf` (an active-set prediction), else of z's own.
  const open = (slopesOf ?? branch) === 'open';
  return { branch, alpha, dAlpha: open ? 1 : 0, cross: kappa * (z - alpha), dCross: open ? 0 : kappa, openSlopes: open };
}

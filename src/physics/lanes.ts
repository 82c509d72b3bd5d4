/**
 * The two lanes of a contactor as the network solver sees them: the conductance of each lane
 * (phase next to s = 0 and phase next to s = S) on the closed holdup interval 0 ≤ α ≤ 1, with
 * its derivatives in the holdup and in both lane viscosities. Exports `laneConductances`
 * (rectangles: the exact series), `shapedLaneConductances` (etched and trapezoidal sections:
 * the interpolant of a HoldupTable, no solve per call), `LANE_VISCOSITY_STEP`, `EDGE_LAYER` and
 * `EDGE_SECANT`. SI units only; no I/O, no state beyond the series' scratch vectors.
 *
 * A starved contactor sits exactly at α = 0 or 1 (one phase fills the channel), so the solver
 * must be able to ask for the edges; the series itself is defined on the open interval only.
 */
import { rectConductance } from './singlePhase.js';
import { twoLayerFlow } from './twoLayer.js';
import type { HoldupTable } from './section.js';

/**
 * Within this holdup of an edge the lanes are closed by a quadratic in the thin layer's share
 * e (α = e or 1 − e): it matches the series' value and slope at e = EDGE_LAYER and the
 * single-phase duct at e = 0. The thin lane's conductance behaves as e² there (a layer dragged
 * by the interface: flow ∝ thickness²), so the closing is exact to O(e³·k) ≈ 1e-18·k.
 */
export const EDGE_LAYER = 1e-6;

/**
 * At an edge itself the thin lane's slope dk/dα is zero (k ∝ e²), so a Newton step from a
 * starved contactor could never see the starved phase come back. There the holdup slopes are
 * secants over this share of the width instead: an element of the generalised Jacobian that
 * still points into the interior (a Newton step from the edge then under-predicts how far the
 * layer opens, and the next step, from the interior, uses the true slope).
 */
export const EDGE_SECANT = 1e-3;

/** Relative step of the viscosity difference quotient (the series is smooth in μ). */
const VISCOSITY_STEP = 1e-6;

export interface LaneConductances {
  /** Flow per unit pressure gradient of the near lane (next to s = 0) and the far lane, m⁴/(Pa·s). */
  kNear: number;
  kFar: number;
  /** d/dα, m⁴/(Pa·s). */
  dkNear: number;
  dkFar: number;
  /** d/dμ_near and d/dμ_far of each lane, m⁴/(Pa²·s²); zero unless asked for. */
  dkNearDMuNear: number;
  dkNearDMuFar: number;
  dkFarDMuNear: number;
  dkFarDMuFar: number;
}

/**
 * Lane conductances at holdup α ∈ [0, 1] of the near lane (the `across` share it fills).
 * Interior: the exact two-layer series (twoLayer.ts). Edges: the quadratic closing above.
 * Viscosity slopes: k_i(cμ_n, cμ_f) = k_i/c gives μ_n ∂k/∂μ_n + μ_f ∂k/∂μ_f = −k (Stokes flow is
 * linear in 1/μ), so one difference quotient in μ_n yields both; `viscositySlopes` asks for them.
 */
export function laneConductances(across: number, along: number, holdup: number, muNear: number, muFar: number, viscositySlopes: boolean): LaneConductances {
  const base = lanesAt(across, along, holdup, muNear, muFar);
  if (!viscositySlopes) return base;
  const h = VISCOSITY_STEP * muNear;
  const shifted = lanesAt(across, along, holdup, muNear + h, muFar);
  base.dkNearDMuNear = (shifted.kNear - base.kNear) / h;
  base.dkFarDMuNear = (shifted.kFar - base.kFar) / h;
  base.dkNearDMuFar = (-base.kNear - muNear * base.dkNearDMuNear) / muFar;
  base.dkFarDMuFar = (-base.kFar - muNear * base.dkFarDMuNear) / muFar;
  return base;
}

function lanesAt(across: number, along: number, holdup: number, muNear: number, muFar: number): LaneConductances {
  if (holdup === 0 || holdup === 1) {
    const edge = closedLanes(across, along, holdup, muNear, muFar);
    const inside = closedLanes(across, along, holdup === 1 ? 1 - EDGE_SECANT : EDGE_SECANT, muNear, muFar);
    const h = holdup === 1 ? -EDGE_SECANT : EDGE_SECANT;
    edge.dkNear = (inside.kNear - edge.kNear) / h;
    edge.dkFar = (inside.kFar - edge.kFar) / h;
    return edge;
  }
  return closedLanes(across, along, holdup, muNear, muFar);
}

function closedLanes(across: number, along: number, holdup: number, muNear: number, muFar: number): LaneConductances {
  const result: LaneConductances = { kNear: 0, kFar: 0, dkNear: 0, dkFar: 0, dkNearDMuNear: 0, dkNearDMuFar: 0, dkFarDMuNear: 0, dkFarDMuFar: 0 };
  if (holdup >= EDGE_LAYER && holdup <= 1 - EDGE_LAYER) {
    const r = twoLayerFlow({ across, along, holdup, muA: muNear, muB: muFar });
    result.kNear = r.kA;
    result.kFar = r.kB;
    result.dkNear = r.dkA;
    result.dkFar = r.dkB;
    return result;
  }
  // Closing toward the edge where the near lane fills (α → 1) or the far lane fills (α → 0).
  const nearFills = holdup > 0.5;
  const e = nearFills ? 1 - holdup : holdup;
  const r = twoLayerFlow({ across, along, holdup: nearFills ? 1 - EDGE_LAYER : EDGE_LAYER, muA: muNear, muB: muFar });
  const full = rectConductance(across, along, nearFills ? muNear : muFar);
  // In e: k(e) = k0 + s·e + c·e², k(0) = k0, k(δ) = kδ, k'(δ) = k'δ (dα/de = ∓1).
  const close = (k0: number, kDelta: number, slopeDelta: number): [number, number] => {
    const d = EDGE_LAYER;
    const c = (slopeDelta * d - (kDelta - k0)) / (d * d);
    const s = slopeDelta - 2 * c * d;
    return [k0 + s * e + c * e * e, s + 2 * c * e];
  };
  const sign = nearFills ? -1 : 1;
  const [kN, dkNde] = close(nearFills ? full : 0, r.kA, sign * r.dkA);
  const [kF, dkFde] = close(nearFills ? 0 : full, r.kB, sign * r.dkB);
  result.kNear = kN;
  result.kFar = kF;
  result.dkNear = sign * dkNde;
  result.dkFar = sign * dkFde;
  return result;
}

/**
 * Relative step of the viscosity-ratio central difference of the shaped lanes: the tables at
 * r(1 ± h) share their nodes and strip layout (they depend on the interface position only), so
 * the discretisation error, smooth in r, cancels in the difference; the truncation error is
 * about h² ≈ 1e-6 of the slope and rounding about 1e-13/h.
 */
export const LANE_VISCOSITY_STEP = 1e-3;

/**
 * Lanes of an etched or trapezoidal contactor at holdup α ∈ [0, 1], the near lane left of the
 * interface (the shapes are symmetric, so left and right are interchangeable). Stokes flow is
 * linear in 1/μ: k_i(μ_n, μ_f) = k_i(r, 1)/μ_f with r = μ_n/μ_f, so one table per ratio serves
 * every viscosity pair; `tableAt(r)` returns the HoldupTable of (section, r, 1), whose stretch
 * interpolants give k and dk/dα (section.ts). At α = 0 and 1 the thin lane carries nothing
 * and its slope there is the secant over EDGE_SECANT, as for rectangles. Viscosity slopes:
 * ∂k_i/∂μ_n = (∂k_i(r, 1)/∂r)/μ_f² by a central difference in r over the tables at r(1 ± h),
 * and μ_n ∂k/∂μ_n + μ_f ∂k/∂μ_f = −k gives the other.
 */
export function shapedLaneConductances(tableAt: (ratio: number) => HoldupTable, holdup: number, muNear: number, muFar: number, viscositySlopes: boolean): LaneConductances {
  const ratio = muNear / muFar;
  const table = tableAt(ratio);
  const k = table.flowsAt(holdup);
  const result: LaneConductances = {
    kNear: k.kA / muFar,
    kFar: k.kB / muFar,
    dkNear: k.dkA / muFar,
    dkFar: k.dkB / muFar,
    dkNearDMuNear: 0,
    dkNearDMuFar: 0,
    dkFarDMuNear: 0,
    dkFarDMuFar: 0,
  };
  if (holdup === 0 || holdup === 1) {
    const h = holdup === 1 ? -EDGE_SECANT : EDGE_SECANT;
    const inside = table.flowsAt(holdup + h);
    result.dkNear = (inside.kA - k.kA) / h / muFar;
    result.dkFar = (inside.kB - k.kB) / h / muFar;
  }
  if (!viscositySlopes) return result;
  const step = LANE_VISCOSITY_STEP * ratio;
  const up = tableAt(ratio + step).flowsAt(holdup);
  const down = tableAt(ratio - step).flowsAt(holdup);
  result.dkNearDMuNear = (up.kA - down.kA) / (2 * step) / (muFar * muFar);
  result.dkFarDMuNear = (up.kB - down.kB) / (2 * step) / (muFar * muFar);
  result.dkNearDMuFar = (-result.kNear - muNear * result.dkNearDMuNear) / muFar;
  result.dkFarDMuFar = (-result.kFar - muNear * result.dkFarDMuNear) / muFar;
  return result;
}

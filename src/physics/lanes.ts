/**
 * The two lanes of a contactor as the network solver sees them: the conductance of each lane
 * (phase next to s = 0 and phase next to s = S) on the closed holdup interval 0 ≤ α ≤ 1, with
 * its derivatives in the holdup and in both lane viscosities. Exports `laneConductances`
 * (rectangles: the exact series), `ShapedLanes` (etched and trapezoidal sections: interpolants
 * of HoldupTables in holdup and viscosity ratio, no solve per call), `RATIO_DEGREE`,
 * `EDGE_LAYER` and `EDGE_SECANT`. SI units only; no I/O, no state beyond the series' scratch vectors.
 *
 * A starved contactor sits exactly at α = 0 or 1 (one phase fills the channel), so the solver
 * must be able to ask for the edges; the series itself is defined on the open interval only.
 */
import { rectConductance } from './singlePhase.js';
import { twoLayerFlow } from './twoLayer.js';
import type { HoldupTable } from './section.js';
import { chebyshevGrid } from './chebyshev.js';

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

/** Degree of the interpolant in log(μ_near/μ_far) between the two pure-phase ratios. */
export const RATIO_DEGREE = 6;

/**
 * Lanes of an etched or trapezoidal contactor, the near lane left of the interface (the shapes
 * are symmetric). Stokes flow is linear in 1/μ: k_i(μ_n, μ_f) = k_i(r, 1)/μ_f with r = μ_n/μ_f,
 * and the lanes' viscosities lie between the two phases' (compositions mix by volume), so r lies
 * in [r₋, r₊] = [min/max, max/min] of the phase viscosities. In α each k_i(r, 1) is the stretch
 * interpolant of the HoldupTable of (section, r, 1) (section.ts), which `tableAt(r)` returns; in
 * x = log r it is the Chebyshev–Lobatto interpolant of degree RATIO_DEGREE over the tables at
 * the nodes of [log r₋, log r₊], whose end nodes are the two pure-phase ratios: a chip whose
 * lanes carry pure phases reads one table directly, and the other nodes are built only when a
 * mixed lane or a viscosity slope is first asked for. ∂k_i/∂μ_n = (∂k_i(r, 1)/∂x)/(r μ_f²) from
 * the derivative of that interpolant, and μ_n ∂k/∂μ_n + μ_f ∂k/∂μ_f = −k gives the other.
 * At α = 0 and 1 the thin lane carries nothing and its holdup slope there is the secant over
 * EDGE_SECANT, as for rectangles. With equal phase viscosities r = 1 always; the nodes then
 * span r ∈ [e^−0.1, e^0.1] for the slopes, with r = 1 the middle node.
 * Accuracy (test/network/etchedContactors.test.ts, bench etched-contactors): k within about
 * 1e-5 of the total flow of the direct solve; dk/dα is the derivative of the table's k
 * interpolant (section.ts), so the Jacobian agrees with the residual to rounding, and it is
 * within 1e-4 of the direct solve's slope over the flat bottom and 2.3e-3 (of |dk_A| + |dk_B|)
 * next to an edge at α ≥ 0.005 (8e-3 at α = 0.002 in a 54.74° trapezoid), measured.
 */
export class ShapedLanes {
  private readonly tableAt: (ratio: number) => HoldupTable;
  private readonly centre: number;
  private readonly half: number;
  private readonly tables: Array<HoldupTable | undefined>;
  private readonly grid = chebyshevGrid(RATIO_DEGREE);
  /** k_A, k_B, dk_A/dα, dk_B/dα at each ratio node, then the x-derivative of k_A, k_B. */
  private readonly values = new Float64Array(4 * (RATIO_DEGREE + 1));

  constructor(tableAt: (ratio: number) => HoldupTable, muA: number, muB: number) {
    this.tableAt = tableAt;
    const spread = Math.abs(Math.log(muA / muB));
    this.centre = 0;
    this.half = spread > 0 ? spread : 0.1;
    this.tables = new Array(RATIO_DEGREE + 1);
  }

  conductances(holdup: number, muNear: number, muFar: number, viscositySlopes: boolean): LaneConductances {
    const ratio = muNear / muFar;
    const x = (Math.log(ratio) - this.centre) / this.half;
    const node = this.nodeAt(x);
    const needAll = node < 0 || viscositySlopes;
    const n = RATIO_DEGREE;
    const v = this.values;
    for (let j = 0; j <= n; j++) {
      if (!needAll && j !== node) continue;
      const table = this.table(j);
      const k = table.flowsAt(holdup);
      let dkA = k.dkA;
      let dkB = k.dkB;
      if (holdup === 0 || holdup === 1) {
        const h = holdup === 1 ? -EDGE_SECANT : EDGE_SECANT;
        const inside = table.flowsAt(holdup + h);
        dkA = (inside.kA - k.kA) / h;
        dkB = (inside.kB - k.kB) / h;
      }
      v.set([k.kA, k.kB, dkA, dkB], 4 * j);
    }
    const at = node >= 0 ? Array.from(v.subarray(4 * node, 4 * node + 4)) : this.interpolate(x, (j, c) => v[4 * j + c]!);
    const result: LaneConductances = {
      kNear: at[0]! / muFar,
      kFar: at[1]! / muFar,
      dkNear: at[2]! / muFar,
      dkFar: at[3]! / muFar,
      dkNearDMuNear: 0,
      dkNearDMuFar: 0,
      dkFarDMuNear: 0,
      dkFarDMuFar: 0,
    };
    if (!viscositySlopes) return result;
    // d/dx at the nodes by the differentiation matrix, then interpolated to x.
    const d1 = this.grid.d1;
    const slopeAt = (j: number, c: number) => {
      let sum = 0;
      for (let i = 0; i <= n; i++) sum += d1[j * (n + 1) + i]! * v[4 * i + c]!;
      return sum;
    };
    const dx = node >= 0 ? [slopeAt(node, 0), slopeAt(node, 1)] : this.interpolate(x, slopeAt).slice(0, 2);
    const perMuNear = 1 / (this.half * ratio * muFar * muFar);
    result.dkNearDMuNear = dx[0]! * perMuNear;
    result.dkFarDMuNear = dx[1]! * perMuNear;
    result.dkNearDMuFar = (-result.kNear - muNear * result.dkNearDMuNear) / muFar;
    result.dkFarDMuFar = (-result.kFar - muNear * result.dkFarDMuNear) / muFar;
    return result;
  }

  /** The node whose x this is (to rounding), or −1. */
  private nodeAt(x: number): number {
    const nodes = this.grid.nodes;
    for (let j = 0; j <= RATIO_DEGREE; j++) if (Math.abs(x - nodes[j]!) <= 1e-12) return j;
    return -1;
  }

  private table(j: number): HoldupTable {
    let t = this.tables[j];
    if (!t) {
      t = this.tableAt(Math.exp(this.centre + this.half * this.grid.nodes[j]!));
      this.tables[j] = t;
    }
    return t;
  }

  /** Barycentric interpolation at x of the four node columns value(j, c) (Berrut & Trefethen, 2004, SIAM Rev. 46:501). */
  private interpolate(x: number, value: (j: number, c: number) => number): number[] {
    const n = RATIO_DEGREE;
    const nodes = this.grid.nodes;
    const out = [0, 0, 0, 0];
    let weightSum = 0;
    for (let j = 0; j <= n; j++) {
      const w = ((j % 2 === 0 ? 1 : -1) * (j === 0 || j === n ? 0.5 : 1)) / (x - nodes[j]!);
      weightSum += w;
      for (let c = 0; c < 4; c++) out[c]! += w * value(j, c);
    }
    return out.map((o) => o / weightSum);
  }
}

/**
 * The lanes of a contactor whose interface is a curved arc (curvedTable.ts): the flat lanes
 * (lanes.ts: the series for rectangles, ShapedLanes for etched and trapezoidal sections) times
 * the arc's factor on each lane. Exports `curvedLaneConductances`. SI units; no I/O.
 *
 * Factor: F_i(α, κ) = T_i(α, κ)/T_i(α, 0), T the curved table at the contactor's phase
 * viscosities (near lane the phase left of the interface). κ = 0 gives F = 1 exactly (the same
 * interpolant twice), so the flat lanes are kept to the bit, with the slope in κ there. The factor is taken at the pure phases' viscosities also for
 * a lane of mixed composition (the viscosity dependence of the arc's effect is left out there;
 * mixed lanes arise only where a split leaks or a feed starves), and at α = 0 and 1 (one phase
 * fills the channel) it is 1. Slopes: d(kF)/dα = k′F + kF′, ∂(kF)/∂κ = k ∂F/∂κ, the viscosity
 * slopes of the flat lanes times F.
 */
import type { LaneConductances } from './lanes.js';
import type { CurvedTable } from './curvedTable.js';

export interface CurvedLaneConductances extends LaneConductances {
  /** d/dκ of each lane at fixed holdup, m⁵/(Pa·s). */
  dkNearDCurvature: number;
  dkFarDCurvature: number;
}

export function curvedLaneConductances(flat: LaneConductances, table: CurvedTable, holdup: number, curvature: number): CurvedLaneConductances {
  if (holdup <= 0 || holdup >= 1) return { ...flat, dkNearDCurvature: 0, dkFarDCurvature: 0 };
  const curved = table.flowsAt(holdup, curvature);
  const base = table.flowsAt(holdup, 0);
  const factor = (k: number, k0: number) => (k0 > 0 ? k / k0 : 1);
  const slope = (k: number, dk: number, k0: number, dk0: number) => (k0 > 0 ? (dk * k0 - k * dk0) / (k0 * k0) : 0);
  const fN = factor(curved.kA, base.kA);
  const fF = factor(curved.kB, base.kB);
  const dfN = slope(curved.kA, curved.dkA, base.kA, base.dkA);
  const dfF = slope(curved.kB, curved.dkB, base.kB, base.dkB);
  return {
    kNear: flat.kNear * fN,
    kFar: flat.kFar * fF,
    dkNear: flat.dkNear * fN + flat.kNear * dfN,
    dkFar: flat.dkFar * fF + flat.kFar * dfF,
    dkNearDMuNear: flat.dkNearDMuNear * fN,
    dkNearDMuFar: flat.dkNearDMuFar * fN,
    dkFarDMuNear: flat.dkFarDMuNear * fF,
    dkFarDMuFar: flat.dkFarDMuFar * fF,
    dkNearDCurvature: base.kA > 0 ? (flat.kNear * curved.dkADCurvature) / base.kA : 0,
    dkFarDCurvature: base.kB > 0 ? (flat.kFar * curved.dkBDCurvature) / base.kB : 0,
  };
}

/**
 * Channel shapes other than the rectangle and the tube, as etched into glass and silicon, and the
 * two-layer flow in them. Exports the section types `EtchedSection`, `TrapezoidSection`,
 * `ShapedSection`, `SILICON_WALL_ANGLE`, `wallProfileOf`, `shapedTwoLayerFlow` (flows per unit
 * gradient with their derivatives in the holdup and both viscosities), `shapedConductance`
 * (single phase), `shapedFlows` and `shapedFlowFraction` (no slopes), `jointHoldups`,
 * `interfaceSpan` and `forgetShapedSolves` (for the benchmarks). SI units; no I/O.
 *
 * Shapes (the cover flat on top, y the depth below it):
 * - `etched`: an isotropic wet etch under a mask opening of width w to depth d: a flat bottom of
 *   width w and quarter-round side walls of radius d (centres on the cover at the opening's
 *   edges); top width w + 2d. w = 0 is a half-disc of radius d.
 * - `trapezoid`: an anisotropic etch: a flat bottom of width b at depth d and straight walls at
 *   angle θ to it, top width b + 2d/tan θ; b = 0 is a triangle with its apex down.
 */
import { forgetCondensedStrips, spectralTwoLayer, SPECTRAL_DEGREE } from './spectralSection.js';
import { areaLeftOf, depthAt, interfacePosition, pieceEnd, pieceLength, type WallPiece, type WallProfile } from './wallProfile.js';

export interface EtchedSection {
  shape: 'etched';
  /** Width of the mask opening = width of the flat bottom, m (0 for a half-disc). */
  maskWidth: number;
  /** Etch depth = radius of the side walls, m. */
  depth: number;
}

export interface TrapezoidSection {
  shape: 'trapezoid';
  bottomWidth: number;
  depth: number;
  /** Angle between a side wall and the bottom, rad, in (0, π/2]. */
  wallAngle: number;
}

export type ShapedSection = EtchedSection | TrapezoidSection;

/**
 * The angle between the {111} side walls and the (100) surface of a silicon wafer etched
 * anisotropically, arccos(1/√3) = 54.7356°: the angle between those lattice planes of a cubic
 * crystal (common practice to quote it for KOH-etched channels).
 */
export const SILICON_WALL_ANGLE = Math.acos(1 / Math.sqrt(3));

/** The wall chain below the cover; zero-length pieces are left out. */
export function wallProfileOf(section: ShapedSection): WallProfile {
  const d = section.depth;
  const pieces: WallPiece[] = [];
  if (section.shape === 'etched') {
    const w = section.maskWidth;
    pieces.push({ kind: 'arc', cx: d, radius: d, phi0: Math.PI, phi1: Math.PI / 2 });
    if (w > 0) pieces.push({ kind: 'line', x0: d, y0: d, x1: d + w, y1: d });
    pieces.push({ kind: 'arc', cx: d + w, radius: d, phi0: Math.PI / 2, phi1: 0 });
  } else {
    const b = section.bottomWidth;
    const run = section.wallAngle >= Math.PI / 2 ? 0 : d / Math.tan(section.wallAngle);
    if (run > 0) pieces.push({ kind: 'line', x0: 0, y0: 0, x1: run, y1: d });
    if (b > 0) pieces.push({ kind: 'line', x0: run, y0: d, x1: run + b, y1: d });
    if (run > 0) pieces.push({ kind: 'line', x0: run + b, y0: d, x1: 2 * run + b, y1: 0 });
  }
  const topWidth = pieceEnd(pieces[pieces.length - 1]!);
  const partial: WallProfile = { topWidth, depth: d, area: 0, perimeter: 0, pieces };
  const sideWalls = section.shape === 'trapezoid' && section.wallAngle >= Math.PI / 2 ? 2 * d : 0;
  return { ...partial, area: areaLeftOf(partial, topWidth), perimeter: topWidth + sideWalls + pieces.reduce((s, p) => s + pieceLength(p), 0) };
}

export interface ShapedFlow {
  /** Flow of each phase per unit pressure gradient, m⁴/(Pa·s). */
  kA: number;
  kB: number;
  /** d/dα (α the share of the area that A fills), m⁴/(Pa·s). */
  dkA: number;
  dkB: number;
  /** d/dμ_A and d/dμ_B of each, m⁴/(Pa²·s²); zero unless asked for. */
  dkADMuA: number;
  dkADMuB: number;
  dkBDMuA: number;
  dkBDMuB: number;
}

/** Relative step of the central differences in the holdup (share of min(α, 1 − α)) and in μ_A. */
const HOLDUP_STEP = 1e-4;
const VISCOSITY_STEP = 1e-4;

/**
 * Two layers side by side, A left of the interface, at holdup α ∈ (0, 1), by the spectral strip
 * solver (spectralSection.ts). d/dα by a central difference of step 1e-4·min(α, 1 − α) (one-sided
 * of second order where a wall joint lies within the step, so that the strips keep their
 * layout); its truncation error is about 1e-8 of the slope, above the solver's rounding.
 * Viscosity slopes: Stokes flow is linear in 1/μ, so k(cμ_A, cμ_B) = k/c and
 * μ_A ∂k/∂μ_A + μ_B ∂k/∂μ_B = −k; one central difference in μ_A gives both.
 */
export function shapedTwoLayerFlow(section: ShapedSection, holdup: number, muA: number, muB: number, viscositySlopes = false, degree = SPECTRAL_DEGREE): ShapedFlow {
  if (!(holdup > 0 && holdup < 1) || !(muA > 0) || !(muB > 0)) {
    throw new RangeError(`shapedTwoLayerFlow needs 0 < holdup < 1 and positive viscosities (holdup ${holdup})`);
  }
  const profile = wallProfileOf(section);
  const at = (alpha: number, a = muA) => spectralTwoLayer(profile, interfacePosition(profile, alpha), a, muB, degree);
  const base = at(holdup);
  const h = HOLDUP_STEP * Math.min(holdup, 1 - holdup);
  const joints = jointHoldups(section);
  const blocked = (a: number, b: number) => joints.some((j) => j > Math.min(a, b) && j < Math.max(a, b));
  let dkA: number;
  let dkB: number;
  if (!blocked(holdup - h, holdup + h)) {
    const up = at(holdup + h);
    const down = at(holdup - h);
    dkA = (up.qA - down.qA) / (2 * h);
    dkB = (up.qB - down.qB) / (2 * h);
  } else {
    const s = blocked(holdup, holdup + 2 * h) ? -h : h;
    const f1 = at(holdup + s);
    const f2 = at(holdup + 2 * s);
    dkA = (-3 * base.qA + 4 * f1.qA - f2.qA) / (2 * s);
    dkB = (-3 * base.qB + 4 * f1.qB - f2.qB) / (2 * s);
  }
  const flow: ShapedFlow = { kA: base.qA, kB: base.qB, dkA, dkB, dkADMuA: 0, dkADMuB: 0, dkBDMuA: 0, dkBDMuB: 0 };
  if (viscositySlopes) {
    const dm = VISCOSITY_STEP * muA;
    const up = at(holdup, muA + dm);
    const down = at(holdup, muA - dm);
    flow.dkADMuA = (up.qA - down.qA) / (2 * dm);
    flow.dkBDMuA = (up.qB - down.qB) / (2 * dm);
    flow.dkADMuB = (-flow.kA - muA * flow.dkADMuA) / muB;
    flow.dkBDMuB = (-flow.kB - muA * flow.dkBDMuA) / muB;
  }
  return flow;
}

/** k_A and k_B at holdup α without slopes (one solve), m⁴/(Pa·s). */
export function shapedFlows(section: ShapedSection, holdup: number, muA: number, muB: number, degree = SPECTRAL_DEGREE): { kA: number; kB: number } {
  const profile = wallProfileOf(section);
  const r = spectralTwoLayer(profile, interfacePosition(profile, holdup), muA, muB, degree);
  return { kA: r.qA, kB: r.qB };
}

/** Flow fraction k_A/(k_A + k_B) at holdup α, without slopes (one solve; for curves). */
export function shapedFlowFraction(section: ShapedSection, holdup: number, muA: number, muB: number): number {
  const { kA, kB } = shapedFlows(section, holdup, muA, muB);
  return kA / (kA + kB);
}

/** The holdups at which the interface passes a joint of the wall (arc to bottom, wall to bottom), increasing. */
export function jointHoldups(section: ShapedSection): number[] {
  const profile = wallProfileOf(section);
  return profile.pieces.slice(0, -1).map((p) => areaLeftOf(profile, pieceEnd(p)) / profile.area);
}

/**
 * Single-phase conductances by shape and degree, for μ = 1 (k ∝ 1/μ exactly): a chip repeats a
 * few section shapes over many segments, and each costs a spectral solve.
 */
const UNIT_CONDUCTANCE = new Map<string, number>();
const UNIT_CONDUCTANCE_LIMIT = 1024;

/** Drops the kept single-phase conductances and strip condensations: what a fresh process pays (for the benchmarks). */
export function forgetShapedSolves(): void {
  UNIT_CONDUCTANCE.clear();
  forgetCondensedStrips();
}

/** Single-phase conductance k (Q = k·G), m⁴/(Pa·s): the two-layer solve with one viscosity. */
export function shapedConductance(section: ShapedSection, mu: number, degree = SPECTRAL_DEGREE): number {
  const key = `${JSON.stringify(section)}|${degree}`;
  let unit = UNIT_CONDUCTANCE.get(key);
  if (unit === undefined) {
    const profile = wallProfileOf(section);
    const r = spectralTwoLayer(profile, interfacePosition(profile, 0.5), 1, 1, degree);
    unit = r.qA + r.qB;
    if (UNIT_CONDUCTANCE.size >= UNIT_CONDUCTANCE_LIMIT) UNIT_CONDUCTANCE.clear();
    UNIT_CONDUCTANCE.set(key, unit);
  }
  return unit / mu;
}

/** The depth the side-by-side interface spans at holdup α, m (what its meniscus bridges at a split). */
export function interfaceSpan(section: ShapedSection, holdup: number): number {
  const profile = wallProfileOf(section);
  return depthAt(profile, interfacePosition(profile, holdup));
}

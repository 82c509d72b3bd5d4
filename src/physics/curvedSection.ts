/**
 * Two layers side by side with the interface a circular arc (interfaceArc.ts) in a rectangle,
 * an etched or a trapezoidal section: fully developed Stokes flow by the Chebyshev strips of
 * spectralSection.ts, with the strips next to the arc mapped transfinitely. Exports
 * `sectionProfile`, `curvedFlowsAtChord` (flows per unit gradient for a chord and a curvature),
 * `curvedTwoLayerFlow` (at a holdup, with the derivatives in holdup and curvature) and
 * `chordHoldups`. SI units; no I/O.
 *
 * Equations (G = 1): μ_i ∇²u = −1 in layer i, u = 0 on the walls and the cover; on the arc u is
 * continuous and μ_A ∂u/∂n = μ_B ∂u/∂n along its normal (Bird, Stewart & Lightfoot, Transport
 * Phenomena, 2nd ed., 2002, §2.5; the same conditions as the flat interface, the interface
 * being a streamline-parallel surface of fully developed flow). Q_i = ∬ u over layer i.
 *
 * Method: cuts at the wall joints and at the arc. A strip between two cuts is the Coons patch
 *   P(ξ, η) = (1 − s)L(η) + sR(η) + (1 − t)B(ξ) + tT(ξ) − [bilinear of the four corners],
 * s = (1 + ξ)/2, t = (1 + η)/2, with B the wall piece, T the cover, L and R its sides (Gordon &
 * Hall, 1973, Int. J. Numer. Meth. Eng. 7:461); ∇² in the general mapped form (Thompson, Warsi &
 * Mastin, Numerical Grid Generation, 1985, ch. 3) with J = x_ξ y_η − x_η y_ξ,
 *   ∇²u = (a u_ξξ − 2b u_ξη + c u_ηη)/J² + (∇²ξ)u_ξ + (∇²η)u_η, a = |P_η|², b = P_ξ·P_η, c = |P_ξ|²,
 *   ∇²ξ = −(y_η Lx − x_η Ly)/J³, ∇²η = −(x_ξ Ly − y_ξ Lx)/J³, L = a∂ξξ − 2b∂ξη + c∂ηη,
 * and the flux on a side ∂u/∂n = (−a u_ξ + b u_η)/(J|P_η|) with n = (−y_η, x_η)/|P_η|.
 * A joint whose vertical cut the arc would cross is cut instead by a straight line from the
 * joint to the cover beyond the arc's apex. Strips with vertical sides keep the map of
 * spectralSection.ts, so κ = 0 gives the flat result to the bit.
 */
import { chebyshevGrid } from './chebyshev.js';
import { solveStrips, spectralTwoLayer, wallStrip, SPECTRAL_DEGREE, type Strip } from './spectralSection.js';
import { arcCurve, arcChord, holdupOfChord, sagitta, usedCurvature } from './interfaceArc.js';
import { areaLeftOf, depthAt, pieceCurve, pieceEnd, pieceStart, segmentCurve, type Curve, type WallProfile } from './wallProfile.js';
import { wallProfileOf } from './shapedSection.js';
import type { TwoLayerSection } from './section.js';

/** The wall profile of a section with side-by-side layers (a rectangle is a flat bottom with vertical side walls). */
export function sectionProfile(section: TwoLayerSection): WallProfile {
  if (section.shape !== 'rect') return wallProfileOf(section);
  if (section.orientation !== 'side') throw new RangeError('a curved interface is modelled for side-by-side layers only');
  return wallProfileOf({ shape: 'trapezoid', bottomWidth: section.width, depth: section.depth, wallAngle: Math.PI / 2 });
}

interface Cut {
  /** Abscissa of the cut's end on the wall and on the cover. */
  wall: number;
  cover: number;
  /** From the wall end (t = −1) to the cover end (t = 1); absent for the vertical line. */
  curve?: Curve;
  key: string;
}

const lineCut = (profile: WallProfile, wall: number, cover: number): Cut => {
  if (wall === cover) return { wall, cover, key: `v${wall}` };
  return { wall, cover, key: `l${wall}|${cover}`, curve: segmentCurve(wall, depthAt(profile, wall), cover, 0) };
};

/** Joints closer than this share of the top width to the chord are taken as the chord. */
const MERGE_CUT = 1e-9;

/** Points at which the arc is checked to lie inside the section. */
const ARC_CHECKS = 64;

/** The cuts of the section for the arc of chord x_e at the curvature it takes (κ ≠ 0). */
function cuts(profile: WallProfile, xe: number, kappa: number): Cut[] {
  const W = profile.topWidth;
  const sigma = Math.sign(kappa);
  const de = depthAt(profile, xe);
  const apex = xe - sigma * sagitta(de, kappa);
  const gap = 0.25 * profile.depth;
  const out: Cut[] = [];
  for (const j of profile.pieces.slice(0, -1).map(pieceEnd)) {
    if (Math.abs(j - xe) <= MERGE_CUT * W) continue;
    // A joint on the bulge side within reach of the arc: a straight cut to the cover beyond the apex.
    const reached = sigma > 0 ? j < xe && j > apex - gap : j > xe && j < apex + gap;
    out.push(lineCut(profile, j, reached ? apex - sigma * gap : j));
  }
  const arc = arcCurve(xe, de, kappa);
  const point = new Float64Array(6);
  for (let i = 1; i < ARC_CHECKS; i++) {
    arc.at(-1 + (2 * i) / ARC_CHECKS, point);
    if (!(point[0]! > 0 && point[0]! < W && point[1]! <= depthAt(profile, point[0]!) * (1 + 1e-12))) {
      throw new RangeError(`the arc of curvature ${kappa} 1/m at chord ${xe} m leaves the section`);
    }
  }
  out.push({ wall: xe, cover: xe, curve: arc, key: `a${xe}|${kappa}` });
  out.sort((a, b) => a.wall - b.wall);
  // A wide strip beside the arc is split by a vertical cut half a depth beyond the arc's reach,
  // so that the mapped strip (dense LU) stays narrow and the rest keeps its fast separable solve.
  const at = out.findIndex((c) => c.curve === arc);
  const reachLeft = Math.min(xe, apex);
  const reachRight = Math.max(xe, apex);
  const before = at > 0 ? Math.max(out[at - 1]!.wall, out[at - 1]!.cover) : 0;
  const after = at + 1 < out.length ? Math.min(out[at + 1]!.wall, out[at + 1]!.cover) : W;
  const D = profile.depth;
  if (reachRight + D < after) out.splice(at + 1, 0, lineCut(profile, reachRight + 0.5 * D, reachRight + 0.5 * D));
  if (reachLeft - D > before) out.splice(at, 0, lineCut(profile, reachLeft - 0.5 * D, reachLeft - 0.5 * D));
  for (let i = 0; i < out.length; i++) {
    const prev = i > 0 ? out[i - 1]!.cover : 0;
    const next = i + 1 < out.length ? out[i + 1]!.cover : W;
    if (!(out[i]!.cover > prev && out[i]!.cover < next) || !(out[i]!.cover > 0 && out[i]!.cover < W)) {
      throw new RangeError(`the arc of curvature ${kappa} 1/m at chord ${xe} m does not fit between the walls and joints of the section`);
    }
  }
  return out;
}

/** Per node [x, y, |J|, c_ξξ, c_ξη, c_ηη, c_ξ, c_η, flux_ξ, flux_η] of a Coons strip (module comment). */
function coonsGeometry(bottom: Curve, left: Cut, right: Cut, profile: WallProfile, nx: number, ny: number): Float64Array[] {
  const gx = chebyshevGrid(nx).nodes;
  const gy = chebyshevGrid(ny).nodes;
  const P00 = [left.wall, depthAt(profile, left.wall)];
  const P10 = [right.wall, depthAt(profile, right.wall)];
  const P01 = [left.cover, 0];
  const P11 = [right.cover, 0];
  const b = new Float64Array(6);
  const l = new Float64Array(6);
  const r = new Float64Array(6);
  const out: Float64Array[] = [];
  const vertical = (cut: Cut, t: number, o: Float64Array) => {
    const d = depthAt(profile, cut.wall);
    o.set([cut.wall, 0.5 * (1 - t) * d, 0, -0.5 * d, 0, 0]);
  };
  let sign = 0;
  for (let i = 0; i <= nx; i++) {
    const xi = gx[i]!;
    const s = 0.5 * (1 + xi);
    bottom.at(xi, b);
    for (let j = 0; j <= ny; j++) {
      const eta = gy[j]!;
      const t = 0.5 * (1 + eta);
      if (left.curve) left.curve.at(eta, l);
      else vertical(left, eta, l);
      if (right.curve) right.curve.at(eta, r);
      else vertical(right, eta, r);
      const T = [P01[0]! + s * (P11[0]! - P01[0]!), 0];
      const Txi = [0.5 * (P11[0]! - P01[0]!), 0];
      const g = new Float64Array(10);
      const d = [0, 0, 0, 0, 0, 0, 0, 0, 0, 0];
      for (let c = 0; c < 2; c++) {
        const corner = (1 - s) * (1 - t) * P00[c]! + s * (1 - t) * P10[c]! + (1 - s) * t * P01[c]! + s * t * P11[c]!;
        d[c] = (1 - s) * l[c]! + s * r[c]! + (1 - t) * b[c]! + t * T[c]! - corner;
        // P_ξ, P_η, P_ξξ, P_ηη, P_ξη of coordinate c, at d[2 + 5c …].
        const cornerXi = 0.5 * (-(1 - t) * P00[c]! + (1 - t) * P10[c]! - t * P01[c]! + t * P11[c]!);
        const cornerEta = 0.5 * (-(1 - s) * P00[c]! - s * P10[c]! + (1 - s) * P01[c]! + s * P11[c]!);
        const cornerXiEta = 0.25 * (P00[c]! - P10[c]! - P01[c]! + P11[c]!);
        const k = 2 + 4 * c;
        d[k] = 0.5 * (r[c]! - l[c]!) + (1 - t) * b[2 + c]! + t * Txi[c]! - cornerXi;
        d[k + 1] = (1 - s) * l[2 + c]! + s * r[2 + c]! + 0.5 * (T[c]! - b[c]!) - cornerEta;
        d[k + 2] = (1 - t) * b[4 + c]!;
        d[k + 3] = 0.5 * (r[2 + c]! - l[2 + c]!) + 0.5 * (Txi[c]! - b[2 + c]!) - cornerXiEta;
      }
      const [x, y, xXi, xEta, xXiXi, xXiEta, yXi, yEta, yXiXi, yXiEta] = d as [number, number, number, number, number, number, number, number, number, number];
      const xEtaEta = (1 - s) * l[4]! + s * r[4]!;
      const yEtaEta = (1 - s) * l[5]! + s * r[5]!;
      const J = xXi * yEta - xEta * yXi;
      g[0] = x;
      g[1] = y;
      g[2] = Math.abs(J);
      const interior = i > 0 && i < nx && j > 0 && j < ny;
      if (interior) {
        if (sign === 0) sign = Math.sign(J);
        if (!(Math.sign(J) === sign)) throw new RangeError('the transfinite map of a strip next to the arc folds over');
      }
      if (J !== 0) {
        const a = xEta * xEta + yEta * yEta;
        const bb = xXi * xEta + yXi * yEta;
        const c = xXi * xXi + yXi * yXi;
        const J2 = J * J;
        const Lx = a * xXiXi - 2 * bb * xXiEta + c * xEtaEta;
        const Ly = a * yXiXi - 2 * bb * yXiEta + c * yEtaEta;
        g[3] = a / J2;
        g[4] = (-2 * bb) / J2;
        g[5] = c / J2;
        g[6] = -(yEta * Lx - xEta * Ly) / (J2 * J);
        g[7] = -(xXi * Ly - yXi * Lx) / (J2 * J);
        const tangent = Math.sqrt(a);
        g[8] = -a / (J * tangent);
        g[9] = bb / (J * tangent);
      }
      out.push(g);
    }
  }
  return out;
}

/**
 * Flow of each phase per unit gradient (m⁴/(Pa·s)) with the arc's chord at x_e and the
 * contactor at curvature κ (tapered near the edges, interfaceArc.ts), at polynomial degree
 * `degree` across the depth. κ = 0, or a taper of 0, is the flat solve of spectralSection.ts.
 */
export function curvedFlowsAtChord(profile: WallProfile, xe: number, curvature: number, muA: number, muB: number, degree = SPECTRAL_DEGREE): { qA: number; qB: number } {
  const kappa = usedCurvature(profile, xe, curvature);
  if (kappa === 0) return spectralTwoLayer(profile, xe, muA, muB, degree);
  const list = cuts(profile, xe, kappa);
  const ends: Cut[] = [{ wall: 0, cover: 0, key: 'v0' }, ...list, { wall: profile.topWidth, cover: profile.topWidth, key: `v${profile.topWidth}` }];
  const arcAt = ends.findIndex((c) => c.key.startsWith('a'));
  const strips: Strip[] = [];
  for (let s = 0; s + 1 < ends.length; s++) {
    const left = ends[s]!;
    const right = ends[s + 1]!;
    const xa = left.wall;
    const xb = right.wall;
    const mid = 0.5 * (xa + xb);
    const piece = profile.pieces.find((p) => mid >= pieceStart(p) && mid <= pieceEnd(p))!;
    const phase = s < arcAt ? 'A' : 'B';
    const width = Math.max(xb - xa, right.cover - left.cover);
    const nx = Math.min(2 * degree, Math.max(degree, Math.ceil((degree * width) / profile.depth)));
    const curve = pieceCurve(piece, xa, xb);
    const mapped = left.curve !== undefined || right.curve !== undefined;
    const shape = mapped ? { geometry: coonsGeometry(curve, left, right, profile, nx, degree) } : wallStrip(piece, xa, xb, nx, degree, true);
    strips.push({ xa, xb, mu: phase === 'A' ? muA : muB, phase, nx, piece, ...shape, mappedKey: mapped ? `${left.key}|${right.key}` : undefined });
  }
  const r = solveStrips(strips, degree);
  return { qA: r.qA, qB: r.qB };
}

/** Flows of a curved interface and their slopes (also what curvedTable.ts interpolates). */
export interface CurvedFlows {
  /** Flow of each phase per unit pressure gradient, m⁴/(Pa·s). */
  kA: number;
  kB: number;
  /** d/dα at fixed curvature, m⁴/(Pa·s). */
  dkA: number;
  dkB: number;
  /** d/dκ at fixed holdup, m⁵/(Pa·s). */
  dkADCurvature: number;
  dkBDCurvature: number;
}

export interface CurvedFlow extends CurvedFlows {
  /** Chord abscissa of the arc, m. */
  chord: number;
}

/** Relative steps of the central differences in the holdup (share of min(α, 1 − α)) and in κ·D/2. */
const HOLDUP_STEP = 1e-4;
const CURVATURE_STEP = 1e-4;

/**
 * Two layers side by side, A left of the arc, at holdup α ∈ (0, 1) and contactor curvature κ
 * (|κ|·D/2 < 1), with d/dα and d/dκ by central differences (steps 1e-4 of min(α, 1 − α) and of
 * 2/D; truncation about 1e-8 of the slope, above the solver's rounding). A chord within a
 * step of a wall joint makes the difference one-sided in the chord's flat holdup; as for the
 * flat interface (shapedSection.ts), those slopes are of second order.
 */
export function curvedTwoLayerFlow(section: TwoLayerSection, holdup: number, curvature: number, muA: number, muB: number, degree = SPECTRAL_DEGREE): CurvedFlow {
  if (!(holdup > 0 && holdup < 1) || !(muA > 0) || !(muB > 0)) throw new RangeError(`curvedTwoLayerFlow needs 0 < holdup < 1 and positive viscosities (holdup ${holdup})`);
  const profile = sectionProfile(section);
  if (!(Math.abs(curvature * profile.depth) < 2)) throw new RangeError(`curvature ${curvature} 1/m: |κ|·depth/2 must stay below 1`);
  const at = (alpha: number, kappa: number) => {
    const xe = arcChord(profile, alpha, kappa);
    return { ...curvedFlowsAtChord(profile, xe, kappa, muA, muB, degree), xe };
  };
  const base = at(holdup, curvature);
  const h = HOLDUP_STEP * Math.min(holdup, 1 - holdup);
  const up = at(holdup + h, curvature);
  const down = at(holdup - h, curvature);
  const dc = (2 * CURVATURE_STEP) / profile.depth;
  const more = at(holdup, curvature + dc);
  const less = at(holdup, curvature - dc);
  return {
    kA: base.qA,
    kB: base.qB,
    dkA: (up.qA - down.qA) / (2 * h),
    dkB: (up.qB - down.qB) / (2 * h),
    dkADCurvature: (more.qA - less.qA) / (2 * dc),
    dkBDCurvature: (more.qB - less.qB) / (2 * dc),
    chord: base.xe,
  };
}

/** The holdup of the arc of chord x_e at contactor curvature κ, and the flat holdup of the chord itself. */
export function chordHoldups(profile: WallProfile, xe: number, curvature: number): { holdup: number; flat: number } {
  return { holdup: holdupOfChord(profile, xe, curvature), flat: areaLeftOf(profile, xe) / profile.area };
}

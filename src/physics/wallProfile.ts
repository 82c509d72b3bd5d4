/**
 * The outline of a channel cross-section that is flat at the cover: the wall below the cover as
 * a chain of straight and circular pieces, each a graph over the width. Exports `WallProfile`,
 * `WallPiece`, `depthAt`, `areaLeftOf`, `interfacePosition` (the side-by-side interface that
 * gives a holdup), `pieceCurve` (one piece between two abscissae, parametrised on [−1, 1]) and
 * `segmentCurve`.
 * Pure geometry in SI units; no flow.
 *
 * Coordinates: x across the channel from the left end of the cover (0 ≤ x ≤ topWidth), y the
 * depth below the cover (y = 0 on the cover, positive into the channel).
 */

/** A straight piece from (x0, y0) to (x1, y1), x1 > x0. */
export interface LinePiece {
  kind: 'line';
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

/**
 * A circular piece about (cx, 0) on the cover: (cx + r·cos φ, r·sin φ) for φ from phi0 down to
 * phi1 (so x increases along it), 0 ≤ phi1 < phi0 ≤ π.
 */
export interface ArcPiece {
  kind: 'arc';
  cx: number;
  radius: number;
  phi0: number;
  phi1: number;
}

export type WallPiece = LinePiece | ArcPiece;

export interface WallProfile {
  topWidth: number;
  /** Largest depth, m. */
  depth: number;
  /** Area of the section, m². */
  area: number;
  /** Wetted perimeter (walls and cover), m. */
  perimeter: number;
  /** Pieces in order of increasing x, from x = 0 to x = topWidth. */
  pieces: WallPiece[];
}

export function pieceStart(p: WallPiece): number {
  return p.kind === 'line' ? p.x0 : p.cx + p.radius * Math.cos(p.phi0);
}

export function pieceEnd(p: WallPiece): number {
  return p.kind === 'line' ? p.x1 : p.cx + p.radius * Math.cos(p.phi1);
}

function pieceDepth(p: WallPiece, x: number): number {
  if (p.kind === 'line') return p.y0 + ((x - p.x0) / (p.x1 - p.x0)) * (p.y1 - p.y0);
  const d = (x - p.cx) / p.radius;
  return p.radius * Math.sqrt(Math.max(0, 1 - d * d));
}

/** ∫ depth dx over the piece from its start to x. */
function pieceArea(p: WallPiece, x: number): number {
  if (p.kind === 'line') return (x - p.x0) * 0.5 * (p.y0 + pieceDepth(p, x));
  // Between the cover and the arc from φ0 to φ(x): ∫ y dx = r² ∫ sin²φ dφ = (r²/2)[φ − sin φ cos φ],
  // written in the angle because asin/acos lose half the digits near ±1 where the arc meets the
  // cover, and the integrand sin²φ vanishes there, so an error in φ(x) does not count.
  const f = (phi: number) => phi - Math.sin(phi) * Math.cos(phi);
  const phi = x >= pieceEnd(p) ? p.phi1 : x <= pieceStart(p) ? p.phi0 : Math.acos(Math.max(-1, Math.min(1, (x - p.cx) / p.radius)));
  return 0.5 * p.radius ** 2 * (f(p.phi0) - f(phi));
}

export function pieceLength(p: WallPiece): number {
  return p.kind === 'line' ? Math.hypot(p.x1 - p.x0, p.y1 - p.y0) : p.radius * (p.phi0 - p.phi1);
}

function pieceAt(profile: WallProfile, x: number): WallPiece {
  for (const p of profile.pieces) if (x <= pieceEnd(p)) return p;
  return profile.pieces[profile.pieces.length - 1]!;
}

export function depthAt(profile: WallProfile, x: number): number {
  return pieceDepth(pieceAt(profile, x), x);
}

/** Area of the section between x = 0 and x, m². */
export function areaLeftOf(profile: WallProfile, x: number): number {
  let sum = 0;
  for (const p of profile.pieces) {
    const end = pieceEnd(p);
    if (x <= end) return sum + pieceArea(p, x);
    sum += pieceArea(p, end);
  }
  return sum;
}

/**
 * The abscissa of the side-by-side interface at holdup α (the share of the section's area left
 * of it): the root of areaLeftOf(x) = α·area, by Newton steps (slope: the depth there) kept
 * inside a bisection bracket. Settles to a few ulps of topWidth.
 */
export function interfacePosition(profile: WallProfile, holdup: number): number {
  const target = holdup * profile.area;
  let lo = 0;
  let hi = profile.topWidth;
  let x = holdup * profile.topWidth;
  for (let i = 0; i < 200; i++) {
    const f = areaLeftOf(profile, x) - target;
    if (f > 0) hi = x;
    else lo = x;
    const slope = depthAt(profile, x);
    let next = slope > 0 ? x - f / slope : 0.5 * (lo + hi);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) <= 4 * Number.EPSILON * profile.topWidth || hi - lo <= 4 * Number.EPSILON * profile.topWidth) return next;
    x = next;
  }
  return x;
}

/** A wall curve on t ∈ [−1, 1]: position and its first two t-derivatives. */
export interface Curve {
  at(t: number, out: Float64Array): void; // [x, y, x', y', x'', y'']
}

/** The straight segment from (xa, ya) at t = −1 to (xb, yb) at t = 1. */
export function segmentCurve(xa: number, ya: number, xb: number, yb: number): Curve {
  const hx = 0.5 * (xb - xa);
  const hy = 0.5 * (yb - ya);
  return {
    at(t, out) {
      out[0] = xa + (t + 1) * hx;
      out[1] = ya + (t + 1) * hy;
      out[2] = hx;
      out[3] = hy;
      out[4] = 0;
      out[5] = 0;
    },
  };
}

/** Piece p between abscissae xa < xb (inside the piece), parametrised by x (lines) or angle (arcs). */
export function pieceCurve(p: WallPiece, xa: number, xb: number): Curve {
  if (p.kind === 'line') return segmentCurve(xa, pieceDepth(p, xa), xb, pieceDepth(p, xb));
  const angle = (x: number) => Math.acos(Math.max(-1, Math.min(1, (x - p.cx) / p.radius)));
  const fa = xa <= pieceStart(p) ? p.phi0 : angle(xa);
  const fb = xb >= pieceEnd(p) ? p.phi1 : angle(xb);
  const h = 0.5 * (fb - fa);
  const r = p.radius;
  return {
    at(t, out) {
      const f = fa + (t + 1) * h;
      const c = Math.cos(f);
      const s = Math.sin(f);
      out[0] = p.cx + r * c;
      out[1] = r * s;
      out[2] = -r * s * h;
      out[3] = r * c * h;
      out[4] = -r * c * h * h;
      out[5] = -r * s * h * h;
    },
  };
}

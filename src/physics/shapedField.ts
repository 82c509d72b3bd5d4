/**
 * The velocity over an etched or trapezoidal cross-section with two layers: on a grid (for the
 * section's map) and its maximum, from the spectral solution (spectralSection.ts) by its own
 * polynomial interpolant. Exports `shapedVelocityField`, `shapedVelocityMaximum` and
 * `shapedOutline`. SI units; no I/O.
 *
 * Coordinates of the results: y across the channel from the left end of the cover, z the height
 * above the deepest point of the section (the cover at z = depth), as a drawing shows it.
 */
import { chebyshevGrid } from './chebyshev.js';
import { spectralTwoLayer, type StripField } from './spectralSection.js';
import { wallProfileOf, type ShapedSection } from './shapedSection.js';
import { interfacePosition, pieceCurve, pieceEnd, pieceStart, type WallProfile } from './wallProfile.js';
import type { VelocityMaximum } from './field.js';

export interface ShapedVelocityField {
  /** Cell centres across (y) and up (z), m. */
  y: number[];
  z: number[];
  /** u[j][i] at (y[i], z[j]) per unit gradient, m²/(Pa·s); NaN outside the section. */
  u: number[][];
  /** The interface from the wall to the cover, [y, z] in m. */
  interfaceLine: Array<[number, number]>;
  /** The section's outline (walls and cover, closed), [y, z] in m. */
  outline: Array<[number, number]>;
}

/** Barycentric weights of Chebyshev–Lobatto interpolation (Berrut & Trefethen, 2004, SIAM Rev. 46:501, eq. 5.2). */
function lagrange(n: number, t: number, out: Float64Array): void {
  const nodes = chebyshevGrid(n).nodes;
  let sum = 0;
  for (let j = 0; j <= n; j++) {
    const d = t - nodes[j]!;
    if (d === 0) {
      out.fill(0);
      out[j] = 1;
      return;
    }
    const w = (j % 2 === 0 ? 1 : -1) * (j === 0 || j === n ? 0.5 : 1);
    out[j] = w / d;
    sum += out[j]!;
  }
  for (let j = 0; j <= n; j++) out[j]! /= sum;
}

/** ξ ∈ [−1, 1] where the strip's wall passes abscissa x (b_x increases along it), by bisection. */
function abscissaToXi(strip: StripField, x: number): number {
  const b = new Float64Array(6);
  let lo = -1;
  let hi = 1;
  for (let i = 0; i < 60; i++) {
    const mid = 0.5 * (lo + hi);
    strip.wall.at(mid, b);
    if (b[0]! < x) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** u at (x, depth below cover y) from the strip's interpolant; NaN below its wall. */
function velocityInStrip(strip: StripField, x: number, y: number, wx: Float64Array, wy: Float64Array): number {
  const xi = abscissaToXi(strip, x);
  const b = new Float64Array(6);
  strip.wall.at(xi, b);
  if (!(y >= 0 && y <= b[1]!)) return NaN;
  lagrange(strip.nx, xi, wx);
  lagrange(strip.ny, b[1]! > 0 ? 1 - (2 * y) / b[1]! : 1, wy);
  let u = 0;
  const h = strip.ny + 1;
  for (let i = 0; i <= strip.nx; i++) {
    if (wx[i] === 0) continue;
    let column = 0;
    for (let j = 0; j <= strip.ny; j++) column += wy[j]! * strip.u[i * h + j]!;
    u += wx[i]! * column;
  }
  return u;
}

interface Solved {
  profile: WallProfile;
  xI: number;
  strips: StripField[];
  at(x: number, y: number): number;
}

function solved(section: ShapedSection, holdup: number, muA: number, muB: number): Solved {
  const profile = wallProfileOf(section);
  const xI = interfacePosition(profile, holdup);
  const strips = spectralTwoLayer(profile, xI, muA, muB, undefined, true).field!.strips;
  const wx = new Float64Array(2 * strips.reduce((m, s) => Math.max(m, s.nx, s.ny), 0) + 2);
  const wy = new Float64Array(wx.length);
  return {
    profile,
    xI,
    strips,
    at(x, y) {
      const strip = strips.find((s) => x >= s.xa && x <= s.xb);
      return strip ? velocityInStrip(strip, x, y, wx, wy) : NaN;
    },
  };
}

/** The outline as a closed path: the wall chain from the left end of the cover, then the cover. */
export function shapedOutline(section: ShapedSection, pointsPerPiece = 32): Array<[number, number]> {
  const profile = wallProfileOf(section);
  const out: Array<[number, number]> = [];
  const b = new Float64Array(6);
  for (const p of profile.pieces) {
    const curve = pieceCurve(p, pieceStart(p), pieceEnd(p));
    const n = p.kind === 'line' ? 1 : pointsPerPiece;
    for (let k = out.length === 0 ? 0 : 1; k <= n; k++) {
      curve.at(-1 + (2 * k) / n, b);
      out.push([b[0]!, profile.depth - b[1]!]);
    }
  }
  out.push([0, profile.depth]);
  return out;
}

/** The velocity on an ny × nz grid of cell centres over the bounding box of the section. */
export function shapedVelocityField(section: ShapedSection, holdup: number, muA: number, muB: number, ny = 64, nz = 24): ShapedVelocityField {
  const s = solved(section, holdup, muA, muB);
  const { topWidth, depth } = s.profile;
  const y = Array.from({ length: ny }, (_, i) => ((i + 0.5) / ny) * topWidth);
  const z = Array.from({ length: nz }, (_, j) => ((j + 0.5) / nz) * depth);
  const u = z.map((zj) => y.map((yi) => s.at(yi, depth - zj)));
  const b = new Float64Array(6);
  const strip = s.strips.find((t) => Math.abs(t.xb - s.xI) <= 1e-9 * topWidth)!;
  strip.wall.at(1, b);
  return { y, z, u, interfaceLine: [[s.xI, depth - b[1]!], [s.xI, depth]], outline: shapedOutline(section) };
}

/**
 * The peak velocity: the largest nodal value of the spectral solution, then a compass search on
 * the interpolant (steps halved from 1/8 of the depth to 1e-9 of it), so the position is found to
 * about 1e-9 of the depth and the value to the interpolant's accuracy.
 */
export function shapedVelocityMaximum(section: ShapedSection, holdup: number, muA: number, muB: number): VelocityMaximum {
  const s = solved(section, holdup, muA, muB);
  let bx = 0;
  let by = 0;
  let best = -Infinity;
  for (const strip of s.strips) {
    strip.u.forEach((v, k) => {
      if (v > best) {
        best = v;
        bx = strip.x[k]!;
        by = strip.y[k]!;
      }
    });
  }
  const f = (x: number, y: number) => {
    const v = s.at(x, y);
    return Number.isFinite(v) ? v : -Infinity;
  };
  best = f(bx, by);
  for (let step = s.profile.depth / 8; step > 1e-9 * s.profile.depth; ) {
    let moved = false;
    for (const [dx, dy] of [[step, 0], [-step, 0], [0, step], [0, -step]] as const) {
      const v = f(bx + dx, by + dy);
      if (v > best) {
        best = v;
        bx += dx;
        by += dy;
        moved = true;
        break;
      }
    }
    if (!moved) step /= 2;
  }
  return { y: bx, z: s.profile.depth - by, u: best, phase: bx <= s.xI ? 'A' : 'B' };
}

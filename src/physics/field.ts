/**
 * Velocity over a rectangular cross-section with two layers, for drawings and for the location
 * of the velocity maximum. Exports `velocityAt`, `velocityField`, `velocityMaximum`.
 * Uses the same mode solution as ./twoLayer.ts (there: flows; here: point values). SI units only.
 */
import { layerAxes, type RectSection } from './section.js';
import { modeConstants } from './twoLayer.js';

/**
 * Point values converge like n⁻³; the cap bounds the cost for very deep, narrow layers. At the
 * cap the alternating tail on the mid-plane is about half the first omitted term,
 * 16 (along/across)² / (π³ n³) of the centreline value when along ≫ across: 3e-9 at 20.
 */
const FIELD_MODES = 4001;

/**
 * u(s,t)/G at a point, s across the layers (0 at phase A's wall), t along the interface:
 * u = Σ_n sin(nπt/L) f_n(s), with, in phase A (s < a) and with e(x) = exp(−λx),
 *   f_A = (m/μ_A)(1 − e(s))(1 − e(a−s))/(1 + e(a)) + f_I e(a−s)(1 − e(2s))/(1 − e(2a)),
 * and the mirror image in phase B; f_I as in twoLayer.ts. Only decaying exponentials appear.
 */
export function velocityAt(across: number, along: number, holdup: number, muA: number, muB: number, s: number, t: number, modes = FIELD_MODES): number {
  const a = holdup * across;
  const b = across - a;
  const inA = s <= a;
  const x = inA ? s : across - s; // distance from own wall
  const own = inA ? a : b;
  const mu = inA ? muA : muB;
  let u = 0;
  for (let n = 1; n <= modes; n += 2) {
    const { lambda, m, fI } = modeConstants(n, a, b, along, muA, muB);
    const e = (d: number) => Math.exp(-lambda * d);
    const bulk = ((-Math.expm1(-lambda * x) * -Math.expm1(-lambda * (own - x))) / (1 + e(own))) * (m / mu);
    const wallSide = (e(own - x) * -Math.expm1(-2 * lambda * x)) / -Math.expm1(-2 * lambda * own);
    const term = Math.sin((n * Math.PI * t) / along) * (bulk + fI * wallSide);
    u += term;
    // |f_n| ≤ 2m/min(μ): stop when that bound is below 1e-10 of the value so far.
    if (n > 21 && (2 * m) / Math.min(muA, muB) < 1e-10 * Math.abs(u)) break;
  }
  return u;
}

export interface VelocityField {
  /** Grid coordinates across the width (y) and the depth (z) of the channel, m. */
  y: number[];
  z: number[];
  /** u[j][i] at (y[i], z[j]), per unit pressure gradient, m²/(Pa·s). */
  u: number[][];
  /** Interface position across the width (side) or the depth (stacked), m. */
  interfaceAt: number;
}

/** Velocity per unit pressure gradient on an ny × nz grid of cell centres of the channel. */
export function velocityField(section: RectSection, holdup: number, muA: number, muB: number, ny = 60, nz = 30): VelocityField {
  const { across, along } = layerAxes(section);
  const y = Array.from({ length: ny }, (_, i) => ((i + 0.5) / ny) * section.width);
  const z = Array.from({ length: nz }, (_, j) => ((j + 0.5) / nz) * section.depth);
  const side = section.orientation === 'side';
  const u = z.map((zj) => y.map((yi) => (side ? velocityAt(across, along, holdup, muA, muB, yi, zj) : velocityAt(across, along, holdup, muA, muB, zj, yi))));
  return { y, z, u, interfaceAt: holdup * across };
}

export interface VelocityMaximum {
  y: number;
  z: number;
  /** Peak velocity per unit pressure gradient, m²/(Pa·s). */
  u: number;
  phase: 'A' | 'B';
}

/**
 * The maximum lies on the mid-plane t = L/2 by symmetry; along it u(s) is unimodal, so a scan
 * followed by golden-section search narrows it to a bracket of 1e-10 of the channel size. The
 * peak value is then as accurate as velocityAt; its position only as well as comparing values
 * allows: about 1e-8 of the channel size where the peak is curved, and anywhere on the plateau
 * where the layers are wide compared with `along` (plate flow, flat to rounding).
 */
export function velocityMaximum(section: RectSection, holdup: number, muA: number, muB: number): VelocityMaximum {
  const { across, along } = layerAxes(section);
  const f = (s: number) => velocityAt(across, along, holdup, muA, muB, s, along / 2);
  const samples = 64;
  let best = 1;
  let bestValue = -Infinity;
  for (let i = 1; i < samples; i++) {
    const v = f((i / samples) * across);
    if (v > bestValue) {
      bestValue = v;
      best = i;
    }
  }
  let lo = ((best - 1) / samples) * across;
  let hi = ((best + 1) / samples) * across;
  const g = (Math.sqrt(5) - 1) / 2;
  let x1 = hi - g * (hi - lo);
  let x2 = lo + g * (hi - lo);
  let f1 = f(x1);
  let f2 = f(x2);
  while (hi - lo > 1e-10 * across) {
    if (f1 > f2) {
      hi = x2;
      x2 = x1;
      f2 = f1;
      x1 = hi - g * (hi - lo);
      f1 = f(x1);
    } else {
      lo = x1;
      x1 = x2;
      f1 = f2;
      x2 = lo + g * (hi - lo);
      f2 = f(x2);
    }
  }
  const s = 0.5 * (lo + hi);
  const side = section.orientation === 'side';
  return { y: side ? s : section.width / 2, z: side ? section.depth / 2 : s, u: f(s), phase: s <= holdup * across ? 'A' : 'B' };
}

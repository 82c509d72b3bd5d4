/**
 * Single-phase laminar conductances: rectangular ducts and circular tubes.
 * Exports `rectConductance` and `tubeConductance`; each returns k with
 * Q = k·G, G = −dp/dx, in m⁴/(Pa·s). SI units only.
 */
import { SATURATED_HALF_ARGUMENT } from './constants.js';
import { oddPowerTail } from './series.js';

/**
 * Rectangular duct of sides w × h, viscosity μ (White, Viscous Fluid Flow, 3rd ed., 2006, eq. 3-48):
 *   k = (h³ w / 12μ) [1 − (192 h / π⁵ w) Σ_{n odd} tanh(nπw / 2h) / n⁵],  h ≤ w.
 * The series is summed over the shorter side, so it converges in a handful of terms at any
 * aspect ratio; tanh has saturated for n > 12.1·h/w and the rest is Σ n⁻⁵ in closed form.
 */
export function rectConductance(width: number, depth: number, mu: number): number {
  const h = Math.min(width, depth);
  const w = Math.max(width, depth);
  let sum = 0;
  let n = 1;
  const saturated = (2 * SATURATED_HALF_ARGUMENT * h) / (Math.PI * w);
  for (; n < saturated; n += 2) sum += Math.tanh((n * Math.PI * w) / (2 * h)) / n ** 5;
  sum += oddPowerTail(5, n);
  return ((h ** 3 * w) / (12 * mu)) * (1 - ((192 * h) / (Math.PI ** 5 * w)) * sum);
}

/** Hagen–Poiseuille: k = πd⁴/(128μ) for a circular tube of diameter d (White, 2006, eq. 3-52). */
export function tubeConductance(diameter: number, mu: number): number {
  return (Math.PI * diameter ** 4) / (128 * mu);
}


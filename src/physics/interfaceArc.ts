/**
 * The side-by-side interface as a circular arc in the cross-section (Young–Laplace: curvature
 * κ = Δ/γ, Δ the pressure of the phase right of it minus the phase left of it, γ the
 * interfacial tension). Pure geometry in SI units on a WallProfile (wallProfile.ts); no flow.
 * Exports `arcCurve` (the arc as a Curve on [−1, 1]), `segmentArea`, `sagitta`, `arcChord`
 * (where the chord sits for a holdup), `curvatureTaper`, `usedCurvature`,
 * `holdupOfChord`, `taperHoldup`, `CURVATURE_LIMIT`.
 *
 * The rule that fixes the arc: its chord is the flat interface of some abscissa x_e, from the
 * cover (x_e, 0) to the wall below it (x_e, d(x_e)), and the arc is symmetric about the chord's
 * middle (in a rectangle: symmetric about mid-depth, the same contact angle π/2 − θ on cover and
 * bottom; in an etched or trapezoidal section the same rule, with the chord the local depth).
 * The arc bulges into the phase at the lower pressure: κ > 0 (the right phase higher) bulges it
 * to the left, toward x = 0. Its half-angle θ satisfies sin θ = κ·d(x_e)/2, so the arc exists for
 * |κ|·d(x_e)/2 < 1 (less than a half circle). The holdup is the share of the section's area left
 * of the arc: α·A = areaLeftOf(x_e) − sign(κ)·segmentArea.
 *
 * Near a starved edge the layer is thinner than the arc's sagitta and a single arc from cover
 * to bottom no longer fits; there the curvature is blended to zero (curvatureTaper), the taper
 * rule of the model: within the taper width w_t = CURVATURE_LIMIT·D (0.9 depths) of either side
 * κ is scaled by 1 − (1 − e/e_b)³, e the share of the area between the chord and that side and
 * e_b the share of the first w_t (taperHoldup), which joins the full curvature with two
 * continuous derivatives; where the tapers of both sides overlap (top width below 2w_t) the two
 * factors multiply. In a rectangle the arc's bulge then stays within 3/4 of the layer's width
 * up to κD/2 = 0.9, at any aspect ratio. This is a rule of the model, not of the physics (a
 * real interface there breaks into corner films); contactors run at mid holdups.
 */
import { areaLeftOf, depthAt, type Curve, type WallProfile } from './wallProfile.js';

/** Largest |κ|·D/2 (D the section's depth) the holdup tables cover: a half-angle of 64°. */
export const CURVATURE_LIMIT = 0.9;

/**
 * The arc from the wall end (x_e, d) at t = −1 to the cover end (x_e, 0) at t = 1, at
 * curvature κ: the circle (x_c − σR cos ψ, d/2 + R sin ψ), ψ = −θt, R = 1/|κ|, written so that
 * κ → 0 is the straight chord without cancellation: y = d/2 − L sin(θt)/θ, x = x_e + κ((y −
 * d/2)² − (d/2)²)/(cos θ + cos θt), L = Rθ the half arc length.
 */
export function arcCurve(xe: number, depth: number, curvature: number): Curve {
  const h = 0.5 * depth;
  const q = Math.abs(h * curvature);
  if (!(q < 1)) throw new RangeError(`curvature ${curvature} 1/m does not fit a chord of ${depth} m (|κ|·d/2 must stay below 1)`);
  const theta = Math.asin(q);
  const L = q === 0 ? h : (h * theta) / q;
  const sigma = Math.sign(curvature);
  const cosTheta = Math.cos(theta);
  return {
    at(t, out) {
      const a = theta * t;
      const sa = Math.sin(a);
      const ca = Math.cos(a);
      const y = theta === 0 ? h - L * t : h - (L * sa) / theta;
      out[0] = xe + (curvature * ((y - h) ** 2 - h * h)) / (cosTheta + ca);
      out[1] = y;
      out[2] = sigma * L * sa;
      out[3] = -L * ca;
      out[4] = sigma * L * theta * ca;
      out[5] = L * theta * sa;
    },
  };
}

/**
 * Area between a chord of length d and its arc at curvature κ: R²(θ − sin θ cos θ) =
 * (d/2)²(θ − sin θ cos θ)/sin²θ; below θ = 0.01 the numerator by its series 2θ³/3 − 2θ⁵/15 +
 * 4θ⁷/315 − 2θ⁹/2835 (from θ − ½ sin 2θ; the next term is below 1e-18 of the first).
 */
export function segmentArea(depth: number, curvature: number): number {
  const h = 0.5 * depth;
  const q = Math.abs(h * curvature);
  if (q === 0) return 0;
  const theta = Math.asin(q);
  const t2 = theta * theta;
  const numerator = theta < 0.01 ? theta * t2 * (2 / 3 - t2 * (2 / 15 - t2 * (4 / 315 - (t2 * 2) / 2835))) : theta - Math.sin(theta) * Math.cos(theta);
  const f = numerator / (q * q);
  return h * h * f;
}

/** Sagitta of the arc over a chord of length d: R(1 − cos θ) = (d/2)·tan(θ/2), m. */
export function sagitta(depth: number, curvature: number): number {
  const q = Math.abs(0.5 * depth * curvature);
  return 0.5 * depth * Math.tan(0.5 * Math.asin(Math.min(1, q)));
}

/**
 * The holdup share e_b over which the curvature is blended to zero from either side: the area
 * left of the taper width w_t = CURVATURE_LIMIT·D (D the depth) as a share of the section's
 * area, or w_t/W when the section is narrower than w_t (W the top width; then e_b > 1).
 * Why w_t: in a rectangle the blended arc's sagitta (D/2)·tan(θ/2), sin θ = f·κD/2, over the
 * layer's width x = r·w_t tends to (3/4)(κD/2)·D/w_t at the edge (f ≈ 3r, tan(θ/2) ≈ sin θ/2),
 * which is 3/4 at the tables' limit κD/2 = CURVATURE_LIMIT; further in it is smaller (computed
 * at κD/2 = 0.9: 0.72, 0.64, 0.54, 0.35 at r = 0.05, 0.2, 0.5, 1). So the bulge stays within
 * 3/4 of the layer it bulges into for a rectangle of any aspect ratio (the factors of both
 * sides multiply where the two tapers overlap, W < 2w_t, and each is at most 1).
 */
export function taperHoldup(profile: WallProfile): number {
  let share = TAPER_HOLDUPS.get(profile);
  if (share === undefined) {
    const width = CURVATURE_LIMIT * profile.depth;
    share = width <= profile.topWidth ? areaLeftOf(profile, width) / profile.area : width / profile.topWidth;
    TAPER_HOLDUPS.set(profile, share);
  }
  return share;
}

/** taperHoldup by profile (a table asks for it at every evaluation). */
const TAPER_HOLDUPS = new WeakMap<WallProfile, number>();

/** The cubic blend 1 − (1 − r)³ on r = e/e_b ∈ [0, 1] (1 beyond) and its derivative in e. */
function blend(e: number, eb: number): { f: number; df: number } {
  if (e >= eb) return { f: 1, df: 0 };
  const r = 1 - Math.max(0, e) / eb;
  return { f: 1 - r * r * r, df: (3 * r * r) / eb };
}

/**
 * The factor on κ for a chord whose flat holdup (the area share left of x_e) is α_c (see the
 * module comment): the blends from both sides multiplied, f(α_c)·f(1 − α_c), and its
 * derivative in α_c. The taper is a function of the chord, not of the holdup, so that the
 * flows are smooth in (x_e, κ) between wall joints (curvedTable.ts).
 */
export function curvatureTaper(profile: WallProfile, chordHoldup: number): { factor: number; dFactor: number } {
  const eb = taperHoldup(profile);
  const left = blend(chordHoldup, eb);
  const right = blend(1 - chordHoldup, eb);
  return { factor: left.f * right.f, dFactor: left.df * right.f - left.f * right.df };
}

/** The curvature the arc of chord x_e takes at the contactor's curvature κ: κ times the taper. */
export function usedCurvature(profile: WallProfile, xe: number, curvature: number): number {
  if (curvature === 0) return 0;
  return curvature * curvatureTaper(profile, areaLeftOf(profile, xe) / profile.area).factor;
}

/** The holdup left of the arc of chord x_e at contactor curvature κ (tapered as above). */
export function holdupOfChord(profile: WallProfile, xe: number, curvature: number): number {
  const left = areaLeftOf(profile, xe);
  const k = curvature === 0 ? 0 : curvature * curvatureTaper(profile, left / profile.area).factor;
  return (left - Math.sign(k) * segmentArea(depthAt(profile, xe), k)) / profile.area;
}

/**
 * The chord abscissa x_e whose arc at contactor curvature κ leaves the share α of the area on
 * its left: the root of holdupOfChord(x) = α (the holdup grows with x wherever the arc fits,
 * from 0 at x = 0 to 1 at x = W), kept in a bisection bracket. From x = αW the first step is Newton's with the flat slope
 * d(x)/A (exact where the depth does not change, as over a flat bottom, since the segment then
 * does not change either), the next ones secant steps; a step that leaves the bracket bisects.
 */
export function arcChord(profile: WallProfile, holdup: number, curvature: number): number {
  // The taper takes the curvature to zero at both ends, where the holdup is 0 and 1.
  if (!(holdup >= 0 && holdup <= 1)) throw new RangeError(`no arc of curvature ${curvature} 1/m leaves holdup ${holdup} on its side`);
  const width = profile.topWidth;
  if (holdup === 0) return 0;
  if (holdup === 1) return width;
  const f = (x: number) => holdupOfChord(profile, x, curvature) - holdup;
  let lo = 0;
  let hi = width;
  let x = holdup * width;
  let fx = f(x);
  let previous = Number.NaN;
  let fPrevious = Number.NaN;
  for (let i = 0; i < 200 && fx !== 0; i++) {
    if (fx < 0) lo = x;
    else hi = x;
    const slope = Number.isNaN(previous) || fx === fPrevious ? depthAt(profile, x) / profile.area : (fx - fPrevious) / (x - previous);
    let next = slope > 0 ? x - fx / slope : Number.NaN;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) <= 4 * Number.EPSILON * width || hi - lo <= 4 * Number.EPSILON * width) return next;
    previous = x;
    fPrevious = fx;
    x = next;
    fx = f(x);
  }
  return x;
}

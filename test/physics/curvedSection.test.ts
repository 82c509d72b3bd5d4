/**
 * Tests of the curved interface (src/physics/interfaceArc.ts, curvedSection.ts): its geometry
 * against closed forms of the circle, the flows with equal viscosities against the Fourier series
 * of the rectangular duct integrated over the region left of the arc, the flat limit, and the
 * mirror identity. The independent finite-element reference is in freefemReference.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { arcChord, arcCurve, holdupOfChord, sagitta, segmentArea } from '../../src/physics/interfaceArc.js';
import { curvedFlowsAtChord, curvedTwoLayerFlow, sectionProfile } from '../../src/physics/curvedSection.js';
import { spectralTwoLayer } from '../../src/physics/spectralSection.js';
import { shapedConductance } from '../../src/physics/shapedSection.js';
import { rectConductance } from '../../src/physics/singlePhase.js';
import type { RectSection } from '../../src/physics/section.js';

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

const DEPTH = 50e-6;
const WIDTH = 100e-6;
const RECT: RectSection = { shape: 'rect', width: WIDTH, depth: DEPTH, orientation: 'side' };
const MU = 1e-3;
/** κ for a dimensionless curvature c = κ·D/2 (sin of the arc's half-angle in a rectangle). */
const kappaOf = (c: number) => (2 * c) / DEPTH;

describe('interface arc geometry', () => {
  it('segmentArea is the circular segment R²(θ − sin θ cos θ), and its series joins it below θ = 0.01', () => {
    // Closed form of the circular segment (any handbook of plane geometry, e.g. Bronshtein &
    // Semendyayev, Handbook of Mathematics, 5th ed., 2007, §3.1.5). Tolerance: rounding of the
    // closed form, which loses digits as θ³ cancels against θ (3e-12 relative at θ = 0.0101).
    for (const c of [0.0101, 0.3, 0.9]) {
      const R = 1 / Math.abs(kappaOf(c));
      const theta = Math.asin(c);
      expect(relativeError(segmentArea(DEPTH, kappaOf(c)), R * R * (theta - Math.sin(theta) * Math.cos(theta)))).toBeLessThan(1e-10);
    }
    const below = segmentArea(DEPTH, kappaOf(Math.sin(0.0099999)));
    const above = segmentArea(DEPTH, kappaOf(Math.sin(0.0100001)));
    // Continuity across the switch: the area grows as θ (2θ/3·h²), so a 2e-5 relative step in θ moves it by 2e-5.
    expect(relativeError(above, below)).toBeLessThan(3e-5);
  });

  it('arcCurve runs from the wall end to the cover end on the circle of radius 1/|κ| and bulges by the sagitta toward −x for κ > 0', () => {
    const xe = 40e-6;
    const kappa = kappaOf(0.6);
    const arc = arcCurve(xe, DEPTH, kappa);
    const out = new Float64Array(6);
    arc.at(-1, out);
    expect(out[0]).toBeCloseTo(xe, 18);
    expect(relativeError(out[1]!, DEPTH)).toBeLessThan(1e-15);
    arc.at(1, out);
    expect(Math.abs(out[1]!)).toBeLessThan(1e-20);
    arc.at(0, out);
    // Sagitta of a chord 2h at radius R: R − √(R² − h²) (circle geometry).
    const R = 1 / kappa;
    const h = DEPTH / 2;
    expect(relativeError(xe - out[0]!, R - Math.sqrt(R * R - h * h))).toBeLessThan(1e-12);
    expect(relativeError(sagitta(DEPTH, kappa), R - Math.sqrt(R * R - h * h))).toBeLessThan(1e-12);
    // Every point lies on the circle about (x_e + R cos θ, h); the derivatives are those of the
    // parametrisation (central differences, step 1e-5: truncation 1e-10 of the values).
    const cx = xe + Math.sqrt(R * R - h * h);
    const step = 1e-5;
    const a = new Float64Array(6);
    const b = new Float64Array(6);
    for (const t of [-0.7, 0.2, 0.9]) {
      arc.at(t, out);
      expect(relativeError(Math.hypot(out[0]! - cx, out[1]! - h), R)).toBeLessThan(1e-13);
      arc.at(t + step, a);
      arc.at(t - step, b);
      for (let c = 0; c < 2; c++) {
        expect(Math.abs((a[c]! - b[c]!) / (2 * step) - out[2 + c]!)).toBeLessThan(1e-9 * DEPTH);
        expect(Math.abs((a[2 + c]! - b[2 + c]!) / (2 * step) - out[4 + c]!)).toBeLessThan(1e-9 * DEPTH);
      }
    }
  });

  it('arcChord places the chord so that the area left of the arc is the holdup: x_e·D ∓ segment in a rectangle', () => {
    const p = sectionProfile(RECT);
    for (const [alpha, c] of [[0.5, 0.5], [0.4, -0.8], [0.6, 0.9]] as const) {
      const kappa = kappaOf(c);
      const xe = arcChord(p, alpha, kappa);
      expect(Math.abs(holdupOfChord(p, xe, kappa) - alpha)).toBeLessThan(1e-14);
      // A = x_e·D − sign(κ)·segment at the tapered curvature: in a 2:1 rectangle the tapers (0.9 depths
      // from each side) cover all but the middle tenth, the factor f(x_e/W)·f(1 − x_e/W) of interfaceArc.ts.
      const r = (e: number) => (e >= 0.45 ? 1 : 1 - (1 - e / 0.45) ** 3);
      const used = kappa * r(xe / WIDTH) * r(1 - xe / WIDTH);
      expect(relativeError(xe * DEPTH - Math.sign(kappa) * segmentArea(DEPTH, used), alpha * WIDTH * DEPTH)).toBeLessThan(1e-13);
    }
  });
});

/**
 * The flow left of x = X(y) in a W × D duct of one fluid: ∫∫ u with the duct's Fourier series
 * u = y(D − y)/(2μ) − (4D²/(π³μ)) Σ_{n odd} n⁻³ sin(nπy/D) cosh(k(x − W/2))/cosh(kW/2), k = nπ/D
 * (White, Viscous Fluid Flow, 3rd ed., 2006, eq. 3-48 in its own axes; from memory), its x
 * integral in closed form, its y integral by composite Simpson on 2000 intervals (the integrand
 * is smooth; error ~1e-13) and 1500 terms (tail ~n⁻³: 2e-10 of the flow).
 */
function seriesFlowLeftOf(X: (y: number) => number, W: number, D: number, mu: number): number {
  const intervals = 2000;
  const terms = 1500;
  let total = 0;
  for (let i = 0; i <= intervals; i++) {
    const y = (i / intervals) * D;
    const x = X(y);
    let f = (x * y * (D - y)) / 2;
    for (let n = 1; n <= 2 * terms; n += 2) {
      const k = (n * Math.PI) / D;
      const b = (k * W) / 2;
      const a = k * (x - W / 2);
      // ∫₀ˣ cosh(k(s − W/2)) ds / cosh(kW/2) = [sinh(a) + sinh(b)]/(k cosh b), without overflow.
      const ratio = (Math.exp(a - b) - Math.exp(-a - b)) / (1 + Math.exp(-2 * b)) + Math.tanh(b);
      f -= ((4 * D * D) / (Math.PI ** 3 * n ** 3)) * Math.sin(k * y) * (ratio / k);
    }
    const w = i === 0 || i === intervals ? 1 : i % 2 === 1 ? 4 : 2;
    total += w * f;
  }
  return (total * (D / intervals)) / 3 / mu;
}

describe('curvedFlowsAtChord', () => {
  it('gives the flat interface to the bit at zero curvature, and within 1e-9 of it at κ·D/2 = 1e-10', () => {
    const p = sectionProfile(RECT);
    const flat = spectralTwoLayer(p, 45e-6, 5 * MU, MU);
    const zero = curvedFlowsAtChord(p, 45e-6, 0, 5 * MU, MU);
    expect(zero.qA).toBe(flat.qA);
    expect(zero.qB).toBe(flat.qB);
    // The flows move as about 0.3·c (measured), so c = 1e-10 shifts them by ~3e-11; the
    // mapped strips' rounding is below 1e-12.
    const tiny = curvedFlowsAtChord(p, 45e-6, kappaOf(1e-10), 5 * MU, MU);
    expect(relativeError(tiny.qA, flat.qA)).toBeLessThan(1e-9);
    expect(relativeError(tiny.qB, flat.qB)).toBeLessThan(1e-9);
  });

  it('with equal viscosities gives the single-phase duct: the total as the rectangle series, Q_A as the series integrated left of the arc', () => {
    // Consistency identity (the interface is invisible when μ_A = μ_B) against the closed-form
    // duct series (singlePhase.ts, Shah & London, 1978; and the field series above). Tolerance
    // 1e-8: the spectral error of the mapped strips at the default degree (measured 3e-9 at c = 0.5).
    const p = sectionProfile(RECT);
    const xe = 50e-6;
    for (const c of [0.5, -0.8]) {
      const kappa = kappaOf(c);
      const r = curvedFlowsAtChord(p, xe, kappa, MU, MU);
      expect(relativeError(r.qA + r.qB, rectConductance(WIDTH, DEPTH, MU))).toBeLessThan(1e-8);
      const arc = arcCurve(xe, DEPTH, kappa);
      const out = new Float64Array(6);
      // X(y) on the arc: invert y(t) by bisection (y decreases from D at t = −1 to 0 at t = 1).
      const X = (y: number) => {
        let lo = -1;
        let hi = 1;
        for (let i = 0; i < 80; i++) {
          const t = 0.5 * (lo + hi);
          arc.at(t, out);
          if (out[1]! > y) lo = t;
          else hi = t;
        }
        arc.at(0.5 * (lo + hi), out);
        return out[0]!;
      };
      expect(relativeError(r.qA, seriesFlowLeftOf(X, WIDTH, DEPTH, MU))).toBeLessThan(1e-8);
    }
  });

  it('with equal viscosities gives the single-phase conductance of etched and trapezoidal sections', () => {
    // Consistency identity against the flat-interface solver's single-phase conductance.
    // Tolerance 5e-8: both solvers' spectral error where the strips meet a round or sloping wall
    // (measured 1.8e-8 in the etched section).
    for (const section of [
      { shape: 'etched', maskWidth: 100e-6, depth: 40e-6 },
      { shape: 'trapezoid', bottomWidth: 60e-6, depth: 40e-6, wallAngle: Math.acos(1 / Math.sqrt(3)) },
    ] as const) {
      const p = sectionProfile(section);
      const r = curvedFlowsAtChord(p, 0.45 * p.topWidth, 0.6 / 20e-6, MU, MU);
      expect(relativeError(r.qA + r.qB, shapedConductance(section, MU))).toBeLessThan(5e-8);
    }
  });

  it('is mirror-symmetric: Q_A at (x_e, κ, μ_A, μ_B) is Q_B at (W − x_e, −κ, μ_B, μ_A)', () => {
    // Symmetry of the rectangle; tolerance: the two solves use mirrored but not identical strips (1e-9).
    const p = sectionProfile(RECT);
    const a = curvedFlowsAtChord(p, 40e-6, kappaOf(0.5), 5 * MU, MU);
    const b = curvedFlowsAtChord(p, 60e-6, kappaOf(-0.5), MU, 5 * MU);
    expect(relativeError(a.qA, b.qB)).toBeLessThan(1e-9);
    expect(relativeError(a.qB, b.qA)).toBeLessThan(1e-9);
  });
});

describe('curvedTwoLayerFlow', () => {
  it('at fixed holdup, an arc bulging into A (κ > 0) gives A less flow and B more, with curvature slopes consistent with the values', () => {
    // At fixed area the bulge takes A's area from mid-depth, where the flow is fast, and gives it
    // the slow corners at the cover and the bottom (geometry of the arc over a vertical chord).
    const flat = curvedTwoLayerFlow(RECT, 0.5, 0, 5 * MU, MU);
    const bulge = curvedTwoLayerFlow(RECT, 0.5, kappaOf(0.5), 5 * MU, MU);
    expect(bulge.kA).toBeLessThan(flat.kA);
    expect(bulge.kB).toBeGreaterThan(flat.kB);
    expect(bulge.dkADCurvature).toBeLessThan(0);
    // The curvature slope is consistent with the values: a secant over c = 0 … 0.5 lies between
    // the slopes at its ends (the flows are smooth and, here, monotone in c).
    const secant = (bulge.kA - flat.kA) / kappaOf(0.5);
    expect(Math.min(flat.dkADCurvature, bulge.dkADCurvature)).toBeLessThan(secant);
    expect(Math.max(flat.dkADCurvature, bulge.dkADCurvature)).toBeGreaterThan(secant);
  });
});

/**
 * The smoothed complementarities of the element laws (src/solver/elements.ts `smoothMid`,
 * `splitLaw`, `mergeState` with a width ε > 0) against their closed forms: the
 * Chen–Harker–Kanzow–Smale function φ(t) = ½(t + √(t² + 4ε²)) lies between max(0, t) and
 * max(0, t) + ε, with φ(0) = ε (Kanzow, 1996, SIAM J. Matrix Anal. Appl. 17:851), so the
 * smoothed clamp is within ε of the clamp; its slope is the derivative of that closed form; at
 * ε = 0 the laws are the exact semismooth rows.
 */
import { describe, expect, it } from 'vitest';
import { mergeState, smoothMid, splitLaw } from '../../src/solver/elements.js';

const clamp = (y: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, y));

describe('the smoothed clamp', () => {
  const [lo, hi, eps] = [-150, 150, 3];
  const ys = Array.from({ length: 121 }, (_, k) => -300 + 5 * k);

  it('lies within ε of the clamp, and exactly ε inside it at each limit', () => {
    for (const y of ys) expect(Math.abs(smoothMid(y, lo, hi, eps).value - clamp(y, lo, hi))).toBeLessThanOrEqual(eps * (1 + 1e-12));
    // φ(0) = ε, and φ(lo − hi) = 2ε²/(√((hi − lo)² + 4ε²) + hi − lo) at the other end.
    const far = (2 * eps * eps) / (Math.sqrt((hi - lo) ** 2 + 4 * eps * eps) + (hi - lo));
    expect(smoothMid(hi, lo, hi, eps).value).toBeCloseTo(hi - eps + far, 12);
    expect(smoothMid(lo, lo, hi, eps).value).toBeCloseTo(lo + eps - far, 12);
  });

  // Step 1e-4 of ε: truncation error ~h²·|φ'''|/6 ≲ 1e-9, rounding ~1e-16·|y|/h ≲ 1e-10.
  it('has the slope of its closed form (central differences)', () => {
    for (const y of ys) {
      const h = 1e-4 * eps;
      const fd = (smoothMid(y + h, lo, hi, eps).value - smoothMid(y - h, lo, hi, eps).value) / (2 * h);
      expect(smoothMid(y, lo, hi, eps).slope).toBeCloseTo(fd, 8);
      expect(smoothMid(y, lo, hi, eps).slope).toBeGreaterThanOrEqual(0);
      expect(smoothMid(y, lo, hi, eps).slope).toBeLessThanOrEqual(1);
    }
  });

  it('does not cancel far outside the window (the t < 0 branch is written without subtraction)', () => {
    // At y = −10⁸ (window 0 … 10⁹, ε = 10⁻³): φ(t) = 2ε²/(√(t² + 4ε²) − t) ≈ ε²/|t| for
    // |t| ≫ ε, so the value is ε²/10⁸ − ε²/(1.1·10⁹) (to a relative 1e-22); ½(t + √(t² + 4ε²))
    // written as it stands would give 0.
    const expected = 1e-6 / 1e8 - 1e-6 / 1.1e9;
    expect(Math.abs(smoothMid(-1e8, 0, 1e9, 1e-3).value / expected - 1)).toBeLessThan(1e-12);
  });
});

describe('the split and merge laws with a smoothing width', () => {
  const kappa = 2e-13;

  it('approach the exact rows as the width goes to 0', () => {
    for (const [delta, leak] of [[20, 0], [160, 3e-12], [-170, -2e-12], [149.9, 1e-15]] as const) {
      const exact = splitLaw(delta, leak, kappa, -150, 150);
      const smooth = splitLaw(delta, leak, kappa, -150, 150, undefined, 1e-9);
      // The rows differ by κ times the clamp's displacement, at most κ·ε.
      expect(Math.abs(smooth.F - exact.F)).toBeLessThanOrEqual(kappa * 1e-9 * (1 + 1e-9));
      expect(smooth.branch).toBe(exact.branch);
    }
    for (const z of [-0.5, 0.2, 0.999, 1.7]) {
      const exact = mergeState(z, kappa);
      const smooth = mergeState(z, kappa, undefined, 1e-9);
      expect(Math.abs(smooth.alpha - exact.alpha)).toBeLessThanOrEqual(1e-9);
      expect(Math.abs(smooth.cross - exact.cross)).toBeLessThanOrEqual(kappa * 1e-9);
      expect(smooth.branch).toBe(exact.branch);
    }
  });

  it('keep the normal map: α + χ/κ = z for every z', () => {
    for (const z of [-2, -1e-3, 0, 0.5, 1, 1.01, 40]) {
      const m = mergeState(z, kappa, undefined, 0.05);
      expect(m.alpha + m.cross / kappa).toBeCloseTo(z, 12);
      expect(m.dAlpha + m.dCross / kappa).toBeCloseTo(1, 12);
    }
  });
});

/**
 * Tests of src/physics/singlePhase.ts and the single-phase helpers of src/physics/section.ts:
 * rectangular ducts against the tabulated friction factors and an independent evaluation of the
 * series, tubes and plates against their velocity profiles integrated here.
 */
import { describe, expect, it } from 'vitest';
import { area, conductance, hydraulicDiameter, type RectSection } from '../../src/physics/section.js';
import { rectConductance, tubeConductance } from '../../src/physics/singlePhase.js';

/** Plane Poiseuille flow between plates a gap h apart, per unit width: k = h³/(12μ) (White, 2006, §3-3). */
const platesConductance = (gap: number, mu: number) => gap ** 3 / (12 * mu);

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

/** Fanning friction factor × Reynolds number on the hydraulic diameter: fRe = D_h² A / (2 μ k). */
function fanningRe(width: number, depth: number, mu: number): number {
  const dh = (2 * width * depth) / (width + depth);
  return (dh * dh * width * depth) / (2 * mu * rectConductance(width, depth, mu));
}

/**
 * White, Viscous Fluid Flow, 3rd ed., 2006, eq. 3-48 (equation number from memory), written for
 * full sides w (along z) and h (along y) and summed term by term up to n = 2·10⁵ with no closed-form
 * tail (the terms left out are below 1e-22 of the sum):
 *   k = (h³ w / 12μ) [1 − (192 h / π⁵ w) Σ_{n odd} tanh(nπw / 2h) / n⁵].
 * The formula holds for either orientation; summed over the long side it loses about (long/short)²
 * ulps to cancellation, so that form is used only for modest aspect ratios.
 */
function whiteSeries(w: number, h: number, mu: number): number {
  let sum = 0;
  for (let n = 200_001; n >= 1; n -= 2) sum += Math.tanh((n * Math.PI * w) / (2 * h)) / n ** 5;
  return ((h ** 3 * w) / (12 * mu)) * (1 - ((192 * h) / (Math.PI ** 5 * w)) * sum);
}

/** Composite Simpson rule on n (even) panels; exact for cubics, so exact for the profiles below. */
function simpson(f: (x: number) => number, lo: number, hi: number, n = 8): number {
  const h = (hi - lo) / n;
  let sum = f(lo) + f(hi);
  for (let i = 1; i < n; i++) sum += (i % 2 === 1 ? 4 : 2) * f(lo + i * h);
  return (sum * h) / 3;
}

describe('rectConductance', () => {
  // Shah & London (1978), Laminar Flow Forced Convection in Ducts, ch. VII, table of fRe for
  // rectangular ducts (table number not checked): aspect (short/long) → fRe.
  const SHAH_LONDON: Array<[number, number]> = [
    [1, 14.227],
    [0.5, 15.548],
    [0.25, 18.233],
    [0.125, 20.585],
  ];

  it('gives the friction factors tabulated by Shah & London (1978) to the table’s last digit, with either side the longer', () => {
    // Shah & London 1978, rectangular-duct fRe table; |Δ| < 5e-4 is half a unit in the last printed digit.
    for (const [aspect, fRe] of SHAH_LONDON) {
      expect(Math.abs(fanningRe(100e-6, aspect * 100e-6, 1e-3) - fRe), `aspect ${aspect}, w > h`).toBeLessThan(5e-4);
      expect(Math.abs(fanningRe(aspect * 100e-6, 100e-6, 1e-3) - fRe), `aspect ${aspect}, h > w`).toBeLessThan(5e-4);
    }
  });

  it('tends to the parallel-plate value fRe = 24 as the aspect ratio goes to zero (1e-4: within 0.1%)', () => {
    // Shah & London 1978, rectangular-duct fRe table, aspect 0 (parallel plates): fRe = 24.
    expect(relativeError(fanningRe(1e-2, 1e-6, 1e-3), 24)).toBeLessThan(1e-3);
    expect(relativeError(fanningRe(1e-6, 1e-2, 1e-3), 24)).toBeLessThan(1e-3);
  });

  it('equals White’s series (2006, eq. 3-48) summed independently with 10⁵ terms, to 1e-14, for aspect ratios 1e-4 to 1e4', () => {
    // White 2006, eq. 3-48 (equation number from memory), evaluated by whiteSeries above.
    for (let e = -4; e <= 4; e += 0.5) {
      const depth = 50e-6 * 10 ** e;
      const want = whiteSeries(Math.max(50e-6, depth), Math.min(50e-6, depth), 2e-3);
      expect(relativeError(rectConductance(50e-6, depth, 2e-3), want), `aspect 1e${e}`).toBeLessThan(1e-14);
    }
  });

  it('gives the same conductance as White’s series summed over the long side instead of the short one', () => {
    // White 2006, eq. 3-48 (from memory) holds for either labelling of the sides; the long-side sum
    // converges more slowly and cancels more, hence 1e-12 and aspect ratios up to 4 only.
    for (const aspect of [1, 1.5, 2, 4]) {
      expect(relativeError(rectConductance(aspect, 1, 1), whiteSeries(1, aspect, 1)), `aspect ${aspect}`).toBeLessThan(1e-12);
    }
  });

  it('scales as length⁴ / viscosity', () => {
    // Dimensional analysis of μ∇²u = −G (common practice).
    const base = rectConductance(200e-6, 50e-6, 6.5e-3);
    expect(relativeError(rectConductance(2e-3, 5e-4, 6.5e-3), 1e4 * base)).toBeLessThan(1e-14);
    expect(relativeError(rectConductance(200e-6, 50e-6, 1.3e-3), 5 * base)).toBeLessThan(1e-14);
  });
});

describe('tubeConductance', () => {
  it('is the Hagen–Poiseuille conductance πd⁴/(128μ)', () => {
    // White 2006, §3-3, Hagen–Poiseuille flow (eq. 3-52 per src; equation number from memory):
    // d = 100 µm, μ = 1 mPa·s → k = π·1e-16/0.128 m⁴/(Pa·s).
    expect(relativeError(tubeConductance(100e-6, 1e-3), (Math.PI * 1e-16) / 0.128)).toBeLessThan(1e-15);
  });

  it('equals the parabolic profile u = G(R² − r²)/(4μ) integrated over the disc', () => {
    // White 2006, §3-3 (from memory): u(r) = G(R² − r²)/(4μ); Q = ∫₀^R 2πr u dr, by Simpson (exact for cubics).
    const d = 80e-6;
    const mu = 1.9e-3;
    const R = d / 2;
    const flow = simpson((r) => 2 * Math.PI * r * ((R * R - r * r) / (4 * mu)), 0, R);
    expect(relativeError(tubeConductance(d, mu), flow)).toBeLessThan(1e-14);
  });

  it('is what conductance() returns for a tube section, whose area is πd²/4 and hydraulic diameter d', () => {
    // Definitions (common practice).
    const tube = { shape: 'tube', diameter: 150e-6 } as const;
    expect(conductance(tube, 1e-3)).toBe(tubeConductance(150e-6, 1e-3));
    expect(relativeError(area(tube), (Math.PI * 150e-6 ** 2) / 4)).toBeLessThan(1e-15);
    expect(hydraulicDiameter(tube)).toBe(150e-6);
  });
});

describe('plane Poiseuille flow, the wide-duct limit', () => {
  it('the reference formula equals the plane Poiseuille profile u = G s(h − s)/(2μ) integrated across the gap, h³/(12μ)', () => {
    // White 2006, §3-3, plane Poiseuille flow (equation number from memory).
    const h = 30e-6;
    const mu = 6.5e-3;
    const flow = simpson((s) => (s * (h - s)) / (2 * mu), 0, h);
    expect(relativeError(platesConductance(h, mu), flow)).toBeLessThan(1e-14);
    expect(relativeError(platesConductance(h, mu), h ** 3 / (12 * mu))).toBeLessThan(1e-15);
  });

  it('is the per-width limit of rectConductance for a duct whose width grows without bound', () => {
    // White 2006, eq. 3-48 (from memory): k/w → h³/(12μ) with a relative end correction ≈ 0.630 h/w.
    const k = rectConductance(1, 1e-6, 1e-3);
    expect(relativeError(k, platesConductance(1e-6, 1e-3))).toBeLessThan(1e-5);
  });
});

describe('section geometry helpers', () => {
  const rect: RectSection = { shape: 'rect', width: 200e-6, depth: 50e-6, orientation: 'side' };

  it('give a rectangle area w·h and hydraulic diameter 2wh/(w + h), and rectConductance through conductance()', () => {
    // Hydraulic diameter 4A/P (common practice).
    expect(relativeError(area(rect), 1e-8)).toBeLessThan(1e-15);
    expect(relativeError(hydraulicDiameter(rect), 80e-6)).toBeLessThan(1e-15);
    expect(conductance(rect, 1e-3)).toBe(rectConductance(200e-6, 50e-6, 1e-3));
  });
});

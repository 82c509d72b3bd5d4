/**
 * The hand-worked window example shared by the window tests (test/analyses/window.test.ts, the
 * library; test/cli/windowCommand.test.ts, the command): one invented contactor chip, its
 * resistances, the pinned-split lines and the backflow lines worked out below. Exports
 * `singleContactor`, `HAND` and the derived constants.
 */
import type { LayoutFile } from '../../src/layout/schema.js';

/**
 * Worked example: one contactor between an A inlet and a B inlet held at pressures p_A, p_B and
 * two outlets at 0 Pa. Both liquids have μ = 1 mPa·s, so the two layers of the contactor
 * together are one rectangular duct whatever the holdup, and the whole chip is linear while
 * its split is pinned.
 *
 * Resistances (SI, Pa·s/m³):
 *   tubes, Hagen–Poiseuille R = 128 μ L / (π d⁴) (White, Viscous Fluid Flow, 3rd ed., 2006,
 *   eq. 3-52), d = 100 µm:
 *     feeds fA, fB, L = 5 mm:   128 · 1e-3 · 5e-3 / (π · 1e-16) = 2.037183e12
 *     A arm oA,     L = 10 mm:  twice that                       = 4.074367e12
 *     B arm oB,     L = 5 mm:                                    = 2.037183e12
 *   contactor, 200 µm × 50 µm, L = 10 mm, R = 12 μ L / (w h³ f) with
 *     f = 1 − (192 h / (π⁵ w)) Σ_{n odd} tanh(nπw/2h) / n⁵ (White, 2006, eq. 3-48);
 *     w/h = 4: the terms are 0.99999303, 0.00411523, 0.00032000, 0.00005950, and the rest
 *     1/9⁵ + 1/11⁵ + … = (31/32)ζ(5) − 1 − 3⁻⁵ − 5⁻⁵ − 7⁻⁵ = 0.00002972 (tanh = 1 there), so
 *     Σ = 1.00451679 and f = 1 − (192 / (4π⁵)) · 1.00451679 = 0.8424389;
 *     R_c = 12 · 1e-3 · 1e-2 / (2e-4 · 1.25e-13 · 0.8424389) = 5.697743e12.
 * Pinned split (no leak): both lanes feel one drop d = R_c (Q_A + Q_B), so
 *   p_A = (R_fA + R_oA + R_c) Q_A + R_c Q_B,   p_B = R_c Q_A + (R_fB + R_oB + R_c) Q_B,
 * i.e. p = M Q with M = [[1.180929e13, 5.697743e12], [5.697743e12, 9.772109e12]],
 * det M = 1.180929e13 · 9.772109e12 − 5.697743e12² = 8.293743e25.
 * At the split p_B − p_A = R_oB Q_B − R_oA Q_A = a₁ p_A + a₂ p_B with
 *   a₁ = −(R_oA M₂₂ + R_oB M₂₁) / det = −(4.074367e12 · 9.772109e12 + 2.037183e12 · 5.697743e12) / 8.293743e25 = −0.6200156
 *   a₂ =  (R_oA M₁₂ + R_oB M₁₁) / det =  (4.074367e12 · 5.697743e12 + 2.037183e12 · 1.180929e13) / 8.293743e25 =  0.5699765
 * Window (Young–Laplace, 2γ cos θ / d, de Gennes, Brochard-Wyart & Quéré, Capillarity and
 * Wetting Phenomena, 2004, §1.2): γ = 10 mN/m, θ_adv = 120°, θ_rec = 60°, d = 50 µm (the depth,
 * which the interface spans in a side-by-side contactor):
 *   low = 2 · 0.01 · cos 120° / 50e-6 = −200 Pa, high = 2 · 0.01 · cos 60° / 50e-6 = +200 Pa.
 * So the split is pinned while −200 ≤ −0.6200156 p_A + 0.5699765 p_B ≤ 200; below, A pushes into
 * the B outlet, above, B into the A outlet (the network is linear, so the pinned solution is the
 * solution exactly up to these lines). With a rating of 9.1 kPa, p_A or p_B above it is over.
 * Backflow. Leaking A → B, the split holds p_B − p_A = low and a leak ℓ runs from the A lane into
 * the B arm: p_sA = R_oA (Q_A − ℓ), p_sB = R_oB (Q_B + ℓ). The B feed stops (Q_B = 0) where, with
 * R_oA = 2R, R_oB = R_f = R = 2.037183e12,
 *   ℓ = (low + 2R Q_A) / (3R),
 *   p_B = d + p_sB = R_c Q_A + R ℓ = (R_c + 2R/3) Q_A + low/3,
 *   p_A = (R_f + R_c) Q_A + 2R (Q_A − ℓ) = (R_c + 5R/3) Q_A − 2 low/3,
 * so B flows back once p_A > k (p_B − low/3) − 2 low/3 with
 *   k = (R_c + 5R/3) / (R_c + 2R/3) = 9.093048e12 / 7.055865e12 = 1.288722,
 * i.e. p_A > 1.288722 (p_B + 66.67 Pa) + 133.33 Pa. Mirrored (leaking B → A, Δ = high, Q_A = 0):
 *   p_A = (R_c + 2R/3) Q_B − 2 high/3,   p_B = (R_c + 5R/3) Q_B + high/3,
 * so A flows back once p_B > 1.288722 (p_A + 133.33 Pa) + 66.67 Pa.
 */
export const HAND = {
  feed: (128 * 1e-3 * 5e-3) / (Math.PI * 1e-16),
  armA: (128 * 1e-3 * 10e-3) / (Math.PI * 1e-16),
  armB: (128 * 1e-3 * 5e-3) / (Math.PI * 1e-16),
  contactor: (12 * 1e-3 * 1e-2) / (2e-4 * 1.25e-13 * 0.8424389),
  low: -200,
  high: 200,
  rating: 9.1e3,
};
export const M11 = HAND.feed + HAND.armA + HAND.contactor;
export const M12 = HAND.contactor;
export const M22 = HAND.feed + HAND.armB + HAND.contactor;
export const DET = M11 * M22 - M12 * M12;
export const A1 = -(HAND.armA * M22 + HAND.armB * M12) / DET;
export const A2 = (HAND.armA * M12 + HAND.armB * M11) / DET;
export const R = HAND.armB;
export const K = (HAND.contactor + (5 * R) / 3) / (HAND.contactor + (2 * R) / 3);

export function singleContactor(): LayoutFile {
  const tube = (id: string, from: string, to: string, length: string) => ({ id, from, to, shape: 'tube' as const, diameter: '100 um', length });
  return {
    name: 'one contactor',
    phases: { A: { label: 'A', viscosity: '1 mPa.s', density: 1000 }, B: { label: 'B', viscosity: '1 mPa.s', density: 1000 } },
    interfacialTension: '10 mN/m',
    contactAngleA: { advancing: '120 deg', receding: '60 deg' },
    maxPressure: '9.1 kPa',
    nodes: [
      { id: 'inA', type: 'inlet', phase: 'A', pressure: '7 kPa' },
      { id: 'inB', type: 'inlet', phase: 'B', pressure: '7.75 kPa' },
      { id: 'm', type: 'merge', inlets: ['fA', 'fB'] },
      { id: 's', type: 'split', outlets: ['oA', 'oB'] },
      { id: 'outA', type: 'outlet', pressure: 0, phase: 'A' },
      { id: 'outB', type: 'outlet', pressure: 0, phase: 'B' },
    ],
    segments: [
      tube('fA', 'inA', 'm', '5 mm'),
      tube('fB', 'inB', 'm', '5 mm'),
      { id: 'k', from: 'm', to: 's', shape: 'rect', width: '200 um', depth: '50 um', length: '10 mm', orientation: 'side' },
      tube('oA', 's', 'outA', '10 mm'),
      tube('oB', 's', 'outB', '5 mm'),
    ],
  };
}


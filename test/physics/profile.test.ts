/**
 * Tests of src/physics/profile.ts, the depth-averaged velocity across the two layers: its cells
 * add up to the layer flows of twoLayerFlow (term by term the same series, so a strong check of
 * the closed-form primitives and tails); with equal viscosities it matches the single-phase duct
 * solution expanded the other way round (independent of the two-layer construction); point
 * values agree with the cell means; the profile vanishes at the walls and carries the interface
 * conditions of two immiscible liquids.
 */
import { describe, expect, it } from 'vitest';
import { depthAveragedCellMeans, depthAveragedVelocity, type LayerFaces } from '../../src/physics/profile.js';
import { twoLayerFlow, type TwoLayerInput } from '../../src/physics/twoLayer.js';

/** Faces from 0 to w, finer toward w (the interface), as the transport solver builds them. */
function faces(w: number, cells: number): number[] {
  const f = Array.from({ length: cells + 1 }, (_, k) => w * (k / cells + (0.9 * Math.sin((Math.PI * k) / cells)) / Math.PI));
  f[cells] = w;
  return f;
}

function layerFaces(input: TwoLayerInput, cells: number): LayerFaces {
  const a = input.holdup * input.across;
  return { A: faces(a, cells), B: faces(input.across - a, cells) };
}

function layerSum(cells: Float64Array, f: ArrayLike<number>): number {
  let sum = 0;
  for (let k = 0; k < cells.length; k++) sum += cells[k]! * (f[k + 1]! - f[k]!);
  return sum;
}

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

/**
 * Depth average of single-phase flow in an S × L rectangle from the series in s (White, Viscous
 * Fluid Flow, 3rd ed., 2006, §3-3.3 (from memory), with the roles of the sides exchanged):
 * u = Σ_{m odd} g_m(t) sin(κs), κ = mπ/S, g_m = (4/(mπμκ²))(1 − cosh(κ(t − L/2))/cosh(κL/2)), so
 *   ū(s) = Σ (4/(mπμκ²)) (1 − tanh(κL/2)/(κL/2)) sin(κs),
 * and its mean over [s₁, s₂] takes sin(κs) → (cos κs₁ − cos κs₂)/(κ(s₂ − s₁)). Terms of the cell
 * mean fall like m⁻⁴; 2·10⁵ terms leave less than 1e-15 relative. Here κL/2 ≥ π/8, so
 * 1 − tanh(x)/x loses at most two digits to cancellation.
 */
function transposedCellMean(S: number, L: number, mu: number, s1: number, s2: number): number {
  let sum = 0;
  for (let m = 200_001; m >= 1; m -= 2) {
    const kappa = (m * Math.PI) / S;
    const half = (kappa * L) / 2;
    const coefficient = (4 / (m * Math.PI * mu * kappa * kappa)) * (1 - Math.tanh(half) / half);
    sum += (coefficient * (Math.cos(kappa * s1) - Math.cos(kappa * s2))) / (kappa * (s2 - s1));
  }
  return sum;
}

const CASES: Array<[string, TwoLayerInput]> = [
  ['side by side, W/D = 4, α = 0.5, μA/μB = 3.4', { across: 200e-6, along: 50e-6, holdup: 0.5, muA: 6.5e-3, muB: 1.9e-3 }],
  ['side by side, W/D = 4, α = 0.97 (thin B)', { across: 200e-6, along: 50e-6, holdup: 0.97, muA: 7.3e-3, muB: 1e-3 }],
  ['stacked, D/W = 1/4, α = 0.03 (thin A)', { across: 50e-6, along: 200e-6, holdup: 0.03, muA: 1e-3, muB: 7.3e-3 }],
  ['deep, W/D = 1/20, α = 0.3', { across: 50e-6, along: 1e-3, holdup: 0.3, muA: 1e-3, muB: 20e-3 }],
  ['shallow, W/D = 100, α = 0.6', { across: 5e-3, along: 50e-6, holdup: 0.6, muA: 1e-3, muB: 1e-3 }],
];

describe('depthAveragedCellMeans', () => {
  it.each(CASES)('adds up over each layer, times the depth, to k_A and k_B of twoLayerFlow to 1e-10 (%s)', (_name, input) => {
    // Consistency: the depth average integrated over a layer is the layer flow per unit depth.
    const f = layerFaces(input, 24);
    const cells = depthAveragedCellMeans(input, f);
    const flow = twoLayerFlow(input);
    expect(relativeError(layerSum(cells.A, f.A) * input.along, flow.kA)).toBeLessThan(1e-10);
    expect(relativeError(layerSum(cells.B, f.B) * input.along, flow.kB)).toBeLessThan(1e-10);
  });

  it('matches the single-phase duct series expanded across the width, cell by cell, to 1e-8 of the mean when the viscosities are equal', () => {
    // White (2006), §3-3.3 (from memory): an independent series, in s instead of t.
    for (const [S, L, holdup] of [[200e-6, 50e-6, 0.35], [50e-6, 200e-6, 0.8], [100e-6, 100e-6, 0.5]] as const) {
      const mu = 1e-3;
      const input = { across: S, along: L, holdup, muA: mu, muB: mu };
      const f = layerFaces(input, 10);
      const cells = depthAveragedCellMeans(input, f);
      const mean = (twoLayerFlow(input).kA + twoLayerFlow(input).kB) / (S * L);
      for (let k = 0; k < 10; k++) {
        expect(Math.abs(cells.A[k]! - transposedCellMean(S, L, mu, f.A[k]!, f.A[k + 1]!)) / mean).toBeLessThan(1e-8);
        // Layer B is measured from its own wall at s = S.
        expect(Math.abs(cells.B[k]! - transposedCellMean(S, L, mu, S - f.B[k + 1]!, S - f.B[k]!)) / mean).toBeLessThan(1e-8);
      }
    }
  });

  it('rejects faces that do not span the layer from its wall to the interface', () => {
    const input = CASES[0]![1];
    expect(() => depthAveragedCellMeans(input, { A: [0, 50e-6], B: [0, 100e-6] })).toThrow(RangeError);
  });
});

describe('depthAveragedVelocity', () => {
  const input = CASES[0]![1];
  const { across: S, holdup, muA, muB } = input;
  const a = holdup * S;
  const mean = (twoLayerFlow(input).kA + twoLayerFlow(input).kB) / (S * input.along);

  it('is zero at both walls and positive between them', () => {
    expect(depthAveragedVelocity(input, 0)).toBe(0);
    expect(depthAveragedVelocity(input, S)).toBe(0);
    for (let i = 1; i < 50; i++) expect(depthAveragedVelocity(input, (i / 50) * S)).toBeGreaterThan(0);
  });

  it('agrees with the mean over a small cell around the point to 1e-6 of the mean velocity', () => {
    for (const s of [0.1 * a, 0.5 * a, 0.9 * a, a + 0.3 * (S - a), a + 0.8 * (S - a)]) {
      const half = 1e-4 * S;
      const inA = s < a;
      const x = inA ? s : S - s;
      const f = inA ? { A: [0, x - half, x + half, a], B: [0, S - a] } : { A: [0, a], B: [0, x - half, x + half, S - a] };
      const cells = depthAveragedCellMeans(input, f);
      const cell = inA ? cells.A[1]! : cells.B[1]!;
      expect(Math.abs(depthAveragedVelocity(input, s) - cell) / mean).toBeLessThan(1e-6);
    }
  });

  it('carries the interface conditions: one velocity, and equal shear stress μ dū/ds on both sides to 1e-4', () => {
    // Continuity of velocity and of μ ∂u/∂s at a flat interface between immiscible liquids
    // (Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., 2002, §2.5 (from memory)),
    // which the depth average inherits mode by mode.
    const h = 1e-4 * a;
    const uI = depthAveragedVelocity(input, a);
    const left = depthAveragedVelocity(input, a - h);
    const right = depthAveragedVelocity(input, a + h);
    const left2 = depthAveragedVelocity(input, a - 2 * h);
    const right2 = depthAveragedVelocity(input, a + 2 * h);
    // One-sided second-order differences.
    const slopeA = (3 * uI - 4 * left + left2) / (2 * h);
    const slopeB = (-3 * uI + 4 * right - right2) / (2 * h);
    expect(relativeError(muA * slopeA, muB * slopeB)).toBeLessThan(1e-4);
    const close = 1e-9 * a;
    expect(Math.abs(depthAveragedVelocity(input, a - close) - depthAveragedVelocity(input, a + close)) / uI).toBeLessThan(1e-6);
  });
});

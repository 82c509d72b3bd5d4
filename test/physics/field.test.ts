/**
 * Tests of src/physics/field.ts: the velocity over a two-layer section against independent values —
 * the field integrated numerically here against the series flows of twoLayer.ts and the duct flow
 * of White (2006), the single-phase centreline velocity of White's rectangular-duct series, and
 * the two-layer plate profile of Bird, Stewart & Lightfoot (2002) for the maximum.
 */
import { describe, expect, it } from 'vitest';
import { velocityAt, velocityField, velocityMaximum } from '../../src/physics/field.js';
import type { RectSection } from '../../src/physics/section.js';
import { rectConductance } from '../../src/physics/singlePhase.js';
import { twoLayerFlow } from '../../src/physics/twoLayer.js';

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

/**
 * n-point Gauss–Legendre nodes and weights on [−1, 1], by Newton's method on the Legendre
 * recurrence (Press et al., Numerical Recipes, 3rd ed., 2007, §4.6 (from memory)). Computed here
 * so that the quadrature shares nothing with src/physics/series.ts.
 */
function gaussLegendre(n: number): { x: number[]; w: number[] } {
  const x: number[] = [];
  const w: number[] = [];
  for (let i = 1; i <= n; i++) {
    let z = Math.cos((Math.PI * (i - 0.25)) / (n + 0.5));
    let derivative = 1;
    for (let iteration = 0; iteration < 100; iteration++) {
      let p1 = 1;
      let p2 = 0;
      for (let j = 1; j <= n; j++) {
        const p3 = p2;
        p2 = p1;
        p1 = ((2 * j - 1) * z * p2 - (j - 1) * p3) / j;
      }
      derivative = (n * (z * p1 - p2)) / (z * z - 1);
      const previous = z;
      z -= p1 / derivative;
      if (Math.abs(z - previous) < 1e-16) break;
    }
    x.push(z);
    w.push(2 / ((1 - z * z) * derivative * derivative));
  }
  return { x, w };
}

const RULE = gaussLegendre(16);

function integrate(f: (x: number) => number, lo: number, hi: number): number {
  const mid = 0.5 * (lo + hi);
  const half = 0.5 * (hi - lo);
  return RULE.x.reduce((sum, x, i) => sum + RULE.w[i]! * half * f(mid + half * x), 0);
}

/** Flow of each layer per unit pressure gradient: velocityAt integrated over 0 < t < L/2 (doubled, by the mirror symmetry in t) and over each layer in s. */
function integratedFlows(across: number, along: number, holdup: number, muA: number, muB: number) {
  const a = holdup * across;
  const overLayer = (lo: number, hi: number) =>
    2 * integrate((s) => integrate((t) => velocityAt(across, along, holdup, muA, muB, s, t), 0, along / 2), lo, hi);
  return { kA: overLayer(0, a), kB: overLayer(a, across) };
}

/**
 * Centreline velocity of a rectangular duct of sides 2a ≤ 2b per unit pressure gradient, from the
 * series of White, Viscous Fluid Flow, 3rd ed., 2006, eq. 3-48 (from memory) at y = z = 0:
 *   u_c = (16a²/(μπ³)) Σ_{i odd} (−1)^((i−1)/2) (1 − sech(iπb/2a)) / i³,
 * with Σ (−1)^k/(2k+1)³ = π³/32 (Abramowitz & Stegun, 1964, §23.2, β(3) (from memory)), so
 *   u_c = (a²/(2μ)) (1 − (32/π³) Σ (−1)^k sech((2k+1)πb/2a)/(2k+1)³);
 * the sech sum falls like e^(−πk b/a), and 60 terms are exact to rounding for b ≥ a.
 */
function whiteCentreline(sideOne: number, sideTwo: number, mu: number): number {
  const a = Math.min(sideOne, sideTwo) / 2;
  const b = Math.max(sideOne, sideTwo) / 2;
  let sum = 0;
  for (let k = 0; k < 60; k++) {
    const i = 2 * k + 1;
    sum += (-1) ** k / (i ** 3 * Math.cosh((i * Math.PI * b) / (2 * a)));
  }
  return ((a * a) / (2 * mu)) * (1 - (32 / Math.PI ** 3) * sum);
}

/**
 * Two layers between plates s = 0 and s = S (the interface at a = αS), unit pressure gradient:
 * u_A = s(a − s)/(2μ_A) + u_i s/a, u_B = (s − a)(S − s)/(2μ_B) + u_i (S − s)/b with
 * u_i = S a b/(2(μ_A b + μ_B a)) (Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., 2002,
 * problem 2B.7, as derived in twoLayer.test.ts). Its maximum, where du/ds = 0 inside a layer.
 */
function plateMaximum(holdup: number, muA: number, muB: number) {
  const S = 1;
  const a = holdup * S;
  const b = S - a;
  const ui = (S * a * b) / (2 * (muA * b + muB * a));
  const inA = a / 2 + (muA * ui) / a;
  if (inA > 0 && inA < a) return { s: inA, u: (inA * (a - inA)) / (2 * muA) + (ui * inA) / a, phase: 'A' };
  const inB = (S + a) / 2 - (muB * ui) / b;
  return { s: inB, u: ((inB - a) * (S - inB)) / (2 * muB) + (ui * (S - inB)) / b, phase: 'B' };
}

describe('velocityAt', () => {
  it('integrates over each layer to the series flows of twoLayerFlow to 1e-8, and with equal viscosities to the duct flow of White (2006)', () => {
    // References: twoLayerFlow (flows mode by mode in closed form, checked against finite volumes
    // and strip series in its own tests) and rectConductance (White 2006, eq. 3-48 (from memory)).
    // Measured: at most 1.7e-9 (1 × 2, holdup 0.8, μA/μB 0.2). The difference is the error of a
    // 16-point rule per layer on a field with weak singularities where the interface meets the
    // walls (10 points gave 6e-8); the field's own truncation is near 1e-10. 1e-8 is six times the
    // worst measured quadrature error.
    for (const [across, along, holdup, muA, muB] of [
      [1, 1, 0.3, 5, 1],
      [2, 1, 0.5, 1, 1],
      [1, 2, 0.8, 0.2, 1],
    ] as const) {
      const where = `${across} × ${along}, holdup ${holdup}, μA/μB ${muA / muB}`;
      const field = integratedFlows(across, along, holdup, muA, muB);
      const series = twoLayerFlow({ across, along, holdup, muA, muB });
      expect(relativeError(field.kA, series.kA), `A: ${where}`).toBeLessThan(1e-8);
      expect(relativeError(field.kB, series.kB), `B: ${where}`).toBeLessThan(1e-8);
      if (muA === muB) expect(relativeError(field.kA + field.kB, rectConductance(across, along, muA)), where).toBeLessThan(1e-8);
    }
  });
});

describe('velocityField', () => {
  it('sums cell by cell over each phase to the series flows at second order, for layers side by side and stacked', () => {
    // The midpoint rule on cells that the interface does not cut has an h² error (common practice),
    // so doubling the cells must divide the difference from twoLayerFlow by 4; a grid laid on the
    // wrong axes or an interface in the wrong place converges to other flows or at another rate.
    // Measured ratios: 3.987 for both phases and orientations; bounds 3.9 to 4.1.
    for (const orientation of ['side', 'stacked'] as const) {
      const section: RectSection = { shape: 'rect', width: 2, depth: 1, orientation };
      const [across, along] = orientation === 'side' ? [2, 1] : [1, 2];
      const series = twoLayerFlow({ across, along, holdup: 0.25, muA: 3, muB: 1 });
      const differences = [4, 8].map((n) => {
        const field = velocityField(section, 0.25, 3, 1, 2 * n, n);
        const cell = (section.width / (2 * n)) * (section.depth / n);
        let kA = 0;
        let kB = 0;
        field.z.forEach((z, j) =>
          field.y.forEach((y, i) => {
            if ((orientation === 'side' ? y : z) < field.interfaceAt) kA += field.u[j]![i]! * cell;
            else kB += field.u[j]![i]! * cell;
          }),
        );
        return [kA - series.kA, kB - series.kB];
      });
      for (const phase of [0, 1]) {
        const ratio = differences[0]![phase]! / differences[1]![phase]!;
        expect(ratio, `${orientation}, phase ${phase === 0 ? 'A' : 'B'}`).toBeGreaterThan(3.9);
        expect(ratio, `${orientation}, phase ${phase === 0 ? 'A' : 'B'}`).toBeLessThan(4.1);
      }
    }
  });
});

describe('velocityMaximum', () => {
  it('finds the centreline velocity of White’s rectangular-duct series (2006, eq. 3-48) for equal viscosities, at the centre', () => {
    // Reference: whiteCentreline above. Measured: value at most 3.2e-9 (1 × 20 side by side), which
    // is the tail that the 4001-mode cap of field.ts leaves, 16(along/across)²/(π³n³) = 3.2e-9 at
    // along/across 20; bound 1e-8. Position: at most 1.5e-8 of the channel size where the peak is
    // curved (across ≤ 4·along), the limit of ordering values near a peak (an offset δ changes u
    // by ~δ², so δ below ~1e-8 is lost in rounding); bound 1e-7. Where the layers span a long
    // `across` the profile is flat over the middle and the position is not checked.
    for (const [width, depth] of [[1, 1], [2, 1], [1, 4], [10, 1], [1, 20]] as const) {
      for (const orientation of ['side', 'stacked'] as const) {
        const where = `${width} × ${depth} ${orientation}`;
        const peak = velocityMaximum({ shape: 'rect', width, depth, orientation }, 0.3, 2, 2);
        expect(relativeError(peak.u, whiteCentreline(width, depth, 2)), where).toBeLessThan(1e-8);
        const across = orientation === 'side' ? width : depth;
        const along = orientation === 'side' ? depth : width;
        if (across <= 4 * along) {
          expect(Math.abs(peak.y - width / 2) / width, where).toBeLessThan(1e-7);
          expect(Math.abs(peak.z - depth / 2) / depth, where).toBeLessThan(1e-7);
        }
      }
    }
  });

  it('gives a square duct u_max/u_mean = 2.096 (Shah & London, 1978 (from memory))', () => {
    // Mean velocity from rectConductance (White 2006, eq. 3-48 (from memory)) over the unit area.
    // The ratio is remembered to four figures only, so the check is to half a unit in the last,
    // 5e-4 (measured 2.09626).
    const peak = velocityMaximum({ shape: 'rect', width: 1, depth: 1, orientation: 'side' }, 0.5, 1, 1);
    expect(Math.abs(peak.u / rectConductance(1, 1, 1) - 2.096)).toBeLessThan(5e-4);
  });

  it('finds the peak of the two-layer plate profile (Bird, Stewart & Lightfoot, 2002) on the mid-plane of a channel 20 times deeper than wide', () => {
    // Reference: plateMaximum above. Measured: value at most 5.3e-9 and position at most 4.6e-9 of
    // the width; at along/across 10 the value still differed by up to 1.1e-5 (the end walls' effect
    // had not decayed at the mid-plane), at 20 what is left is the truncation of the 4001-mode cap
    // as above. Bounds: 2e-8 for the value, 1e-7 for the position (as for one phase).
    for (const [holdup, muA, muB] of [
      [0.3, 5, 1],
      [0.8, 0.2, 1],
      [0.2, 0.2, 1],
      [0.7, 3, 1],
    ] as const) {
      const where = `holdup ${holdup}, μA/μB ${muA / muB}`;
      const plate = plateMaximum(holdup, muA, muB);
      const peak = velocityMaximum({ shape: 'rect', width: 1, depth: 20, orientation: 'side' }, holdup, muA, muB);
      expect(relativeError(peak.u, plate.u), where).toBeLessThan(2e-8);
      expect(Math.abs(peak.y - plate.s), where).toBeLessThan(1e-7);
      expect(peak.z, where).toBe(10);
      expect(peak.phase, where).toBe(plate.phase);
    }
  });
});

/**
 * Tests of src/physics/twoLayer.ts: the two-layer Fourier series against single-phase duct flow,
 * against series for equal viscosities expanded independently here, against the closed form
 * between plates derived here, and for finiteness and monotonicity over extreme geometries.
 * The finite-volume cross-check lives in twoLayerFiniteVolume.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { rectConductance } from '../../src/physics/singlePhase.js';
import { twoLayerFlow, twoLayerPlates } from '../../src/physics/twoLayer.js';

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

/** 1 − tanh(x)/x without cancellation for small x (Taylor series of tanh, A&S 1964, §4.5 (from memory)). */
function oneMinusTanhOverX(x: number): number {
  if (x < 0.02) {
    const x2 = x * x;
    return x2 * (1 / 3 - x2 * (2 / 15 - x2 * (17 / 315 - (x2 * 62) / 2835)));
  }
  return 1 - Math.tanh(x) / x;
}

/**
 * Single-phase flow through the strip 0 < s < a of an S × L rectangle (one viscosity μ), from the
 * Fourier series in s rather than in t: u = Σ_{m odd} g_m(t) sin(κs), κ = mπ/S, with
 * g_m = (4/(mπμκ²)) (1 − cosh(κ(t − L/2))/cosh(κL/2)) (White, 2006, §3-3.3 (from memory), the
 * rectangular-duct solution with the roles of the sides exchanged). Integrated over the strip:
 *   q = Σ (4/(mπμκ²)) · (S/(mπ)) (1 − cos κa) · L (1 − tanh(κL/2)/(κL/2)).
 * Terms fall like m⁻⁴ once m ≫ S/a and m ≫ S/L; summed to M ≥ 200 S/a, the rest is below 1e-15
 * relative for L ≥ S. No interface, no split at s = a: independent of the two-layer construction.
 */
function stripFlowTransposed(S: number, L: number, a: number, mu: number): number {
  const M = Math.round(Math.max(2e5, (200 * S) / a)) | 1;
  let sum = 0;
  for (let m = M; m >= 1; m -= 2) {
    const kappa = (m * Math.PI) / S;
    const half = Math.sin((kappa * a) / 2);
    sum += (4 / (m * Math.PI * mu * kappa * kappa)) * (S / (m * Math.PI)) * 2 * half * half * L * oneMinusTanhOverX((kappa * L) / 2);
  }
  return sum;
}

/**
 * The same strip flow from the series in t, with the whole-width single-phase mode
 * f_n(s) = (4/(nπμλ²)) (1 − cosh(λ(s − S/2))/cosh(λS/2)), λ = nπ/L, integrated over 0 < s < a
 * in closed form (White, 2006, §3-3.3 (from memory)); 10⁶ terms plus the n⁻⁴ tail in integral
 * form. Accurate for L ≤ S, where the transposed series converges slowly.
 */
function stripFlowDirect(S: number, L: number, a: number, mu: number): number {
  const M = 2_000_001;
  let sum = ((8 * L ** 3 * a) / (Math.PI ** 4 * mu)) * (M + 1) ** -3 / 6;
  for (let n = M; n >= 1; n -= 2) {
    const lambda = (n * Math.PI) / L;
    const eS = Math.exp(-lambda * S);
    const tanhHalf = -Math.expm1(-lambda * S) / (1 + eS);
    const shifted = (Math.exp(lambda * (a - S)) - Math.exp(-lambda * a)) / (1 + eS);
    sum += ((2 * L) / (n * Math.PI)) * (4 / (n * Math.PI * lambda * lambda * mu)) * (a - (tanhHalf + shifted) / lambda);
  }
  return sum;
}

const stripFlow = (S: number, L: number, a: number, mu: number) =>
  L >= S ? stripFlowTransposed(S, L, a, mu) : stripFlowDirect(S, L, a, mu);

/**
 * Two layers between plates s = 0 and s = S (interface at s = a, b = S − a), unit pressure
 * gradient, derived here: each layer is plane Poiseuille flow plus Couette flow driven by the
 * interface velocity u_i,
 *   u_A = s(a − s)/(2μ_A) + u_i s/a,   u_B = (s − a)(S − s)/(2μ_B) + u_i (S − s)/b,
 * and equal shear stress at the interface, −a/2 + μ_A u_i/a = b/2 − μ_B u_i/b, gives
 *   u_i = S a b / (2(μ_A b + μ_B a)),  q_A = a³/(12μ_A) + u_i a/2,  q_B = b³/(12μ_B) + u_i b/2.
 * The problem of Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., 2002: problem 2B.7 as
 * cited in src (from memory the same flow is worked as example 2.5-1; numbers not checked).
 * Derivatives with respect to α = a/S are analytic (dD/da = μ_B − μ_A with D = μ_A b + μ_B a).
 */
function platesReference(S: number, holdup: number, muA: number, muB: number) {
  const a = holdup * S;
  const b = S - a;
  const D = muA * b + muB * a;
  const ui = (S * a * b) / (2 * D);
  const dui = (S * ((b - a) * D - a * b * (muB - muA))) / (2 * D * D);
  return {
    qA: a ** 3 / (12 * muA) + (ui * a) / 2,
    qB: b ** 3 / (12 * muB) + (ui * b) / 2,
    dqA: S * ((a * a) / (4 * muA) + (ui + a * dui) / 2),
    dqB: S * (-(b * b) / (4 * muB) + (-ui + b * dui) / 2),
  };
}

/** 13 holdups log-spaced in [1e-4, 0.1), 20 evenly in [0.12, 0.88], 13 log-spaced toward 1 − 1e-4. */
const HOLDUP_GRID: number[] = [
  ...Array.from({ length: 13 }, (_, i) => 10 ** (-4 + 0.25 * i)),
  ...Array.from({ length: 20 }, (_, i) => 0.12 + 0.04 * i),
  ...Array.from({ length: 13 }, (_, i) => 1 - 10 ** (-1 - 0.25 * i)),
];

describe('twoLayerFlow with equal viscosities', () => {
  const mu = 2e-3;

  it('adds up to the single-phase rectangular duct to 1e-12 for along/across 1e-1 to 1e3 and any holdup', () => {
    // White 2006, eq. 3-48 (from memory) through rectConductance, itself checked in singlePhase.test.ts.
    for (let e = -1; e <= 3; e += 0.5) {
      for (const holdup of [1e-4, 0.01, 0.3, 0.5, 0.77, 0.999, 1 - 1e-4]) {
        const r = twoLayerFlow({ across: 40e-6, along: 40e-6 * 10 ** e, holdup, muA: mu, muB: mu });
        const k = rectConductance(40e-6, 40e-6 * 10 ** e, mu);
        expect(relativeError(r.kA + r.kB, k), `along/across 1e${e}, holdup ${holdup}`).toBeLessThan(1e-12);
      }
    }
  });

  it('splits the flow in half at holdup 0.5 for any aspect ratio', () => {
    // Mirror symmetry about the mid-plane (common practice).
    for (let e = -4; e <= 4; e++) {
      const r = twoLayerFlow({ across: 1e-4, along: 1e-4 * 10 ** e, holdup: 0.5, muA: mu, muB: mu });
      expect(Math.abs(r.kA / (r.kA + r.kB) - 0.5), `along/across 1e${e}`).toBeLessThan(1e-15);
    }
  });

  it('gives each phase the single-phase flow through its strip, expanded independently, to 1e-11 (along/across 1e-4 to 1e3)', () => {
    // References: stripFlowTransposed (L ≥ S) and stripFlowDirect (L < S) above, from White 2006, §3-3.3 (from memory).
    const S = 1;
    for (const e of [-4, -2, -1, -0.5, 0, 0.5, 1, 2, 3]) {
      const L = 10 ** e;
      for (const holdup of [0.01, 0.3, 0.9]) {
        const r = twoLayerFlow({ across: S, along: L, holdup, muA: 1, muB: 1 });
        expect(relativeError(r.kA, stripFlow(S, L, holdup * S, 1)), `A: along/across 1e${e}, holdup ${holdup}`).toBeLessThan(1e-11);
        expect(relativeError(r.kB, stripFlow(S, L, (1 - holdup) * S, 1)), `B: along/across 1e${e}, holdup ${holdup}`).toBeLessThan(1e-11);
      }
    }
  });

  it('has the two independent strip expansions agree with each other where both are accurate (a check of the references)', () => {
    // Both from White 2006, §3-3.3 (from memory); they share nothing but the equation. Beyond L ≈ S
    // the direct one cancels (a − O(1/λ) with λa small) and is not used there.
    for (const L of [0.1, 0.3, 1]) {
      for (const a of [0.01, 0.5]) {
        expect(relativeError(stripFlowTransposed(1, L, a, 1), stripFlowDirect(1, L, a, 1)), `L ${L}, a ${a}`).toBeLessThan(1e-11);
      }
    }
  });
});

describe('twoLayerFlow for any viscosities', () => {
  it('is unchanged when the phases are relabelled (α → 1 − α, μ_A ↔ μ_B)', () => {
    // Mirror symmetry of the cross-section (common practice).
    for (const along of [1e-2, 1, 100]) {
      for (const holdup of [0.01, 0.3, 0.75]) {
        const r = twoLayerFlow({ across: 1, along, holdup, muA: 5, muB: 1 });
        const m = twoLayerFlow({ across: 1, along, holdup: 1 - holdup, muA: 1, muB: 5 });
        expect(relativeError(m.kB, r.kA)).toBeLessThan(1e-13);
        expect(relativeError(m.kA, r.kB)).toBeLessThan(1e-13);
        expect(relativeError(-m.dkB, r.dkA)).toBeLessThan(1e-12);
        expect(relativeError(-m.dkA, r.dkB)).toBeLessThan(1e-12);
      }
    }
  });

  it('scales as length⁴ / viscosity', () => {
    // Dimensional analysis of μ∇²u = −G (common practice).
    const base = twoLayerFlow({ across: 200e-6, along: 50e-6, holdup: 0.4, muA: 6.5e-3, muB: 1.9e-3 });
    const scaled = twoLayerFlow({ across: 2e-3, along: 5e-4, holdup: 0.4, muA: 13e-3, muB: 3.8e-3 });
    expect(relativeError(scaled.kA, 5e3 * base.kA)).toBeLessThan(1e-13);
    expect(relativeError(scaled.kB, 5e3 * base.kB)).toBeLessThan(1e-13);
  });

  it('returns finite, positive k_A and k_B and finite derivatives for along/across 1e-4 to 1e4 and holdups 1e-4 to 1 − 1e-4', () => {
    // Stability requirement (common practice); 17 aspect ratios × 46 holdups × 3 viscosity ratios.
    for (let e = -4; e <= 4; e += 0.5) {
      for (const ratio of [1e-2, 1, 1e2]) {
        for (const holdup of HOLDUP_GRID) {
          const r = twoLayerFlow({ across: 1e-4, along: 1e-4 * 10 ** e, holdup, muA: ratio * 1e-3, muB: 1e-3 });
          const where = `along/across 1e${e}, μA/μB ${ratio}, holdup ${holdup}`;
          expect(r.kA > 0 && Number.isFinite(r.kA), where).toBe(true);
          expect(r.kB > 0 && Number.isFinite(r.kB), where).toBe(true);
          expect(Number.isFinite(r.dkA) && Number.isFinite(r.dkB), where).toBe(true);
        }
      }
    }
  });

  it('gives a flow fraction that rises strictly with holdup on that same grid', () => {
    // φ(α) is strictly increasing (common practice; src relies on it to bracket the inversion).
    for (let e = -4; e <= 4; e += 0.5) {
      for (const ratio of [1e-2, 1, 1e2]) {
        let previous = 0;
        for (const holdup of HOLDUP_GRID) {
          const r = twoLayerFlow({ across: 1e-4, along: 1e-4 * 10 ** e, holdup, muA: ratio * 1e-3, muB: 1e-3 });
          const phi = r.kA / (r.kA + r.kB);
          expect(phi, `along/across 1e${e}, μA/μB ${ratio}, holdup ${holdup}`).toBeGreaterThan(previous);
          previous = phi;
        }
      }
    }
  });
});

describe('twoLayerPlates', () => {
  it('equals the closed form for two layers between plates (Bird, Stewart & Lightfoot, 2002), derived independently, to 1e-13', () => {
    // platesReference above (BSL 2002, problem 2B.7 per src (from memory)). Measured: at most 2.1e-15
    // (μA/μB 100, holdup 0.8, phase B). Both are some 30 rational operations on the same inputs, so
    // only rounding separates them, amplified about 16× where src subtracts near-equal terms
    // (S − μ_A C_A, then C_B b²/2 − b³/(6μ_B)); 1e-13 sits a factor 50 above that.
    for (const ratio of [0.01, 0.2, 1, 5, 100]) {
      for (const holdup of [1e-3, 0.3, 0.5, 0.8, 0.999]) {
        const p = twoLayerPlates(30e-6, holdup, ratio * 1e-3, 1e-3);
        const q = platesReference(30e-6, holdup, ratio * 1e-3, 1e-3);
        expect(relativeError(p.kA, q.qA), `μA/μB ${ratio}, holdup ${holdup}`).toBeLessThan(1e-13);
        expect(relativeError(p.kB, q.qB), `μA/μB ${ratio}, holdup ${holdup}`).toBeLessThan(1e-13);
      }
    }
  });

  it('reduces to plane Poiseuille flow for equal viscosities: k = S³/(12μ) and φ = 3α² − 2α³', () => {
    // Integral of the parabola s(S − s)/(2μ) over [0, αS] (White 2006, §3-3 (from memory)).
    for (const holdup of [0.1, 0.5, 0.9]) {
      const p = twoLayerPlates(2, holdup, 3, 3);
      expect(relativeError(p.kA + p.kB, 8 / 36)).toBeLessThan(1e-14);
      expect(relativeError(p.kA / (p.kA + p.kB), 3 * holdup ** 2 - 2 * holdup ** 3)).toBeLessThan(1e-14);
    }
  });
});

describe('twoLayerFlow between deep walls', () => {
  const cases: Array<[number, number, number]> = [
    // [holdup, μA, μB]
    [0.3, 5, 1],
    [0.5, 1, 1],
    [0.8, 0.2, 1],
  ];

  it('approaches the plate flow per unit depth as along/across grows, with a relative gap of about 0.5·S/L', () => {
    // Plates: platesReference above (BSL 2002). The gap is the no-slip end walls' deficit; for one
    // phase it is 192 λ(5)/π⁵ · S/L = 0.630 S/L (White 2006, eq. 3-48 (from memory)).
    for (const [holdup, muA, muB] of cases) {
      const q = platesReference(1, holdup, muA, muB);
      for (const ratio of [10, 100, 1000, 10000]) {
        const r = twoLayerFlow({ across: 1, along: ratio, holdup, muA, muB });
        const scaledGapA = (1 - r.kA / (ratio * q.qA)) * ratio;
        const scaledGapB = (1 - r.kB / (ratio * q.qB)) * ratio;
        expect(scaledGapA, `holdup ${holdup}, L/S ${ratio}`).toBeGreaterThan(0.3);
        expect(scaledGapA, `holdup ${holdup}, L/S ${ratio}`).toBeLessThan(0.8);
        expect(scaledGapB, `holdup ${holdup}, L/S ${ratio}`).toBeGreaterThan(0.3);
        expect(scaledGapB, `holdup ${holdup}, L/S ${ratio}`).toBeLessThan(0.8);
      }
    }
  });

  it('loses the same end deficit L·q_plate − k for every along ≥ 10·across (to 1e-6 of the deficit)', () => {
    // The end walls disturb the plate flow only within a few S of them and the disturbance decays
    // like e^(−πt/S) (separation of variables, White 2006, §3-3.3 (from memory)), so the deficit is
    // independent of L up to e^(−10π) ≈ 2e-14. This checks the series far into its thin-gap regime.
    // Measured: at most 1.7e-8 (L/S = 1e4). The deficit is the difference of L·q and k, which agree
    // to within about S/L, so k's own error (about 1e-12, as twoLayer.ts states) is amplified by
    // L·q/deficit ≈ 2L/S: 2e-8 at L/S = 1e4. 1e-6 leaves a factor 50 above that.
    for (const [holdup, muA, muB] of cases) {
      const q = platesReference(1, holdup, muA, muB);
      const deficit = (L: number) => {
        const r = twoLayerFlow({ across: 1, along: L, holdup, muA, muB });
        return [L * q.qA - r.kA, L * q.qB - r.kB] as const;
      };
      const [refA, refB] = deficit(10);
      for (const L of [100, 1000, 10000]) {
        const [dA, dB] = deficit(L);
        expect(relativeError(dA, refA), `A: holdup ${holdup}, L/S ${L}`).toBeLessThan(1e-6);
        expect(relativeError(dB, refB), `B: holdup ${holdup}, L/S ${L}`).toBeLessThan(1e-6);
      }
    }
  });

  it('has holdup derivatives that approach those of the plate closed form, within 1.5·S/L', () => {
    // Analytic derivatives of platesReference (BSL 2002, derived here); the O(S/L) gap as above.
    for (const [holdup, muA, muB] of cases) {
      const q = platesReference(1, holdup, muA, muB);
      for (const ratio of [100, 1000]) {
        const r = twoLayerFlow({ across: 1, along: ratio, holdup, muA, muB });
        expect(relativeError(r.dkA / ratio, q.dqA), `holdup ${holdup}, L/S ${ratio}`).toBeLessThan(1.5 / ratio);
        expect(relativeError(r.dkB / ratio, q.dqB), `holdup ${holdup}, L/S ${ratio}`).toBeLessThan(1.5 / ratio);
      }
    }
  });

  it('lets a thin layer of the less viscous phase speed up the other phase (dk_B/dα > 0 when μ_A < μ_B)', () => {
    // From platesReference: dq_B/da → (S²/4)(1/μ_A − 1/μ_B) as a → 0, positive iff μ_A < μ_B
    // (lubrication by a thin low-viscosity layer, derived here from the BSL 2002 closed form).
    const lubricated = twoLayerFlow({ across: 1, along: 100, holdup: 0.01, muA: 0.2, muB: 1 });
    const dragged = twoLayerFlow({ across: 1, along: 100, holdup: 0.01, muA: 5, muB: 1 });
    expect(platesReference(1, 0.01, 0.2, 1).dqB).toBeGreaterThan(0);
    expect(lubricated.dkB).toBeGreaterThan(0);
    expect(dragged.dkB).toBeLessThan(0);
  });
});

describe('twoLayerFlow regressions of fixed defects', () => {
  it('adds up to the single-phase duct to 1e-14 at along/across = 1e-3', () => {
    // White 2006, eq. 3-48 (from memory) via rectConductance. With along ≪ across every mode is saturated,
    // k_A + k_B = c₄·oddPowerTail(4, 1) + c₅·oddPowerTail(5, 1), so the tail error shows directly.
    // Measured: 1.6e-16. Both sides are then closed forms of a few terms, so only rounding remains
    // (1e-14 is about 45 ulps); the tails of eight direct terms through B6 gave 1.8e-12 here.
    const r = twoLayerFlow({ across: 1, along: 1e-3, holdup: 0.5, muA: 1, muB: 1 });
    expect(relativeError(r.kA + r.kB, rectConductance(1, 1e-3, 1))).toBeLessThan(1e-14);
  });

  it('adds up to the single-phase duct to 1e-12 at along/across = 1e4', () => {
    // White 2006, eq. 3-48 (from memory) via rectConductance, which is exact in closed form here.
    // Measured: 8.4e-13. Here some 2·10⁵ modes are integrated by Gauss–Legendre panels with
    // Euler–Maclaurin end corrections, which src/physics/twoLayer.ts states to be accurate to about
    // 1e-12; the bound is that stated accuracy (the version before the thin-layer fix gave 2.8e-12).
    const r = twoLayerFlow({ across: 1, along: 1e4, holdup: 0.5, muA: 1, muB: 1 });
    expect(relativeError(r.kA + r.kB, rectConductance(1, 1e4, 1))).toBeLessThan(1e-12);
  });

  it('gives a thin layer its strip flow to 1e-11 when along/across = 1e4 and holdup = 1e-4', () => {
    // Reference: stripFlowTransposed (White 2006, §3-3.3 (from memory)), equal viscosities, itself
    // summed to better than 1e-15. Measured: 5.0e-13 (8.1e-13 at holdup 0.01, 5.0e-13 at along/across
    // 1e3). The bound is the 1e-11 of the strip test above: the accuracy of about 1e-12 that
    // twoLayer.ts states, with a margin for the ~800 integrated modes. Before the thin-layer fix
    // the error grew like L³/a²: 5.2e-5 here, 5.2e-9 at holdup 0.01, 5.2e-8 at along/across 1e3.
    const r = twoLayerFlow({ across: 1, along: 1e4, holdup: 1e-4, muA: 1, muB: 1 });
    expect(relativeError(r.kA, stripFlowTransposed(1, 1e4, 1e-4, 1))).toBeLessThan(1e-11);
  });

  it('loses the same end deficit at every along ≥ 10·across also for a thin viscous layer (holdup 1e-3, μA/μB = 3)', () => {
    // As the end-deficit test above (platesReference, BSL 2002). Measured: the deficit at L/S = 1e4
    // differs from that at 10 by 1.6e-8 of itself; the bound 1e-6 is explained above. Before the
    // thin-layer fix it differed by 4.8e-3 (k_A 2.6e-7 low), measured on that version.
    const q = platesReference(1, 1e-3, 3, 1);
    const deficit = (L: number) => L * q.qA - twoLayerFlow({ across: 1, along: L, holdup: 1e-3, muA: 3, muB: 1 }).kA;
    expect(relativeError(deficit(1e4), deficit(10))).toBeLessThan(1e-6);
  });
});

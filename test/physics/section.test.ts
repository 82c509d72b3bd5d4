/**
 * Tests of src/physics/section.ts: the holdup ↔ flow-fraction relation of a rectangular section,
 * its derivatives, and its two inversions (the robust bracketed one and the HoldupTable fast path).
 */
import { describe, expect, it } from 'vitest';
import {
  HoldupTable,
  flowFractionAt,
  holdupForFlowFraction,
  layerAxes,
  type Orientation,
  type RectSection,
} from '../../src/physics/section.js';
import { twoLayerFlow, twoLayerPlates } from '../../src/physics/twoLayer.js';
import { StratiflowError } from '../../src/errors.js';

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

const DEPTH = 50e-6;
const MU_B = 1e-3;

function rect(widthOverDepth: number, orientation: Orientation): RectSection {
  return { shape: 'rect', width: widthOverDepth * DEPTH, depth: DEPTH, orientation };
}

/** 61 flow fractions log-spaced from 1e-6 to 1, and 60 more log-spaced in 1 − φ down to 1e-6. */
const FLOW_FRACTIONS: number[] = [
  ...Array.from({ length: 61 }, (_, i) => 10 ** (-6 + 0.1 * i)).filter((phi) => phi < 1),
  ...Array.from({ length: 60 }, (_, i) => 1 - 10 ** (-0.1 * (i + 1))),
];

const ASPECTS = [1e-3, 1e-2, 0.1, 1, 10, 100, 1e3];
const ORIENTATIONS: Orientation[] = ['side', 'stacked'];
const VISCOSITY_RATIOS = [0.01, 0.2, 1, 5, 100];

describe('layerAxes', () => {
  it('puts the layers across the width when side by side and across the depth when stacked', () => {
    // Definition in src/physics/section.ts.
    expect(layerAxes(rect(4, 'side'))).toEqual({ across: 4 * DEPTH, along: DEPTH });
    expect(layerAxes(rect(4, 'stacked'))).toEqual({ across: DEPTH, along: 4 * DEPTH });
  });
});

describe('flowFractionAt', () => {
  it('is k_A/(k_A + k_B) of the two-layer series on the section’s axes', () => {
    // Definition of the flow fraction (common practice).
    const section = rect(4, 'stacked');
    const s = flowFractionAt(section, 6.5e-3, 1.9e-3, 0.37);
    const r = twoLayerFlow({ across: DEPTH, along: 4 * DEPTH, holdup: 0.37, muA: 6.5e-3, muB: 1.9e-3 });
    expect(s.kA).toBe(r.kA);
    expect(s.kB).toBe(r.kB);
    expect(relativeError(s.flowFraction, r.kA / (r.kA + r.kB))).toBeLessThan(1e-15);
  });

  it('has dφ/dα, dk_A/dα and dk_B/dα equal to a fourth-order central difference to 1e-6 relative', () => {
    // Five-point central difference f'(α) ≈ [8(f(α+h) − f(α−h)) − (f(α+2h) − f(α−2h))]/(12h)
    // (A&S 1964, §25.3, numerical differentiation (from memory)), h = 3e-3·min(α, 1 − α).
    for (const aspect of [1e-3, 0.1, 1, 10, 1e3]) {
      for (const orientation of ORIENTATIONS) {
        for (const ratio of VISCOSITY_RATIOS) {
          const section = rect(aspect, orientation);
          const at = (alpha: number) => flowFractionAt(section, ratio * MU_B, MU_B, alpha);
          for (const alpha of [1e-3, 0.01, 0.1, 0.3, 0.5, 0.7, 0.9, 0.99, 0.999]) {
            const h = 3e-3 * Math.min(alpha, 1 - alpha);
            const [p1, m1, p2, m2] = [at(alpha + h), at(alpha - h), at(alpha + 2 * h), at(alpha - 2 * h)];
            const diff = (pick: (s: typeof p1) => number) => (8 * (pick(p1) - pick(m1)) - (pick(p2) - pick(m2))) / (12 * h);
            const s = at(alpha);
            const where = `W/D ${aspect} ${orientation}, μA/μB ${ratio}, α ${alpha}`;
            expect(relativeError(diff((x) => x.flowFraction), s.dFlowFraction), `dφ: ${where}`).toBeLessThan(1e-6);
            expect(relativeError(diff((x) => x.kA), s.dkA), `dkA: ${where}`).toBeLessThan(1e-6);
            expect(relativeError(diff((x) => x.kB), s.dkB), `dkB: ${where}`).toBeLessThan(1e-6);
          }
        }
      }
    }
  });
});

describe('holdup and flow fraction (facts of the trade)', () => {
  it('gives the more viscous phase more than half the width when it carries half the flow', () => {
    // Common practice; W/D 0.1 to 10, both orientations, μA/μB 1.5, 5, 100.
    for (const aspect of [0.1, 0.25, 1, 4, 10]) {
      for (const orientation of ORIENTATIONS) {
        for (const ratio of [1.5, 5, 100]) {
          const { holdup } = holdupForFlowFraction(rect(aspect, orientation), ratio * MU_B, MU_B, 0.5);
          expect(holdup, `W/D ${aspect} ${orientation}, μA/μB ${ratio}`).toBeGreaterThan(0.5);
        }
      }
    }
  });

  it('gives the more viscous phase a larger share of the width than of the flow whenever it carries at most half the flow', () => {
    // Common practice, in the range where it holds; see the next test for where it does not.
    for (const aspect of [0.1, 0.25, 1, 4, 10]) {
      for (const orientation of ORIENTATIONS) {
        for (const ratio of [1.5, 5, 100]) {
          for (const phi of [0.01, 0.1, 0.3, 0.5]) {
            const { holdup } = holdupForFlowFraction(rect(aspect, orientation), ratio * MU_B, MU_B, phi);
            expect(holdup, `W/D ${aspect} ${orientation}, μA/μB ${ratio}, φ ${phi}`).toBeGreaterThan(phi);
          }
        }
      }
    }
  });

  it('lets a thin less-viscous layer along a wall carry less than its share of the flow, even against a more viscous phase', () => {
    // From the plate closed form (Bird, Stewart & Lightfoot 2002, as derived in twoLayer.test.ts):
    // a wall layer of thickness b carries q_B ∝ b², so 1 − φ < 1 − α as α → 1 for any viscosities.
    // Measured: W/D 1, μA/μB 5, α 0.9 → φ = 0.9346.
    expect(flowFractionAt(rect(1, 'side'), 5 * MU_B, MU_B, 0.9).flowFraction).toBeGreaterThan(0.9);
  });

  it('lowers the flow fraction at a fixed holdup as phase A becomes more viscous', () => {
    // Common practice; μA/μB 0.2 → 100 at holdups 0.01 to 0.99.
    for (const aspect of [0.1, 1, 10]) {
      for (const orientation of ORIENTATIONS) {
        for (const alpha of [0.01, 0.1, 0.5, 0.9, 0.99]) {
          const phis = [0.2, 1, 1.5, 5, 100].map((r) => flowFractionAt(rect(aspect, orientation), r * MU_B, MU_B, alpha).flowFraction);
          for (let i = 1; i < phis.length; i++) expect(phis[i]!, `W/D ${aspect} ${orientation}, α ${alpha}`).toBeLessThan(phis[i - 1]!);
        }
      }
    }
  });

  it('puts the holdup at φ = 0.3 between its deep-channel and shallow-channel limits and moves it monotonically from one to the other as W/D rises from 1e-3 to 1e3', () => {
    // Limits for layers side by side. W/D → 0: two layers between plates, twoLayerPlates (checked
    // against Bird, Stewart & Lightfoot 2002 in twoLayer.test.ts), inverted here by bisection.
    // W/D → ∞: each layer is plane Poiseuille flow of D³/(12μ) per unit width (White 2006,
    // eq. 3-40 (from memory)), so φ = (α/μ_A)/(α/μ_A + (1 − α)/μ_B), derived here. The walls the
    // interface does not span disturb the limit flow only within about the smaller side of the
    // section (as the end deficit in twoLayer.test.ts), so the holdup differs from its limit by
    // O(smaller/larger side); measured coefficients: at most 0.48 (shallow) and 0.019 (deep); the
    // bound is 1 × smaller/larger. That a wider channel always lies nearer the shallow limit is
    // expected physically, not derived here (common practice). The gaps between the limits (0.063 for equal
    // viscosities, 0.228 for μA/μB = 5, 0.224 for 1/5) show that the viscosity ratio, not the
    // aspect, decides how much the holdup can move.
    const aspects = [1e-3, 1e-2, 0.1, 0.25, 1, 4, 10, 100, 1e3];
    for (const ratio of [1, 5, 0.2]) {
      const plateFraction = (alpha: number) => {
        const p = twoLayerPlates(DEPTH, alpha, ratio * MU_B, MU_B);
        return p.kA / (p.kA + p.kB);
      };
      let lo = 0;
      let hi = 1;
      while (hi - lo > 1e-15) {
        const mid = 0.5 * (lo + hi);
        if (plateFraction(mid) < 0.3) lo = mid;
        else hi = mid;
      }
      const deep = 0.5 * (lo + hi);
      const shallow = (0.3 * ratio) / (0.3 * ratio + 0.7);
      const holdups = aspects.map((w) => holdupForFlowFraction(rect(w, 'side'), ratio * MU_B, MU_B, 0.3).holdup);
      const where = `μA/μB ${ratio}`;
      expect(Math.abs(holdups[0]! - deep), where).toBeLessThan(aspects[0]!);
      expect(Math.abs(holdups.at(-1)! - shallow), where).toBeLessThan(1 / aspects.at(-1)!);
      const direction = Math.sign(shallow - deep);
      for (let i = 1; i < holdups.length; i++) {
        expect(direction * (holdups[i]! - holdups[i - 1]!), `${where}, W/D ${aspects[i]}`).toBeGreaterThan(0);
        expect(direction * (holdups[i]! - deep), `${where}, W/D ${aspects[i]}`).toBeGreaterThan(0);
        expect(direction * (shallow - holdups[i]!), `${where}, W/D ${aspects[i]}`).toBeGreaterThan(0);
      }
    }
  });
});

describe('holdupForFlowFraction', () => {
  it('returns a holdup whose flow fraction is φ to 1e-10 relative, for φ in [1e-6, 1 − 1e-6], W/D 1e-3 to 1e3, both orientations, μA/μB 0.01 to 100', () => {
    // Round trip through flowFractionAt (definition); 7 × 2 × 5 geometries, 31 flow fractions each.
    for (const aspect of ASPECTS) {
      for (const orientation of ORIENTATIONS) {
        for (const ratio of VISCOSITY_RATIOS) {
          const section = rect(aspect, orientation);
          for (const phi of FLOW_FRACTIONS.filter((_, i) => i % 4 === 0)) {
            const { holdup } = holdupForFlowFraction(section, ratio * MU_B, MU_B, phi);
            const back = flowFractionAt(section, ratio * MU_B, MU_B, holdup).flowFraction;
            const where = `W/D ${aspect} ${orientation}, μA/μB ${ratio}, φ ${phi}`;
            expect(Math.abs(back - phi), where).toBeLessThan(1e-10 * phi);
            expect(Math.abs(back - phi), where).toBeLessThan(1e-10);
          }
        }
      }
    }
  });

  it('starts from a caller’s guess and bracket and lands on the same holdup', () => {
    // Same root, different start (Press et al. 2007, §9.4, safeguarded Newton (from memory)).
    const section = rect(4, 'side');
    const plain = holdupForFlowFraction(section, 6.5e-3, 1.9e-3, 0.4);
    const bracket: [number, number] = [plain.holdup - 0.05, plain.holdup + 0.05];
    const started = holdupForFlowFraction(section, 6.5e-3, 1.9e-3, 0.4, plain.holdup + 0.02, bracket);
    expect(relativeError(started.holdup, plain.holdup)).toBeLessThan(1e-12);
  });

  describe('regressions of fixed defects', () => {
    it('returns the root itself when a Newton iterate hits φ exactly', () => {
      // Round trip through flowFractionAt. W/D 1e-3 stacked, μA/μB 0.2, φ = 10^-2.8: iterate 11 has
      // f = φ(α) − φ = 0, so lo = α, the Newton point α equals lo, is rejected as outside (lo, hi), and the
      // midpoint of [α, hi] (8.3e-14 away, below the absolute tolerance 1e-13·max(α, 1 − α)) is returned.
      const section = rect(1e-3, 'stacked');
      const phi = 10 ** -2.8;
      const { holdup } = holdupForFlowFraction(section, 0.2 * MU_B, MU_B, phi);
      const back = flowFractionAt(section, 0.2 * MU_B, MU_B, holdup).flowFraction;
      expect(Math.abs(back - phi)).toBeLessThan(1e-10 * phi);
    });

    it('says so when φ = 1e-40 lies beyond its 60 steps, instead of returning a holdup whose flow fraction is 1.3e-37', () => {
      // φ ∝ α² for a thin wall layer (as 3α² − 2α³ between plates, BSL 2002, derived in
      // twoLayer.test.ts; measured φ ≈ 4.7α² here): the root, α ≈ 5e-21, is some 66 halvings from
      // the start at 0.5, and Newton from above also halves α at each step. The old code returned
      // its last iterate silently.
      expect(() => holdupForFlowFraction(rect(2, 'side'), MU_B, MU_B, 1e-40)).toThrow(StratiflowError);
      expect(() => holdupForFlowFraction(rect(2, 'side'), MU_B, MU_B, 1e-40)).toThrow(/no holdup found for flow fraction 1e-40: not settled in 60 steps/);
    });

    it('says so when the viscosities leave φ at 1 to rounding for every holdup (μA/μB = 1e-297)', () => {
      // k_A/k_B ∝ μ_B/μ_A (scaling of μ∇²u = −G, common practice), so φ = 1 − O(1e-297) = 1 in double
      // precision and no holdup carries φ = 0.5. The old code returned α = 4e-19 with φ = 1.
      expect(() => holdupForFlowFraction(rect(2, 'side'), 1e-300, MU_B, 0.5)).toThrow(/no holdup found for flow fraction 0.5/);
    });

    it('says so when a caller’s bracket does not hold the root, instead of returning its end', () => {
      // φ(α) increases (twoLayer.test.ts), and φ = 0.3 lies below φ(0.6), so [0.6, 1] holds no root.
      // The old code returned α = 0.6 with φ = 0.63.
      expect(() => holdupForFlowFraction(rect(2, 'side'), MU_B, MU_B, 0.3, 0.7, [0.6, 1])).toThrow(/closed in on holdup 0\.6\d*, which is not a root/);
    });
  });
});

describe('HoldupTable', () => {
  /**
   * Geometries of the round trips: side by side with W/D ≤ 1 (the same axes as stacked with
   * W/D ≥ 1), μA/μB 0.2 to 5, and the demo geometry W = 200 µm, D = 50 µm with μA = 6.5 mPa·s,
   * μB = 1.9 mPa·s (invented demo fluids) in both orientations; wider ranges are in the
   * regressions below.
   * 
   */
  const TABLE_CASES: Array<{ section: RectSection; muA: number; muB: number }> = [
    ...[1e-3, 1e-2, 0.1, 1].flatMap((aspect) =>
      [0.2, 1, 5].map((ratio) => ({ section: rect(aspect, 'side'), muA: ratio * MU_B, muB: MU_B })),
    ),
    ...[1, 10, 1e3].map((aspect) => ({ section: rect(aspect, 'stacked'), muA: 5 * MU_B, muB: MU_B })),
    { section: { shape: 'rect', width: 200e-6, depth: 50e-6, orientation: 'side' }, muA: 6.5e-3, muB: 1.9e-3 },
    { section: { shape: 'rect', width: 200e-6, depth: 50e-6, orientation: 'stacked' }, muA: 6.5e-3, muB: 1.9e-3 },
  ];
  const name = ({ section, muA, muB }: (typeof TABLE_CASES)[number]) =>
    `W/D ${section.width / section.depth} ${section.orientation}, μA/μB ${muA / muB}`;

  it('solve(φ) returns a holdup whose flow fraction is φ to 1e-10 relative and absolute over φ in [1e-6, 1 − 1e-6]', () => {
    // Round trip through flowFractionAt (definition); 121 flow fractions per geometry.
    for (const c of TABLE_CASES) {
      const table = new HoldupTable(c.section, c.muA, c.muB);
      for (const phi of FLOW_FRACTIONS) {
        const back = flowFractionAt(c.section, c.muA, c.muB, table.solve(phi).holdup).flowFraction;
        expect(Math.abs(back - phi), `${name(c)}, φ ${phi}`).toBeLessThan(1e-10 * phi);
        expect(Math.abs(back - phi), `${name(c)}, φ ${phi}`).toBeLessThan(1e-10);
      }
    }
  });

  it('agrees with holdupForFlowFraction to 1e-10 in holdup, and returns the same k_A, k_B as flowFractionAt at its holdup', () => {
    // Two inversions of the same function (definition); k to 1e-10 relative after the first-order shift.
    for (const c of TABLE_CASES) {
      const table = new HoldupTable(c.section, c.muA, c.muB);
      for (const phi of FLOW_FRACTIONS.filter((_, i) => i % 4 === 0)) {
        const fast = table.solve(phi);
        const robust = holdupForFlowFraction(c.section, c.muA, c.muB, phi);
        expect(relativeError(fast.holdup, robust.holdup), `${name(c)}, φ ${phi}`).toBeLessThan(1e-10);
        const exact = flowFractionAt(c.section, c.muA, c.muB, fast.holdup);
        expect(relativeError(fast.kA, exact.kA), `${name(c)}, φ ${phi}`).toBeLessThan(1e-10);
        expect(relativeError(fast.kB, exact.kB), `${name(c)}, φ ${phi}`).toBeLessThan(1e-10);
      }
    }
  });

  describe('regressions of fixed defects', () => {
    it('solve(φ) meets 1e-10 also for stacked layers in a W/D = 0.1 channel with μA/μB = 0.01', () => {
      // Round trip through flowFractionAt. The Hermite guess is 1.9% off in α here, yet its Newton step
      // (4.7e-7) is under the absolute ONE_STEP_LIMIT = 1e-6, so one step is taken and accepted.
      const section = rect(0.1, 'stacked');
      const table = new HoldupTable(section, 0.01 * MU_B, MU_B);
      const back = flowFractionAt(section, 0.01 * MU_B, MU_B, table.solve(1e-6).holdup).flowFraction;
      expect(Math.abs(back - 1e-6)).toBeLessThan(1e-10 * 1e-6);
    });

    it('solve(φ) meets 1e-10 over W/D 10 to 1e3 side by side and μA/μB 0.01 to 100', () => {
      // Round trip through flowFractionAt (a regression: the one-step polish once accepted steps
      // that were large relative to α and left errors up to 3e-4).
      for (const aspect of [10, 100, 1e3]) {
        for (const ratio of VISCOSITY_RATIOS) {
          const section = rect(aspect, 'side');
          const table = new HoldupTable(section, ratio * MU_B, MU_B);
          for (const phi of FLOW_FRACTIONS) {
            const back = flowFractionAt(section, ratio * MU_B, MU_B, table.solve(phi).holdup).flowFraction;
            expect(Math.abs(back - phi)).toBeLessThan(1e-10 * phi);
          }
        }
      }
    });
  });
});

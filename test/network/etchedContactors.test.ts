/**
 * Etched and trapezoidal contactors in the network: the lane conductances that the solver reads
 * from a holdup table's interpolant against the direct spectral solve, and glass ladders with
 * etched contactors, manifolds and arms: they solve, conserve each phase, meet the
 * equal-viscosity identity, and approach the rectangle as the mask opening widens.
 */
import { describe, expect, it } from 'vitest';
import type { LayoutFile, LayoutSegment } from '../../src/layout/schema.js';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip, type ChipSolution } from '../../src/analyses/chip.js';
import { EDGE_SECANT } from '../../src/physics/lanes.js';
import { shapedConductance, shapedFlowFraction, shapedFlows, shapedTwoLayerFlow, SILICON_WALL_ANGLE, type ShapedSection } from '../../src/physics/shapedSection.js';
import { SectionTables } from '../../src/solver/sectionTables.js';
import type { Chip } from '../../src/network/model.js';
import { DEMO_PHASES, wellDesignedLadder } from '../support/layouts.js';

const MU_A = DEMO_PHASES.A.viscosity;
const MU_B = DEMO_PHASES.B.viscosity;
const ETCHED: ShapedSection = { shape: 'etched', maskWidth: 100e-6, depth: 50e-6 };
const TRAPEZOID: ShapedSection = { shape: 'trapezoid', bottomWidth: 60e-6, depth: 40e-6, wallAngle: SILICON_WALL_ANGLE };

describe('lane conductances of shaped contactors', () => {
  const tables = new SectionTables();
  const lanes = (section: ShapedSection, alpha: number, slopes = false, muNear: number = MU_A, muFar: number = MU_B) => tables.lanes(section, MU_A, MU_B).conductances(alpha, muNear, muFar, slopes);

  // The table's nodes are solved at degree 16, the direct solve at 24: the difference is the
  // degree-16 solver's own error, about 2e-6 of the slow layer where the interface meets a
  // curved or sloping wall (section.ts). Measured worst over these holdups: 2.4e-6 of the total
  // flow (etched, α = 0.85 and 0.3; trapezoid 2.4e-6 at 0.85). Bound 5e-6.
  for (const [name, section] of [['an etched', ETCHED], ['a trapezoidal', TRAPEZOID]] as const) {
    it(`follow the direct spectral solve in ${name} section to 5e-6 of the total flow from holdup 0.002 to 0.999`, () => {
      for (const alpha of [0.002, 0.03, 0.3, 0.5, 0.85, 0.999]) {
        const direct = shapedFlows(section, alpha, MU_A, MU_B);
        const k = lanes(section, alpha);
        const total = direct.kA + direct.kB;
        expect(Math.abs(k.kNear - direct.kA), `near lane at ${alpha}`).toBeLessThan(5e-6 * total);
        expect(Math.abs(k.kFar - direct.kB), `far lane at ${alpha}`).toBeLessThan(5e-6 * total);
      }
    });

    // Slopes: over the middle stretch of the table the interpolant's derivative is within 1e-4
    // of the direct solve's central difference (measured 8.4e-5 trapezoid, 3e-6 etched, of
    // |dk_A| + |dk_B|; bound 3e-4); the viscosity slopes, the derivative of the degree-6
    // interpolant in log(μ_near/μ_far) over a ratio span of 11.7, within 4.4e-4 of their scale
    // at 0.3 and 0.5 (measured); bound 1e-3.
    it(`give the holdup and viscosity slopes of ${name} section where the interface stands over the bottom`, () => {
      for (const alpha of [0.3, 0.5]) {
        const direct = shapedTwoLayerFlow(section, alpha, MU_A, MU_B, true);
        const k = lanes(section, alpha, true);
        const slope = Math.abs(direct.dkA) + Math.abs(direct.dkB);
        if (alpha === 0.5) {
          expect(Math.abs(k.dkNear - direct.dkA)).toBeLessThan(3e-4 * slope);
          expect(Math.abs(k.dkFar - direct.dkB)).toBeLessThan(3e-4 * slope);
        }
        const muScaleA = Math.abs(direct.dkADMuA) + Math.abs(direct.dkBDMuA);
        const muScaleB = Math.abs(direct.dkADMuB) + Math.abs(direct.dkBDMuB);
        expect(Math.abs(k.dkNearDMuNear - direct.dkADMuA)).toBeLessThan(1e-3 * muScaleA);
        expect(Math.abs(k.dkFarDMuNear - direct.dkBDMuA)).toBeLessThan(1e-3 * muScaleA);
        expect(Math.abs(k.dkNearDMuFar - direct.dkADMuB)).toBeLessThan(1e-3 * muScaleB);
        expect(Math.abs(k.dkFarDMuFar - direct.dkBDMuB)).toBeLessThan(1e-3 * muScaleB);
        // Stokes flow is linear in 1/μ: μ_n ∂k/∂μ_n + μ_f ∂k/∂μ_f = −k, to rounding.
        expect(MU_A * k.dkNearDMuNear + MU_B * k.dkNearDMuFar + k.kNear).toBeLessThan(1e-12 * k.kNear);
      }
    });
  }

  // Lanes of mixed composition (viscosities between the phases') read the degree-6 interpolant
  // in log(μ_near/μ_far) over seven tables; measured worst 1.8e-5 of the total flow at these
  // points (the interpolation in the ratio); bound 5e-5.
  it('follow the direct solve for lanes of mixed composition, between the pure-phase viscosity ratios', () => {
    for (const [muNear, muFar] of [[4e-3, 2.5e-3], [2.2e-3, 5.9e-3]] as const) {
      for (const alpha of [0.03, 0.5, 0.85]) {
        const direct = shapedFlows(ETCHED, alpha, muNear, muFar);
        const k = lanes(ETCHED, alpha, false, muNear, muFar);
        const total = direct.kA + direct.kB;
        expect(Math.abs(k.kNear - direct.kA), `near lane at ${alpha}, ${muNear}/${muFar}`).toBeLessThan(5e-5 * total);
        expect(Math.abs(k.kFar - direct.kB), `far lane at ${alpha}, ${muNear}/${muFar}`).toBeLessThan(5e-5 * total);
      }
    }
  });

  it('leave the starved lane empty at an edge and slope it by the secant into the interior', () => {
    const edge = lanes(ETCHED, 0);
    expect(edge.kNear).toBe(0);
    // The far lane fills the duct: its single-phase conductance.
    expect(Math.abs(edge.kFar / shapedConductance(ETCHED, MU_B) - 1)).toBeLessThan(1e-14);
    const inside = lanes(ETCHED, EDGE_SECANT);
    expect(edge.dkNear).toBeCloseTo(inside.kNear / EDGE_SECANT, 25);
    expect(edge.dkNear).toBeGreaterThan(0);
    const full = lanes(ETCHED, 1);
    expect(full.kFar).toBe(0);
    expect(full.dkFar).toBeLessThan(0);
  });
});

/** Every rectangle of the layout as an etched channel as deep, its top as wide as the rectangle where that leaves a mask opening, else as wide at the bottom. */
function etchedLayout(layout: LayoutFile, contactor?: { maskWidth: number; depth: number }): LayoutFile {
  return {
    ...layout,
    segments: layout.segments.map((s): LayoutSegment => {
      if (s.shape !== 'rect') return s;
      const { width, orientation: _o, ...rest } = s as LayoutSegment & { width: number; depth: number };
      if (s.group === 'contactor' && contactor) return { ...rest, shape: 'etched', ...contactor };
      const maskWidth = width > 2 * rest.depth ? width - 2 * rest.depth : width;
      return { ...rest, shape: 'etched', maskWidth };
    }),
  };
}

function solved(layout: LayoutFile): { chip: Chip; result: ChipSolution } {
  const chip = layoutToChip(layout, layout.name);
  const { result } = solveChip(chip);
  expect(result.converged, `${result.message ?? ''} ${result.unsettled.join(', ')}`).toBe(true);
  return { chip, result };
}

const LADDER = wellDesignedLadder(8, { manifold: { width: 1e-3, depth: 100e-6 }, drive: { A: { pressure: 20e3 }, B: { pressure: 19.8e3 } } });

describe('a glass ladder with etched contactors, manifolds and arms', () => {
  it('solves with every split pinned and conserves each phase at every node to 1e-9 of its throughput', () => {
    const { chip, result } = solved(etchedLayout(LADDER));
    expect(result.splits.every((s) => s.state === 'pinned')).toBe(true);
    const balance = new Map(chip.nodes.map((n) => [n.id, [0, 0]]));
    for (const s of result.segments) {
      const seg = chip.segments.find((c) => c.id === s.id)!;
      balance.get(seg.from)![0]! -= s.flowA;
      balance.get(seg.from)![1]! -= s.flowB;
      balance.get(seg.to)![0]! += s.flowA;
      balance.get(seg.to)![1]! += s.flowB;
    }
    // Only rounding separates the balances from zero; 1e-9 leaves room for the solver's
    // convergence limit (1e-12 of the smaller throughput per row) summed over the chip.
    for (const node of chip.nodes) {
      if (node.kind === 'inlet' || node.kind === 'outlet') continue;
      const [a, b] = balance.get(node.id)!;
      expect(Math.abs(a!), `phase A at ${node.id}`).toBeLessThan(1e-9 * result.summary.throughputA);
      expect(Math.abs(b!), `phase B at ${node.id}`).toBeLessThan(1e-9 * result.summary.throughputB);
    }
  });

  // Two layers of one viscosity are the single-phase duct flow (a consistency identity), so
  // each contactor's flow fraction is the share of the single-phase flow left of the interface
  // at its holdup, and its total flow is k·Δp/L with k the duct's conductance. Bound 5e-6: the
  // lane interpolant's error (above).
  it('with equal viscosities puts each interface where the single-phase duct carries the flow fraction', () => {
    const equal = { ...LADDER, phases: { A: { ...LADDER.phases.A }, B: { ...LADDER.phases.B, viscosity: LADDER.phases.A.viscosity } } };
    const { chip, result } = solved(etchedLayout(equal));
    const mu = chip.phases.A.viscosity;
    const contactors = result.segments.filter((s) => s.kind === 'contactor');
    expect(contactors).toHaveLength(8);
    for (const k of contactors.slice(0, 3)) {
      const seg = chip.segments.find((c) => c.id === k.id)!;
      const section = seg.section as ShapedSection;
      const phi = k.flowA / (k.flowA + k.flowB);
      expect(Math.abs(shapedFlowFraction(section, k.holdupA!, mu, mu) - phi), k.id).toBeLessThan(5e-6);
      const duct = (shapedConductance(section, mu) * k.pressureDrop) / seg.length;
      expect(Math.abs((k.flowA + k.flowB) / duct - 1), k.id).toBeLessThan(5e-6);
    }
  });

  /**
   * A wide etched contactor against the rectangle of the same (mask) width W and depth d: the
   * quarter-round walls add flow where the rectangle has its slow side walls. Lubrication over
   * the walls (h = √(d² − x²)) adds (3π/16)·d⁴/12 per wall to the flat part's W·d³/12, and the
   * rectangle loses 0.630·d/W of it (the wide-duct limit of the series, Shah & London, 1978,
   * eq. 7.2 (from memory)), so the conductances differ by about (3π/8 + 0.630)·d/W ≈ 1.8·d/W:
   * the difference is first order in d/W and halves when W doubles.
   */
  it('approaches the rectangle of the same width and depth as the mask opening widens, by about 1.8·d/W', () => {
    const depth = 20e-6;
    const differences = [10, 20].map((ratio) => {
      const width = ratio * depth;
      const base = wellDesignedLadder(4, { contactor: { width, depth, length: 40e-3, orientation: 'side' } });
      const rect = solved(base).result;
      const etched = solved(etchedLayout(base, { maskWidth: width, depth })).result;
      const flow = (r: ChipSolution) => r.summary.throughputA + r.summary.throughputB;
      return { ratio, flow: flow(etched) / flow(rect) - 1 };
    });
    for (const { ratio, flow } of differences) {
      // Manifolds take part of the drive, so the chip's throughput moves by less than the
      // contactor conductance; 0.5–3 × d/W brackets the estimate and its next-order terms.
      expect(flow).toBeGreaterThan(0.5 / ratio);
      expect(flow).toBeLessThan(3 / ratio);
    }
    const halving = differences[0]!.flow / differences[1]!.flow;
    // First order in d/W: doubling W halves the difference, up to O((d/W)²) terms (±20 %).
    // Measured: +17.2 % at W/d = 10 (1.72·d/W), +10.1 % at W/d = 20 (2.02·d/W), ratio 1.70.
    expect(halving).toBeGreaterThan(1.6);
    expect(halving).toBeLessThan(2.4);
  });
});

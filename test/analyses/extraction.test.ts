/**
 * Tests of src/analyses/extraction.ts: the solute setup from the layout and overrides, the chip
 * balance of solute (conservation), the chip yield as the flow-weighted extraction, the even-chip
 * reference (no cost when the flows are already even), the featured profiles, and that the
 * result survives JSON. Chips are generated demo layouts; flows come from solveChip.
 */
import { describe, expect, it } from 'vitest';
import { ladderLayout } from '../../src/layout/generate.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';
import { analyseExtraction, soluteSetup, type SoluteSetup } from '../../src/analyses/extraction.js';
import { StratiflowErrors } from '../../src/errors.js';

const MICROLITRE_PER_MINUTE = 1e-9 / 60;
const SOLUTE: SoluteSetup = { label: 'demo', partition: 3, feedPhase: 'A', feedConcentration: 2, diffusivityA: 0.7e-9, diffusivityB: 1.4e-9 };

function ladder(): LayoutFile {
  const flow = 4 * MICROLITRE_PER_MINUTE;
  return ladderLayout({ contactors: 4, drive: { A: { flow }, B: { flow } } });
}

/** One contactor between its own two inlets and two outlets: nothing to divide unevenly. */
function singleContactor(): LayoutFile {
  const rect = (width: number) => ({ shape: 'rect' as const, width, depth: 50e-6 });
  return {
    name: 'one contactor',
    phases: { A: { label: 'organic', viscosity: 7.3e-3, density: 824 }, B: { label: 'aqueous', viscosity: 1e-3, density: 998 } },
    interfacialTension: 8.5e-3,
    contactAngleA: { advancing: '150 deg', receding: '110 deg' },
    nodes: [
      { id: 'inA', type: 'inlet', phase: 'A', flow: 1.5 * MICROLITRE_PER_MINUTE },
      { id: 'inB', type: 'inlet', phase: 'B', flow: 2 * MICROLITRE_PER_MINUTE },
      { id: 'm', type: 'merge', inlets: ['fA', 'fB'] },
      { id: 's', type: 'split', outlets: ['oA', 'oB'] },
      { id: 'outA', type: 'outlet', pressure: 0, phase: 'A' },
      { id: 'outB', type: 'outlet', pressure: 0, phase: 'B' },
    ],
    segments: [
      { id: 'fA', from: 'inA', to: 'm', ...rect(100e-6), length: 5e-3 },
      { id: 'fB', from: 'inB', to: 'm', ...rect(100e-6), length: 5e-3 },
      { id: 'k', from: 'm', to: 's', ...rect(200e-6), length: 15e-3 },
      { id: 'oA', from: 's', to: 'outA', ...rect(100e-6), length: 5e-3 },
      { id: 'oB', from: 's', to: 'outB', ...rect(100e-6), length: 5e-3 },
    ],
  };
}

describe('soluteSetup', () => {
  it('names every value that is missing, each at its place in the layout', () => {
    const chip = layoutToChip(ladder(), 'test.yaml');
    try {
      soluteSetup(chip, { diffusivityA: 1e-9 });
      expect.unreachable('soluteSetup should have thrown');
    } catch (error) {
      expect(error).toBeInstanceOf(StratiflowErrors);
      const places = (error as StratiflowErrors).problems.map((p) => `${p.place.element}.${p.place.field}`);
      expect(places).toEqual(['solute.partition', 'phases.B.diffusivity']);
    }
  });

  it('takes the layout values and lets the overrides replace them', () => {
    const layout = { ...ladder(), solute: { label: 'dye', partition: 5, feedPhase: 'B' as const, feedConcentration: '10 mM' } };
    layout.phases = { A: { ...layout.phases.A, diffusivity: '500 um^2/s' }, B: { ...layout.phases.B, diffusivity: 1e-9 } };
    const chip = layoutToChip(layout, 'test.yaml');
    expect(soluteSetup(chip)).toEqual({ label: 'dye', partition: 5, feedPhase: 'B', feedConcentration: 10, diffusivityA: 5e-10, diffusivityB: 1e-9 });
    expect(soluteSetup(chip, { partition: 0.5, feedPhase: 'A' })).toMatchObject({ partition: 0.5, feedPhase: 'A', feedConcentration: 10 });
  });
});

describe('analyseExtraction on a 4-contactor ladder', () => {
  const solved = solveChip(layoutToChip(ladder(), 'ladder'));
  const result = analyseExtraction(solved, SOLUTE);
  const { summary } = result;

  it('analyses every contactor that carries both phases, each converged', () => {
    expect(solved.result.converged).toBe(true);
    expect(result.contactors.length + result.skippedContactors.length).toBe(4);
    expect(result.contactors.every((r) => r.converged && r.change < result.tolerance)).toBe(true);
  });

  it('balances the solute: what is fed leaves in the mixed outlets of A and B, to 1e-8', () => {
    // Conservation of solute over the chip: Q_A,fed·c₀ = ΣQ_A·c̄_A + ΣQ_B·c̄_B.
    const totalA = solved.result.contactors.reduce((s, r) => s + Math.abs(r.flowA), 0);
    const totalB = solved.result.contactors.reduce((s, r) => s + Math.abs(r.flowB), 0);
    const out = totalA * summary.outletA + totalB * summary.outletB;
    expect(Math.abs(out - summary.fed) / summary.fed).toBeLessThan(1e-8);
    expect(Math.abs(totalA * SOLUTE.feedConcentration - summary.fed) / summary.fed).toBeLessThan(1e-12);
    expect(Math.abs(totalB * summary.outletB - summary.transferred) / summary.fed).toBeLessThan(1e-8);
  });

  it('gives the chip yield as the extraction of each contactor weighted by its feed flow', () => {
    const weighted = result.contactors.reduce((s, r) => s + r.extraction * r.flowA, 0) / result.contactors.reduce((s, r) => s + r.flowA, 0);
    expect(Math.abs(summary.yield - weighted)).toBeLessThan(1e-12);
    for (const r of result.contactors) {
      expect(r.extractionFactor).toBeCloseTo((SOLUTE.partition * r.flowB) / r.flowA, 12);
      expect(r.equilibriumExtraction).toBeCloseTo(r.extractionFactor / (1 + r.extractionFactor), 10);
      expect(r.approach).toBeCloseTo(r.extraction / r.equilibriumExtraction, 12);
      expect(r.approach).toBeGreaterThan(0);
      expect(r.approach).toBeLessThan(1);
    }
  });

  it('charts the best, median and worst contactor from zero at the merge to the outlet value', () => {
    const byExtraction = [...result.contactors].sort((a, b) => b.extraction - a.extraction);
    expect(result.profiles.map((p) => p.role)).toEqual(['best', 'median', 'worst']);
    expect(result.profiles[0]!.id).toBe(byExtraction[0]!.id);
    expect(result.profiles[2]!.id).toBe(byExtraction[byExtraction.length - 1]!.id);
    for (const p of result.profiles) {
      const row = result.contactors.find((r) => r.id === p.id)!;
      expect(p.extraction[0]).toBe(0);
      expect(p.x[p.x.length - 1]).toBeCloseTo(row.length, 15);
      expect(Math.abs(p.extraction[p.extraction.length - 1]! - row.extraction)).toBeLessThan(1e-12);
    }
  });

  it('survives JSON with the same numbers', () => {
    const copy = JSON.parse(JSON.stringify(result));
    expect(copy.summary.yield).toBe(summary.yield);
    expect(copy.contactors[0].length90).toBe(result.contactors[0]!.length90);
  });
});

describe('analyseExtraction on a single contactor', () => {
  it('finds no cost of flow spread: the chip is already even (to 1e-8)', () => {
    const solved = solveChip(layoutToChip(singleContactor(), 'one'));
    const result = analyseExtraction(solved, { ...SOLUTE, feedPhase: 'B' });
    expect(result.contactors).toHaveLength(1);
    expect(Math.abs(result.summary.spreadCost)).toBeLessThan(1e-8);
    expect(Math.abs(result.summary.yield - result.contactors[0]!.extraction)).toBeLessThan(1e-12);
  });
});

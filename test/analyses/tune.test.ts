/**
 * Target seeking (src/analyses/tune.ts): tuned settings meet their targets when the chip is
 * solved again, symmetric chips tune symmetrically with centred splits, and targets that cannot
 * be met are refused with the reason. The command is tested in test/cli/tuneCommand.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { layoutToChip } from '../../src/layout/load.js';
import { ladderLayout } from '../../src/layout/generate.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip } from '../../src/analyses/chip.js';
import { parseSetting } from '../../src/analyses/settings.js';
import { pressureResolution } from '../../src/analyses/resolution.js';
import { tuneChip, type Target } from '../../src/analyses/tune.js';
import { expectTargetsMet } from '../support/targets.js';
import { StratiflowError } from '../../src/errors.js';

const uLmin = 1e-9 / 60;

/** Invented demo chip: the generator's 4-contactor ladder (organic A, aqueous B, 2 µL/min each). */
const ladder4 = () => layoutToChip(ladderLayout({ contactors: 4 }), 'ladder of 4');

/**
 * A chip that is its own mirror image: two contactors, each phase fed and drained by the same
 * channels, both liquids 1 mPa·s, and a window symmetric about 0 (θ_adv = 120°, θ_rec = 60°:
 * 2γ cos θ / d = ∓200 Pa for γ = 10 mN/m, d = 50 µm; Young–Laplace as in splitWindowOf).
 */
function mirrorChip(): LayoutFile {
  const rect = (id: string, from: string, to: string, width: string, length: string) => ({ id, from, to, shape: 'rect' as const, width, depth: '50 um', length });
  const nodes: LayoutFile['nodes'] = [];
  const segments: LayoutFile['segments'] = [];
  for (const phase of ['A', 'B'] as const) {
    nodes.push({ id: `in${phase}`, type: 'inlet', phase, pressure: phase === 'A' ? '5 kPa' : '3 kPa' });
    nodes.push({ id: `out${phase}`, type: 'outlet', pressure: 0, phase });
    for (const k of [1, 2]) nodes.push({ id: `d${phase}${k}`, type: 'junction' }, { id: `c${phase}${k}`, type: 'junction' });
    segments.push(rect(`entry${phase}`, `in${phase}`, `d${phase}1`, '500 um', '2 mm'));
    segments.push(rect(`md${phase}`, `d${phase}1`, `d${phase}2`, '500 um', '1 mm'));
    segments.push(rect(`mc${phase}`, `c${phase}2`, `c${phase}1`, '500 um', '1 mm'));
    segments.push(rect(`exit${phase}`, `c${phase}1`, `out${phase}`, '500 um', '2 mm'));
    for (const k of [1, 2]) {
      segments.push(rect(`f${phase}${k}`, `d${phase}${k}`, `m${k}`, '100 um', '5 mm'));
      segments.push(rect(`o${phase}${k}`, `s${k}`, `c${phase}${k}`, '100 um', '5 mm'));
    }
  }
  for (const k of [1, 2]) {
    nodes.push({ id: `m${k}`, type: 'merge', inlets: [`fA${k}`, `fB${k}`] }, { id: `s${k}`, type: 'split', outlets: [`oA${k}`, `oB${k}`] });
    segments.push({ ...rect(`k${k}`, `m${k}`, `s${k}`, '200 um', '20 mm'), orientation: 'side' });
  }
  return {
    name: 'mirror chip',
    phases: { A: { label: 'A', viscosity: '1 mPa.s', density: 1000 }, B: { label: 'B', viscosity: '1 mPa.s', density: 1000 } },
    interfacialTension: '10 mN/m',
    contactAngleA: { advancing: '120 deg', receding: '60 deg' },
    maxPressure: '100 kPa',
    nodes,
    segments,
  };
}

describe('tuneChip', () => {
  it('finds settings that, solved again from scratch, meet the targets to 1e-9', () => {
    const chip = ladder4();
    const targets: Target[] = [{ kind: 'throughput', value: 16 * uLmin }, { kind: 'ratio', value: 0.18 }];
    const vary = ['inA.pressure', 'inB.pressure', 'outA.pressure'].map((s) => ({ setting: parseSetting(s, chip) }));
    const result = tuneChip(chip, { targets, vary });
    expectTargetsMet(result.chip, targets);
    expect(solveChip(result.chip).result.splits.every((s) => s.state === 'pinned')).toBe(true);
    expect(result.minMargin).toBeGreaterThan(0);
  });

  it('meets flow targets of A and B, and a mean holdup, to 1e-9', () => {
    const chip = ladder4();
    const vary = ['inA.pressure', 'inB.pressure', 'outA.pressure'].map((s) => ({ setting: parseSetting(s, chip) }));
    for (const targets of [
      [{ kind: 'flowA', value: 2.4 * uLmin }, { kind: 'flowB', value: 13.6 * uLmin }],
      [{ kind: 'holdup', value: 0.5 }, { kind: 'throughput', value: 16 * uLmin }],
    ] satisfies Target[][]) {
      expectTargetsMet(tuneChip(chip, { targets, vary }).chip, targets);
    }
  });

  it('on a symmetric chip with equal phases tunes equal inlet pressures and balanced margins', () => {
    const chip = layoutToChip(mirrorChip(), 'mirror chip');
    const result = tuneChip(chip, {
      targets: [{ kind: 'throughput', value: 40 * uLmin }, { kind: 'ratio', value: 1 }],
      vary: ['inA.pressure', 'inB.pressure', 'outA.pressure'].map((s) => ({ setting: parseSetting(s, chip) })),
    });
    const [inA, inB, outA] = result.settings.map((s) => s.value);
    // Symmetry: equal inlet pressures, outA = outB = 0 Pa (outB stays at 0 and the mirror image
    // needs outA there too), and every split at the centre of its window [−200, 200] Pa, 200 Pa
    // from either limit. Each within the pressure resolution of the solution, 1e-9 of its highest
    // pressure (src/analyses/resolution.ts: below it a difference is rounding): 6.4e-6 Pa here.
    // Measured: 5.7e-7 Pa for all three.
    const resolution = pressureResolution(result.solved.result);
    expect(Math.abs(inA! - inB!)).toBeLessThan(resolution);
    expect(Math.abs(outA!)).toBeLessThan(resolution);
    for (const split of result.solved.result.splits) {
      expect(Math.abs(split.pressureDifference - split.window[0] - 200)).toBeLessThan(resolution);
      expect(Math.abs(split.window[1] - split.pressureDifference - 200)).toBeLessThan(resolution);
    }
    expect(Math.abs(result.minMargin - 200)).toBeLessThan(resolution);
    expect(result.spareFreedom).toBe(1);
  });

  it('says the contactors spread more than the window allows, and what window would do', () => {
    // Invented demo chip: 16 contactors on 1 mm manifolds spread p_B − p_A over more than the window.
    const chip = layoutToChip(ladderLayout({ contactors: 16 }), 'ladder of 16');
    const attempt = () =>
      tuneChip(chip, {
        targets: [{ kind: 'throughput', value: 64 * uLmin }, { kind: 'ratio', value: 0.18 }],
        vary: ['inA.pressure', 'inB.pressure', 'outA.pressure'].map((s) => ({ setting: parseSetting(s, chip) })),
      });
    expect(attempt).toThrow(StratiflowError);
    expect(attempt).toThrow(/spread more than the split window allows.*window at least \d+ Pa wide/);
  });

  it('refuses more targets than settings', () => {
    const chip = ladder4();
    expect(() => tuneChip(chip, { targets: [{ kind: 'flowA', value: uLmin }, { kind: 'flowB', value: uLmin }], vary: [{ setting: parseSetting('inA.pressure', chip) }] })).toThrow(/at least as many settings/);
  });
});

/**
 * Target seeking (src/analyses/tune.ts, src/cli/tune.ts): tuned settings meet their targets when
 * the chip is solved again, symmetric chips tune symmetrically with centred splits, and targets
 * that cannot be met end with one clear line and exit status 3.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { layoutToChip, loadLayout } from '../../src/layout/load.js';
import { ladderLayout } from '../../src/layout/generate.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip, type ChipSolution } from '../../src/analyses/chip.js';
import { parseSetting } from '../../src/analyses/settings.js';
import { simplexMaximise, tuneChip, type Target, type TargetKind } from '../../src/analyses/tune.js';
import { runCli } from '../support/cli.js';
import { StratiflowError } from '../../src/errors.js';
import type { Chip } from '../../src/network/model.js';

const uLmin = 1e-9 / 60;

/**
 * The targets measured on a solution here, without tune.ts: each phase's flow into the chip is the
 * flow of the segments at its inlets (flows are signed from → to), and the mean holdup is that of
 * the contactor segments (merge → split), as the target kinds are defined in tune.ts.
 */
function measuredTargets(chip: Chip, result: ChipSolution): Record<TargetKind, number> {
  const nodes = new Map(chip.nodes.map((n) => [n.id, n]));
  const solved = new Map(result.segments.map((s) => [s.id, s]));
  const inflow = { A: 0, B: 0 };
  const holdups: number[] = [];
  for (const segment of chip.segments) {
    const { flowA, flowB, holdupA } = solved.get(segment.id)!;
    const from = nodes.get(segment.from)!;
    const to = nodes.get(segment.to)!;
    if (from.kind === 'inlet') inflow[from.phase] += flowA + flowB;
    if (to.kind === 'inlet') inflow[to.phase] -= flowA + flowB;
    if (from.kind === 'merge' && to.kind === 'split') holdups.push(holdupA!);
  }
  return {
    flowA: inflow.A,
    flowB: inflow.B,
    throughput: inflow.A + inflow.B,
    ratio: inflow.A / inflow.B,
    holdup: holdups.reduce((sum, h) => sum + h, 0) / holdups.length,
  };
}

/**
 * Relative miss of each target on the chip solved again from scratch. tune.ts accepts a point only
 * when the real chip reproduces the targets to 1e-9 (its AGREEMENT), so that is the requirement;
 * measured misses are below 1e-13, the solver's convergence of every row to 1e-12 of the smaller
 * phase throughput (DEVELOPERS.md).
 */
const TARGET_MISS = 1e-9;

function expectTargetsMet(chip: Chip, targets: Target[]): void {
  const again = solveChip(chip).result;
  expect(again.converged).toBe(true);
  const measured = measuredTargets(chip, again);
  for (const t of targets) expect(Math.abs(measured[t.kind] / t.value - 1), t.kind).toBeLessThan(TARGET_MISS);
}

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
    expect(Math.abs(inA! - inB!) / inA!).toBeLessThan(1e-8);
    // outB stays at 0 Pa, so the mirror image needs outA = 0 too.
    expect(Math.abs(outA!)).toBeLessThan(1e-6 * inA!);
    // The window is [−200, 200] Pa: centred splits have 200 Pa on either side.
    for (const split of result.solved.result.splits) {
      expect(split.pressureDifference - split.window[0]).toBeCloseTo(200, 4);
      expect(split.window[1] - split.pressureDifference).toBeCloseTo(200, 4);
    }
    expect(result.minMargin).toBeCloseTo(200, 4);
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

describe('simplexMaximise', () => {
  it('solves the first example of Chvátal, Linear Programming (1983), ch. 2: z = 13 at (2, 0, 1) (from memory)', () => {
    const x = simplexMaximise([5, 4, 3], [[2, 3, 1], [4, 1, 2], [3, 4, 2]], [5, 11, 8])!;
    expect(x[0]).toBeCloseTo(2, 12);
    expect(x[1]).toBeCloseTo(0, 12);
    expect(x[2]).toBeCloseTo(1, 12);
  });

  it('reports an unbounded objective as null', () => {
    expect(simplexMaximise([1, 1], [[1, -1]], [1])).toBeNull();
  });
});

describe('stratiflow tune', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-tune-'));

  it('writes a tuned layout that, loaded and solved, meets the targets to 1e-9, and prints the cautions', async () => {
    const file = join(dir, 'ladder.yaml');
    writeFileSync(file, `# a demo chip\n${stringify(ladderLayout({ contactors: 4 }))}`);
    const { code, out, err } = await runCli(['tune', file, '--throughput', '16uL/min', '--ratio', '0.18', '--vary', 'inA.pressure', '--vary', 'inB.pressure', '--vary', 'outA.pressure=0:5kPa']);
    expect(err).toBe('');
    expect(code).toBe(0);
    expect(out).toMatch(/tuned layout written to .*ladder-tuned\.yaml/);
    expect(out).toMatch(/lab safety rules/);
    expect(out).toMatch(/within its rating of 300 kPa/);
    const tuned = loadLayout(join(dir, 'ladder-tuned.yaml'));
    expectTargetsMet(tuned, [{ kind: 'throughput', value: 16 * uLmin }, { kind: 'ratio', value: 0.18 }]);
    expect(tuned.nodes.find((n) => n.id === 'inA')).toMatchObject({ flow: undefined });
  });

  it('ends an infeasible target with one line and exit status 3', async () => {
    const file = join(dir, 'ladder16.yaml');
    writeFileSync(file, stringify(ladderLayout({ contactors: 16 })));
    const spread = await runCli(['tune', file, '--throughput', '64uL/min', '--ratio', '0.18', '--vary', 'inA.pressure', '--vary', 'inB.pressure', '--vary', 'outA.pressure']);
    expect(spread.code).toBe(3);
    expect(spread.err.trim().split('\n')).toHaveLength(1);
    expect(spread.err).toMatch(/^stratiflow: .*ladder16\.yaml: the contactors spread more than the split window allows/);
    const rating = await runCli(['tune', file, '--throughput', '60mL/min', '--ratio', '0.18']);
    expect(rating.code).toBe(3);
    expect(rating.err).toMatch(/above the chip's pressure rating of 300 kPa/);
    expect(rating.out).toBe('');
  });
});

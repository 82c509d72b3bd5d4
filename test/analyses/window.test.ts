/**
 * Window maps (src/analyses/window.ts): the classes of a single contactor checked against
 * boundaries worked out by hand (test/support/handWindow.ts), the settings that a sweep changes,
 * a map that does not depend on the number of worker threads, and a target's crossing. The
 * command is tested in test/cli/windowCommand.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { layoutToChip, loadLayout } from '../../src/layout/load.js';
import { ladderLayout } from '../../src/layout/generate.js';
import { solveChip, warmStartFrom } from '../../src/analyses/chip.js';
import { axisValues, targetCrossings, windowMap, type PointClass } from '../../src/analyses/window.js';
import { parseSetting, settingValue, withSettings } from '../../src/analyses/settings.js';
import { A1, A2, DET, HAND, K, M11, M12, M22, singleContactor } from '../support/handWindow.js';

function expectedClass(pA: number, pB: number): PointClass | 'edge' {
  const delta = A1 * pA + A2 * pB;
  if (Math.max(pA, pB) > HAND.rating) return 'over-rating';
  // Grid points within a few pascals of a line are left out: which side they fall on is rounding.
  const near = (a: number, b: number) => Math.abs(a - b) < 5;
  const backA = K * (pA + (2 * HAND.high) / 3) + HAND.high / 3; // p_B above this: A flows back
  const backB = K * (pB - HAND.low / 3) - (2 * HAND.low) / 3; // p_A above this: B flows back
  if (near(delta, HAND.low) || near(delta, HAND.high) || near(pB, backA) || near(pA, backB)) return 'edge';
  if (delta < HAND.low) return pA > backB ? 'backflow' : 'leaking-A-to-B';
  if (delta > HAND.high) return pB > backA ? 'backflow' : 'leaking-B-to-A';
  return 'pinned';
}

describe('window map of one contactor', () => {
  const chip = layoutToChip(singleContactor(), 'hand example');
  const spec = {
    x: { setting: parseSetting('inA.pressure', chip), from: 6e3, to: 9e3, steps: 13 },
    y: { setting: parseSetting('inB.pressure', chip), from: 6e3, to: 9.5e3, steps: 15 },
  };

  it('uses the hand-derived coefficients of the worked example', () => {
    expect(HAND.contactor).toBeCloseTo(5.697743e12, -7);
    expect(DET).toBeCloseTo(8.293743e25, -20);
    expect(A1).toBeCloseTo(-0.6200156, 6);
    expect(A2).toBeCloseTo(0.5699765, 6);
    expect(K).toBeCloseTo(1.288722, 6);
  });

  it('classes every grid point as the Young–Laplace limits and the channel resistances predict', async () => {
    const map = await windowMap(chip, spec);
    let compared = 0;
    const seen = new Set<PointClass>();
    for (const row of map.points) {
      for (const p of row) {
        const expected = expectedClass(p.x, p.y);
        if (expected === 'edge') continue;
        expect(p.class, `p_A = ${p.x} Pa, p_B = ${p.y} Pa`).toBe(expected);
        seen.add(p.class);
        compared++;
      }
    }
    // All five classes of the example occur, and few points sit on a line.
    expect([...seen].sort()).toEqual(['backflow', 'leaking-A-to-B', 'leaking-B-to-A', 'over-rating', 'pinned']);
    expect(compared).toBeGreaterThan(13 * 15 - 6);
  });

  it('gives the hand-derived throughput at a pinned point (Q = M⁻¹ p)', async () => {
    // p_A = 7 kPa, p_B = 7.75 kPa: Δ = −0.6200156 · 7000 + 0.5699765 · 7750 = 77.2 Pa (pinned);
    // Q_A = (M₂₂ p_A − M₁₂ p_B) / det = 2.923561e-10, Q_B = (M₁₁ p_B − M₁₂ p_A) / det = 6.226118e-10 m³/s.
    const map = await windowMap(chip, spec);
    const p = map.points[7]![4]!;
    expect([p.x, p.y]).toEqual([7000, 7750]);
    expect(p.class).toBe('pinned');
    const qA = (M22 * 7000 - M12 * 7750) / DET;
    const qB = (M11 * 7750 - M12 * 7000) / DET;
    expect(qA).toBeCloseTo(2.923561e-10, 15);
    expect(qB).toBeCloseTo(6.226118e-10, 15);
    // The sweep balances mass to 1e-5 of the throughput (SWEEP_SOLVER); this linear chip settles far closer.
    expect(Math.abs(p.throughputA / qA - 1)).toBeLessThan(1e-5);
    expect(Math.abs(p.throughputB / qB - 1)).toBeLessThan(1e-5);
    expect(Math.abs(p.flowRatio / (qA / qB) - 1)).toBeLessThan(1e-5);
    expect(p.minMargin).toBeCloseTo(200 - Math.abs(A1 * 7000 + A2 * 7750), 2);
  });
});

describe('settings', () => {
  const chip = layoutToChip(ladderLayout({ contactors: 2 }), 'ladder');

  it('reads node.pressure and node.flow, and refuses what cannot be set', () => {
    expect(parseSetting('inA.pressure', chip)).toEqual({ node: 'inA', quantity: 'pressure' });
    expect(parseSetting(' outB.pressure ', chip)).toEqual({ node: 'outB', quantity: 'pressure' });
    expect(() => parseSetting('outB.flow', chip)).toThrow(/cannot be set/);
    expect(() => parseSetting('m1.pressure', chip)).toThrow(/only inlets and outlets/);
    expect(() => parseSetting('nowhere.pressure', chip)).toThrow(/no node "nowhere"/);
    expect(() => parseSetting('inA', chip)).toThrow(/node.pressure or node.flow/);
  });

  it('setting a flow frees the pressure of an inlet, and a pressure its flow; pressures add the reservoir head', () => {
    const headed = { ...chip, nodes: chip.nodes.map((n) => (n.id === 'inA' && n.kind === 'inlet' ? { ...n, head: 50, pressure: 1050, flow: undefined } : n)) };
    const byFlow = withSettings(headed, [[{ node: 'inA', quantity: 'flow' }, 1e-10]]);
    expect(byFlow.nodes.find((n) => n.id === 'inA')).toMatchObject({ flow: 1e-10, pressure: undefined });
    const byPressure = withSettings(headed, [[{ node: 'inA', quantity: 'pressure' }, 2000]]);
    expect(byPressure.nodes.find((n) => n.id === 'inA')).toMatchObject({ pressure: 2050, flow: undefined });
    // The value read back excludes the head again.
    const solved = solveChip(byPressure);
    expect(settingValue(solved, { node: 'inA', quantity: 'pressure' })).toBeCloseTo(2000, 9);
    expect(headed.nodes.find((n) => n.id === 'inA')).toMatchObject({ pressure: 1050 });
  });

  it('spaces grid values evenly and ends exactly on the range', () => {
    expect(axisValues({ setting: { node: 'inA', quantity: 'pressure' }, from: 1, to: 2, steps: 3 })).toEqual([1, 1.5, 2]);
    expect(axisValues({ setting: { node: 'inA', quantity: 'pressure' }, from: 0.1, to: 0.7, steps: 7 }).at(-1)).toBe(0.7);
  });
});

describe('worker threads', () => {
  it('give the same map as one thread', async () => {
    const chip = layoutToChip(ladderLayout({ contactors: 3 }), 'ladder');
    const spec = {
      x: { setting: parseSetting('inA.pressure', chip), from: 3e3, to: 5e3, steps: 5 },
      y: { setting: parseSetting('inB.pressure', chip), from: 2e3, to: 4e3, steps: 4 },
    };
    const one = await windowMap(chip, spec, { workers: 1 });
    let reports = 0;
    const two = await windowMap(chip, spec, { workers: 2, onProgress: () => reports++ });
    expect(reports).toBe(20);
    expect(two.points).toEqual(one.points);
    expect(two.counts).toEqual(one.counts);
  });

  it('give the same map as one thread when the sweep starts inside the grid, and solve every point once', async () => {
    const chip = layoutToChip(ladderLayout({ contactors: 3 }), 'ladder');
    const spec = {
      x: { setting: parseSetting('inA.pressure', chip), from: 3e3, to: 5e3, steps: 5 },
      y: { setting: parseSetting('inB.pressure', chip), from: 2e3, to: 4e3, steps: 4 },
    };
    const one = await windowMap(chip, spec, { workers: 1, seedColumn: 2, seedRow: 1 });
    let reports = 0;
    const two = await windowMap(chip, spec, { workers: 2, seedColumn: 2, seedRow: 1, onProgress: () => reports++ });
    expect(reports).toBe(20);
    expect(two.points).toEqual(one.points);
    expect(one.points.flat().map((p) => `${p.i},${p.j}`).sort()).toEqual(Array.from({ length: 20 }, (_, k) => `${k % 5},${Math.floor(k / 5)}`).sort());
  });
});

describe('targetCrossings', () => {
  it('marks a target where its throughput and ratio contours cross', async () => {
    // The target is the flow at p_A = 7 kPa, p_B = 7.75 kPa (hand example above): the crossing
    // lies there, up to the linear interpolation of the ratio Q_A/Q_B across a 250 Pa cell.
    const chip = layoutToChip(singleContactor(), 'hand example');
    const map = await windowMap(chip, {
      x: { setting: parseSetting('inA.pressure', chip), from: 6.5e3, to: 7.5e3, steps: 5 },
      y: { setting: parseSetting('inB.pressure', chip), from: 7.25e3, to: 8.25e3, steps: 5 },
    });
    const qA = (M22 * 7000 - M12 * 7750) / DET;
    const qB = (M11 * 7750 - M12 * 7000) / DET;
    const crossings = targetCrossings(map, { throughput: qA + qB, ratio: qA / qB });
    expect(crossings).toHaveLength(1);
    expect(crossings[0]![0]).toBeCloseTo(7000, -1);
    expect(crossings[0]![1]).toBeCloseTo(7750, -1);
  });
});

describe('sweeps through states where the chip is hard to settle', () => {
  // Regression: on the bundled dye chip, inlet A 1.2 kPa above inlet B starves phase B in
  // several contactors while splits leak. A sweep gave each point after a failed one only its
  // warm start, so one failure failed the rest of the line (25 of 441 points of the CLI's map);
  // each point now has every attempt of the solver, the smoothing start among them.
  it('settles every point of a line across the starving contactors of the dye chip', async () => {
    const chip = loadLayout('layouts/dye-octanol-8.yaml');
    const seed = warmStartFrom(solveChip(chip));
    const spec = {
      x: { setting: parseSetting('inA.pressure', chip), from: 1543.8, to: 2815.6, steps: 4 },
      y: { setting: parseSetting('inB.pressure', chip), from: 1203.3, to: 1247.9, steps: 3 },
      coordinates: 'mean-difference' as const,
    };
    const map = await windowMap(chip, spec, { workers: 1, seed });
    const failed = map.points.flat().filter((p) => p.class === 'failed');
    expect(failed.map((p) => `${p.x} ${p.y}: ${p.message ?? ''}`)).toEqual([]);
  });
});

/**
 * Window maps (src/analyses/window.ts): the classes of a single contactor checked against
 * boundaries worked out by hand, the settings that a sweep changes, and a map that does not
 * depend on the number of worker threads.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLValidator } from 'fast-xml-parser';
import { stringify } from 'yaml';
import { layoutToChip } from '../../src/layout/load.js';
import { ladderLayout } from '../../src/layout/generate.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip } from '../../src/analyses/chip.js';
import { axisValues, targetCrossings, windowMap, type PointClass } from '../../src/analyses/window.js';
import { parseSetting, settingValue, withSettings } from '../../src/analyses/settings.js';
import { runCli } from '../support/cli.js';

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
const HAND = {
  feed: (128 * 1e-3 * 5e-3) / (Math.PI * 1e-16),
  armA: (128 * 1e-3 * 10e-3) / (Math.PI * 1e-16),
  armB: (128 * 1e-3 * 5e-3) / (Math.PI * 1e-16),
  contactor: (12 * 1e-3 * 1e-2) / (2e-4 * 1.25e-13 * 0.8424389),
  low: -200,
  high: 200,
  rating: 9.1e3,
};
const M11 = HAND.feed + HAND.armA + HAND.contactor;
const M12 = HAND.contactor;
const M22 = HAND.feed + HAND.armB + HAND.contactor;
const DET = M11 * M22 - M12 * M12;
const A1 = -(HAND.armA * M22 + HAND.armB * M12) / DET;
const A2 = (HAND.armA * M12 + HAND.armB * M11) / DET;
const R = HAND.armB;
const K = (HAND.contactor + (5 * R) / 3) / (HAND.contactor + (2 * R) / 3);

function singleContactor(): LayoutFile {
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
});

describe('stratiflow window', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-window-'));
  const file = join(dir, 'one.yaml');
  writeFileSync(file, stringify(singleContactor()));

  it('writes the map, the grid as CSV and JSON, and a summary with the cautions', async () => {
    const svg = join(dir, 'map.svg');
    const csv = join(dir, 'map.csv');
    const json = join(dir, 'map.json');
    const { code, out, err } = await runCli(['window', file, '--x-range', '6:9kPa', '--x-steps', '13', '--y-range', '6kPa:9.5kPa', '--y-steps', '15', '--workers', '1', '--svg', svg, '--csv', csv, '--json', json]);
    expect(err).toBe('');
    expect(code).toBe(0);
    expect(XMLValidator.validate(readFileSync(svg, 'utf8'))).toBe(true);
    expect(readFileSync(svg, 'utf8')).toMatch(/inA\.pressure \(kPa\)/);
    const rows = readFileSync(csv, 'utf8').trim().split('\n');
    expect(rows[0]).toMatch(/^i,j,inA\.pressure_kPa,inB\.pressure_kPa,class,/);
    expect(rows).toHaveLength(1 + 13 * 15);
    const grid = JSON.parse(readFileSync(json, 'utf8'));
    expect(grid.points).toHaveLength(15);
    expect(grid.current).toEqual([7000, 7750]);
    expect(out).toMatch(/as given: inA\.pressure = 7 kPa, inB\.pressure = 7\.75 kPa \(all splits pinned\)/);
    expect(out).toMatch(/lab safety rules/);
  });

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

  it('refuses a range whose ends are the wrong way round, naming the option', async () => {
    const { code, err } = await runCli(['window', file, '--x-range', '9kPa:6kPa', '--y-range', '6kPa:9kPa']);
    expect(code).toBe(2);
    expect(err).toMatch(/--x-range: the first end must be below the second/);
  });
});

/**
 * Tests of src/analyses/tolerance.ts (with ./toleranceModel.ts and ./toleranceSummary.ts):
 * zero tolerance reproduces the nominal solve exactly; small tolerances give sampled standard
 * deviations that agree with the first-order estimate within stated sampling bounds; the same
 * seed gives the same numbers whatever the number of worker threads; two parallel contactors
 * of different depth split the flow as worked out by hand; non-physical or unsolved realisations
 * are counted, not fatal. Fluids and chips are invented demo data.
 */
import { describe, expect, it } from 'vitest';
import { ladderLayout } from '../../src/layout/generate.js';
import { layoutToChip } from '../../src/layout/load.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip, warmStartFrom } from '../../src/analyses/chip.js';
import { runTolerance, type ToleranceSpec, type Variation } from '../../src/analyses/tolerance.js';
import { sampledShareNoise } from '../../src/analyses/toleranceSummary.js';
import { observableLayout, planTolerance, realiseChip, runJob, standardDeviates } from '../../src/analyses/toleranceModel.js';
import { rect } from '../support/layouts.js';

const normal = (size: number): Variation => ({ distribution: 'normal', size, relative: true });
const uniform = (size: number): Variation => ({ distribution: 'uniform', size, relative: true });

/**
 * A ladder whose splits all stay pinned at nominal conditions with the Young–Laplace window of
 * the default fluids (about −294 … −116 Pa): deep manifolds, low drive pressures, outlet
 * pressures that put p_B − p_A near −200 Pa. Invented demo design.
 */
function demoLadder(contactors: number): LayoutFile {
  return ladderLayout({
    contactors,
    manifold: { width: 2000e-6, depth: 200e-6 },
    drive: { A: { pressure: 3000 }, B: { pressure: 2700 } },
    outletPressure: { A: 200, B: 104 },
  });
}

describe('runTolerance at zero tolerance', () => {
  it('reproduces the nominal solve exactly in every realisation', async () => {
    const chip = layoutToChip(demoLadder(6), 'demo');
    const zero = normal(0);
    const spec: ToleranceSpec = { channels: [{ depth: { each: zero, offset: zero }, width: { each: zero } }], viscosityA: zero, viscosityB: zero, interfacialTension: zero, contactAngle: zero };
    const nominal = solveChip(chip).result;
    const r = await runTolerance(chip, spec, { samples: 5, seed: 3 });
    expect(r.solved).toBe(5);
    for (const row of r.rows) {
      expect(row.flows).toEqual(nominal.contactors.map((c) => c.flowA + c.flowB));
      expect(row.spreads!['total.cv']).toBe(nominal.summary.spread.total.cv);
      expect(row.spreads!['holdup.ratio']).toBe(nominal.summary.spread.holdup.ratio);
      expect(row.allPinned).toBe(true);
      expect(row.viscosityA).toBe(chip.phases.A.viscosity);
    }
    expect(r.spreads.every((s) => s.sampled!.sd === 0)).toBe(true);
  });
});

describe('runTolerance reproducibility', () => {
  const chip = layoutToChip(demoLadder(4), 'demo');
  const spec: ToleranceSpec = { channels: [{ depth: { each: normal(0.01), offset: uniform(0.02) } }], viscosityA: normal(0.03), interfacialTension: normal(0.05) };

  it('gives identical results for the same seed, with one worker thread or two', async () => {
    const one = await runTolerance(chip, spec, { samples: 12, seed: 42, workers: 1, scales: [2] });
    const again = await runTolerance(chip, spec, { samples: 12, seed: 42, workers: 1, scales: [2] });
    const two = await runTolerance(chip, spec, { samples: 12, seed: 42, workers: 2, scales: [2] });
    expect(JSON.stringify(again)).toBe(JSON.stringify(one));
    expect(JSON.stringify(two)).toBe(JSON.stringify(one));
  });

  it('gives different realisations for a different seed', async () => {
    const a = await runTolerance(chip, spec, { samples: 3, seed: 1, firstOrder: false });
    const b = await runTolerance(chip, spec, { samples: 3, seed: 2, firstOrder: false });
    expect(a.rows.map((r) => r.flows)).not.toEqual(b.rows.map((r) => r.flows));
  });
});

describe('runTolerance at small tolerances', () => {
  it('gives sampled standard deviations that agree with the first-order estimate within sampling error', async () => {
    // 0.2 % tolerances keep second-order terms ~1e-3 of the first-order ones, far below the
    // sampling error of n = 400 (SE(s)/s ≈ 1/√(2n) = 3.5 %).
    const chip = layoutToChip(demoLadder(6), 'demo');
    const spec: ToleranceSpec = {
      channels: [{ depth: { each: normal(0.002), offset: normal(0.002) }, width: { each: uniform(0.002) } }],
      viscosityA: normal(0.002),
      viscosityB: uniform(0.002),
      interfacialTension: normal(0.002),
    };
    const r = await runTolerance(chip, spec, { samples: 400, seed: 11, workers: 2 });
    expect(r.solved).toBe(400);
    expect(r.firstOrder!.available).toBe(true);
    // Bound: |s − σ₁| ≤ 3.29 SE(s), two-sided 99.9 % for one contactor; over 6 contactors the
    // chance that any one falls outside by sampling alone is below 6 × 0.1 % (Bonferroni).
    // SE(s) from the variance of the sample variance (sampleStatistics.ts describeSample).
    // With SE(s)/s ≈ 1/√(2(n − 1)) = 3.5 % at n = 400 that bound keeps the ratio s/σ₁ within about
    // ±12 %; 0.85 to 1.15 holds it there should a reported SE come out too large. Measured: ratios
    // 1.013 to 1.064, at most 1.7 SE from 1.
    for (const c of r.contactors) {
      const { firstOrder, sampled, sampledError } = c.flowSd;
      expect(Math.abs(sampled! - firstOrder!)).toBeLessThanOrEqual(3.29 * sampledError!);
      expect(sampled! / firstOrder!).toBeGreaterThan(0.85);
      expect(sampled! / firstOrder!).toBeLessThan(1.15);
    }
    // The first-order model on the same draws gives the spread's sd within the same bound.
    for (const s of r.spreads) expect(Math.abs(s.sampled!.sd - s.firstOrder!.sd)).toBeLessThanOrEqual(3.29 * s.sampled!.sdError);
    // The first-order terms l_k follow the sampled variance: Σ_k cov(y, l_k)/Var(y) (`followed`) is
    // 1 for a linear response y = Σ_k l_k. The second-order terms, ~1e-3 of the first-order ones
    // (above), move it by about that much; numerator and denominator come from the same draws, so
    // their sampling errors largely cancel. Measured: 0.99987 (flows), 1.00031 (window positions).
    // Bound 1e-2, ten times the second-order size. (The sampled shares themselves sum to 1 by
    // construction, less the ones snapped to 0: checked below.)
    expect(Math.abs(r.followed.flow! - 1)).toBeLessThan(1e-2);
    expect(Math.abs(r.followed.window! - 1)).toBeLessThan(1e-2);
    const firstOrderShares = r.sources.reduce((a, s) => a + s.flowShare!, 0);
    expect(firstOrderShares).toBeCloseTo(1, 12);
  });
});

describe('runTolerance first-order estimate', () => {
  it('derives a single-phase channel\'s width derivative from its depth derivative as exactly as differencing it', async () => {
    // With depth and width tolerances together, a plain channel is solved for once and its width
    // derivative follows through its conductance; with one at a time, each is differenced on
    // its own. Independent sources add variances, so the two must agree (to the ~1e-6 error
    // of the difference quotients).
    const chip = layoutToChip(demoLadder(3), 'demo');
    const both = await runTolerance(chip, { channels: [{ depth: { each: normal(0.01) }, width: { each: uniform(0.02) } }] }, { samples: 0, seed: 1 });
    const depth = await runTolerance(chip, { channels: [{ depth: { each: normal(0.01) } }] }, { samples: 0, seed: 1 });
    const width = await runTolerance(chip, { channels: [{ width: { each: uniform(0.02) } }] }, { samples: 0, seed: 1 });
    expect(both.firstOrder!.solves).toBeLessThan(depth.firstOrder!.solves + width.firstOrder!.solves);
    both.contactors.forEach((c, i) => {
      const separate = Math.hypot(depth.contactors[i]!.flowSd.firstOrder!, width.contactors[i]!.flowSd.firstOrder!);
      expect(Math.abs(c.flowSd.firstOrder! / separate - 1)).toBeLessThan(1e-5);
    });
  });
});

/**
 * Two parallel contactors fed from one inlet per phase and drained into one outlet per phase.
 * Both phases have μ = 1 mPa·s and all inlets and outlets sit at the same pressures, so by
 * symmetry each contactor carries the two phases side by side at holdup 1/2 and, with equal
 * viscosities, its total flow is that of one liquid in the whole channel.
 * Feeds and drains: 1000 µm × 200 µm × 1 mm; contactors: 1000 µm wide, 50 µm deep, 20 mm long.
 */
function twoContactorLayout(): LayoutFile {
  const liquid = { viscosity: 1e-3, density: 1000 };
  const feed = (id: string, from: string, to: string) => rect(id, from, to, 1000e-6, 200e-6, 1e-3, { group: id.startsWith('f') ? 'feed' : 'drain' });
  return {
    name: 'two parallel contactors',
    phases: { A: { label: 'A', ...liquid }, B: { label: 'B', ...liquid } },
    splitWindow: { low: -1e5, high: 1e5 },
    nodes: [
      { id: 'inA', type: 'inlet', phase: 'A', pressure: 1000 },
      { id: 'inB', type: 'inlet', phase: 'B', pressure: 1000 },
      { id: 'm1', type: 'merge', inlets: ['fA1', 'fB1'] },
      { id: 'm2', type: 'merge', inlets: ['fA2', 'fB2'] },
      { id: 's1', type: 'split', outlets: ['oA1', 'oB1'] },
      { id: 's2', type: 'split', outlets: ['oA2', 'oB2'] },
      { id: 'outA', type: 'outlet', pressure: 0, phase: 'A' },
      { id: 'outB', type: 'outlet', pressure: 0, phase: 'B' },
    ],
    segments: [
      feed('fA1', 'inA', 'm1'),
      feed('fB1', 'inB', 'm1'),
      feed('fA2', 'inA', 'm2'),
      feed('fB2', 'inB', 'm2'),
      rect('k1', 'm1', 's1', 1000e-6, 50e-6, 20e-3, { group: 'contactor', orientation: 'side' }),
      rect('k2', 'm2', 's2', 1000e-6, 50e-6, 20e-3, { group: 'contactor', orientation: 'side' }),
      feed('oA1', 's1', 'outA'),
      feed('oB1', 's1', 'outB'),
      feed('oA2', 's2', 'outA'),
      feed('oB2', 's2', 'outB'),
    ],
  };
}

/**
 * Conductance of a shallow rectangular channel (depth h ≤ 0.06 w), by hand from the series of
 * White, Viscous Fluid Flow, 3rd ed., 2006, eq. 3-48: k = (w h³/12)[1 − (192 h/π⁵ w) Σ_{n odd}
 * tanh(nπw/2h)/n⁵]. For w/h ≥ 16, tanh(nπw/2h) = 1 to within 2e⁻⁵⁰ and Σ_{n odd} 1/n⁵ =
 * (1 − 2⁻⁵) ζ(5) = 0.96875 × 1.0369277551 = 1.0045237628 (ζ(5): Abramowitz & Stegun, 1964,
 * table 23.3), so k = (w h³/12)(1 − 0.6302488763 h/w): the depth-cubed law with its first
 * correction. (For the 200 µm deep feeds, h/w = 0.2, the first tanh falls 3e−7 short of 1, which
 * changes their conductance by 4e−8; they carry a 1e−3 part of the pressure drop.)
 */
const shallowConductance = (w: number, h: number) => ((w * h ** 3) / 12) * (1 - (0.6302488763 * h) / w);

describe('two parallel contactors of different depth (worked by hand)', () => {
  const chip = layoutToChip(twoContactorLayout(), 'two contactors');
  const spec: ToleranceSpec = { channels: [{ group: 'contactor', depth: { each: uniform(0.02) } }] };
  const plan = planTolerance(chip, spec);

  it('split the flow in the ratio of their path conductances, for depths 50 and 51 µm', () => {
    // Slots: the depth of k1, then of k2. z = (0, 1) with a uniform ±2 % range: depths 50, 51 µm.
    const realised = realiseChip(chip, plan, [0, 1]).chip!;
    expect(realised.segments.find((s) => s.id === 'k2')!.section).toMatchObject({ depth: 51e-6 });
    const [q1, q2] = solveChip(realised).result.contactors.map((c) => c.flowA + c.flowB);
    // By hand, μ = 1e−3 Pa·s, R = μL/k with k from shallowConductance:
    //   contactor, h = 50 µm: w h³/12 = 1.0416667e−17, factor 1 − 0.6302489·0.05 = 0.9684876,
    //     k₁ = 1.0088412e−17 m⁴, R₁ = 1e−3 · 0.02 / k₁ = 1.9824726e12 Pa·s/m³;
    //   contactor, h = 51 µm: w h³/12 = 1.1054250e−17, factor 0.9678573, k₂ = 1.0698937e−17,
    //     R₂ = 1.8693447e12;
    //   feed = drain, h = 200 µm: k = 6.6666667e−16 · (1 − 0.6302489·0.2) = 5.8263348e−16,
    //     R_f = 1e−3 · 1e−3 / k = 1.7163449e9.
    // Each lane carries half the contactor flow through its own feed and drain, so
    //   p_in − p_out = Q (R_k + R_f/2 + R_f/2)  ⇒  Q₂/Q₁ = (R₁ + R_f)/(R₂ + R_f) = 1.0604619.
    // (Depth cubed alone: 1.02³ = 1.061208; without the feeds: R₁/R₂ = 1.0605174.)
    expect(q2! / q1!).toBeCloseTo(1.0604619, 6);
  });

  it('split the flow in that ratio in every sampled realisation', async () => {
    const r = await runTolerance(chip, spec, { samples: 20, seed: 5, firstOrder: false });
    const pathResistance = (h: number) => (1e-3 * 20e-3) / shallowConductance(1000e-6, h) + (1e-3 * 1e-3) / shallowConductance(1000e-6, 200e-6);
    for (const row of r.rows) {
      const realised = realiseChip(chip, plan, standardDeviates(plan, 5, row.index)).chip!;
      const [h1, h2] = ['k1', 'k2'].map((id) => (realised.segments.find((s) => s.id === id)!.section as { depth: number }).depth);
      expect(Math.abs(h1! / 50e-6 - 1)).toBeLessThanOrEqual(0.02);
      const expected = pathResistance(h1!) / pathResistance(h2!);
      expect(Math.abs(row.flows[1]! / row.flows[0]! / expected - 1)).toBeLessThan(1e-7);
    }
  });

  it('give the first-order flow sd of the depth-cubed law with its correction', async () => {
    // d ln k/d ln h = 3 − 0.6302489(h/w)/(1 − 0.6302489 h/w) = 3 − 0.0315124/0.9684876 = 2.9674622;
    // the feeds dilute it by R₁/(R₁ + R_f) = 0.99913: d ln Q/d ln h = 2.9648953. A uniform ±2 %
    // range has sd 0.02/√3, so sd(Q)/Q = 2.9648953 × 0.011547005 = 0.034235662.
    // The derivative is a forward difference with a relative step of 1e-6: ~1e-6 relative error.
    const r = await runTolerance(chip, spec, { samples: 0, seed: 1 });
    for (const c of r.contactors) expect(Math.abs(c.flowSd.firstOrder! / 0.034235662 - 1)).toBeLessThan(1e-5);
  });
});

describe('runTolerance when realisations fail', () => {
  it('counts non-physical draws as not solved and reports them instead of failing', async () => {
    const chip = layoutToChip(twoContactorLayout(), 'two contactors');
    // A uniform ±150 % range on depth draws negative depths half as often as not.
    const r = await runTolerance(chip, { channels: [{ group: 'contactor', depth: { each: uniform(1.5) } }] }, { samples: 20, seed: 2, firstOrder: false });
    expect(r.notSolved.length).toBeGreaterThan(0);
    expect(r.solved + r.notSolved.length).toBe(20);
    expect(r.notSolved[0]!.problem).toMatch(/segment k[12] drawn ≤ 0/);
    expect(r.rows.filter((row) => !row.solved).length).toBe(r.notSolved.length);
  });

  it('returns a problem for a realisation that does not converge instead of throwing', () => {
    const chip = layoutToChip(demoLadder(2), 'demo');
    const plan = planTolerance(chip, { viscosityA: normal(0.01) });
    const nominal = solveChip(chip);
    // No Newton step allowed: neither the warm nor the cold start can settle.
    const context = { chip, plan, seed: 1, warm: warmStartFrom(nominal), solver: { maxIterations: 0 }, layout: observableLayout(nominal.result) };
    const outcome = runJob(context, { kind: 'sample', index: 0, scale: 1 });
    expect(outcome.values).toBeUndefined();
    expect(outcome.problem).toMatch(/^did not converge/);
  });

  it('names the groups of the layout when a rule names one that does not exist', () => {
    const chip = layoutToChip(twoContactorLayout(), 'two contactors');
    expect(() => planTolerance(chip, { channels: [{ group: 'tubing', width: { each: normal(0.01) } }] })).toThrow(/no segment has group "tubing" \(groups in this layout: contactor, drain, feed\)/);
  });
});

describe('realiseChip', () => {
  it('moves a tube\'s diameter by the width tolerance and leaves it out of the depth tolerance', () => {
    const chip = layoutToChip(ladderLayout({ contactors: 2, tubing: { diameter: 250e-6, length: 0.3 } }), 'demo');
    const plan = planTolerance(chip, { channels: [{ group: 'tubing', depth: { offset: normal(0.1) }, width: { offset: normal(0.1) } }] });
    // The tubing rule covers the four tubes; depth has nothing to move, width one offset slot.
    expect(plan.sources.map((s) => s.label)).toEqual(['width, offset per chip [tubing]']);
    const realised = realiseChip(chip, plan, [1]).chip!;
    for (const s of realised.segments.filter((x) => x.group === 'tubing')) expect(s.section).toEqual({ shape: 'tube', diameter: 250e-6 * 1.1 });
    expect(realised.segments.filter((x) => x.group !== 'tubing')).toEqual(chip.segments.filter((x) => x.group !== 'tubing'));
  });

  it('shifts the advancing and receding angles together and keeps them within 0 … 180°', () => {
    const chip = layoutToChip(demoLadder(2), 'demo');
    const plan = planTolerance(chip, { contactAngle: { distribution: 'uniform', size: Math.PI / 6, relative: false } });
    const { advancing, receding } = realiseChip(chip, plan, [0.9]).chip!.contactAngle!;
    // Demo angles 150° and 110° (src/layout/generate.ts) + 0.9 × 30° = 177° and 137°.
    expect((advancing * 180) / Math.PI).toBeCloseTo(177, 10);
    expect((receding * 180) / Math.PI).toBeCloseTo(137, 10);
    expect(realiseChip(chip, plan, [1.5]).chip!.contactAngle!.advancing).toBe(Math.PI);
  });
});

describe('runTolerance shares of variance (tracker issue 11, item 9)', () => {
  it('gives sampled shares that add up to 100 %, less only the shares within their sampling noise', async () => {
    const chip = layoutToChip(demoLadder(4), 'demo');
    // A strong source beside weak ones: the weak shares lie within the noise of 60 samples.
    const spec: ToleranceSpec = { channels: [{ depth: { each: normal(0.02) } }], viscosityA: normal(0.001), interfacialTension: normal(0.01) };
    const n = 60;
    const r = await runTolerance(chip, spec, { samples: n, seed: 5, workers: 1 });
    expect(r.solved).toBe(n);
    const noise = sampledShareNoise(n);
    for (const key of ['flowShareSampled', 'windowShareSampled'] as const) {
      const shares = r.sources.map((s) => s[key]!);
      const sum = shares.reduce((a, b) => a + b, 0);
      const snapped = shares.filter((s) => s === 0).length;
      // Exactly 1 before snapping; each share set to 0 was below the noise; 1e-12 for the sum's rounding.
      expect(Math.abs(sum - 1), key).toBeLessThanOrEqual(snapped * noise + 1e-12);
      for (const s of shares) expect(s === 0 || Math.abs(s) >= noise, `${key} ${s}`).toBe(true);
    }
    expect(r.followed.flow).toBeGreaterThan(0);
  });

  it('gives first-order shares that add up to 100 %', async () => {
    const chip = layoutToChip(demoLadder(4), 'demo');
    const r = await runTolerance(chip, { channels: [{ depth: { each: normal(0.01), offset: normal(0.01) } }], viscosityB: normal(0.02) }, { samples: 2, seed: 1, workers: 1 });
    const sum = r.sources.reduce((a, s) => a + s.flowShare!, 0);
    // Variances of independent sources add exactly; 1e-12 for rounding.
    expect(Math.abs(sum - 1)).toBeLessThanOrEqual(1e-12);
  });
});

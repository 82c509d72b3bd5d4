/**
 * Two-phase chip solves: one contactor against the cross-section engine and against a reference
 * solve written out by hand in this file (a scalar root in the holdup), splits pushed past their
 * window, symmetry, mirror images, the exchange of the phase names, conservation of each phase
 * at every node, and the linear scaling of a chip whose splits all stay pinned.
 */
import { describe, expect, it } from 'vitest';
import type { LayoutFile } from '../../src/layout/schema.js';
import { layoutToChip, loadLayout } from '../../src/layout/load.js';
import { parseSetting, withSettings } from '../../src/analyses/settings.js';
import { treeLayout, ladderLayout } from '../../src/layout/generate.js';
import { solveChip, warmStartFrom, type ChipSolution } from '../../src/analyses/chip.js';
import { twoLayerFlow } from '../../src/physics/twoLayer.js';
import { flowFractionAt, holdupForFlowFraction, layerAxes, type RectSection } from '../../src/physics/section.js';
import type { Chip } from '../../src/network/model.js';
import {
  DEMO_PHASES,
  SINGLE_CONTACTOR_DEFAULTS,
  mirroredLayout,
  phaseSwappedLayout,
  resistanceOf,
  singleContactorLayout,
  wellDesignedLadder,
  type SingleContactorOptions,
} from '../support/layouts.js';
import { badlyDistributedLadder } from '../../bench/maldistribution.js';
import { starvedPhase } from '../../src/analyses/verdict.js';

const MU_A = DEMO_PHASES.A.viscosity;
const MU_B = DEMO_PHASES.B.viscosity;

function solved(layout: LayoutFile, name = layout.name) {
  const chip = layoutToChip(layout, name);
  const { result } = solveChip(chip);
  expect(result.converged, `${name}: ${result.message ?? ''} ${result.unsettled.join(', ')}`).toBe(true);
  return { chip, result };
}

/** Six contactors, manifolds 1 mm × 100 µm, B driven slightly below A: every split pinned. */
const PINNED_LADDER = wellDesignedLadder(6, { manifold: { width: 1e-3, depth: 100e-6 }, drive: { A: { pressure: 20e3 }, B: { pressure: 19.8e3 } } });
/**
 * Eight contactors on narrow manifolds (200 µm × 50 µm), B driven 500 Pa below A against a
 * ±150 Pa window: the splits nearer the inlets leak A into the B outlets, the others stay pinned.
 */
const MIXED_LADDER: LayoutFile = {
  ...wellDesignedLadder(8, { manifold: { width: 200e-6, depth: 50e-6 }, drive: { A: { pressure: 20e3 }, B: { pressure: 19.5e3 } }, outletPressure: { A: 0, B: 200 } }),
  splitWindow: { low: -150, high: 150 },
};

const near = (got: number, want: number, tolerance: number, what?: string) =>
  expect(Math.abs(got - want), what).toBeLessThanOrEqual(tolerance);

const segmentOf = (result: ChipSolution, id: string) => result.segments.find((s) => s.id === id)!;
const nodeOf = (result: ChipSolution, id: string) => result.nodes.find((n) => n.id === id)!;

// ---------------------------------------------------------------------------------------------
// A reference solve of the single-contactor chip (test/support/layouts.ts): feeds f_A, f_B, the
// contactor, outlet arms o_A, o_B. Resistances R = L/k of the single-phase channels; lane
// conductances c_A = k_A(α)/L, c_B = k_B(α)/L of the contactor from the two-layer engine with A on
// the near side. Both lanes feel one drop G (p_MA − p_SA = p_MB − p_SB).
// ---------------------------------------------------------------------------------------------

interface Reference {
  alpha: number;
  qA: number;
  qB: number;
  /** Leak far → near at the split (B into A's arm when positive), m³/s. */
  leak: number;
  pMA: number;
  pMB: number;
  pSA: number;
  pSB: number;
}

function referenceParts(o: SingleContactorOptions) {
  const feed = { shape: 'rect' as const, width: o.feed.width, depth: o.feed.depth, length: o.feed.length, id: '', from: '', to: '' };
  const drain = { shape: 'rect' as const, width: o.drain.width, depth: o.drain.depth, length: o.drain.length, id: '', from: '', to: '' };
  const section: RectSection = { shape: 'rect', width: o.contactor.width, depth: o.contactor.depth, orientation: o.contactor.orientation };
  const axes = layerAxes(section);
  const lanes = (alpha: number) => {
    const r = twoLayerFlow({ ...axes, holdup: alpha, muA: MU_A, muB: MU_B });
    return { cA: r.kA / o.contactor.length, cB: r.kB / o.contactor.length };
  };
  return {
    section,
    lanes,
    RfA: resistanceOf(feed, MU_A),
    RfB: resistanceOf(feed, MU_B),
    // Arms carry a mixture once a split leaks: per unit viscosity, Δp = r0·μ(x)·Q.
    r0A: resistanceOf(drain, 1),
    r0B: resistanceOf(drain, 1),
  };
}

/** Bisection for a sign change of f on [lo, hi] to rounding. */
function bisect(f: (a: number) => number, lo: number, hi: number): number {
  let flo = f(lo);
  for (let i = 0; i < 200 && hi - lo > 1e-16; i++) {
    const mid = 0.5 * (lo + hi);
    const fm = f(mid);
    if (fm === 0) return mid;
    if (Math.sign(fm) === Math.sign(flo)) {
      lo = mid;
      flo = fm;
    } else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** The first sign change of f on a grid over (0, 1), refined by bisection. */
function rootInHoldup(f: (a: number) => number): number {
  const grid = Array.from({ length: 999 }, (_, i) => (i + 1) / 1000);
  for (let i = 0; i + 1 < grid.length; i++) {
    if (Math.sign(f(grid[i]!)) !== Math.sign(f(grid[i + 1]!))) return bisect(f, grid[i]!, grid[i + 1]!);
  }
  throw new Error('no holdup carries this chip');
}

/**
 * Pinned split (no leak): each phase runs through one series chain inlet → feed → lane → arm →
 * outlet, so Q_A = (p_A − p_oA)/(R_fA + 1/c_A + R_oA) and likewise for B; the holdup is the root
 * of Q_A/c_A = Q_B/c_B (equal drops across both lanes).
 */
function pinnedReference(o: SingleContactorOptions): Reference {
  const { lanes, RfA, RfB, r0A, r0B } = referenceParts(o);
  const flows = (alpha: number) => {
    const { cA, cB } = lanes(alpha);
    const qA = (o.inletPressure.A - o.outletPressure.A) / (RfA + 1 / cA + r0A * MU_A);
    const qB = (o.inletPressure.B - o.outletPressure.B) / (RfB + 1 / cB + r0B * MU_B);
    return { cA, cB, qA, qB };
  };
  const alpha = rootInHoldup((a) => {
    const { cA, cB, qA, qB } = flows(a);
    return qA / cA - qB / cB;
  });
  const { qA, qB } = flows(alpha);
  return {
    alpha,
    qA,
    qB,
    leak: 0,
    pMA: o.inletPressure.A - RfA * qA,
    pMB: o.inletPressure.B - RfB * qB,
    pSA: o.outletPressure.A + r0A * MU_A * qA,
    pSB: o.outletPressure.B + r0B * MU_B * qB,
  };
}

/**
 * Split held at a window limit λ (Δ = p_SB − p_SA = λ, and so p_MB − p_MA = λ as both lanes
 * feel the drop G), with a leak ℓ far → near of the leaking liquid's viscosity μ_ℓ (μ_B when
 * ℓ > 0: B enters A's arm; μ_A when ℓ < 0). Arms, homogeneous viscosity (μ(x)·Q = Σ μ_i Q_i):
 *   p_SA − p_oA = r0_A (μ_A Q_A + μ_ℓ ℓ),   p_SB − p_oB = r0_B (μ_B Q_B − μ_ℓ ℓ).
 * Subtracting, with p_SB − p_SA = λ:
 *   μ_ℓ ℓ (r0_A + r0_B) = p_oB − p_oA − λ + r0_B μ_B Q_B − r0_A μ_A Q_A = a·G + b,
 *   a = r0_B μ_B c_B − r0_A μ_A c_A,  b = p_oB − p_oA − λ.
 * Along A's path p_A − p_oA = R_fA c_A G + G + r0_A μ_A c_A G + r0_A (a G + b)/(r0_A + r0_B),
 * linear in G (μ_ℓ has dropped out). B's feed closes the system: its residual
 *   (p_B − p_MB) − R_fB Q_B = p_B − p_A + R_fA c_A G − λ − R_fB c_B G
 * vanishes at the holdup.
 */
function leakingReference(o: SingleContactorOptions, limit: number): Reference {
  const { lanes, RfA, RfB, r0A, r0B } = referenceParts(o);
  const { A: pA, B: pB } = o.inletPressure;
  const { A: poA, B: poB } = o.outletPressure;
  const state = (alpha: number) => {
    const { cA, cB } = lanes(alpha);
    const a = r0B * MU_B * cB - r0A * MU_A * cA;
    const b = poB - poA - limit;
    const G = (pA - poA - (r0A * b) / (r0A + r0B)) / (RfA * cA + 1 + r0A * MU_A * cA + (r0A * a) / (r0A + r0B));
    return { cA, cB, G, numerator: a * G + b };
  };
  const alpha = rootInHoldup((x) => {
    const { cA, cB, G } = state(x);
    return pB - pA + RfA * cA * G - limit - RfB * cB * G;
  });
  const { cA, cB, G, numerator } = state(alpha);
  const muLeak = numerator >= 0 ? MU_B : MU_A;
  const leak = numerator / (muLeak * (r0A + r0B));
  const qA = cA * G;
  const qB = cB * G;
  const pMA = pA - RfA * qA;
  return { alpha, qA, qB, leak, pMA, pMB: pMA + limit, pSA: pMA - G, pSB: pMA - G + limit };
}

function expectMatchesReference(result: ChipSolution, ref: Reference, relative: number): void {
  const k = segmentOf(result, 'k');
  const flowScale = ref.qA + ref.qB;
  near(k.flowA, ref.qA, relative * flowScale, 'contactor flow of A');
  near(k.flowB, ref.qB, relative * flowScale, 'contactor flow of B');
  near(k.holdupA!, ref.alpha, relative, 'holdup of A');
  const m = nodeOf(result, 'm');
  const s = nodeOf(result, 's');
  const pScale = SINGLE_CONTACTOR_DEFAULTS.inletPressure.A;
  near(m.pressureA!, ref.pMA, relative * pScale, 'merge, A side');
  near(m.pressureB!, ref.pMB, relative * pScale, 'merge, B side');
  near(s.pressureA!, ref.pSA, relative * pScale, 'split, A side');
  near(s.pressureB!, ref.pSB, relative * pScale, 'split, B side');
  near(result.splits[0]!.leak, Math.abs(ref.leak), relative * flowScale, 'leak');
}

describe('one contactor between fixed pressures', () => {
  for (const orientation of ['side', 'stacked'] as const) {
    it(`carries G·k_A(α) and G·k_B(α) of the cross-section engine at its solved holdup (${orientation})`, () => {
      const contactor = { ...SINGLE_CONTACTOR_DEFAULTS.contactor, orientation };
      const { chip, result } = solved(singleContactorLayout({ contactor }));
      const k = segmentOf(result, 'k');
      const section = chip.segments.find((s) => s.id === 'k')!.section as RectSection;
      const G = k.pressureDrop / contactor.length;
      const engine = flowFractionAt(section, MU_A, MU_B, k.holdupA!);
      near(k.flowA, G * engine.kA, 1e-10 * (k.flowA + k.flowB));
      near(k.flowB, G * engine.kB, 1e-10 * (k.flowA + k.flowB));
      // The holdup is the one that carries the flow fraction (inversion by the engine).
      near(holdupForFlowFraction(section, MU_A, MU_B, k.flowA / (k.flowA + k.flowB)).holdup, k.holdupA!, 1e-9);
      // Nothing is lost between feeds, contactor and arms.
      near(segmentOf(result, 'fA').flowA, k.flowA, 1e-10 * k.flowA);
      near(segmentOf(result, 'oB').flowB, k.flowB, 1e-10 * k.flowB);
    });

    it(`matches the reference solve of the pinned chip written out in this file (${orientation})`, () => {
      const options = { ...SINGLE_CONTACTOR_DEFAULTS, contactor: { ...SINGLE_CONTACTOR_DEFAULTS.contactor, orientation }, outletPressure: { A: 0, B: 150 } };
      const { result } = solved(singleContactorLayout(options));
      const ref = pinnedReference(options);
      expect(ref.pSB - ref.pSA).toBeLessThan(options.window.high); // the reference's own state is pinned
      expect(result.splits[0]!.state).toBe('pinned');
      expectMatchesReference(result, ref, 1e-9);
    });
  }

  it('gives the same flows when phase B is on the near side of the merge and split', () => {
    const layout = singleContactorLayout();
    const flipped = structuredClone(layout);
    for (const n of flipped.nodes) {
      if (n.type === 'merge') n.inlets = ['fB', 'fA'];
      if (n.type === 'split') n.outlets = ['oB', 'oA'];
    }
    const a = segmentOf(solved(layout).result, 'k');
    const b = segmentOf(solved(flipped).result, 'k');
    near(b.flowA, a.flowA, 1e-10 * a.flowA);
    near(b.flowB, a.flowB, 1e-10 * a.flowB);
    near(b.holdupA!, a.holdupA!, 1e-10);
  });
});

describe('a split forced past its window', () => {
  // Outlet back-pressures that push p_B − p_A at the split beyond the ±200 Pa window: the pinned
  // reference (no leak) would need Δ ≈ ±500 Pa.
  const cases = [
    { name: 'B into the A outlet', outletPressure: { A: 0, B: 1000 }, limit: 'high' as const, state: 'leaking-B-to-A' },
    { name: 'A into the B outlet', outletPressure: { A: 1000, B: 0 }, limit: 'low' as const, state: 'leaking-A-to-B' },
  ];
  for (const c of cases) {
    const options = { ...SINGLE_CONTACTOR_DEFAULTS, outletPressure: c.outletPressure };
    const limitValue = options.window[c.limit];

    it(`leaks ${c.name} with Δ held at the window limit`, () => {
      const pinned = pinnedReference(options);
      const outside = pinned.pSB - pinned.pSA;
      expect(c.limit === 'high' ? outside > limitValue : outside < limitValue).toBe(true);
      const { result } = solved(singleContactorLayout(options));
      const split = result.splits[0]!;
      expect(split.state).toBe(c.state);
      near(split.pressureDifference, limitValue, 1e-9 * Math.abs(limitValue));
      expect(split.leak).toBeGreaterThan(0);
    });

    it(`leaks ${c.name} by the amount mass balance with the outlet resistances gives, and purities follow`, () => {
      const { result } = solved(singleContactorLayout(options));
      const k = segmentOf(result, 'k');
      const s = nodeOf(result, 's');
      const split = result.splits[0]!;
      // Each arm's resistance per unit viscosity, r0 = L/k(μ = 1).
      const { r0A, r0B } = referenceParts(options);
      // Hand balance at the split, leak ℓ far (B side) → near (A side), arms of homogeneous
      // viscosity (μ(x)·Q = μ_A Q_A + μ_B Q_B):
      //   B into A (ℓ > 0): arm A carries Q_A + ℓ, (p_SA − p_oA)/r0_A = μ_A Q_A + μ_B ℓ
      //                     ⇒ ℓ = ((p_SA − p_oA)/r0_A − μ_A Q_A)/μ_B;
      //                     arm B carries Q_B − ℓ of pure B ⇒ ℓ = Q_B − (p_SB − p_oB)/(r0_B μ_B).
      //   A into B (ℓ < 0): arm A carries Q_A + ℓ of pure A ⇒ ℓ = (p_SA − p_oA)/(r0_A μ_A) − Q_A;
      //                     arm B: (p_SB − p_oB)/r0_B = μ_B Q_B − μ_A ℓ ⇒ ℓ = (μ_B Q_B − (p_SB − p_oB)/r0_B)/μ_A.
      const dA = s.pressureA! - options.outletPressure.A;
      const dB = s.pressureB! - options.outletPressure.B;
      const fromA = c.limit === 'high' ? (dA / r0A - MU_A * k.flowA) / MU_B : dA / (r0A * MU_A) - k.flowA;
      const fromB = c.limit === 'high' ? k.flowB - dB / (r0B * MU_B) : (MU_B * k.flowB - dB / r0B) / MU_A;
      const scale = k.flowA + k.flowB;
      near(Math.abs(fromA), split.leak, 1e-9 * scale, 'leak from arm A');
      near(Math.abs(fromB), split.leak, 1e-9 * scale, 'leak from arm B');
      // Purities: the leaking liquid dilutes the other outlet; the leaking side's outlet stays pure.
      if (c.limit === 'high') {
        near(split.purityNear, k.flowA / (k.flowA + split.leak), 1e-9);
        near(split.purityFar, 1, 1e-12);
        near(segmentOf(result, 'oA').flowB, split.leak, 1e-9 * scale);
      } else {
        near(split.purityNear, 1, 1e-12);
        near(split.purityFar, k.flowB / (k.flowB + split.leak), 1e-9);
        near(segmentOf(result, 'oB').flowA, split.leak, 1e-9 * scale);
      }
    });

    it(`leaks ${c.name} as the reference solve written out in this file predicts`, () => {
      const { result } = solved(singleContactorLayout(options));
      const ref = leakingReference(options, limitValue);
      expect(Math.sign(ref.leak)).toBe(c.limit === 'high' ? 1 : -1);
      expectMatchesReference(result, ref, 1e-8);
    });
  }
});

describe('split states across a ladder', () => {
  it('holds every pinned split inside its window and every leaking one at the limit it crossed', () => {
    const { result } = solved(MIXED_LADDER);
    const states = new Set(result.splits.map((sp) => sp.state));
    expect(states.has('pinned') && states.has('leaking-A-to-B')).toBe(true);
    for (const sp of result.splits) {
      const [low, high] = sp.window;
      const slack = 1e-9 * (Math.abs(low) + Math.abs(high));
      if (sp.state === 'pinned') {
        expect(sp.pressureDifference, sp.id).toBeGreaterThanOrEqual(low - slack);
        expect(sp.pressureDifference, sp.id).toBeLessThanOrEqual(high + slack);
        expect(sp.leak, sp.id).toBeLessThanOrEqual(1e-12 * result.summary.throughputA);
      } else {
        near(sp.pressureDifference, sp.state === 'leaking-A-to-B' ? low : high, slack, sp.id);
        expect(sp.leak, sp.id).toBeGreaterThan(0);
      }
    }
  });
});

describe('symmetry', () => {
  const wide = { splitWindow: { low: -1e4, high: 1e4 } };

  it('gives identical contactors of a bifurcating tree identical flows and holdups', () => {
    const layout = { ...treeLayout({ levels: 3, drive: { A: { pressure: 20e3 }, B: { pressure: 18e3 } }, outletPressure: { A: 0, B: 0 } }), ...wide };
    const { result } = solved(layout);
    expect(result.contactors).toHaveLength(8);
    const first = result.contactors[0]!;
    for (const row of result.contactors) {
      near(row.flowA, first.flowA, 1e-9 * first.flowA, `flow of A in ${row.id}`);
      near(row.flowB, first.flowB, 1e-9 * first.flowB, `flow of B in ${row.id}`);
      near(row.holdupA, first.holdupA, 1e-9, `holdup in ${row.id}`);
    }
  });

  it('gives mirror-image contactors of a ladder fed and drained in the middle the same flows', () => {
    const N = 7;
    const layout = { ...ladderLayout({ contactors: N, inletAt: 'middle', outletAt: 'middle', drive: { A: { pressure: 20e3 }, B: { pressure: 18e3 } } }), ...wide };
    const { result } = solved(layout);
    const row = (k: number) => result.contactors.find((r) => r.id === `k${k}`)!;
    for (let k = 1; k <= 3; k++) {
      const [a, b] = [row(k), row(N + 1 - k)];
      near(a.flowA, b.flowA, 1e-9 * a.flowA, `k${k}`);
      near(a.flowB, b.flowB, 1e-9 * a.flowB, `k${k}`);
      near(a.holdupA, b.holdupA, 1e-9, `k${k}`);
    }
    // …while the contactors nearer the inlets do get more (the symmetry is not trivial).
    expect(row(4).flowA).toBeGreaterThan(row(1).flowA * (1 + 1e-6));
  });
});

/** Same chip, drawn in mirror image and written in reverse order: same results for every id. */
function expectSameResults(a: ChipSolution, b: ChipSolution): void {
  const flowScale = Math.max(...a.segments.map((s) => Math.abs(s.flowA) + Math.abs(s.flowB)));
  const pScale = Math.max(...a.nodes.map((n) => Math.abs(n.pressure)));
  for (const n of a.nodes) {
    const m = nodeOf(b, n.id);
    near(m.pressure, n.pressure, 1e-9 * pScale, `pressure at ${n.id}`);
    if (n.pressureB !== undefined) near(m.pressureB!, n.pressureB, 1e-9 * pScale, `B pressure at ${n.id}`);
  }
  for (const s of a.segments) {
    const t = segmentOf(b, s.id);
    near(t.flowA, s.flowA, 1e-9 * flowScale, `flow of A in ${s.id}`);
    near(t.flowB, s.flowB, 1e-9 * flowScale, `flow of B in ${s.id}`);
    if (s.holdupA !== null) near(t.holdupA!, s.holdupA, 1e-9, `holdup in ${s.id}`);
  }
  for (const sp of a.splits) {
    const sq = b.splits.find((x) => x.id === sp.id)!;
    expect(sq.state, sp.id).toBe(sp.state);
    near(sq.pressureDifference, sp.pressureDifference, 1e-9 * pScale, `Δ at ${sp.id}`);
    near(sq.leak, sp.leak, 1e-9 * flowScale, `leak at ${sp.id}`);
  }
  for (const row of a.contactors) {
    const other = b.contactors.find((r) => r.id === row.id)!;
    near(other.purityA ?? 1, row.purityA ?? 1, 1e-9, `purity of A after ${row.id}`);
    near(other.purityB ?? 1, row.purityB ?? 1, 1e-9, `purity of B after ${row.id}`);
  }
}

describe('mirror images', () => {
  const chips: Array<[string, LayoutFile]> = [
    ['a pinned single contactor', singleContactorLayout({ outletPressure: { A: 0, B: 150 } })],
    ['a leaking single contactor', singleContactorLayout({ outletPressure: { A: 0, B: 1000 } })],
    ['a 6-contactor ladder with pinned splits', PINNED_LADDER],
    ['an 8-contactor ladder with leaking and pinned splits', MIXED_LADDER],
  ];
  for (const [name, layout] of chips) {
    it(`give mirror-image results: ${name}`, () => {
      expectSameResults(solved(layout).result, solved(mirroredLayout(layout), 'mirror').result);
    });
  }

  for (const [name, layout] of chips) {
    it(`exchange A and B in every result when the phase names are exchanged: ${name}`, () => {
      const a = solved(layout).result;
      const b = solved(phaseSwappedLayout(layout), 'swapped').result;
      const flowScale = Math.max(...a.segments.map((s) => Math.abs(s.flowA) + Math.abs(s.flowB)));
      const pScale = Math.max(...a.nodes.map((n) => Math.abs(n.pressure)));
      for (const s of a.segments) {
        const t = segmentOf(b, s.id);
        near(t.flowB, s.flowA, 1e-9 * flowScale, `${s.id}`);
        near(t.flowA, s.flowB, 1e-9 * flowScale, `${s.id}`);
        if (s.holdupA !== null) near(t.holdupA!, 1 - s.holdupA, 1e-9, `${s.id}`);
      }
      for (const n of a.nodes) {
        const m = nodeOf(b, n.id);
        if (n.pressureB !== undefined) {
          near(m.pressureA!, n.pressureB, 1e-9 * pScale, n.id);
          near(m.pressureB!, n.pressureA!, 1e-9 * pScale, n.id);
        } else near(m.pressure, n.pressure, 1e-9 * pScale, n.id);
      }
      const swappedState = { pinned: 'pinned', 'leaking-A-to-B': 'leaking-B-to-A', 'leaking-B-to-A': 'leaking-A-to-B' } as const;
      for (const sp of a.splits) {
        const sq = b.splits.find((x) => x.id === sp.id)!;
        expect(sq.state).toBe(swappedState[sp.state]);
        near(sq.pressureDifference, -sp.pressureDifference, 1e-9 * pScale, sp.id);
        near(sq.leak, sp.leak, 1e-9 * flowScale, sp.id);
      }
      for (const row of a.contactors) {
        const other = b.contactors.find((r) => r.id === row.id)!;
        near(other.purityA ?? 1, row.purityB ?? 1, 1e-9);
        near(other.purityB ?? 1, row.purityA ?? 1, 1e-9);
      }
    });
  }
});

/**
 * Volume of each phase is conserved at every node: what the segments bring in equals what they
 * take out (inside merges and splits the lanes and leaks are internal), and at the boundary what
 * the inlets deliver of a phase leaves through the outlets.
 */
function expectConservation(chip: Chip, result: ChipSolution, tolerance = 1e-9, starved = false): void {
  const balance = new Map(chip.nodes.map((n) => [n.id, { A: 0, B: 0 }]));
  for (const seg of chip.segments) {
    const r = segmentOf(result, seg.id);
    balance.get(seg.from)!.A -= r.flowA;
    balance.get(seg.from)!.B -= r.flowB;
    balance.get(seg.to)!.A += r.flowA;
    balance.get(seg.to)!.B += r.flowB;
  }
  const total = result.summary.throughputA + result.summary.throughputB;
  // A starved phase delivers nothing; its balance is then judged against the total throughput.
  const scale = starved ? { A: total, B: total } : { A: result.summary.throughputA, B: result.summary.throughputB };
  expect(scale.A).toBeGreaterThan(0);
  expect(scale.B).toBeGreaterThan(0);
  for (const node of chip.nodes) {
    if (node.kind === 'inlet' || node.kind === 'outlet') continue;
    const b = balance.get(node.id)!;
    near(b.A, 0, tolerance * scale.A, `phase A at ${node.id}`);
    near(b.B, 0, tolerance * scale.B, `phase B at ${node.id}`);
  }
  const delivered = { A: 0, B: 0 };
  // Liquid pushed back into a starved inlet is the phase that fills the chip (A in these tests).
  for (const inlet of result.summary.inlets) delivered[starved && inlet.flow < 0 ? 'A' : inlet.phase] += inlet.flow;
  const drained = { A: 0, B: 0 };
  for (const outlet of result.summary.outlets) {
    drained.A += outlet.flowA;
    drained.B += outlet.flowB;
  }
  near(drained.A, delivered.A, tolerance * scale.A, 'phase A through the chip');
  near(drained.B, delivered.B, tolerance * scale.B, 'phase B through the chip');
}

describe('conservation of each phase', () => {
  const chips: Array<[string, LayoutFile]> = [
    ['an 8-contactor ladder with pinned splits', wellDesignedLadder(8, { manifold: { width: 1e-3, depth: 100e-6 }, drive: { A: { pressure: 20e3 }, B: { pressure: 19.8e3 } } })],
    ['a single contactor leaking B into A', singleContactorLayout({ outletPressure: { A: 0, B: 1000 } })],
    ['a single contactor leaking A into B', singleContactorLayout({ outletPressure: { A: 1000, B: 0 } })],
    ['a 4-level tree as generated', treeLayout({ levels: 4 })],
    ['an 8-contactor ladder as generated', ladderLayout({ contactors: 8 })],
    ['a ladder whose splits all leak', { ...wellDesignedLadder(8, { manifold: { width: 400e-6, depth: 50e-6 }, outletAt: 'same', outletPressure: { A: 0, B: 600 } }), splitWindow: { low: -150, high: 150 } }],
    ['an 8-contactor ladder with leaking and pinned splits', MIXED_LADDER],
  ];
  for (const [name, layout] of chips) {
    it(`holds at every node of ${name}`, () => {
      const { chip, result } = solved(layout);
      expectConservation(chip, result);
    });
  }
});

describe('scaling of the boundary pressures', () => {
  /** Every set pressure (inlets and outlets) multiplied by s. */
  function scaled(layout: LayoutFile, s: number): LayoutFile {
    const out = structuredClone(layout);
    for (const n of out.nodes) if ((n.type === 'inlet' || n.type === 'outlet') && typeof n.pressure === 'number') n.pressure *= s;
    return out;
  }
  // A wide explicit window keeps every split pinned at every scale: then every equation is
  // homogeneous of degree one in (pressures, flows) at fixed holdups.
  const base = { ...wellDesignedLadder(6, { manifold: { width: 1e-3, depth: 100e-6 }, drive: { A: { pressure: 20e3 }, B: { pressure: 22e3 } }, outletPressure: { A: 1000, B: 1500 } }), splitWindow: { low: -1e6, high: 1e6 } };

  for (const s of [0.1, 3]) {
    it(`scales every flow and pressure by s = ${s} and keeps every holdup while the splits stay pinned`, () => {
      const a = solved(base).result;
      const b = solved(scaled(base, s), `scaled by ${s}`).result;
      for (const r of [a, b]) for (const sp of r.splits) expect(sp.state).toBe('pinned');
      const flowScale = Math.max(...a.segments.map((x) => Math.abs(x.flowA) + Math.abs(x.flowB)));
      const pScale = Math.max(...a.nodes.map((n) => Math.abs(n.pressure)));
      for (const seg of a.segments) {
        const t = segmentOf(b, seg.id);
        near(t.flowA, s * seg.flowA, 1e-9 * s * flowScale, seg.id);
        near(t.flowB, s * seg.flowB, 1e-9 * s * flowScale, seg.id);
        if (seg.holdupA !== null) near(t.holdupA!, seg.holdupA, 1e-9, seg.id);
      }
      for (const n of a.nodes) near(nodeOf(b, n.id).pressure, s * n.pressure, 1e-9 * s * pScale, n.id);
    });
  }
});

/**
 * Chips with a solution the solve must reach. The first is the pinned series chain of
 * `pinnedReference` with feeds and drains ten million times more conductive than the contactor
 * lanes; the second a short ladder with such manifolds; the third a chip whose B feed cannot keep
 * up (no holdup in (0, 1) balances it at the low window limit, see `leakingReference`), so phase
 * A must fill the contactor while its split leaks.
 */
describe('robustness of the solve', () => {
  it('settles a single contactor fed and drained through deep, wide channels (3 mm × 1 mm), matching the reference', () => {
    const options = {
      ...SINGLE_CONTACTOR_DEFAULTS,
      inletPressure: { A: 20e3, B: 20e3 },
      feed: { width: 3e-3, depth: 1e-3, length: 1e-3 },
      drain: { width: 3e-3, depth: 1e-3, length: 1e-3 },
      contactor: { width: 100e-6, depth: 50e-6, length: 40e-3, orientation: 'side' as const },
    };
    const { result } = solved(singleContactorLayout(options), 'deep feeds');
    expectMatchesReference(result, pinnedReference(options), 1e-9);
  });

  it('settles a well-designed ladder of only two contactors (manifolds 3 mm × 1 mm)', () => {
    const { chip, result } = solved(wellDesignedLadder(2), 'two-contactor ladder');
    // The manifold rows cannot be resolved below their rounding floor ε·g·(|p_i| + |p_j|): with a
    // 3 mm × 1 mm manifold at ~20 kPa that is ~1e-8 of this chip's throughput.
    expectConservation(chip, result, 1e-7);
  });

  it('settles a single contactor whose B feed starves while its split leaks A into the B outlet', () => {
    const options = {
      ...SINGLE_CONTACTOR_DEFAULTS,
      inletPressure: { A: 20e3, B: 17e3 },
      window: { low: -500, high: 500 },
      contactor: { width: 100e-6, depth: 50e-6, length: 40e-3, orientation: 'side' as const },
    };
    expect(() => leakingReference(options, options.window.low)).toThrow(/no holdup/);
    const { chip, result } = solved(singleContactorLayout(options), 'starving feed');
    expectConservation(chip, result, 1e-9, true);
    expect(result.summary.throughputB).toBe(0);
    expect(result.warnings.join('\n')).toMatch(/phase B does not enter/);
    const split = result.splits[0]!;
    expect(split.pressureDifference).toBeGreaterThanOrEqual(-500 * (1 + 1e-9));
    expect(split.pressureDifference).toBeLessThanOrEqual(500 * (1 + 1e-9));
  });

  // Regression: an iterate of NaN passed the settling test and came back as converged.
  it('falls back to a cold start when a warm start cannot settle, says so, and gives the same answer', () => {
    const chip = layoutToChip(wellDesignedLadder(4), 'four');
    const cold = solveChip(chip);
    const warm = warmStartFrom(cold);
    const again = solveChip(chip, {}, { ...warm, pressure: warm.pressure.map(() => NaN) });
    expect(cold.raw.restartedCold).toBe(false);
    expect(again.raw.restartedCold).toBe(true);
    expect(again.result.converged).toBe(true);
    // The same steady state to the solver's settling tolerance (1e-12 of the throughput), with a
    // margin of 1000 for the conditioning of the network.
    const scale = cold.result.summary.throughputA + cold.result.summary.throughputB;
    for (const seg of cold.result.segments) near(segmentOf(again.result, seg.id).flowA, seg.flowA, 1e-9 * scale, seg.id);
  });

  /** Every contactor open or starved with one phase filling it, every split pinned or at a limit. */
  function expectStatedStates(result: ReturnType<typeof solveChip>['result'], raw: ReturnType<typeof solveChip>['raw']): void {
    for (const c of result.contactors.filter((_, k) => raw.feedStates[k] !== 'open')) {
      expect(c.holdupA === 0 || c.holdupA === 1, `${c.id} holdup ${c.holdupA}`).toBe(true);
      expect(starvedPhase(c), c.id).not.toBeNull();
    }
    for (const s of result.splits) {
      // A split is pinned inside its window or held at a limit while it leaks (to 1e-9 of the
      // window for the rounding of the pressures).
      const width = s.window[1] - s.window[0];
      expect(s.pressureDifference).toBeGreaterThanOrEqual(s.window[0] - 1e-9 * width);
      expect(s.pressureDifference).toBeLessThanOrEqual(s.window[1] + 1e-9 * width);
    }
  }

  // Regression: the previous solve answered "Newton iteration stalled" on this chip after 100
  // steps. Narrow manifolds carry much of the drop, so far contactors starve and splits leak.
  // One answer per chip: the bundled dye chip at six operating points (inlet settings as mean and
  // difference, Pa) in every state the model has: all pinned, leaking either way, one contactor
  // starved, every contactor starved with every split leaking. Each point solved cold and warm
  // from each of the other five gives the same lane flows (to 1e-9 of the largest: the solve's
  // 1e-12 mass tolerance leaves ~1e-11) and the same split and feed states.
  it('gives the dye chip the same solution cold and warm from any of five other operating points', () => {
    const dye = loadLayout('layouts/dye-octanol-8.yaml');
    const [a, b] = [parseSetting('inA.pressure', dye), parseSetting('inB.pressure', dye)];
    const at = (m: number, d: number) => withSettings(dye, [[a, m + d / 2], [b, m - d / 2]]);
    const points = [[4546, 1114], [8000, 1100], [4546, 1300], [4546, 950], [1967.7, 1203.3], [3239.5, 1181]] as const;
    const cold = points.map(([m, d]) => solveChip(at(m, d)));
    const starved = cold.map((s) => s.raw.feedStates.filter((f) => f !== 'open').length);
    const leaking = cold.map((s) => s.raw.splitStates.filter((f) => f !== 'pinned').length);
    expect(starved).toEqual([0, 0, 0, 0, 8, 1]);
    expect(leaking).toEqual([0, 0, 8, 8, 8, 0]);
    points.forEach(([m, d], t) => {
      const ref = cold[t]!.raw;
      const scale = Math.max(...Array.from(ref.laneFlow, Math.abs));
      cold.forEach((from, f) => {
        if (f === t) return;
        const warm = solveChip(at(m, d), {}, warmStartFrom(from)).raw;
        expect(warm.converged, `point ${t} from ${f}`).toBe(true);
        expect([warm.splitStates, warm.feedStates], `point ${t} from ${f}`).toEqual([ref.splitStates, ref.feedStates]);
        const worst = Math.max(...Array.from(ref.laneFlow, (q, k) => Math.abs(warm.laneFlow[k]! - q) / scale));
        expect(worst, `point ${t} from ${f}`).toBeLessThan(1e-9);
      });
    });
  });

  it('settles a badly distributed 128-contactor ladder, every contactor in a stated state', () => {
    const chip = badlyDistributedLadder(128, 'pressure', 'opposite');
    const { result, raw } = solveChip(chip);
    expect(result.converged, `${result.message ?? ''} ${result.unsettled.join(', ')}`).toBe(true);
    expectConservation(chip, result, 1e-9, true);
    // The far end of this chip starves (measured: 5 contactors) and most splits leak.
    expect(raw.feedStates.filter((f) => f !== 'open').length).toBeGreaterThan(0);
    expectStatedStates(result, raw);
  });

  // Regression: at f9e7a19 (and still after the first solver-cost changes of the next stop) this
  // 1024-contactor Z-type ladder ended "did not settle" after 1167 steps from 6 starts, its best
  // residual 1.8e-12 of the throughput; it settles since the composition stage starts once the
  // flows settle to 1e-8 and near-solution steps reuse the last factors (574 steps, measured).
  it('settles the badly distributed 1024-contactor Z-type ladder of the benchmark family', { timeout: 180_000 }, () => {
    const chip = badlyDistributedLadder(1024, 'pressure', 'opposite');
    const { result, raw } = solveChip(chip);
    expect(result.converged, `${result.message ?? ''} ${result.unsettled.join(', ')}`).toBe(true);
    expectConservation(chip, result, 1e-9, true);
    expect(raw.feedStates.filter((f) => f !== 'open').length).toBeGreaterThan(0);
    expect(result.splits.some((s) => s.state !== 'pinned')).toBe(true);
    expectStatedStates(result, raw);
  });

  // Regression: letting the last stage of the composition homotopy fall back in every attempt
  // sent the generator's default 16-contactor ladder through all attempts (2000 steps) without
  // settling; it settles in the first.
  it('settles the default 16-contactor ladder of the generator in its first attempt', () => {
    const chip = layoutToChip(ladderLayout({ contactors: 16 }), 'default 16');
    const { result } = solveChip(chip);
    expect(result.converged, `${result.message ?? ''}`).toBe(true);
    // The first attempt may take up to maxIterations (400) steps.
    expect(result.iterations).toBeLessThanOrEqual(400);
  });

  // Regression: with both collectors leaving at the inlet end (U-type), the plain cold start
  // stalls on this chip with feeds wrongly starved (at 128 contactors too: 313 steps from three
  // starts), and the first Picard start stalled in its Newton polish on contactors of the dead
  // zone whose lanes carry ~1e-11 of the throughput. It settles with every feed open.
  it('settles a 256-contactor ladder with U-type collectors from the Picard start', () => {
    const chip = badlyDistributedLadder(256, 'pressure', 'same');
    const { result, raw } = solveChip(chip);
    expect(result.converged, `${result.message ?? ''} ${result.unsettled.join(', ')}`).toBe(true);
    expectConservation(chip, result, 1e-9, true);
    expect(raw.feedStates.every((f) => f === 'open')).toBe(true);
    expect(result.splits.some((s) => s.state !== 'pinned')).toBe(true);
    expectStatedStates(result, raw);
  });
});

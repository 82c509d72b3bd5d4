/**
 * Tests of the curved interface in the network (src/solver/curvedInterface.ts,
 * physics/curvedLanes.ts, physics/curvedTable.ts, the `interface` layout key): on the bundled
 * aqueous two-phase chip (γ = 0.1 mN/m, 20 µm deep contactors), the solved contactors against
 * the direct cross-section solve of curvedSection.ts at their own holdup and curvature, the
 * flat round against the flat solve, the small-curvature limit, and the layout's errors.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { parseLayout } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';
import { curvedTwoLayerFlow } from '../../src/physics/curvedSection.js';
import { CurvedTable, CURVED_TABLE } from '../../src/physics/curvedTable.js';
import { assembleNetwork } from '../../src/network/assemble.js';
import { solveCurvedInterface } from '../../src/solver/curvedInterface.js';
import { NetworkEquations } from '../../src/solver/assembly.js';
import { UnknownMap } from '../../src/solver/unknowns.js';
import { unknownsOf } from '../../src/solver/newton.js';
import { observableLayout, observe, planTolerance, runJob } from '../../src/analyses/toleranceModel.js';
import { warmStartFrom } from '../../src/analyses/chip.js';
import type { RectSection } from '../../src/physics/section.js';
import type { Chip } from '../../src/network/model.js';

const ENZYME = readFileSync(new URL('../../layouts/enzyme-atps-16.yaml', import.meta.url), 'utf8');
const curvedText = (tension = '0.0001') => ENZYME.replace(/^interfacialTension: .*$/m, `interfacialTension: ${tension}\ninterface: curved`);
const load = (text: string): Chip => parseLayout(text, 'enzyme-curved.yaml');

describe('interface: curved on the aqueous two-phase chip', () => {
  const flat = solveChip(load(ENZYME));
  const curved = solveChip(load(curvedText()));

  it('starts from the flat solve: the flat holdups it reports are those of the chip solved with a flat interface, to the bit', () => {
    expect(curved.result.converged).toBe(true);
    curved.result.contactors.forEach((row, c) => expect(row.holdupFlatA).toBe(flat.result.contactors[c]!.holdupA));
    expect(flat.result.contactors[0]!.holdupFlatA).toBeUndefined();
  });

  it('settles, and each contactor carries the flow fraction of the direct curved cross-section solve at its holdup and curvature', () => {
    const summary = curved.result.summary.curvedInterface!;
    expect(summary.settled).toBe(true);
    expect(summary.held).toEqual([]);
    const mu = curved.chip.phases;
    for (const c of [0, 7, 15]) {
      const row = curved.result.contactors[c]!;
      const el = curved.network.contactors[c]!;
      // The near lane carries A on this chip, so the arc bulges into A for κ > 0 as in curvedSection.ts.
      expect(curved.raw.laneComposition[2 * c]).toBeGreaterThan(0.5);
      const direct = curvedTwoLayerFlow(el.section as RectSection, row.holdupA, row.interfaceCurvature!, mu.A.viscosity, mu.B.viscosity);
      // Both lanes feel one gradient, so Q_A/Q_B = k_A/k_B. Tolerance 2e-5: the curved table's
      // error (k within about 5e-6 of the total flow, measured) on both lanes.
      expect(Math.abs(row.flowA / (row.flowA + row.flowB) - direct.kA / (direct.kA + direct.kB))).toBeLessThan(2e-5);
    }
  });

  it('settles by the coupled Newton solve, in a few steps, at the answer of the outer fixed point on the curvatures', () => {
    const summary = curved.result.summary.curvedInterface!;
    expect(summary.method).toBe('newton');
    // Newton with the consistent ∂k/∂κ·∂κ/∂p from the flat solution: a handful of steps (measured 2).
    expect(curved.raw.iterations).toBeLessThanOrEqual(6);
    const chip = load(curvedText());
    const network = assembleNetwork(chip);
    const fixedPoint = solveCurvedInterface(network, chip.interfacialTension!, {}, undefined, undefined, false);
    expect(fixedPoint.curved.method).toBe('fixed-point');
    expect(fixedPoint.curved.settled).toBe(true);
    // Both settle to the network's tolerance (1e-12 of the throughput); holdups agree to 1e-10.
    fixedPoint.raw.holdup.forEach((alpha, c) => expect(Math.abs(alpha - curved.raw.holdup[c]!)).toBeLessThan(1e-10));
  });

  it('names the contactor whose holdup moved most against the flat interface', () => {
    const largest = curved.result.summary.curvedInterface!.largestShift!;
    const shifts = curved.result.contactors.map((r) => Math.abs(r.holdupA - r.holdupFlatA!));
    expect(Math.abs(largest.shift)).toBe(shifts.reduce((a, b) => Math.max(a, b), 0));
    expect(curved.result.contactors.find((r) => r.id === largest.contactor)!.holdupA - curved.result.contactors.find((r) => r.id === largest.contactor)!.holdupFlatA!).toBe(largest.shift);
  });
});

describe('tolerance realisations of a curved-interface chip', () => {
  it('are solved with the arc: a realisation at the nominal values observes the curved solution, not the flat one', () => {
    // Regression: realisations restamp the nominal network and called the flat solve directly.
    const chip = load(curvedText());
    const nominal = solveChip(chip);
    const plan = planTolerance(chip, { viscosityA: { distribution: 'normal', size: 0.01, relative: true } });
    const layout = observableLayout(nominal.result);
    const context = { chip, plan, seed: 1, warm: warmStartFrom(nominal), solver: {}, layout };
    // A derivative job with step 0 realises the nominal chip itself.
    const outcome = runJob(context, { kind: 'derivative', slot: 0, step: 0 });
    const curvedValues = observe(nominal.result, layout).values;
    const flatValues = observe(solveChip(load(ENZYME)).result, layout).values;
    const gap = (a: Float64Array, b: Float64Array) => a.reduce((m, v, i) => Math.max(m, Math.abs(v - b[i]!)), 0);
    // The arc moves the holdups by about 3e-3 on this chip; the realisation settles to 1e-12.
    expect(gap(flatValues, curvedValues)).toBeGreaterThan(1e-4);
    expect(gap(outcome.values!, curvedValues)).toBeLessThan(1e-9);
  });
});

describe('the interface layout key', () => {
  it('rejects interface: curved without an interfacial tension, naming the field', () => {
    const text = curvedText().replace(/^interfacialTension: .*\n/m, '').replace(/^interface: curved$/m, 'interface: curved\nsplitWindow: { low: -5 Pa, high: 5 Pa }');
    expect(() => load(text)).toThrow(/interface: interfacialTension: a curved interface needs interfacialTension/);
  });

  it('rejects a stacked contactor under interface: curved, naming the segment', () => {
    const chip = load(curvedText());
    const k = chip.segments.find((s) => s.id === 'k1')!;
    k.section = { ...(k.section as RectSection), orientation: 'stacked' };
    expect(() => solveChip(chip)).toThrow(/side-by-side layers only/);
  });
});

describe('CurvedTable', () => {
  it('agrees with the direct curved solve within 1e-5 of the total flow, with slopes consistent with its own values', () => {
    // The direct solve at degree 24 is within 1e-7 of FreeFem++ (freefemReference.test.ts); the
    // table solves at degree 12 and interpolates (measured ≤ 5e-6 of the total).
    const section: RectSection = { shape: 'rect', width: 100e-6, depth: 50e-6, orientation: 'side' };
    const table = new CurvedTable(section, 5e-3, 1e-3);
    for (const [alpha, c] of [[0.5, 0.3], [0.3, 0.25], [0.7, 0.2]] as const) {
      const kappa = (2 * c) / 50e-6;
      const got = table.flowsAt(alpha, kappa);
      const want = curvedTwoLayerFlow(section, alpha, kappa, 5e-3, 1e-3);
      const total = want.kA + want.kB;
      expect(Math.abs(got.kA - want.kA) / total).toBeLessThan(1e-5);
      expect(Math.abs(got.kB - want.kB) / total).toBeLessThan(1e-5);
      // Slopes against central differences of the table itself (steps 1e-5 in α, 1e-5 of 2/D in
      // κ; truncation ~1e-10, rounding of the interpolant ~1e-11 of k over the step).
      const h = 1e-5;
      const dAlpha = (table.flowsAt(alpha + h, kappa).kA - table.flowsAt(alpha - h, kappa).kA) / (2 * h);
      expect(Math.abs(got.dkA - dAlpha) / Math.abs(dAlpha)).toBeLessThan(1e-5);
      const dk = (2 * h) / 50e-6;
      const dKappa = (table.flowsAt(alpha, kappa + dk).kB - table.flowsAt(alpha, kappa - dk).kB) / (2 * dk);
      expect(Math.abs(got.dkBDCurvature - dKappa) / Math.abs(dKappa)).toBeLessThan(1e-5);
    }
  });
});

describe('NetworkEquations with a curved interface coupled into Newton', () => {
  it('has a Jacobian equal to central differences of its residual in the port pressures, the arc’s ∂k/∂κ·∂κ/∂p included', () => {
    // Consistency of the Newton Jacobian with its residual (what quadratic convergence needs).
    // Near the curved solution, with every contactor's κ from the iterate: the columns of the
    // four end ports of one contactor (which κ = Δ/γ reads; without the coupling terms their
    // lane rows miss ∂k/∂κ·∂κ/∂p and fail by 1e6× the tolerance, tried) against
    // (F(v + h e_j) − F(v − h e_j))/2h, h = 1e-4 Pa (the residual is smooth in the
    // pressures away from the splits' switching points; truncation ~h²·F''' ≪ the tolerance
    // of 1e-6 of the column's largest entry, which leaves room for the table's rounding).
    const chip = load(curvedText());
    const net = assembleNetwork(chip);
    const solved = solveCurvedInterface(net, chip.interfacialTension!);
    net.curvedTension = chip.interfacialTension!;
    const map = new UnknownMap(net);
    const eq = new NetworkEquations(net, map);
    const { x, withComposition } = unknownsOf(eq, solved.raw);
    // Move every pressure a little off the solution so that no lane sits at its converged drop.
    for (const [i, u] of map.unknownOf.entries()) if (u >= 0) x[u] = x[u]! + 0.3 * Math.sin(i);
    const options = { jacobian: true, freezeHoldup: false, withComposition, anchor: x, compositionPull: 0 } as const;
    eq.evaluate(x, options);
    const J = eq.builder.toCsc();
    const column = (j: number) => {
      const dense = new Float64Array(map.size);
      for (let p = J.colPtr[j]!; p < J.colPtr[j + 1]!; p++) dense[J.rowIdx[p]!] += J.values[p]!;
      return dense;
    };
    const h = 1e-4;
    const c0 = net.contactors[3]!;
    const pressureColumns = [c0.nearIn, c0.farIn, c0.nearOut, c0.farOut].map((port) => map.unknownOf[port]!).filter((u) => u >= 0);
    expect(pressureColumns.length).toBeGreaterThan(0);
    for (const j of pressureColumns) {
      const want = column(j);
      const up = Float64Array.from(x);
      up[j] = up[j]! + h;
      eq.evaluate(up, { ...options, jacobian: false });
      const fUp = Float64Array.from(eq.F);
      const down = Float64Array.from(x);
      down[j] = down[j]! - h;
      eq.evaluate(down, { ...options, jacobian: false });
      const scale = want.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
      for (let i = 0; i < map.size; i++) {
        const fd = (fUp[i]! - eq.F[i]!) / (2 * h);
        expect(Math.abs(fd - want[i]!)).toBeLessThan(1e-6 * scale);
      }
    }
  });
});

describe('CurvedTable over its whole stated range (|κ|·depth/2 ≤ 0.9)', () => {
  // Regression: with the old taper (min(D, W/4) wide) a table stretch beyond |κ|·D/2 ≈ 0.5 threw
  // "the arc … leaves the section" in a rectangle less than four times as wide as deep. The
  // values are checked finite and positive at θ nodes and between them in every stretch.
  for (const [width, depth] of [[100e-6, 50e-6], [60e-6, 50e-6]] as const) {
    it(`builds every stretch for a ${width * 1e6} × ${depth * 1e6} µm rectangle, side by side`, () => {
      const table = new CurvedTable({ shape: 'rect', width, depth, orientation: 'side' }, 5e-3, 1e-3);
      for (let q = -0.9; q <= 0.9 + 1e-12; q += 0.05) {
        for (const alpha of [0.02, 0.2, 0.5, 0.8, 0.98]) {
          const r = table.flowsAt(alpha, (2 * q) / depth);
          for (const v of [r.kA, r.kB]) expect(v).toBeGreaterThan(0);
          for (const v of [r.dkA, r.dkB, r.dkADCurvature, r.dkBDCurvature]) expect(Number.isFinite(v)).toBe(true);
        }
      }
      expect(table.stretchesBuilt).toBe(CURVED_TABLE.angleStretches);
    });
  }
});

/**
 * Single-phase networks against an independent reference program: the circuit simulator ngspice
 * (Debian package), which solves the equivalent resistor network (pressure ↔ voltage, flow ↔
 * current, R = L/k) for its DC operating point. The layouts hold only inlets, junctions and
 * outlets and every inlet delivers phase A, so the solver's homogeneous law reduces to
 * Hagen–Poiseuille / the rectangular-duct series with phase A's viscosity.
 *
 * ngspice must be installed (.ci/run installs it). In CI a missing ngspice fails these tests;
 * on a developer machine without it they are skipped with a note.
 */
import { describe, expect, it } from 'vitest';
import type { LayoutFile, LayoutNode, LayoutSegment } from '../../src/layout/schema.js';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';
import { ngspiceAvailable, ngspiceOperatingPoint, type Circuit } from '../support/ngspice.js';
import { DEMO_PHASES, layoutOf, randomGenerator, randomSinglePhaseLayout, rect, resistanceOf, tube } from '../support/layouts.js';

const runReference = ngspiceAvailable() || process.env.CI !== undefined;
if (!runReference) {
  console.warn('ngspice not found: skipping the ngspice reference checks on this machine (apt-get install ngspice); in CI they fail instead.');
}
const referenceIt = runReference ? it : it.skip;

/** Agreement asked of the solve: every pressure and flow within 1e-9 of the largest of its kind. */
const RELATIVE = 1e-9;

/** The equivalent circuit of a single-phase layout (all values SI numbers). */
function circuitOf(layout: LayoutFile): Circuit {
  const mu = DEMO_PHASES.A.viscosity;
  return {
    title: layout.name,
    resistors: layout.segments.map((s) => ({ a: s.from, b: s.to, resistance: resistanceOf(s, mu) })),
    pressures: layout.nodes.flatMap((n) => ((n.type === 'inlet' || n.type === 'outlet') && n.pressure !== undefined ? [{ node: n.id, pressure: n.pressure as number }] : [])),
    injections: layout.nodes.flatMap((n) => (n.type === 'inlet' && n.flow !== undefined ? [{ node: n.id, flow: n.flow as number }] : [])),
  };
}

function expectAgreement(layout: LayoutFile): void {
  const { result } = solveChip(layoutToChip(layout, layout.name));
  expect(result.converged, result.message).toBe(true);
  const reference = ngspiceOperatingPoint(circuitOf(layout));

  const pressureScale = Math.max(...[...reference.pressure.values()].map(Math.abs));
  for (const node of result.nodes) {
    const want = reference.pressure.get(node.id)!;
    expect(Math.abs(node.pressure - want), `pressure at ${node.id}`).toBeLessThanOrEqual(RELATIVE * pressureScale);
  }
  const flowScale = Math.max(...reference.flow.map(Math.abs));
  result.segments.forEach((segment, i) => {
    expect(segment.id).toBe(layout.segments[i]!.id);
    expect(Math.abs(segment.flowA - reference.flow[i]!), `flow in ${segment.id}`).toBeLessThanOrEqual(RELATIVE * flowScale);
    // No phase B enters; compositions solved as unknowns (networks with loops) leave rounding.
    expect(Math.abs(segment.flowB), `phase B in ${segment.id}`).toBeLessThanOrEqual(1e-12 * flowScale);
  });
}

/**
 * A ladder of single-phase channels: inlet → distribution line d1…d12 → rungs of different widths
 * → collection line c1…c12 → outlets at both ends of the collection line, and a flow-set inlet
 * feeding the far end of the distribution line.
 */
function ladder(): LayoutFile {
  const N = 12;
  const nodes: LayoutNode[] = [
    { id: 'in', type: 'inlet', phase: 'A', pressure: 30e3 },
    { id: 'feed', type: 'inlet', phase: 'A', flow: 2e-10 },
    { id: 'outNear', type: 'outlet', pressure: 0 },
    { id: 'outFar', type: 'outlet', pressure: 1500 },
  ];
  const segments: LayoutSegment[] = [rect('entry', 'in', 'd1', 500e-6, 50e-6, 2e-3), rect('feedLine', 'feed', `d${N}`, 100e-6, 50e-6, 4e-3)];
  for (let i = 1; i <= N; i++) {
    nodes.push({ id: `d${i}`, type: 'junction' }, { id: `c${i}`, type: 'junction' });
    segments.push(rect(`rung${i}`, `d${i}`, `c${i}`, 100e-6 + 10e-6 * i, 50e-6, 20e-3));
    if (i < N) segments.push(rect(`md${i}`, `d${i}`, `d${i + 1}`, 500e-6, 50e-6, 1e-3), rect(`mc${i}`, `c${i}`, `c${i + 1}`, 400e-6, 50e-6, 1e-3));
  }
  segments.push(tube('exitNear', 'c1', 'outNear', 250e-6, 0.1), rect('exitFar', `c${N}`, 'outFar', 400e-6, 50e-6, 2e-3));
  return layoutOf('single-phase ladder', nodes, segments);
}

/**
 * A binary tree: one pressure inlet feeds 16 leaves through four levels of branches of random
 * sizes; every leaf drains through its own tube into its own outlet at its own pressure.
 */
function tree(): LayoutFile {
  const random = randomGenerator(7);
  const nodes: LayoutNode[] = [{ id: 'in', type: 'inlet', phase: 'A', pressure: 40e3 }, { id: 'b0_0', type: 'junction' }];
  const segments: LayoutSegment[] = [rect('root', 'in', 'b0_0', 400e-6, 60e-6, 3e-3)];
  const levels = 4;
  for (let level = 1; level <= levels; level++) {
    for (let j = 0; j < 2 ** level; j++) {
      nodes.push({ id: `b${level}_${j}`, type: 'junction' });
      segments.push(rect(`br${level}_${j}`, `b${level - 1}_${j >> 1}`, `b${level}_${j}`, 100e-6 + 300e-6 * random(), 30e-6 + 40e-6 * random(), 1e-3 + 4e-3 * random()));
    }
  }
  for (let j = 0; j < 2 ** levels; j++) {
    nodes.push({ id: `out${j}`, type: 'outlet', pressure: 3e3 * random() });
    segments.push(tube(`leaf${j}`, `b${levels}_${j}`, `out${j}`, 150e-6 + 100e-6 * random(), 0.02 + 0.05 * random()));
  }
  return layoutOf('single-phase tree', nodes, segments);
}

describe('single-phase networks agree with ngspice', () => {
  referenceIt('gives the pressures and flows of a ladder with a pressure and a flow inlet to 1e-9', () => {
    expectAgreement(ladder());
  });

  referenceIt('gives the pressures and flows of a binary tree with 16 outlets to 1e-9', () => {
    expectAgreement(tree());
  });

  for (const seed of [1, 2, 3]) {
    referenceIt(`gives the pressures and flows of random connected network #${seed} (loops, both orientations) to 1e-9`, () => {
      expectAgreement(randomSinglePhaseLayout(seed));
    });
  }

  referenceIt('gives the same answer with the dense linear solver', () => {
    const layout = randomSinglePhaseLayout(4);
    const sparse = solveChip(layoutToChip(layout, 'sparse')).result;
    const dense = solveChip(layoutToChip(layout, 'dense'), { linear: 'dense' }).result;
    const scale = Math.max(...sparse.segments.map((s) => Math.abs(s.flowA)));
    dense.segments.forEach((s, i) => expect(Math.abs(s.flowA - sparse.segments[i]!.flowA)).toBeLessThanOrEqual(RELATIVE * scale));
    expectAgreement(layout);
  });
});

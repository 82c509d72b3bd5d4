/**
 * Timing of the general cross-section solver (src/physics/spectralSection.ts) on an etched
 * channel (mask opening 100 µm, 40 µm deep) and a 54.74° trapezoid (bottom 60 µm, 40 µm deep):
 * one two-layer solve with its slopes where the interface stands over the flat bottom and where
 * it meets the curved or sloping wall; building a HoldupTable (every stretch, from no kept strip
 * condensation); one inversion by the table and the table's largest holdup error against the
 * direct inversion; and the 256-contactor ladder of bench/network.ts with etched manifolds,
 * feeds and drains against its rectangular twin, also from no kept condensation (contactors stay
 * rectangular here; bench/etchedContactors.ts etches them too). Exports
 * `benchShapedSection`, `etchedTwin` and `timeOnce`. The fluids are invented demo values (6.5 and 1.9 mPa·s).
 */
import { HoldupTable, holdupForFlowFraction, type ShapedSection } from '../src/physics/section.js';
import { forgetShapedSolves, shapedTwoLayerFlow } from '../src/physics/shapedSection.js';
import { layoutToChip } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import type { LayoutSegment } from '../src/layout/schema.js';
import { designedLadderLayout } from './network.js';
import { medianSecondsPerCall, type Row } from './report.js';

const MU_A = 6.5e-3;
const MU_B = 1.9e-3;
const DEPTH = 40e-6;
const ETCHED: ShapedSection = { shape: 'etched', maskWidth: 100e-6, depth: DEPTH };
const TRAPEZOID: ShapedSection = { shape: 'trapezoid', bottomWidth: 60e-6, depth: DEPTH, wallAngle: Math.acos(1 / Math.sqrt(3)) };

/** Targets of the issue: a table in at most 1 s, an inversion in at most 20 µs, the etched chip within 2× its twin. */
const TABLE_BUILD_TARGET_MS = 1000;
const TABLE_SOLVE_TARGET_US = 20;
const TWIN_RATIO_TARGET = 2;

const MICRO = 1e6;
const MILLI = 1e3;

/** Seconds of one call (for what is too slow, or changes too much on a repeat, for the median timer). */
export function timeOnce(fn: () => unknown): number {
  const start = performance.now();
  fn();
  return (performance.now() - start) / 1000;
}

/** The ladder with every non-contactor rectangle (with `contactors`, every rectangle) replaced by an etched channel as wide at the bottom and as deep. */
export function etchedTwin(contactors: number, etchContactors = false) {
  const layout = designedLadderLayout(contactors);
  const twin = {
    ...layout,
    segments: layout.segments.map((s): LayoutSegment => {
      if (s.shape !== 'rect' || (s.group === 'contactor' && !etchContactors)) return s;
      const { width, orientation: _o, ...rest } = s;
      return { ...rest, shape: 'etched', maskWidth: width };
    }),
  };
  return { rect: layoutToChip(layout, 'rect ladder'), etched: layoutToChip(twin, 'etched ladder') };
}

export function benchShapedSection(): Row[] {
  const rows: Row[] = [];
  for (const [name, section, holdups] of [
    ['etched 100 × 40 µm', ETCHED, [0.5, 0.1]],
    ['trapezoid 60 × 40 µm', TRAPEZOID, [0.5, 0.1]],
  ] as const) {
    for (const holdup of holdups) {
      // A fresh holdup each call, so that no strip is reused from the call before.
      let shift = 0;
      const seconds = medianSecondsPerCall(() => shapedTwoLayerFlow(section, holdup + 1e-6 * (shift++ % 1000), MU_A, MU_B).kA, { warmupCalls: 2, samples: 5, minBatchMs: 0 });
      rows.push({ name: `shapedTwoLayerFlow with slopes, ${name}, α = ${holdup} (${holdup === 0.5 ? 'flat bottom' : 'on the wall'})`, value: seconds * MILLI, unit: 'ms' });
    }
    // From no kept strip condensation (as in a fresh process), every stretch built.
    forgetShapedSolves();
    const build = timeOnce(() => new HoldupTable(section, MU_A, MU_B).complete());
    rows.push({ name: `HoldupTable build, ${name}`, value: build * MILLI, unit: 'ms', target: TABLE_BUILD_TARGET_MS });
    const table = new HoldupTable(section, MU_A, MU_B);
    const targets = Array.from({ length: 997 }, (_, i) => {
      const x = (i + 0.5) / 997;
      return 1e-3 + (1 - 2e-3) * x * x * (3 - 2 * x);
    });
    let next = 0;
    const solve = medianSecondsPerCall(() => table.solve(targets[next++ % targets.length]!).holdup);
    rows.push({ name: `HoldupTable.solve, ${name}`, value: solve * MICRO, unit: 'µs', target: TABLE_SOLVE_TARGET_US });
    let worst = 0;
    for (const phi of [0.001, 0.01, 0.05, 0.2, 0.5, 0.8, 0.95, 0.99, 0.999]) {
      const direct = holdupForFlowFraction(section, MU_A, MU_B, phi).holdup;
      worst = Math.max(worst, Math.abs(table.solve(phi).holdup - direct) / direct);
    }
    rows.push({ name: `HoldupTable holdup error against the direct inversion, ${name} (largest of 9 flow fractions, 0.001 to 0.999)`, value: worst, unit: 'relative' });
  }

  const { rect, etched } = etchedTwin(256);
  const rectSeconds = timeOnce(() => solveChip(rect));
  forgetShapedSolves();
  const etchedSeconds = timeOnce(() => solveChip(etched));
  const etchedConverged = solveChip(etched).result.converged;
  rows.push({ name: '256-contactor ladder, rectangular manifolds, feeds and drains: solve', value: rectSeconds * MILLI, unit: 'ms' });
  rows.push({ name: `the same with etched manifolds, feeds and drains: solve (first, with the conductances; ${etchedConverged ? 'converged' : 'NOT converged'})`, value: etchedSeconds * MILLI, unit: 'ms' });
  rows.push({ name: 'etched / rectangular solve time, 256 contactors', value: etchedSeconds / rectSeconds, unit: '×', target: TWIN_RATIO_TARGET });
  return rows;
}

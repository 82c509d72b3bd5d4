/**
 * Timing of the cross-section engine (src/physics): one full two-layer series evaluation for a
 * typical channel (both orientations), a thin layer and two extreme aspect ratios; building a HoldupTable; and one
 * inversion φ → holdup by the table and by the robust bracketed path.
 * Exports `benchSection`. The fluids are invented demo values (6.5 and 1.9 mPa·s).
 */
import { HoldupTable, holdupForFlowFraction, type RectSection } from '../src/physics/section.js';
import { twoLayerFlow, type TwoLayerInput } from '../src/physics/twoLayer.js';
import { medianSecondsPerCall, type Row } from './report.js';

const WIDTH = 200e-6;
const DEPTH = 50e-6;
const MU_A = 6.5e-3;
const MU_B = 1.9e-3;

/** Upper bound for one HoldupTable inversion: a network solve inverts every channel per iteration. */
const TABLE_SOLVE_TARGET_US = 20;

const MICRO = 1e6;
const MILLI = 1e3;

export async function benchSection(): Promise<Row[]> {
  const rows: Row[] = [];

  // Side by side, the layers lie across the width and the interface spans the depth; stacked,
  // the other way round. The extreme aspect ratios keep D = 50 µm.
  const side = (widthOverDepth: number, holdup: number): TwoLayerInput => ({
    across: widthOverDepth * DEPTH,
    along: DEPTH,
    holdup,
    muA: MU_A,
    muB: MU_B,
  });
  const series: Array<[string, TwoLayerInput]> = [
    ['side, W/D = 4, α = 0.5', side(4, 0.5)],
    ['stacked, W/D = 4, α = 0.5', { across: DEPTH, along: WIDTH, holdup: 0.5, muA: MU_A, muB: MU_B }],
    ['side, W/D = 4, α = 0.01', side(4, 0.01)],
    ['stacked, W/D = 4, α = 0.01', { across: DEPTH, along: WIDTH, holdup: 0.01, muA: MU_A, muB: MU_B }],
    ['side, W/D = 1e-4, α = 0.5', side(1e-4, 0.5)],
    ['side, W/D = 1e4, α = 0.5', side(1e4, 0.5)],
  ];
  for (const [name, input] of series) {
    const seconds = medianSecondsPerCall(() => twoLayerFlow(input).kA);
    const { terms, integrated } = twoLayerFlow(input);
    rows.push({ name: `twoLayerFlow, ${name} (${terms} terms, ${integrated} nodes)`, value: seconds * MICRO, unit: 'µs' });
  }

  const section: RectSection = { shape: 'rect', width: WIDTH, depth: DEPTH, orientation: 'side' };
  const build = medianSecondsPerCall(() => new HoldupTable(section, MU_A, MU_B), { warmupCalls: 3, samples: 9, minBatchMs: 20 });
  rows.push({ name: 'HoldupTable build, side, W/D = 4', value: build * MILLI, unit: 'ms' });

  // Flow fractions spread over (0, 1), including thin layers of either phase, visited in turn.
  const targets = Array.from({ length: 997 }, (_, i) => {
    const x = (i + 0.5) / 997;
    return 1e-4 + (1 - 2e-4) * x * x * (3 - 2 * x);
  });
  const table = new HoldupTable(section, MU_A, MU_B);
  let next = 0;
  const solve = medianSecondsPerCall(() => table.solve(targets[next++ % targets.length]!).holdup);
  rows.push({ name: 'HoldupTable.solve, side, W/D = 4', value: solve * MICRO, unit: 'µs', target: TABLE_SOLVE_TARGET_US });

  next = 0;
  const robust = medianSecondsPerCall(() => holdupForFlowFraction(section, MU_A, MU_B, targets[next++ % targets.length]!).holdup, {
    warmupCalls: 50,
  });
  rows.push({ name: 'holdupForFlowFraction, side, W/D = 4', value: robust * MICRO, unit: 'µs' });

  return rows;
}

/**
 * Timing of the curved interface (src/physics/curvedSection.ts, curvedTable.ts,
 * solver/curvedInterface.ts): one direct two-layer solve with the arc (with its slopes in
 * holdup and curvature) in a rectangle and an etched channel; building one half-angle stretch
 * of a CurvedTable; one evaluation of the table with its slopes; and the bundled aqueous
 * two-phase chip solved with a flat and with a curved interface. Exports `benchCurvedInterface`.
 * The fluids are invented demo values (5 and 1 mPa·s).
 */
import { readFileSync } from 'node:fs';
import { curvedTwoLayerFlow } from '../src/physics/curvedSection.js';
import { CurvedTable } from '../src/physics/curvedTable.js';
import type { TwoLayerSection } from '../src/physics/section.js';
import { parseLayout } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import { medianSecondsPerCall, type Row } from './report.js';
import { timeOnce } from './shapedSection.js';

const MU_A = 5e-3;
const MU_B = 1e-3;
/** The flat tables' targets of issue 13, item 4, kept for the curved ones: build ≤ 1 s, evaluation ≤ 20 µs. */
const BUILD_TARGET_MS = 1000;
const EVALUATION_TARGET_US = 20;
const MICRO = 1e6;
const MILLI = 1e3;

export function benchCurvedInterface(): Row[] {
  const rows: Row[] = [];
  const sections: Array<[string, TwoLayerSection]> = [
    ['rectangle 100 × 50 µm', { shape: 'rect', width: 100e-6, depth: 50e-6, orientation: 'side' }],
    ['etched 100 × 40 µm', { shape: 'etched', maskWidth: 100e-6, depth: 40e-6 }],
  ];
  for (const [name, section] of sections) {
    const kappa = 0.6 / section.depth;
    let shift = 0;
    const direct = medianSecondsPerCall(() => curvedTwoLayerFlow(section, 0.45 + 1e-6 * (shift++ % 1000), kappa, MU_A, MU_B).kA, { warmupCalls: 1, samples: 3, minBatchMs: 0 });
    rows.push({ name: `curvedTwoLayerFlow with slopes, ${name}, α = 0.45, κ·depth/2 = 0.3`, value: direct * MILLI, unit: 'ms' });
    const table = new CurvedTable(section, MU_A, MU_B);
    const build = timeOnce(() => table.flowsAt(0.5, kappa));
    rows.push({ name: `CurvedTable: construction and first half-angle stretch, ${name}`, value: build * MILLI, unit: 'ms', target: BUILD_TARGET_MS });
    let next = 0;
    const evaluation = medianSecondsPerCall(() => table.flowsAt(0.3 + 0.4 * ((next++ % 997) / 997), kappa).kA);
    rows.push({ name: `CurvedTable.flowsAt with slopes, ${name}`, value: evaluation * MICRO, unit: 'µs', target: EVALUATION_TARGET_US });
  }
  const text = readFileSync(new URL('../layouts/enzyme-atps-16.yaml', import.meta.url), 'utf8');
  const flat = parseLayout(text, 'enzyme');
  const curved = parseLayout(text.replace(/^interfacialTension: .*$/m, (line) => `${line}\ninterface: curved`), 'enzyme curved');
  rows.push({ name: 'enzyme-atps-16 solve, flat interface', value: timeOnce(() => solveChip(flat)) * MILLI, unit: 'ms' });
  rows.push({ name: 'enzyme-atps-16 solve, curved interface (fresh tables: first solve)', value: timeOnce(() => solveChip(curved)) * MILLI, unit: 'ms' });
  return rows;
}

/**
 * Timing of the window map (src/analyses/window.ts): a 41 × 41 map of the two inlet pressures of
 * the generated 64-contactor ladder (invented demo fluids of src/layout/generate.ts) around its
 * operating band, where splits go from leaking one way to leaking the other and the feeds start
 * to flow back (p_A 19–23 kPa, p_B 18–22 kPa), on one worker thread per processor core.
 * Exports `benchWindow`.
 */
import { availableParallelism } from 'node:os';
import { ladderLayout } from '../src/layout/generate.js';
import { layoutToChip } from '../src/layout/load.js';
import { windowMap, type WindowSpec } from '../src/analyses/window.js';
import { parseSetting } from '../src/analyses/settings.js';
import type { Row } from './report.js';

/** The target for the 41 × 41 map of a 64-contactor chip on a 2-core machine, s. */
const MAP_TARGET_S = 20;

export async function benchWindow(): Promise<Row[]> {
  const chip = layoutToChip(ladderLayout({ contactors: 64 }), 'generated 64-contactor ladder');
  const spec: WindowSpec = {
    x: { setting: parseSetting('inA.pressure', chip), from: 19e3, to: 23e3, steps: 41 },
    y: { setting: parseSetting('inB.pressure', chip), from: 18e3, to: 22e3, steps: 41 },
  };
  const workers = availableParallelism();
  const start = performance.now();
  const map = await windowMap(chip, spec, { workers });
  const seconds = (performance.now() - start) / 1000;
  const points = spec.x.steps * spec.y.steps;
  const solved = map.points.flat();
  const iterations = solved.reduce((sum, p) => sum + p.iterations, 0) / points;
  return [
    { name: `window map 41×41, 64 contactors, ${workers} workers (${map.counts.failed} of ${points} points failed)`, value: seconds, unit: 's', target: MAP_TARGET_S },
    { name: '  per point and worker', value: (seconds * 1000 * workers) / points, unit: 'ms' },
    { name: '  Newton steps per point', value: iterations, unit: '' },
  ];
}

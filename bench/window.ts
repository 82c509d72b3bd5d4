/**
 * Timing of the window map (src/analyses/window.ts, with its coarse grid and refinement): a 41 × 41 map of the two inlet pressures of
 * the generated 64-contactor ladder (invented demo fluids of src/layout/generate.ts) around its
 * operating band, where splits go from leaking one way to leaking the other and the feeds start
 * to flow back (p_A 19–23 kPa, p_B 18–22 kPa), on one worker thread per processor core; and the
 * trace of the working region (src/analyses/windowRegion.ts) of the bundled enzyme chip over
 * the command's default search box (half to twice each inlet pressure as given) and of the
 * 64-contactor ladder over the map's box. Exports `benchWindow`.
 */
import { availableParallelism } from 'node:os';
import { ladderLayout } from '../src/layout/generate.js';
import { layoutToChip } from '../src/layout/load.js';
import { windowMap, type WindowSpec } from '../src/analyses/window.js';
import { parseSetting } from '../src/analyses/settings.js';
import type { Row } from './report.js';
import { loadLayout } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import { settingValue } from '../src/analyses/settings.js';
import { traceWindow, type WindowRegion, type WindowSearch } from '../src/analyses/windowRegion.js';
import type { Chip } from '../src/network/model.js';

/** The target for the 41 × 41 map of a 64-contactor chip on a 2-core machine, s. */
const MAP_TARGET_S = 5;
/** The target for tracing the enzyme chip's window, s. */
const TRACE_TARGET_S = 2;

function traced(chip: Chip, box: WindowSearch['box'], start: [number, number]): { seconds: number; region: WindowRegion } {
  const begin = performance.now();
  const region = traceWindow(chip, { x: parseSetting('inA.pressure', chip), y: parseSetting('inB.pressure', chip), coordinates: 'settings', box, start });
  return { seconds: (performance.now() - begin) / 1000, region };
}

export async function benchWindow(): Promise<Row[]> {
  const enzyme = loadLayout(new URL('../layouts/enzyme-atps-16.yaml', import.meta.url).pathname);
  const given = solveChip(enzyme);
  const at: [number, number] = [settingValue(given, parseSetting('inA.pressure', enzyme)), settingValue(given, parseSetting('inB.pressure', enzyme))];
  const band = traced(enzyme, { x: [0.5 * at[0], 2 * at[0]], y: [0.5 * at[1], 2 * at[1]] }, at);
  const chip = layoutToChip(ladderLayout({ contactors: 64 }), 'generated 64-contactor ladder');
  const spec: WindowSpec = {
    x: { setting: parseSetting('inA.pressure', chip), from: 19e3, to: 23e3, steps: 41 },
    y: { setting: parseSetting('inB.pressure', chip), from: 18e3, to: 22e3, steps: 41 },
  };
  const ladder = traced(chip, { x: [spec.x.from, spec.x.to], y: [spec.y.from, spec.y.to] }, [21e3, 20e3]);
  const workers = availableParallelism();
  const start = performance.now();
  // From the middle of the grid, as the command starts from the point as given.
  const map = await windowMap(chip, spec, { workers, seedColumn: 20, seedRow: 20 });
  const seconds = (performance.now() - start) / 1000;
  const points = spec.x.steps * spec.y.steps;
  const solved = map.points.flat().filter((p) => p.solved);
  const iterations = solved.reduce((sum, p) => sum + p.iterations, 0) / solved.length;
  const slow = solved.filter((p) => p.attempts > 2).length;
  const describe = (r: WindowRegion) => (r.pieces.length === 0 ? `${r.message}; ${r.solves} solves` : `${r.closed ? 'closed' : 'not closed'}, ${r.pieces.length} pieces, ${r.solves} solves`);
  return [
    { name: `window region of the enzyme chip traced (${describe(band.region)})`, value: band.seconds, unit: 's', target: TRACE_TARGET_S },
    { name: `window region of the 64-contactor ladder traced (${describe(ladder.region)})`, value: ladder.seconds, unit: 's' },
    { name: `window map 41×41, 64 contactors, ${workers} workers (${map.counts.failed} of ${points} points failed)`, value: seconds, unit: 's', target: MAP_TARGET_S },
    { name: `  points solved (the rest filled from their cells, ./src/analyses/windowFill.ts)`, value: map.fill.solved, unit: '' },
    { name: '  per solved point and worker', value: (seconds * 1000 * workers) / map.fill.solved, unit: 'ms' },
    { name: '  Newton steps per solved point', value: iterations, unit: '' },
    { name: '  solved points that took more than a warm and a cold start', value: slow, unit: '' },
  ];
}

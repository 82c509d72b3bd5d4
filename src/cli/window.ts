/**
 * `stratiflow window FILE`: the operating window of two settings of a chip (by default the
 * pressures of its A and B inlets). First the working region is traced exactly
 * (src/analyses/windowRegion.ts) over a search box around the settings as given; then a coarse
 * grid around that region is swept and every point classified (leaking which way, backflow,
 * over the rating). Writes the map (SVG: grid, traced region with its labelled boundaries, the
 * point as given and its hold box), the grid and region (JSON), the grid (CSV) and a summary.
 * Where the region is a thin band along the diagonal of two settings of one quantity, the axes
 * become their mean and difference (`--coordinates auto`, the default). A target (two of flow A,
 * flow B, throughput, ratio) is marked where its two contours cross. A progress bar goes to
 * stderr when it is a terminal.
 * Exports `registerWindow`; the map, CSV and summary are drawn by src/render/windowMap.ts.
 */
import { availableParallelism } from 'node:os';
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip, warmStartFrom, type SolvedChip } from '../analyses/chip.js';
import { describePoint, mapTarget, targetCrossings, windowMap, type WindowMap } from '../analyses/window.js';
import { coordinatesOf, polygonArea, regionIn, regionSpans, traceWindow, type WindowCoordinates, type WindowRegion } from '../analyses/windowRegion.js';
import { holdTolerances, type HoldResult } from '../analyses/hold.js';
import { settingName, settingValue, withSettings, type Setting } from '../analyses/settings.js';
import { windowChart, windowCsv, windowText, type WindowMarks } from '../render/windowMap.js';
import { chipReport } from '../render/report.js';
import { findManifolds } from '../analyses/manifolds.js';
import { liveReport } from './pageScript.js';
import type { Point } from '../render/chart.js';
import { parseQuantity, parseRange } from '../units/quantity.js';
import { numberOption, settingOption, wholeNumberOption, MAX_WORKERS, linearOption, type LinearSolver } from './options.js';
import { outputFile, writeOutputs, type Output } from './io.js';
import { jsonNumbers, type CommandContext } from './context.js';
import { progressBar } from './progress.js';

import { optionError } from '../errors.js';
import { extent as extentOf } from 'd3-array';
import type { Chip } from '../network/model.js';

/** At most this many grid values along an axis: a million points at the most, hours of solves. */
const MAX_STEPS = 1000;
/** Below this share of its bounding box a traced region counts as a thin band (`--coordinates auto`). */
const THIN_BAND = 0.05;
/** Margin of the default map around the traced region, as a share of its extent on each axis. */
const MAP_MARGIN = 0.25;
const COORDINATES = ['auto', 'settings', 'mean-difference'] as const;

interface WindowOptions {
  x?: string;
  xRange?: string;
  xSteps: string;
  y?: string;
  yRange?: string;
  ySteps: string;
  flowA?: string;
  flowB?: string;
  throughput?: string;
  ratio?: string;
  svg: string;
  json?: string;
  csv?: string;
  report?: string;
  workers?: string;
  coordinates: string;
  linear: string;
}

/** The first inlet of a phase, for the default axes. */
function firstInlet(chip: Chip, phase: 'A' | 'B'): string {
  const inlet = chip.nodes.find((n) => n.kind === 'inlet' && n.phase === phase);
  if (!inlet) throw optionError(phase === 'A' ? '--x' : '--y', `the layout has no inlet of phase ${phase}; choose the setting to sweep`);
  return inlet.id;
}

/** The range an option gives, or undefined. */
function rangeOption(text: string | undefined, flag: string, setting: Setting): [number, number] | undefined {
  if (text === undefined) return undefined;
  const [from, to] = parseRange(text, setting.quantity === 'pressure' ? 'pressure' : 'flow', { field: flag });
  if (!(from < to)) throw optionError(flag, 'the first end must be below the second');
  return [from, to];
}

/** The box the region is searched in when no range is given: half to twice each setting as given. */
function searchRange(flag: string, setting: Setting, current: number | undefined): [number, number] {
  if (current === undefined || current === 0) {
    throw optionError(flag, `give the range (e.g. ${setting.quantity === 'pressure' ? '0kPa:5kPa' : '1uL/min:20uL/min'}): the chip as given has ${settingName(setting)} = ${current === undefined ? 'no solved value' : '0'}`);
  }
  return [0.5 * current, 2 * current].sort((a, b) => a - b) as [number, number];
}

/** The index of the grid value of `axis` nearest `value` (0 without one). */
function nearestStep(axis: { from: number; to: number; steps: number }, value: number | undefined): number {
  if (value === undefined) return 0;
  return Math.min(axis.steps - 1, Math.max(0, Math.round(((value - axis.from) / (axis.to - axis.from)) * (axis.steps - 1))));
}

/** The traced region's extent on each axis, widened by MAP_MARGIN (and to 2 % of its level when it is a line). */
function mapRanges(region: WindowRegion): { x: [number, number]; y: [number, number] } | undefined {
  if (region.polygon.length < 3) return undefined;
  const extent = (k: 0 | 1): [number, number] => {
    const values = region.polygon.map((p) => p[k]);
    const [lo, hi] = extentOf(values) as [number, number];
    const pad = Math.max(MAP_MARGIN * (hi - lo), 0.01 * Math.abs((lo + hi) / 2), 1e-300);
    return [lo - pad, hi + pad];
  };
  return { x: extent(0), y: extent(1) };
}

export function registerWindow(program: Command, context: CommandContext): void {
  program
    .command('window')
    .description('Map the operating window: sweep two settings (inlet or outlet pressures, inlet flows), solve the chip at every grid point and show where every split stays pinned, where outlets leak, where liquid flows back, and the throughput and flow ratio.')
    .argument('<layout>', 'layout file (YAML or JSON)')
    .option('--x <setting>', 'setting along x, as node.pressure or node.flow (default: pressure of the first A inlet)')
    .option('--x-range <from:to>', 'range along x, e.g. 10kPa:60kPa; also the box the working region is traced in (default: the region found in half to twice each setting as given, with a margin)')
    .option('--x-steps <n>', 'grid values along x', '21')
    .option('--y <setting>', 'setting along y (default: pressure of the first B inlet)')
    .option('--y-range <from:to>', 'range along y')
    .option('--y-steps <n>', 'grid values along y', '21')
    .option('--flow-a <flow>', 'target to mark: total flow of A')
    .option('--flow-b <flow>', 'target to mark: total flow of B')
    .option('--throughput <flow>', 'target to mark: total flow of A and B')
    .option('--ratio <A/B>', 'target to mark: flow ratio A/B')
    .option('--svg <file>', 'the map', 'window.svg')
    .option('--json <file>', 'write the grid as JSON (SI units)')
    .option('--csv <file>', 'write the grid as CSV, one row per point')
    .option('--report <file>', 'write an HTML report: the map and its summary, and the chip at the layout\'s settings with its live operating point')
    .option('--workers <n>', 'worker threads (default: one per processor core)')
    .option('--coordinates <kind>', `axes: the two settings, their mean and difference, or auto (mean and difference where the working region is a thin band along the diagonal of two settings of one quantity): ${COORDINATES.join(', ')}`, 'auto')
    .addOption(linearOption())
    .action(async (file: string, o: WindowOptions) => {
      const chip = loadLayout(file);
      const linear = o.linear as LinearSolver;
      const xs = settingOption(o.x ?? `${firstInlet(chip, 'A')}.pressure`, '--x', chip);
      const ys = settingOption(o.y ?? `${firstInlet(chip, 'B')}.pressure`, '--y', chip);
      if (xs.node === ys.node) throw optionError('--y', 'the two settings must belong to different nodes');
      const flowTarget = (v: string | undefined, flag: string) => (v === undefined ? undefined : parseQuantity(v, 'flow', { field: flag }));
      const ratio = o.ratio === undefined ? undefined : numberOption(o.ratio, '--ratio');
      if (ratio !== undefined && !(ratio > 0)) throw optionError('--ratio', 'must be positive');
      const given = { flowA: flowTarget(o.flowA, '--flow-a'), flowB: flowTarget(o.flowB, '--flow-b'), throughput: flowTarget(o.throughput, '--throughput'), ratio };
      if (Object.values(given).filter((v) => v !== undefined).length > 2) throw optionError('--ratio', 'give at most two of --flow-a, --flow-b, --throughput and --ratio');
      const target = mapTarget(given);
      const workers = wholeNumberOption(o.workers, '--workers', 1, MAX_WORKERS) ?? availableParallelism();
      const svgFile = outputFile(o.svg, '--svg');
      const jsonFile = o.json === undefined ? undefined : outputFile(o.json, '--json');
      const csvFile = o.csv === undefined ? undefined : outputFile(o.csv, '--csv');
      const reportFile = o.report === undefined ? undefined : outputFile(o.report, '--report');

      if (!(COORDINATES as readonly string[]).includes(o.coordinates)) throw optionError('--coordinates', `must be one of ${COORDINATES.join(', ')}`);
      if (o.coordinates === 'mean-difference' && xs.quantity !== ys.quantity) throw optionError('--coordinates', 'mean and difference need two settings of one quantity (two pressures or two flows)');
      const xSteps = wholeNumberOption(o.xSteps, '--x-steps', 2, MAX_STEPS)!;
      const ySteps = wholeNumberOption(o.ySteps, '--y-steps', 2, MAX_STEPS)!;

      // The chip as given: its settings mark the map and seed the sweep.
      const base: SolvedChip = solveChip(chip, { linear });
      const givenSettings = base.result.converged ? ([settingValue(base, xs), settingValue(base, ys)] as Point) : undefined;
      const xRange = rangeOption(o.xRange, '--x-range', xs);
      const yRange = rangeOption(o.yRange, '--y-range', o.coordinates === 'mean-difference' ? xs : ys);

      // The working region, traced in the box the ranges give (in the chosen coordinates), or in
      // the settings' own coordinates over a tenth to twice each setting and redrawn.
      const traceStart = performance.now();
      let coordinates: WindowCoordinates = o.coordinates === 'mean-difference' ? 'mean-difference' : 'settings';
      let coordinatesReason: string | undefined;
      let region: WindowRegion;
      if (xRange && yRange) {
        const start = givenSettings && coordinatesOf(coordinates, givenSettings);
        const inBox = start && start[0] >= xRange[0] && start[0] <= xRange[1] && start[1] >= yRange[0] && start[1] <= yRange[1];
        region = traceWindow(chip, { x: xs, y: ys, coordinates, box: { x: xRange, y: yRange }, start: inBox ? start : undefined, solver: { linear } });
      } else {
        const box = { x: xRange ?? searchRange('--x-range', xs, givenSettings?.[0]), y: yRange ?? searchRange('--y-range', ys, givenSettings?.[1]) };
        region = traceWindow(chip, { x: xs, y: ys, coordinates: 'settings', box, start: givenSettings && [givenSettings[0], givenSettings[1]], solver: { linear } });
        const ranges = mapRanges(region);
        const thin = ranges !== undefined && polygonArea(region.polygon) < THIN_BAND * (ranges.x[1] - ranges.x[0]) * (ranges.y[1] - ranges.y[0]) / (1 + 2 * MAP_MARGIN) ** 2;
        if (o.coordinates === 'auto' && thin && xs.quantity === ys.quantity) {
          coordinates = 'mean-difference';
          coordinatesReason = `the mean and the difference of ${settingName(xs)} and ${settingName(ys)}: the working region is a thin band along the diagonal of the two settings (--coordinates settings for the settings themselves)`;
        }
        region = regionIn(region, coordinates);
      }
      const traceSeconds = (performance.now() - traceStart) / 1000;
      const ranges = xRange && yRange ? { x: xRange, y: yRange } : mapRanges(region);
      if (!ranges) throw optionError('--x-range', `no working region found to centre the map on (${region.message ?? 'none'}): give --x-range and --y-range`);
      const current = givenSettings && coordinatesOf(coordinates, givenSettings);
      const spec = {
        x: { setting: xs, from: ranges.x[0], to: ranges.x[1], steps: xSteps },
        y: { setting: ys, from: ranges.y[0], to: ranges.y[1], steps: ySteps },
        coordinates,
        solver: { linear },
      };

      // How far each axis setting may move alone at the point as given: a segment per setting on the map.
      let hold: Point[][] | undefined;
      let holdResult: HoldResult | undefined;
      if (givenSettings) {
        const asAxes = solveChip(withSettings(chip, [[xs, givenSettings[0]], [ys, givenSettings[1]]]), { linear }, warmStartFrom(base));
        if (asAxes.result.converged && asAxes.result.splits.every((sp) => sp.state === 'pinned')) {
          holdResult = holdTolerances(asAxes);
          const tolerances = holdResult.settings;
          const of = (s: Setting) => tolerances.find((h) => h.setting.node === s.node && h.setting.quantity === s.quantity);
          const hx = of(xs);
          const hy = of(ys);
          const [gx, gy] = givenSettings;
          if (hx && hy && [hx.down, hx.up, hy.down, hy.up].every(Number.isFinite)) {
            hold = [
              [coordinatesOf(coordinates, [gx - hx.down, gy]), coordinatesOf(coordinates, [gx + hx.up, gy])],
              [coordinatesOf(coordinates, [gx, gy - hy.down]), coordinatesOf(coordinates, [gx, gy + hy.up])],
            ];
          }
        }
      }
      const { box } = region.search;
      const corners: Array<readonly [number, number]> = [[box.x[0], box.y[0]], [box.x[1], box.y[0]], [box.x[1], box.y[1]], [box.x[0], box.y[1]]];
      const searched = corners.map((c) => (region.search.coordinates === coordinates ? [c[0], c[1]] as Point : coordinatesOf(coordinates, c)));

      const progress = progressBar('mapping', 'points');
      const start = performance.now();
      let map: WindowMap;
      try {
        map = await windowMap(chip, spec, {
          workers,
          seed: base.result.converged ? warmStartFrom(base) : undefined,
          // From the grid point nearest the point as given (a working one, or inside the region).
          seedColumn: nearestStep(spec.x, (current ?? region.inside)?.[0]),
          seedRow: nearestStep(spec.y, (current ?? region.inside)?.[1]),
          // Every cell the traced boundary crosses is solved down to single grid steps.
          boundaries: region.pieces.map((piece) => piece.points),
          onProgress: progress.onProgress,
        });
      } finally {
        progress.stop();
      }
      const seconds = (performance.now() - start) / 1000;

      const marks: WindowMarks = { current, target, crossings: target ? targetCrossings(map, target) : [], region, hold, searched };
      const currentClass = current ? describePoint(chip, base, { i: -1, j: -1, x: current[0], y: current[1] }).class : undefined;
      const spans = current && region.closed ? regionSpans(region.polygon, current) : undefined;
      const mapSvg = windowChart(chip.name, map, marks);
      const outputs: Output[] = [{ path: svgFile, option: '--svg', content: mapSvg }];
      if (jsonFile) {
        const { search, ...traced } = region;
        const json = { layout: file, chip: chip.name, ...map, current, target, crossings: marks.crossings, region: { searchedIn: search.coordinates, searchBox: search.box, ...traced }, holdSegments: hold, hold: holdResult };
        outputs.push({ path: jsonFile, option: '--json', content: JSON.stringify(json, jsonNumbers, 2) + '\n' });
      }
      if (csvFile) outputs.push({ path: csvFile, option: '--csv', content: windowCsv(map) });
      const text = windowText(chip.name, map, marks, { seconds, workers, current: currentClass, coordinatesReason, traceSeconds, spans, hold: holdResult });
      if (reportFile) {
        const live = base.result.converged ? liveReport({ file }, base.result) : undefined;
        const analysis = {
          title: 'Operating window',
          text,
          charts: [{ id: 'window-map', svg: live ? windowChart(chip.name, map, marks, { live: true }) : mapSvg }],
          note: live
            ? 'The map sweeps the two settings; the chip below is the layout at its own settings, and its live operating point solves that chip again in the page and marks where its two swept settings lie on the map, as long as no other setting is changed (the map holds the others as in the layout and is not swept again).'
            : 'The map sweeps the two settings; the chip below is the layout at its own settings.',
        };
        outputs.push({ path: reportFile, option: '--report', content: chipReport(base, findManifolds(base), { analysis, live }) });
      }
      writeOutputs(outputs);
      context.out(text);
    });
}

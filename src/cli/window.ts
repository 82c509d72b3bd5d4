/**
 * `stratiflow window FILE`: sweep two settings of a chip (by default the pressures of its A and
 * B inlets) over a grid, classify every point and write the map (SVG), the grid (JSON, CSV) and
 * a short summary. A target (two of flow A, flow B, throughput, ratio) is marked where its two
 * contours cross. A progress bar goes to stderr when it is a terminal.
 * Exports `registerWindow`; the map, CSV and summary are drawn by src/render/windowMap.ts, the
 * target and its crossings computed by src/analyses/window.ts.
 */
import { availableParallelism } from 'node:os';
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip, warmStartFrom, type SolvedChip } from '../analyses/chip.js';
import { describePoint, mapTarget, targetCrossings, windowMap, type WindowMap } from '../analyses/window.js';
import { settingName, settingValue, type Setting } from '../analyses/settings.js';
import { windowChart, windowCsv, windowText, type WindowMarks } from '../render/windowMap.js';
import type { Point } from '../render/chart.js';
import { parseQuantity, parseRange } from '../units/quantity.js';
import { numberOption, settingOption, wholeNumberOption, MAX_WORKERS, linearOption, type LinearSolver } from './options.js';
import { outputFile, writeOutputs, type Output } from './io.js';
import { jsonNumbers, type CommandContext } from './context.js';
import { progressBar } from './progress.js';

import { optionError } from '../errors.js';
import type { Chip } from '../network/model.js';

/** At most this many grid values along an axis: a million points at the most, hours of solves. */
const MAX_STEPS = 1000;

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
  workers?: string;
  linear: string;
}

/** The first inlet of a phase, for the default axes. */
function firstInlet(chip: Chip, phase: 'A' | 'B'): string {
  const inlet = chip.nodes.find((n) => n.kind === 'inlet' && n.phase === phase);
  if (!inlet) throw optionError(phase === 'A' ? '--x' : '--y', `the layout has no inlet of phase ${phase}; choose the setting to sweep`);
  return inlet.id;
}

/** The range of an axis; by default half to one and a half times the value as given. */
function rangeOption(text: string | undefined, flag: string, setting: Setting, current: number | undefined): [number, number] {
  const dimension = setting.quantity === 'pressure' ? 'pressure' : 'flow';
  if (text === undefined) {
    if (current === undefined || current === 0) throw optionError(flag, `give the range (e.g. ${dimension === 'pressure' ? '0kPa:5kPa' : '1uL/min:20uL/min'}): the chip as given has ${settingName(setting)} = ${current === undefined ? 'no solved value' : '0'}`);
    return [0.5 * current, 1.5 * current].sort((a, b) => a - b) as [number, number];
  }
  const [from, to] = parseRange(text, dimension, { field: flag });
  if (!(from < to)) throw optionError(flag, 'the first end must be below the second');
  return [from, to];
}

export function registerWindow(program: Command, context: CommandContext): void {
  program
    .command('window')
    .description('Map the operating window: sweep two settings (inlet or outlet pressures, inlet flows), solve the chip at every grid point and show where every split stays pinned, where outlets leak, where liquid flows back, and the throughput and flow ratio.')
    .argument('<layout>', 'layout file (YAML or JSON)')
    .option('--x <setting>', 'setting along x, as node.pressure or node.flow (default: pressure of the first A inlet)')
    .option('--x-range <from:to>', 'range along x, e.g. 10kPa:60kPa (default: half to one and a half times the value as given)')
    .option('--x-steps <n>', 'grid values along x', '41')
    .option('--y <setting>', 'setting along y (default: pressure of the first B inlet)')
    .option('--y-range <from:to>', 'range along y')
    .option('--y-steps <n>', 'grid values along y', '41')
    .option('--flow-a <flow>', 'target to mark: total flow of A')
    .option('--flow-b <flow>', 'target to mark: total flow of B')
    .option('--throughput <flow>', 'target to mark: total flow of A and B')
    .option('--ratio <A/B>', 'target to mark: flow ratio A/B')
    .option('--svg <file>', 'the map', 'window.svg')
    .option('--json <file>', 'write the grid as JSON (SI units)')
    .option('--csv <file>', 'write the grid as CSV, one row per point')
    .option('--workers <n>', 'worker threads (default: one per processor core)')
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

      // The chip as given: its settings mark the map and seed the sweep.
      const base: SolvedChip = solveChip(chip, { linear });
      const current = base.result.converged ? ([settingValue(base, xs), settingValue(base, ys)] as Point) : undefined;
      const [xFrom, xTo] = rangeOption(o.xRange, '--x-range', xs, current?.[0]);
      const [yFrom, yTo] = rangeOption(o.yRange, '--y-range', ys, current?.[1]);
      const spec = {
        x: { setting: xs, from: xFrom, to: xTo, steps: wholeNumberOption(o.xSteps, '--x-steps', 2, MAX_STEPS)! },
        y: { setting: ys, from: yFrom, to: yTo, steps: wholeNumberOption(o.ySteps, '--y-steps', 2, MAX_STEPS)! },
        solver: { linear },
      };

      const progress = progressBar('mapping', 'points');
      const start = performance.now();
      let map: WindowMap;
      try {
        map = await windowMap(chip, spec, {
          workers,
          seed: base.result.converged ? warmStartFrom(base) : undefined,
          onProgress: progress.onProgress,
        });
      } finally {
        progress.stop();
      }
      const seconds = (performance.now() - start) / 1000;

      const marks: WindowMarks = { current, target, crossings: target ? targetCrossings(map, target) : [] };
      const currentClass = current ? describePoint(chip, base, { i: -1, j: -1, x: current[0], y: current[1] }).class : undefined;
      const outputs: Output[] = [{ path: svgFile, option: '--svg', content: windowChart(chip.name, map, marks) }];
      if (jsonFile) outputs.push({ path: jsonFile, option: '--json', content: JSON.stringify({ layout: file, chip: chip.name, ...map, current, target, crossings: marks.crossings }, jsonNumbers, 2) + '\n' });
      if (csvFile) outputs.push({ path: csvFile, option: '--csv', content: windowCsv(map) });
      writeOutputs(outputs);
      context.out(windowText(chip.name, map, marks, { seconds, workers, current: currentClass }));
    });
}

/**
 * `stratiflow window FILE`: sweep two settings of a chip (by default the pressures of its A and
 * B inlets) over a grid, classify every point and write the map (SVG), the grid (JSON, CSV) and
 * a short summary. A target (two of flow A, flow B, throughput, ratio) is marked where its two
 * contours cross. A progress bar goes to stderr when it is a terminal.
 * Exports `registerWindow` and the pure steps it rests on (data in, text out): `windowChart`,
 * `windowCsv`, `windowText`, `mapTarget`, `targetCrossings`, `CLASS_LABELS`.
 */
import { availableParallelism } from 'node:os';
import type { Command } from 'commander';
import cliProgress from 'cli-progress';
import { scaleLinear } from 'd3-scale';
import { loadLayout } from '../layout/load.js';
import { solveChip, warmStartFrom, type SolvedChip } from '../analyses/chip.js';
import { describePoint, parseSetting, settingName, settingValue, windowMap, POINT_CLASSES, type PointClass, type Setting, type SweepAxis, type WindowMap, type WindowPoint } from '../analyses/window.js';
import { regionMap, type MarkedPoint, type Point } from '../render/chart.js';
import { SAFETY_NOTES } from '../render/text.js';
import { DISPLAY, fmt } from '../units/format.js';
import { parseQuantity } from '../units/quantity.js';
import { choiceOption, numberOption } from './options.js';
import { writeFileAtomic } from './io.js';
import { jsonNumbers } from './solve.js';
import type { CommandContext } from './main.js';
import { StratiflowError, optionError } from '../errors.js';
import type { Chip } from '../network/model.js';

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

export const CLASS_LABELS: Record<PointClass, string> = {
  pinned: 'all splits pinned',
  'leaking-A-to-B': 'A leaks into B outlets',
  'leaking-B-to-A': 'B leaks into A outlets',
  'leaking-both': 'leaks both ways',
  backflow: 'backflow into an inlet line',
  'over-rating': 'over the pressure rating',
  failed: 'solve failed',
};

/** Display unit of a setting. */
function unitOf(setting: Setting): { symbol: string; factor: number } {
  return setting.quantity === 'pressure' ? DISPLAY.pressure : DISPLAY.flow;
}

function show(setting: Setting, value: number): string {
  const unit = unitOf(setting);
  return `${fmt(value * unit.factor)} ${unit.symbol}`;
}

/** The flow target to mark, as throughput and ratio A/B (either may be missing). */
export interface MapTarget {
  throughput?: number;
  ratio?: number;
}

/** Target given as any two of flow A, flow B, throughput and ratio, as throughput and ratio. */
export function mapTarget(t: { flowA?: number; flowB?: number; throughput?: number; ratio?: number }): MapTarget | undefined {
  const given = [t.flowA, t.flowB, t.throughput, t.ratio].filter((v) => v !== undefined).length;
  if (given === 0) return undefined;
  if (given > 2) throw optionError('--ratio', 'give at most two of --flow-a, --flow-b, --throughput and --ratio');
  let { throughput, ratio } = t;
  const { flowA, flowB } = t;
  if (flowA !== undefined && flowB !== undefined) return { throughput: flowA + flowB, ratio: flowA / flowB };
  if (flowA !== undefined && throughput !== undefined) ratio = flowA / (throughput - flowA);
  else if (flowB !== undefined && throughput !== undefined) ratio = (throughput - flowB) / flowB;
  else if (flowA !== undefined && ratio !== undefined) throughput = flowA * (1 + 1 / ratio);
  else if (flowB !== undefined && ratio !== undefined) throughput = flowB * (1 + ratio);
  else if (flowA !== undefined || flowB !== undefined) return undefined;
  return { throughput, ratio };
}

/**
 * Where the fields cross both target levels, in setting values: each grid cell is cut into two
 * triangles on which the fields are linear, and the 2×2 system is solved on each.
 */
export function targetCrossings(map: WindowMap, target: MapTarget): Point[] {
  if (target.throughput === undefined || target.ratio === undefined) return [];
  const f = (p: WindowPoint) => [p.throughput - target.throughput!, p.flowRatio - target.ratio!] as const;
  const found: Point[] = [];
  const { points, xValues, yValues } = map;
  for (let j = 0; j + 1 < yValues.length; j++) {
    for (let i = 0; i + 1 < xValues.length; i++) {
      const corners = [points[j]![i]!, points[j]![i + 1]!, points[j + 1]![i]!, points[j + 1]![i + 1]!];
      if (corners.some((p) => !Number.isFinite(p.throughput) || !Number.isFinite(p.flowRatio))) continue;
      for (const [a, b, c] of [[0, 1, 3], [0, 3, 2]] as const) {
        const [pa, pb, pc] = [corners[a]!, corners[b]!, corners[c]!];
        const [fa, fb, fc] = [f(pa), f(pb), f(pc)];
        // f(s, t) = fa + s (fb − fa) + t (fc − fa) = 0 on the triangle s, t ≥ 0, s + t ≤ 1.
        const m11 = fb[0] - fa[0];
        const m12 = fc[0] - fa[0];
        const m21 = fb[1] - fa[1];
        const m22 = fc[1] - fa[1];
        const det = m11 * m22 - m12 * m21;
        if (det === 0) continue;
        const s = (-fa[0] * m22 + fa[1] * m12) / det;
        const t = (-fa[1] * m11 + fa[0] * m21) / det;
        if (s < 0 || t < 0 || s + t > 1) continue;
        found.push([pa.x + s * (pb.x - pa.x) + t * (pc.x - pa.x), pa.y + s * (pb.y - pa.y) + t * (pc.y - pa.y)]);
      }
    }
  }
  // A crossing on a shared edge is found from both sides.
  return found.filter((p, k) => found.findIndex((q) => Math.abs(q[0] - p[0]) + Math.abs(q[1] - p[1]) < 1e-9 * (Math.abs(p[0]) + Math.abs(p[1]) + 1e-30)) === k);
}

/** About `count` round levels inside the finite values: linear steps, or 1-2-5 steps over a wide positive range. */
function contourLevels(values: number[], count: number, extra?: number): number[] {
  const finite = values.filter(Number.isFinite);
  if (finite.length === 0) return [];
  const lo = Math.min(...finite);
  const hi = Math.max(...finite);
  let levels: number[];
  if (lo > 0 && hi / lo > 20) {
    levels = [];
    for (let decade = 10 ** Math.floor(Math.log10(lo)); decade <= hi; decade *= 10) for (const k of [1, 2, 5]) levels.push(Number((k * decade).toPrecision(1)));
    while (levels.length > count + 2) levels = levels.filter((_, k) => k % 2 === 0);
  } else {
    levels = scaleLinear().domain([lo, hi]).ticks(count);
  }
  levels = levels.filter((v) => v > lo && v < hi);
  if (extra !== undefined && extra > lo && extra < hi && !levels.includes(extra)) levels.push(extra);
  return levels.sort((a, b) => a - b);
}

export interface WindowMarks {
  current?: Point;
  target?: MapTarget;
  crossings: Point[];
}

/** The SVG map: regions by class, contours of throughput and flow ratio, marked points. */
export function windowChart(chipName: string, map: WindowMap, marks: WindowMarks): string {
  const { x, y } = map.spec;
  const ux = unitOf(x.setting);
  const uy = unitOf(y.setting);
  // Every class keeps its colour and hatch from map to map, so the legend lists them all.
  const cells = map.points.map((row) => row.map((p) => POINT_CLASSES.indexOf(p.class)));
  const half = (axis: SweepAxis) => (axis.to - axis.from) / (2 * (axis.steps - 1));
  const flow = DISPLAY.flow.factor;
  // Where liquid flows back the inlet totals no longer describe the run: no contours there.
  const forward = (p: WindowPoint, v: number) => (p.class === 'backflow' ? NaN : v);
  const throughput = map.points.map((row) => row.map((p) => forward(p, p.throughput * flow)));
  const ratio = map.points.map((row) => row.map((p) => forward(p, p.flowRatio)));
  // A target on the point as given (a tuned layout) is one mark with both names.
  const close = (a: Point, b: Point) => Math.abs(a[0] - b[0]) < 1e-3 * Math.abs(x.to - x.from) && Math.abs(a[1] - b[1]) < 1e-3 * Math.abs(y.to - y.from);
  const onCurrent = marks.current !== undefined && marks.crossings.some((c) => close(c, marks.current!));
  const points: MarkedPoint[] = [];
  if (marks.current) points.push({ at: [marks.current[0] * ux.factor, marks.current[1] * uy.factor], label: onCurrent ? 'as given = target' : 'as given' });
  for (const c of marks.crossings) if (!(onCurrent && close(c, marks.current!))) points.push({ at: [c[0] * ux.factor, c[1] * uy.factor], label: 'target' });
  return regionMap({
    title: `${chipName}: operating window`,
    width: 760,
    height: 620,
    x: { label: `${settingName(x.setting)}`, unit: ux.symbol, domain: [(x.from - half(x)) * ux.factor, (x.to + half(x)) * ux.factor] },
    y: { label: `${settingName(y.setting)}`, unit: uy.symbol, domain: [(y.from - half(y)) * uy.factor, (y.to + half(y)) * uy.factor] },
    classes: POINT_CLASSES.map((c) => CLASS_LABELS[c]),
    cells,
    contours: [
      { label: 'throughput', unit: DISPLAY.flow.symbol, values: throughput, levels: contourLevels(throughput.flat(), 5, marks.target?.throughput !== undefined ? Number((marks.target.throughput * flow).toPrecision(6)) : undefined) },
      { label: 'flow ratio A/B', values: ratio, levels: contourLevels(ratio.flat(), 5, marks.target?.ratio) },
    ],
    points,
  });
}

const CSV_COLUMNS: Array<{ name: (map: WindowMap) => string; value: (p: WindowPoint, map: WindowMap) => number | string }> = [
  { name: () => 'i', value: (p) => p.i },
  { name: () => 'j', value: (p) => p.j },
  { name: (m) => `${settingName(m.spec.x.setting)}_${csvUnit(m.spec.x.setting)}`, value: (p, m) => p.x * unitOf(m.spec.x.setting).factor },
  { name: (m) => `${settingName(m.spec.y.setting)}_${csvUnit(m.spec.y.setting)}`, value: (p, m) => p.y * unitOf(m.spec.y.setting).factor },
  { name: () => 'class', value: (p) => p.class },
  { name: () => 'pinned', value: (p) => p.pinned },
  { name: () => 'leakingAtoB', value: (p) => p.leakingAtoB },
  { name: () => 'leakingBtoA', value: (p) => p.leakingBtoA },
  { name: () => 'backflow', value: (p) => p.backflow.join(' ') },
  { name: () => 'maxPressure_kPa', value: (p) => p.maxPressure * DISPLAY.pressure.factor },
  { name: () => 'throughputA_uL_min', value: (p) => p.throughputA * DISPLAY.flow.factor },
  { name: () => 'throughputB_uL_min', value: (p) => p.throughputB * DISPLAY.flow.factor },
  { name: () => 'throughput_uL_min', value: (p) => p.throughput * DISPLAY.flow.factor },
  { name: () => 'flowRatio', value: (p) => p.flowRatio },
  { name: () => 'spreadCv', value: (p) => p.spreadCv },
  { name: () => 'spreadMaxMin', value: (p) => p.spreadMaxMin },
  { name: () => 'minMargin_Pa', value: (p) => p.minMargin },
  { name: () => 'iterations', value: (p) => p.iterations },
  { name: () => 'attempts', value: (p) => p.attempts },
  { name: () => 'message', value: (p) => p.message ?? '' },
];

function csvUnit(setting: Setting): string {
  return setting.quantity === 'pressure' ? 'kPa' : 'uL_min';
}

function csvCell(v: number | string): string {
  if (typeof v === 'number') return Number.isFinite(v) ? String(Number(v.toPrecision(10))) : '';
  return /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

export function windowCsv(map: WindowMap): string {
  const rows = map.points.flat().map((p) => CSV_COLUMNS.map((c) => csvCell(c.value(p, map))).join(','));
  return [CSV_COLUMNS.map((c) => c.name(map)).join(','), ...rows].join('\n') + '\n';
}

export function windowText(chipName: string, map: WindowMap, marks: WindowMarks, run: { seconds: number; workers: number; current?: PointClass }): string {
  const { x, y } = map.spec;
  const total = map.xValues.length * map.yValues.length;
  const out: string[] = [];
  const axis = (a: SweepAxis) => `${settingName(a.setting)} ${show(a.setting, a.from)} … ${show(a.setting, a.to)} (${a.steps} steps)`;
  out.push(`${chipName}: operating window over ${axis(x)} × ${axis(y)}`);
  out.push(`${total} points, ${map.splits} splits each; ${run.seconds.toFixed(1)} s on ${run.workers} worker${run.workers > 1 ? 's' : ''}`);
  out.push('');
  const width = Math.max(...POINT_CLASSES.map((c) => CLASS_LABELS[c].length));
  for (const c of POINT_CLASSES) {
    if (map.counts[c] === 0) continue;
    out.push(`  ${CLASS_LABELS[c].padEnd(width)}  ${String(map.counts[c]).padStart(String(total).length)} points`);
  }
  const pinned = map.points.flat().filter((p) => p.class === 'pinned');
  out.push('');
  if (pinned.length > 0) {
    const range = (values: number[], s: Setting) => `${show(s, Math.min(...values))} … ${show(s, Math.max(...values))}`;
    const flows = pinned.map((p) => p.throughput * DISPLAY.flow.factor);
    const ratios = pinned.map((p) => p.flowRatio);
    out.push('where every split is pinned');
    out.push(`  ${settingName(x.setting)}  ${range(pinned.map((p) => p.x), x.setting)}`);
    out.push(`  ${settingName(y.setting)}  ${range(pinned.map((p) => p.y), y.setting)}`);
    out.push(`  throughput  ${fmt(Math.min(...flows))} … ${fmt(Math.max(...flows))} ${DISPLAY.flow.symbol}; flow ratio A/B ${fmt(Math.min(...ratios))} … ${fmt(Math.max(...ratios))}`);
    const best = pinned.reduce((a, b) => (b.minMargin > a.minMargin ? b : a));
    out.push(`  most room: every split at least ${fmt(best.minMargin)} Pa inside its window at ${settingName(x.setting)} = ${show(x.setting, best.x)}, ${settingName(y.setting)} = ${show(y.setting, best.y)}`);
  } else {
    out.push('no grid point has every split pinned');
  }
  if (marks.current) out.push(`as given: ${settingName(x.setting)} = ${show(x.setting, marks.current[0])}, ${settingName(y.setting)} = ${show(y.setting, marks.current[1])}${run.current ? ` (${CLASS_LABELS[run.current]})` : ''}`);
  if (marks.target) {
    const wanted = [
      marks.target.throughput !== undefined ? `throughput ${fmt(marks.target.throughput * DISPLAY.flow.factor)} ${DISPLAY.flow.symbol}` : undefined,
      marks.target.ratio !== undefined ? `ratio ${fmt(marks.target.ratio)}` : undefined,
    ].filter(Boolean).join(', ');
    if (marks.crossings.length === 0) out.push(`target ${wanted}: ${marks.target.throughput !== undefined && marks.target.ratio !== undefined ? 'its two contours do not cross inside the map' : 'drawn as a contour'}`);
    for (const c of marks.crossings) out.push(`target ${wanted}: near ${settingName(x.setting)} = ${show(x.setting, c[0])}, ${settingName(y.setting)} = ${show(y.setting, c[1])} (read off the grid; stratiflow tune finds it exactly)`);
  }
  out.push(map.maxPressure !== undefined
    ? `pressure rating ${fmt(map.maxPressure / 1e3)} kPa; ${map.counts['over-rating']} points above it`
    : 'the layout gives no pressure rating (maxPressure): check the pressures against the rating of the chip, fittings and tubing yourself');
  out.push('');
  out.push('cautions');
  for (const note of SAFETY_NOTES) out.push(`  - ${note}`);
  return out.join('\n') + '\n';
}

// ---------------------------------------------------------------------------------------------
// The command

function wholeNumber(value: string | undefined, flag: string, min: number, max: number): number | undefined {
  if (value === undefined) return undefined;
  const n = numberOption(value, flag)!;
  if (!Number.isInteger(n) || n < min || n > max) throw optionError(flag, `must be a whole number from ${min} to ${max}`);
  return n;
}

function settingOption(text: string, flag: string, chip: Chip): Setting {
  try {
    return parseSetting(text, chip);
  } catch (error) {
    if (error instanceof StratiflowError) throw optionError(flag, error.message);
    throw error;
  }
}

/** The first inlet of a phase, for the default axes. */
function firstInlet(chip: Chip, phase: 'A' | 'B'): string {
  const inlet = chip.nodes.find((n) => n.kind === 'inlet' && n.phase === phase);
  if (!inlet) throw optionError(phase === 'A' ? '--x' : '--y', `the layout has no inlet of phase ${phase}; choose the setting to sweep`);
  return inlet.id;
}

/** "10kPa:60kPa" (or "10:60kPa", the unit of the second end applying to both). */
function rangeOption(text: string | undefined, flag: string, setting: Setting, current: number | undefined): [number, number] {
  const dimension = setting.quantity === 'pressure' ? 'pressure' : 'flow';
  if (text === undefined) {
    if (current === undefined || current === 0) throw optionError(flag, `give the range (e.g. ${dimension === 'pressure' ? '0kPa:5kPa' : '1uL/min:20uL/min'}): the chip as given has ${settingName(setting)} = ${current === undefined ? 'no solved value' : '0'}`);
    return [0.5 * current, 1.5 * current].sort((a, b) => a - b) as [number, number];
  }
  const parts = text.split(':');
  if (parts.length !== 2) throw optionError(flag, `"${text}" is not a range: write from:to, e.g. 10kPa:60kPa`);
  const unit = /[A-Za-zµ/]+.*$/.exec(parts[1]!.trim())?.[0];
  const read = (s: string) => parseQuantity(/^[-+]?[\d.]+([eE][-+]?\d+)?$/.test(s.trim()) && unit ? `${s.trim()} ${unit}` : s, dimension, { field: flag });
  const [from, to] = [read(parts[0]!), read(parts[1]!)];
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
    .option('--linear <sparse|dense>', 'linear solver inside Newton', 'sparse')
    .action(async (file: string, o: WindowOptions) => {
      const chip = loadLayout(file);
      const linear = choiceOption(o.linear, '--linear', ['sparse', 'dense'] as const);
      const xs = settingOption(o.x ?? `${firstInlet(chip, 'A')}.pressure`, '--x', chip);
      const ys = settingOption(o.y ?? `${firstInlet(chip, 'B')}.pressure`, '--y', chip);
      if (xs.node === ys.node) throw optionError('--y', 'the two settings must belong to different nodes');
      const flowTarget = (v: string | undefined, flag: string) => (v === undefined ? undefined : parseQuantity(v, 'flow', { field: flag }));
      const ratio = o.ratio === undefined ? undefined : numberOption(o.ratio, '--ratio');
      if (ratio !== undefined && !(ratio > 0)) throw optionError('--ratio', 'must be positive');
      const target = mapTarget({ flowA: flowTarget(o.flowA, '--flow-a'), flowB: flowTarget(o.flowB, '--flow-b'), throughput: flowTarget(o.throughput, '--throughput'), ratio });
      const workers = wholeNumber(o.workers, '--workers', 1, 256) ?? availableParallelism();

      // The chip as given: its settings mark the map and seed the sweep.
      const base: SolvedChip = solveChip(chip, { linear });
      const current = base.result.converged ? ([settingValue(base, xs), settingValue(base, ys)] as Point) : undefined;
      const [xFrom, xTo] = rangeOption(o.xRange, '--x-range', xs, current?.[0]);
      const [yFrom, yTo] = rangeOption(o.yRange, '--y-range', ys, current?.[1]);
      const spec = {
        x: { setting: xs, from: xFrom, to: xTo, steps: wholeNumber(o.xSteps, '--x-steps', 2, 1000)! },
        y: { setting: ys, from: yFrom, to: yTo, steps: wholeNumber(o.ySteps, '--y-steps', 2, 1000)! },
        solver: { linear },
      };

      const bar = process.stderr.isTTY
        ? new cliProgress.SingleBar({ stream: process.stderr, format: 'mapping |{bar}| {value}/{total} points, {eta_formatted} left', hideCursor: true, clearOnComplete: true }, cliProgress.Presets.shades_classic)
        : undefined;
      const start = performance.now();
      let map: WindowMap;
      try {
        map = await windowMap(chip, spec, {
          workers,
          seed: base.result.converged ? warmStartFrom(base) : undefined,
          onProgress: bar
            ? (done, total) => {
                if (done === 1) bar.start(total, done);
                else bar.update(done);
              }
            : undefined,
        });
      } finally {
        bar?.stop();
      }
      const seconds = (performance.now() - start) / 1000;

      const marks: WindowMarks = { current, target, crossings: target ? targetCrossings(map, target) : [] };
      const currentClass = current ? describePoint(chip, base, { i: -1, j: -1, x: current[0], y: current[1] }).class : undefined;
      const svg = windowChart(chip.name, map, marks);
      const json = o.json ? JSON.stringify({ layout: file, chip: chip.name, ...map, current, target, crossings: marks.crossings }, jsonNumbers, 2) + '\n' : undefined;
      const csv = o.csv ? windowCsv(map) : undefined;
      writeFileAtomic(o.svg, svg);
      if (o.json) writeFileAtomic(o.json, json!);
      if (o.csv) writeFileAtomic(o.csv, csv!);
      context.out(windowText(chip.name, map, marks, { seconds, workers, current: currentClass }));
    });
}

/**
 * Pictures and text of a window map: the region map with throughput and ratio contours and the
 * marked points (`windowChart`; in a live report with the page's operating point, which the
 * page places by `liveMapPoint`), the grid as CSV (`windowCsv`), the summary (`windowText`), and
 * where a target's two contours cross (`targetCrossings`). Pure: data in, text out.
 */
import { scaleLinear } from 'd3-scale';
import { POINT_CLASSES, type MapTarget, type PointClass, type SweepAxis, type WindowMap, type WindowPoint } from '../analyses/window.js';
import { coordinatesOf, limitName, type WindowCoordinates, type WindowLimit, type WindowRegion } from '../analyses/windowRegion.js';
import { settingName, type Setting } from '../analyses/settings.js';
import { movableAt, regionMap, type MarkedPoint, type MovableFrame, type Point } from './chart.js';
import { cautionLines, holdLines } from './text.js';
import type { HoldResult } from '../analyses/hold.js';
import { DISPLAY, fmt } from '../units/format.js';
import { max as maxOf, min as minOf } from 'd3-array';

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

/** What an axis shows: its name and display unit (a difference of pressures in Pa: it is the small one). */
export interface AxisDisplay {
  name: string;
  symbol: string;
  factor: number;
  /** Name for file columns. */
  column: string;
}

export function axisDisplay(x: Setting, y: Setting, coordinates: WindowCoordinates | undefined, which: 'x' | 'y'): AxisDisplay {
  const own = which === 'x' ? x : y;
  if ((coordinates ?? 'settings') === 'settings') {
    const unit = unitOf(own);
    return { name: settingName(own), ...unit, column: `${settingName(own)}_${csvUnit(own)}` };
  }
  if (which === 'x') return { name: `mean of ${settingName(x)} and ${settingName(y)}`, ...unitOf(x), column: `mean_${csvUnit(x)}` };
  const unit = x.quantity === 'pressure' ? DISPLAY.pressureDifference : DISPLAY.flow;
  return { name: `${settingName(x)} − ${settingName(y)}`, ...unit, column: `difference_${x.quantity === 'pressure' ? 'Pa' : 'uL_min'}` };
}

function showOn(axis: AxisDisplay, value: number): string {
  return `${fmt(value * axis.factor)} ${axis.symbol}`;
}

/** A short label of a boundary piece for the map: `s6 low`, `k3 starved of B`, `range`. */
export function pieceLabel(limit: WindowLimit, alike: readonly WindowLimit[]): string {
  const more = alike.length ? ` (+${alike.length})` : '';
  switch (limit.kind) {
    case 'split-low':
      return `${limit.id} low${more}`;
    case 'split-high':
      return `${limit.id} high${more}`;
    case 'starved':
      return `${limit.id} starved of ${limit.phase}${more}`;
    case 'backflow':
      return `${limit.id} backflow${more}`;
    case 'rating':
      return `${limit.id} rating${more}`;
    case 'range':
      return '';
    case 'unsettled':
      return 'not settled';
  }
}

/** About `count` round levels inside the finite values: linear steps, or 1-2-5 steps over a wide positive range. */
function contourLevels(values: number[], count: number, extra?: number): number[] {
  const finite = values.filter(Number.isFinite);
  if (finite.length === 0) return [];
  const lo = minOf(finite) ?? Infinity;
  const hi = maxOf(finite) ?? -Infinity;
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
  /** The traced working region, in the map's coordinates. */
  region?: WindowRegion;
  /** How far each axis setting may move alone at the point as given: one segment per setting, in the map's coordinates. */
  hold?: Point[][];
  /** The box the region was traced in, as a closed outline in the map's coordinates. */
  searched?: Point[];
}

/** What the live point of a map carries besides its frame: the two settings, the coordinates and the display factors. */
export interface LiveMapData extends MovableFrame {
  xSetting?: string;
  ySetting?: string;
  coordinates?: string;
  xFactor?: string;
  yFactor?: string;
}

/**
 * Where the live point of a map (`windowChart` with `live`) goes when its two settings have
 * the values `settings` (SI), as its group's transform, or undefined off the map.
 */
export function liveMapPoint(data: LiveMapData, settings: readonly [number, number]): string | undefined {
  const [u, v] = coordinatesOf(data.coordinates === 'mean-difference' ? 'mean-difference' : 'settings', settings);
  return movableAt(data, [u * Number(data.xFactor), v * Number(data.yFactor)]);
}

/**
 * The SVG map: regions by class, contours of throughput and flow ratio, marked points; with
 * `live`, also the point a live report's page moves to its current settings (hidden until then).
 */
export function windowChart(chipName: string, map: WindowMap, marks: WindowMarks, options: { live?: boolean } = {}): string {
  const { x, y } = map.spec;
  const ax = axisDisplay(x.setting, y.setting, map.spec.coordinates, 'x');
  const ay = axisDisplay(x.setting, y.setting, map.spec.coordinates, 'y');
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
  const at = (p: Point): Point => [p[0] * ax.factor, p[1] * ay.factor];
  const points: MarkedPoint[] = [];
  if (marks.current) points.push({ at: at(marks.current), label: onCurrent ? 'as given = target' : 'as given' });
  for (const c of marks.crossings) if (!(onCurrent && close(c, marks.current!))) points.push({ at: at(c), label: 'target' });
  const region = marks.region && marks.region.polygon.length > 2
    ? {
        label: `working region (traced${marks.region.closed ? '' : ', not closed'})`,
        fillClass: POINT_CLASSES.indexOf('pinned'),
        polygon: marks.region.polygon.map(at),
        pieces: marks.region.pieces.map((piece) => ({ points: piece.points.map(at), label: pieceLabel(piece.limit, piece.alike) })),
      }
    : undefined;
  const notes = fillNote(map);
  return regionMap({
    title: `${chipName}: operating window`,
    width: 760,
    height: 620 + (notes.length > 0 ? 36 : 0),
    notes,
    x: { label: ax.name, unit: ax.symbol, domain: [(x.from - half(x)) * ax.factor, (x.to + half(x)) * ax.factor] },
    y: { label: ay.name, unit: ay.symbol, domain: [(y.from - half(y)) * ay.factor, (y.to + half(y)) * ay.factor] },
    classes: POINT_CLASSES.map((c) => CLASS_LABELS[c]),
    cells,
    contours: [
      {
        label: 'throughput',
        unit: DISPLAY.flow.symbol,
        values: throughput,
        levels: contourLevels(throughput.flat(), 5, marks.target?.throughput !== undefined ? Number((marks.target.throughput * flow).toPrecision(6)) : undefined),
        format: (v) => `${Number(v.toPrecision(4))} ${DISPLAY.flow.symbol}`,
      },
      { label: 'flow ratio A/B', values: ratio, levels: contourLevels(ratio.flat(), 5, marks.target?.ratio), format: (v) => `A/B ${Number(v.toPrecision(4))}` },
    ],
    points,
    region,
    outlines: [
      ...(marks.searched ? [{ label: 'range searched for the region', lines: [marks.searched.map(at)], closed: true, dash: '2 3' }] : []),
      ...(marks.hold ? [{ label: 'hold: how far each setting may move alone', lines: marks.hold.map((line) => line.map(at)), closed: false, dash: '6 3' }] : []),
    ],
    ...(options.live
      ? {
          movable: {
            label: 'live: the settings of the page (while no other is changed)',
            attrs: {
              'data-x-setting': settingName(x.setting), 'data-y-setting': settingName(y.setting), 'data-coordinates': map.spec.coordinates ?? 'settings',
              'data-x-factor': String(ax.factor), 'data-y-factor': String(ay.factor),
            },
          },
        }
      : {}),
  });
}

/**
 * What the map says of its filled points: how many, that their class is their cell's and their
 * figures interpolated, and the estimated error of the contoured figures (./../analyses/windowFill.ts).
 */
export function fillNote(map: WindowMap): string[] {
  const { fill } = map;
  if (fill.filled === 0) return [];
  const total = fill.solved + fill.filled;
  const error = [
    Number.isFinite(fill.throughputError) ? `throughput ${fmt(fill.throughputError * DISPLAY.flow.factor, 2)} ${DISPLAY.flow.symbol}` : undefined,
    Number.isFinite(fill.flowRatioError) ? `flow ratio ${fmt(fill.flowRatioError, 2)}` : undefined,
  ].filter(Boolean).join(', ');
  return [
    `${fill.solved} of ${total} grid points solved; ${fill.filled} filled with the class their cell's solved corners share (no traced boundary crosses those cells),`,
    `their throughput and ratio interpolated${error ? ` (estimated error at most ${error}, from second differences of the coarse grid)` : ''}.`,
  ];
}

const CSV_COLUMNS: Array<{ name: (map: WindowMap) => string; value: (p: WindowPoint, map: WindowMap) => number | string }> = [
  { name: () => 'i', value: (p) => p.i },
  { name: () => 'j', value: (p) => p.j },
  { name: (m) => axisOf(m, 'x').column, value: (p, m) => p.x * axisOf(m, 'x').factor },
  { name: (m) => axisOf(m, 'y').column, value: (p, m) => p.y * axisOf(m, 'y').factor },
  { name: () => 'class', value: (p) => p.class },
  { name: () => 'solved', value: (p) => (p.solved ? 'yes' : 'filled') },
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

function axisOf(map: WindowMap, which: 'x' | 'y'): AxisDisplay {
  return axisDisplay(map.spec.x.setting, map.spec.y.setting, map.spec.coordinates, which);
}

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

/** How the map was made, for its summary. */
export interface WindowRun {
  seconds: number;
  workers: number;
  current?: PointClass;
  /** Why the axes are the mean and difference of the settings, when the command chose them. */
  coordinatesReason?: string;
  /** Time of the trace of the working region, s. */
  traceSeconds?: number;
  /** The working region's extent along each axis through the point as given. */
  spans?: { x?: [number, number]; y?: [number, number] };
  /** Hold tolerances at the point as given, with the axes' settings set (src/analyses/hold.ts). */
  hold?: HoldResult;
}

export function windowText(chipName: string, map: WindowMap, marks: WindowMarks, run: WindowRun): string {
  const { x, y } = map.spec;
  const ax = axisOf(map, 'x');
  const ay = axisOf(map, 'y');
  const total = map.xValues.length * map.yValues.length;
  const out: string[] = [];
  const axis = (a: SweepAxis, d: AxisDisplay) => `${d.name} ${showOn(d, a.from)} … ${showOn(d, a.to)} (${a.steps} steps)`;
  out.push(`${chipName}: operating window over ${axis(x, ax)} × ${axis(y, ay)}`);
  if (run.coordinatesReason) out.push(`axes: ${run.coordinatesReason}`);
  const region = marks.region;
  if (region) {
    out.push('');
    if (region.pieces.length === 0) {
      out.push(`working region: not found (${region.message ?? 'no boundary traced'}; ${region.solves} solves)`);
    } else {
      const where = (u: readonly [number, number]) => `${showOn(ax, u[0])}, ${showOn(ay, u[1])}`;
      out.push(`working region (every split pinned, every contactor fed, no inlet taking liquid back, within the rating), traced exactly: ${region.closed ? 'closed' : `not closed: ${region.message}`}; ${region.solves} solves${run.traceSeconds !== undefined ? `, ${run.traceSeconds.toFixed(1)} s` : ''}`);
      out.push('  bounded by');
      for (const piece of region.pieces) {
        const alike = piece.alike.length ? `, with ${piece.alike.length} more on the same line (${piece.alike.map((l) => l.id).join(' ')})` : '';
        out.push(`    ${limitName(piece.limit)}${alike}: from (${where(piece.points[0]!)}) to (${where(piece.points.at(-1)!)})`);
      }
      const spans = run.spans;
      // A width of pressures in pascals: it is the small figure a reader looks for.
      const wide = (d: AxisDisplay, w: number) => (d.symbol === DISPLAY.pressure.symbol ? `${fmt(w * DISPLAY.pressureDifference.factor)} ${DISPLAY.pressureDifference.symbol}` : showOn(d, w));
      if (spans?.x) out.push(`  through the point as given it spans ${ax.name} ${showOn(ax, spans.x[0])} … ${showOn(ax, spans.x[1])} (${wide(ax, spans.x[1] - spans.x[0])} wide)`);
      if (spans?.y) out.push(`  through the point as given it spans ${ay.name} ${showOn(ay, spans.y[0])} … ${showOn(ay, spans.y[1])} (${wide(ay, spans.y[1] - spans.y[0])} wide)`);
    }
  }
  out.push('');
  out.push(`grid: ${total} points, ${map.splits} splits each; ${run.seconds.toFixed(1)} s on ${run.workers} worker${run.workers > 1 ? 's' : ''}`);
  for (const line of fillNote(map)) out.push(`  ${line}`);
  const width = maxOf(POINT_CLASSES.map((c) => CLASS_LABELS[c].length)) ?? -Infinity;
  for (const c of POINT_CLASSES) {
    if (map.counts[c] === 0) continue;
    out.push(`  ${CLASS_LABELS[c].padEnd(width)}  ${String(map.counts[c]).padStart(String(total).length)} points`);
  }
  const pinned = map.points.flat().filter((p) => p.class === 'pinned');
  out.push('');
  if (pinned.length > 0) {
    const range = (values: number[], d: AxisDisplay) => `${showOn(d, minOf(values) ?? Infinity)} … ${showOn(d, maxOf(values) ?? -Infinity)}`;
    const flows = pinned.map((p) => p.throughput * DISPLAY.flow.factor);
    const ratios = pinned.map((p) => p.flowRatio);
    out.push('grid points where the chip works');
    out.push(`  ${ax.name}  ${range(pinned.map((p) => p.x), ax)}`);
    out.push(`  ${ay.name}  ${range(pinned.map((p) => p.y), ay)}`);
    out.push(`  throughput  ${fmt(minOf(flows) ?? Infinity)} … ${fmt(maxOf(flows) ?? -Infinity)} ${DISPLAY.flow.symbol}; flow ratio A/B ${fmt(minOf(ratios) ?? Infinity)} … ${fmt(maxOf(ratios) ?? -Infinity)}`);
    const best = pinned.reduce((a, b) => (b.minMargin > a.minMargin ? b : a));
    out.push(`  most room: every split at least ${fmt(best.minMargin)} Pa inside its window at ${ax.name} = ${showOn(ax, best.x)}, ${ay.name} = ${showOn(ay, best.y)}`);
  } else {
    out.push(`no grid point has every split pinned${region && region.pieces.length > 0 ? ' (the working region, traced above, lies between grid points)' : ''}`);
  }
  if (marks.current) out.push(`as given: ${ax.name} = ${showOn(ax, marks.current[0])}, ${ay.name} = ${showOn(ay, marks.current[1])}${run.current ? ` (${CLASS_LABELS[run.current]})` : ''}`);
  if (marks.target) {
    const wanted = [
      marks.target.throughput !== undefined ? `throughput ${fmt(marks.target.throughput * DISPLAY.flow.factor)} ${DISPLAY.flow.symbol}` : undefined,
      marks.target.ratio !== undefined ? `ratio ${fmt(marks.target.ratio)}` : undefined,
    ].filter(Boolean).join(', ');
    if (marks.crossings.length === 0) out.push(`target ${wanted}: ${marks.target.throughput !== undefined && marks.target.ratio !== undefined ? 'its two contours do not cross inside the map' : 'drawn as a contour'}`);
    for (const c of marks.crossings) out.push(`target ${wanted}: near ${ax.name} = ${showOn(ax, c[0])}, ${ay.name} = ${showOn(ay, c[1])} (read off the grid; stratiflow tune finds it exactly)`);
  }
  if (run.hold) out.push('', ...holdLines(run.hold));
  out.push(map.maxPressure !== undefined
    ? `pressure rating ${fmt(map.maxPressure * DISPLAY.pressure.factor)} ${DISPLAY.pressure.symbol}; ${map.counts['over-rating']} points above it`
    : 'the layout gives no pressure rating (maxPressure): check the pressures against the rating of the chip, fittings and tubing yourself');
  out.push('');
  out.push(...cautionLines());
  return out.join('\n') + '\n';
}

// ---------------------------------------------------------------------------------------------
// The command

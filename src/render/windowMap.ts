/**
 * Pictures and text of a window map: the region map with throughput and ratio contours and the
 * marked points (`windowChart`), the grid as CSV (`windowCsv`), the summary (`windowText`), and
 * where a target's two contours cross (`targetCrossings`). Pure: data in, text out.
 */
import { scaleLinear } from 'd3-scale';
import { POINT_CLASSES, type MapTarget, type PointClass, type SweepAxis, type WindowMap, type WindowPoint } from '../analyses/window.js';
import { settingName, type Setting } from '../analyses/settings.js';
import { regionMap, type MarkedPoint, type Point } from './chart.js';
import { cautionLines } from './text.js';
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

function show(setting: Setting, value: number): string {
  const unit = unitOf(setting);
  return `${fmt(value * unit.factor)} ${unit.symbol}`;
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
  const width = maxOf(POINT_CLASSES.map((c) => CLASS_LABELS[c].length)) ?? -Infinity;
  for (const c of POINT_CLASSES) {
    if (map.counts[c] === 0) continue;
    out.push(`  ${CLASS_LABELS[c].padEnd(width)}  ${String(map.counts[c]).padStart(String(total).length)} points`);
  }
  const pinned = map.points.flat().filter((p) => p.class === 'pinned');
  out.push('');
  if (pinned.length > 0) {
    const range = (values: number[], s: Setting) => `${show(s, minOf(values) ?? Infinity)} … ${show(s, maxOf(values) ?? -Infinity)}`;
    const flows = pinned.map((p) => p.throughput * DISPLAY.flow.factor);
    const ratios = pinned.map((p) => p.flowRatio);
    out.push('where every split is pinned');
    out.push(`  ${settingName(x.setting)}  ${range(pinned.map((p) => p.x), x.setting)}`);
    out.push(`  ${settingName(y.setting)}  ${range(pinned.map((p) => p.y), y.setting)}`);
    out.push(`  throughput  ${fmt(minOf(flows) ?? Infinity)} … ${fmt(maxOf(flows) ?? -Infinity)} ${DISPLAY.flow.symbol}; flow ratio A/B ${fmt(minOf(ratios) ?? Infinity)} … ${fmt(maxOf(ratios) ?? -Infinity)}`);
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
    ? `pressure rating ${fmt(map.maxPressure * DISPLAY.pressure.factor)} ${DISPLAY.pressure.symbol}; ${map.counts['over-rating']} points above it`
    : 'the layout gives no pressure rating (maxPressure): check the pressures against the rating of the chip, fittings and tubing yourself');
  out.push('');
  out.push(...cautionLines());
  return out.join('\n') + '\n';
}

// ---------------------------------------------------------------------------------------------
// The command

/**
 * Charts as pure functions: a typed spec in, an SVG string out. Exports `lineChart`, `heatmap`,
 * `barChart`, `dotChart`, `histogram`, `regionMap` and their spec types, and the data steps they
 * rest on: `histogramBins`, `isoSegments` and `joinSegments` (contour lines).
 * Scales, ticks and tick labels come from d3-scale; drawing primitives from ./svg.ts.
 *
 * Values are drawn in the unit they arrive in. The caller converts SI values to the display unit
 * and names that unit in the axis spec (`{ label: 'depth', unit: 'µm' }`), or passes a `format`
 * for tick labels; nothing here converts units, reads files or measures fonts.
 *
 * Defined results instead of exceptions: non-finite values (and non-positive ones on a log
 * axis) are left out and break lines; an empty chart draws its axes over [0, 1] (log: [1, 10]);
 * a domain of zero width is widened around its value (±50 %, ±1 about zero, ×/÷10 on log axes).
 * An explicit domain that is not finite, or not positive on a log axis, is the caller's error
 * and throws a RangeError.
 */
import { bin, max as maxOf } from 'd3-array';
import { scaleBand, scaleLinear, scaleLog, scaleSequential, type ScaleLinear, type ScaleLogarithmic } from 'd3-scale';
import { line } from 'd3-shape';
import { DASH, INK, categoryColour, seriesStyle, viridis, type MarkerShape } from './palette.js';
import {
  DIGITS, FONT_SIZE, TEXT_HALO, TICK_LENGTH, TITLE_SIZE, clipTo, createDocument, drawAxisBottom, drawAxisLeft, drawLegend, el,
  fillSwatch, fixed, hatchDefs, hatchFill, label, legendSize, lineSwatch, marker, markerRun, num, resizeDocument, serialise, textWidth,
  type Frame, type LegendEntry, type PixelTick, type SvgNode,
} from './svg.js';

// ---------------------------------------------------------------------------------------------
// Spec types

export type Point = readonly [number, number];
/** values[j][i]: column i runs along x, row j along y (row 0 at the low end of y). */
export type Grid = ReadonlyArray<ReadonlyArray<number>>;

export interface AxisSpec {
  /** Quantity name, e.g. 'holdup'. */
  label: string;
  /** Display unit, printed as "label (unit)"; the values must already be in it. */
  unit?: string;
  scale?: 'linear' | 'log';
  /** Fixed extent; without it the data extent, widened to nice tick values. */
  domain?: readonly [number, number];
  /** Approximate tick count (d3 `ticks(count)`). */
  ticks?: number;
  /** Text of a labelled tick; default d3 `tickFormat`. */
  format?: (value: number) => string;
}

export type LinearAxisSpec = Omit<AxisSpec, 'scale'>;
/** An axis spanning a given rectangle side. */
export type RectAxisSpec = LinearAxisSpec & { domain: readonly [number, number] };
/** An axis spanning a grid of cells, evenly spaced on the axis' scale (linear or log). */
export type GridAxisSpec = AxisSpec & { domain: readonly [number, number] };

export interface ChartSpec {
  title?: string;
  /** Size in px; defaults 640 × 400, at least 240 × 180. */
  width?: number;
  height?: number;
}

export interface LineSeries {
  name: string;
  points: readonly Point[];
  dashed?: boolean;
  /** 'line' (default): joined, with a few markers to tell the series apart; 'points': markers only. */
  show?: 'line' | 'points';
}

export interface LineChartSpec extends ChartSpec {
  x: AxisSpec;
  y: AxisSpec;
  series: readonly LineSeries[];
}

export interface OverlayLine {
  /** Shown in the legend when given. */
  name?: string;
  points: readonly Point[];
  dashed?: boolean;
}

export interface MarkedPoint {
  at: Point;
  label?: string;
}

export interface ColourBarSpec {
  label: string;
  unit?: string;
  /** Values outside are drawn in the end colours; default: the extent of the finite values. */
  domain?: readonly [number, number];
  ticks?: number;
  format?: (value: number) => string;
}

export interface HeatmapSpec extends ChartSpec {
  x: RectAxisSpec;
  y: RectAxisSpec;
  /** Cell values over the rectangle, nx × ny evenly sized cells; non-finite cells stay blank. */
  values: Grid;
  colour: ColourBarSpec;
  lines?: readonly OverlayLine[];
  points?: readonly MarkedPoint[];
  /**
   * 'equal' (default): one unit is as long on x as on y (both axes in the same unit), but a side
   * shorter than 30 % of the room is stretched, and the stretch is stated below the plot.
   * The drawing is cropped to its content. 'fill': the plot fills the room.
   */
  aspect?: 'equal' | 'fill';
}

export interface IndexedGroup {
  name: string;
  /** values[k] belongs to index[k]; non-finite values are left out. */
  values: readonly number[];
}

export interface ReferenceLine {
  value: number;
  label: string;
}

export interface IndexedChartSpec extends ChartSpec {
  /** Distinct integers, e.g. contactor numbers. */
  index: readonly number[];
  x: { label: string; unit?: string };
  groups: readonly IndexedGroup[];
  /** Horizontal lines across the plot, labelled at their right end (e.g. the mean). */
  reference?: readonly ReferenceLine[];
}

/** Bars start at zero, so their axis is linear. */
export interface BarChartSpec extends IndexedChartSpec {
  y: LinearAxisSpec;
}

export interface DotChartSpec extends IndexedChartSpec {
  y: AxisSpec;
}

export interface HistogramSpec extends ChartSpec {
  samples: readonly number[];
  x: LinearAxisSpec;
  /** Default 'count'. */
  y?: { label: string };
  /** Legend entry of the bars. */
  name?: string;
  /** Approximate bin count; default Sturges' rule. */
  bins?: number;
  /** Explicit bin edges (ascending); samples outside them are not counted. */
  thresholds?: readonly number[];
  /** Vertical lines (e.g. the mean, a limit), labelled at their top. */
  reference?: readonly ReferenceLine[];
}

export interface ContourSpec {
  label: string;
  unit?: string;
  /** Sample values at the cell centres of an evenly spaced grid over the same rectangle. */
  values: Grid;
  levels: readonly number[];
  format?: (value: number) => string;
}

export interface RegionMapSpec extends ChartSpec {
  x: GridAxisSpec;
  y: GridAxisSpec;
  /** Class names; a cell holds an index into this list (anything else leaves it blank). */
  classes: readonly string[];
  cells: Grid;
  contours?: readonly ContourSpec[];
  points?: readonly MarkedPoint[];
}

// ---------------------------------------------------------------------------------------------
// Axes and layout

const PAD = 10;
/** Room below the plot for tick labels and the axis title. */
const BOTTOM_ROOM = TICK_LENGTH + 2 * FONT_SIZE + 12;

type NumericScale = ScaleLinear<number, number> | ScaleLogarithmic<number, number>;

interface NumericAxis {
  scale: NumericScale;
  /** Ticks in data values; an empty label marks a minor tick of a log axis. */
  ticks: { value: number; label: string }[];
  usable: (v: number) => boolean;
}

function axisTitle(axis: { label: string; unit?: string }): string {
  return axis.unit ? `${axis.label} (${axis.unit})` : axis.label;
}

function extentOf(values: Iterable<number>, usable: (v: number) => boolean): [number, number] | undefined {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (!usable(v)) continue;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  return lo <= hi ? [lo, hi] : undefined;
}

function widen([lo, hi]: readonly [number, number], log: boolean): [number, number] {
  if (lo !== hi) return [lo, hi];
  if (log) return [lo / 10, lo * 10];
  const pad = lo === 0 ? 1 : Math.abs(lo) / 2;
  return [lo - pad, hi + pad];
}

/** Scale and ticks of an axis; `include` values are kept in an automatic domain (e.g. 0 for bars). */
function numericAxis(spec: AxisSpec, values: Iterable<number>, defaultTicks: number, include: readonly number[] = []): NumericAxis {
  const log = spec.scale === 'log';
  const usable = (v: number) => Number.isFinite(v) && (!log || v > 0);
  const count = spec.ticks ?? defaultTicks;
  let scale: NumericScale;
  if (spec.domain) {
    if (!spec.domain.every(Number.isFinite)) throw new RangeError(`axis "${spec.label}" needs a finite domain`);
    if (log && !(spec.domain[0] > 0 && spec.domain[1] > 0)) throw new RangeError(`log axis "${spec.label}" needs a positive domain`);
    const domain = widen(spec.domain, log);
    scale = log ? scaleLog().domain(domain) : scaleLinear().domain(domain);
  } else {
    const domain = widen(extentOf([...values, ...include], usable) ?? (log ? [1, 10] : [0, 1]), log);
    scale = log ? scaleLog().domain(domain).nice() : scaleLinear().domain(domain).nice(count);
  }
  // '~g' keeps log labels short (1e-9, 0.01, 100) where the default SI prefixes would clash with units.
  const format = log ? scale.tickFormat(count, '~g') : scale.tickFormat(count);
  const ticks = scale.ticks(count).map((value) => {
    const auto = format(value);
    return { value, label: auto !== '' && spec.format ? spec.format(value) : auto };
  });
  return { scale, ticks, usable };
}

function pixelTicks(axis: NumericAxis): PixelTick[] {
  return axis.ticks.map((t) => ({ at: axis.scale(t.value), label: t.label }));
}

interface Layout {
  root: SvgNode;
  width: number;
  height: number;
  /** Room for the plot; charts that keep an aspect ratio use part of it. */
  frame: Frame;
  yTitleX: number;
  /** Right edge of the title and the legend. */
  headRight: number;
}

/** The document with title and legend, and the plot frame left over for axes with these labels. */
function beginChart(spec: ChartSpec, legend: readonly LegendEntry[], yLabels: readonly string[], room: { right?: number; bottom?: number } = {}): Layout {
  const width = Math.max(240, spec.width ?? 640);
  const height = Math.max(180, spec.height ?? 400);
  const root = createDocument(width, height, spec.title);
  let top = PAD;
  if (spec.title !== undefined) {
    label(root, spec.title, { class: 'chart-title', x: PAD, y: top + TITLE_SIZE, 'font-size': TITLE_SIZE, 'font-weight': 'bold' });
    top += TITLE_SIZE + 8;
  }
  drawLegend(root, legend, PAD, top, width - 2 * PAD);
  const legendBox = legendSize(legend, width - 2 * PAD);
  top += legendBox.height;
  const headRight = PAD + Math.max(legendBox.width, spec.title === undefined ? 0 : textWidth(spec.title, TITLE_SIZE));
  const x0 = PAD + FONT_SIZE + 8 + Math.max(0, ...yLabels.map((s) => textWidth(s))) + TICK_LENGTH + 3;
  const y0 = top + 8;
  const frame = {
    x0,
    y0,
    x1: Math.max(x0 + 40, width - PAD - (room.right ?? 0) - 12),
    y1: Math.max(y0 + 40, height - PAD - BOTTOM_ROOM - (room.bottom ?? 0)),
  };
  return { root, width, height, frame, yTitleX: PAD + FONT_SIZE, headRight };
}

function inside(frame: Frame, x: number, y: number): boolean {
  return x >= frame.x0 - 0.5 && x <= frame.x1 + 0.5 && y >= frame.y0 - 0.5 && y <= frame.y1 + 0.5;
}

function markerSwatch(shape: MarkerShape, colour: string): LegendEntry['swatch'] {
  return (parent, cx, cy) => void marker(parent, shape, cx, cy, colour);
}

// ---------------------------------------------------------------------------------------------
// Line chart

/** Markers along a joined series: about eight, staggered between series so they rarely overlap. */
function markerIndices(n: number, series: number, of: number, every: boolean): number[] {
  if (every) return Array.from({ length: n }, (_, k) => k);
  const step = Math.max(1, Math.ceil(n / 8));
  const indices: number[] = [];
  for (let k = Math.floor((step * (series + 1)) / (of + 1)); k < n; k += step) indices.push(k);
  return indices;
}

export function lineChart(spec: LineChartSpec): string {
  const logX = spec.x.scale === 'log';
  const logY = spec.y.scale === 'log';
  const ok = (p: Point) => Number.isFinite(p[0]) && Number.isFinite(p[1]) && (!logX || p[0] > 0) && (!logY || p[1] > 0);
  const points = spec.series.flatMap((s) => s.points.filter(ok));
  const x = numericAxis(spec.x, points.map((p) => p[0]), 6);
  const y = numericAxis(spec.y, points.map((p) => p[1]), 5);
  const legend = spec.series.map((s, i): LegendEntry => {
    const { colour, marker: shape } = seriesStyle(i);
    return { text: s.name, swatch: s.show === 'points' ? markerSwatch(shape, colour) : lineSwatch(colour, s.dashed === true, shape) };
  });
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label));
  x.scale.range([frame.x0, frame.x1]);
  y.scale.range([frame.y1, frame.y0]);
  drawAxisBottom(root, frame, pixelTicks(x), axisTitle(spec.x), true);
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle(spec.y), true, yTitleX);

  const plot = clipTo(root, frame);
  const marks = el(root, 'g', { class: 'markers' });
  spec.series.forEach((s, i) => {
    const { colour, marker: shape } = seriesStyle(i);
    if (s.show !== 'points') {
      const path = line<Point>().defined(ok).x((p) => x.scale(p[0])).y((p) => y.scale(p[1])).digits(DIGITS)(s.points);
      if (path) {
        el(plot, 'path', { class: 'series', d: path, fill: 'none', stroke: colour, 'stroke-width': 1.8, 'stroke-linejoin': 'round', 'stroke-dasharray': s.dashed ? DASH : undefined });
      }
    }
    for (const k of markerIndices(s.points.length, i, spec.series.length, s.show === 'points')) {
      const p = s.points[k];
      if (!ok(p)) continue;
      const px = x.scale(p[0]);
      const py = y.scale(p[1]);
      if (inside(frame, px, py)) marker(marks, shape, px, py, colour);
    }
  });
  return serialise(root);
}

// ---------------------------------------------------------------------------------------------
// Maps over a rectangle: shared pieces

/** A plot side shorter than this share of its room is stretched (heatmap, aspect 'equal'). */
const MIN_SIDE_SHARE = 0.3;

interface Fit {
  frame: Frame;
  stretch?: { axis: 'x' | 'y'; factor: number };
}

/** The largest frame within `room` with width : height = dx : dy, stretching a too-thin side. */
function fitRectangle(room: Frame, dx: number, dy: number): Fit {
  const rw = room.x1 - room.x0;
  const rh = room.y1 - room.y0;
  if (!(dx > 0 && dy > 0)) return { frame: room };
  const k = Math.min(rw / dx, rh / dy);
  let w = k * dx;
  let h = k * dy;
  let stretch: Fit['stretch'];
  if (h < MIN_SIDE_SHARE * rh) {
    const factor = Number(((MIN_SIDE_SHARE * rh) / h).toPrecision(2));
    h *= factor;
    stretch = { axis: 'y', factor };
  } else if (w < MIN_SIDE_SHARE * rw) {
    const factor = Number(((MIN_SIDE_SHARE * rw) / w).toPrecision(2));
    w *= factor;
    stretch = { axis: 'x', factor };
  }
  return { frame: { x0: room.x0, y0: room.y0, x1: room.x0 + w, y1: room.y0 + h }, stretch };
}

function note(stretch: NonNullable<Fit['stretch']>): string {
  return `${stretch.axis === 'y' ? 'vertical' : 'horizontal'} scale stretched ×${stretch.factor}`;
}

/** Pixel edges of n even cells across [a, b], rounded once so that neighbours share an edge. */
function cellEdges(a: number, b: number, n: number): number[] {
  return Array.from({ length: n + 1 }, (_, i) => fixed(a + ((b - a) * i) / n));
}

function gridSize(grid: Grid): { nx: number; ny: number } {
  return { nx: maxOf(grid, (row) => row.length) ?? 0, ny: grid.length };
}

function drawOverlayLine(parent: SvgNode, d: string, dashed: boolean): void {
  el(parent, 'path', { class: 'overlay halo', d, fill: 'none', stroke: '#000000', 'stroke-width': 3.4, 'stroke-linejoin': 'round' });
  el(parent, 'path', { class: 'overlay', d, fill: 'none', stroke: INK.halo, 'stroke-width': 1.4, 'stroke-linejoin': 'round', 'stroke-dasharray': dashed ? DASH : undefined });
}

function overlaySwatch(dashed: boolean): LegendEntry['swatch'] {
  return (parent, cx, cy) => drawOverlayLine(parent, `M${num(cx - 12)},${num(cy)}H${num(cx + 12)}`, dashed);
}

/** Marked points: a dark circle ringed in white, its label beside it on the side with room. */
function drawPoints(parent: SvgNode, frame: Frame, points: readonly MarkedPoint[], x: NumericScale, y: NumericScale): void {
  const g = el(parent, 'g', { class: 'points' });
  for (const p of points) {
    const px = x(p.at[0]);
    const py = y(p.at[1]);
    if (!Number.isFinite(px) || !Number.isFinite(py) || !inside(frame, px, py)) continue;
    marker(g, 'circle', px, py, INK.text, true);
    if (p.label === undefined) continue;
    const left = px + 7 + textWidth(p.label) > frame.x1;
    label(g, p.label, { ...TEXT_HALO, x: left ? px - 7 : px + 7, y: py, dy: '0.32em', 'text-anchor': left ? 'end' : 'start' });
  }
}

// ---------------------------------------------------------------------------------------------
// Heatmap

const BAR_GAP = 16;
const BAR_WIDTH = 12;
const BAR_STRIPS = 64;
/** Room for the line that states a stretch. */
const NOTE_ROOM = FONT_SIZE + 4;

export function heatmap(spec: HeatmapSpec): string {
  const { nx, ny } = gridSize(spec.values);
  const colourDomain = widen(spec.colour.domain ?? extentOf(spec.values.flat(), Number.isFinite) ?? [0, 1], false);
  const colour = scaleSequential(viridis).domain(colourDomain).clamp(true);
  const bar = numericAxis({ ...spec.colour, domain: colourDomain }, [], 5);
  const barRoom = BAR_GAP + BAR_WIDTH + TICK_LENGTH + 3 + Math.max(0, ...bar.ticks.map((t) => textWidth(t.label))) + 8 + FONT_SIZE;
  const x = numericAxis(spec.x, [], 6);
  const y = numericAxis(spec.y, [], 5);
  const legend = (spec.lines ?? []).flatMap((l): LegendEntry[] => (l.name === undefined ? [] : [{ text: l.name, swatch: overlaySwatch(l.dashed === true) }]));
  const equal = spec.aspect !== 'fill';
  const layout = beginChart(spec, legend, y.ticks.map((t) => t.label), { right: barRoom, bottom: equal ? NOTE_ROOM : 0 });
  const { root } = layout;
  const fit: Fit = equal
    ? fitRectangle(layout.frame, Math.abs(spec.x.domain[1] - spec.x.domain[0]), Math.abs(spec.y.domain[1] - spec.y.domain[0]))
    : { frame: layout.frame };
  const frame = fit.frame;
  x.scale.range([frame.x0, frame.x1]);
  y.scale.range([frame.y1, frame.y0]);

  const ex = cellEdges(frame.x0, frame.x1, nx);
  const ey = cellEdges(frame.y1, frame.y0, ny);
  const cells = el(root, 'g', { class: 'cells', 'shape-rendering': 'crispEdges' });
  spec.values.forEach((row, j) =>
    row.forEach((v, i) => {
      if (Number.isFinite(v)) el(cells, 'rect', { x: ex[i], y: ey[j + 1], width: ex[i + 1] - ex[i], height: ey[j] - ey[j + 1], fill: colour(v) });
    }),
  );

  drawAxisBottom(root, frame, pixelTicks(x), axisTitle(spec.x), false);
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle(spec.y), false, layout.yTitleX);
  if (fit.stretch) label(root, note(fit.stretch), { class: 'note', x: frame.x0, y: frame.y1 + BOTTOM_ROOM + FONT_SIZE, 'font-style': 'italic' });

  const overlay = clipTo(root, frame);
  for (const l of spec.lines ?? []) {
    const d = line<Point>().defined((p) => Number.isFinite(p[0]) && Number.isFinite(p[1])).x((p) => x.scale(p[0])).y((p) => y.scale(p[1])).digits(DIGITS)(l.points);
    if (d) drawOverlayLine(overlay, d, l.dashed === true);
  }
  drawPoints(root, frame, spec.points ?? [], x.scale, y.scale);
  drawColourBar(root, frame, spec.colour, colourDomain, colour);

  if (equal) {
    const right = Math.max(frame.x1 + barRoom + 12, layout.headRight, fit.stretch ? frame.x0 + textWidth(note(fit.stretch)) : 0) + PAD;
    const bottom = frame.y1 + BOTTOM_ROOM + (fit.stretch ? NOTE_ROOM : 0) + PAD;
    resizeDocument(root, Math.min(layout.width, right), Math.min(layout.height, bottom));
  }
  return serialise(root);
}

function drawColourBar(parent: SvgNode, frame: Frame, spec: ColourBarSpec, domain: readonly [number, number], colour: (v: number) => string): void {
  const g = el(parent, 'g', { class: 'colour-bar' });
  const h = frame.y1 - frame.y0;
  const x0 = frame.x1 + BAR_GAP;
  const edges = cellEdges(frame.y1, frame.y0, BAR_STRIPS);
  const strips = el(g, 'g', { 'shape-rendering': 'crispEdges' });
  for (let k = 0; k < BAR_STRIPS; k++) {
    const v = domain[0] + ((domain[1] - domain[0]) * (k + 0.5)) / BAR_STRIPS;
    el(strips, 'rect', { x: x0, y: edges[k + 1], width: BAR_WIDTH, height: edges[k] - edges[k + 1], fill: colour(v) });
  }
  el(g, 'rect', { x: x0, y: frame.y0, width: BAR_WIDTH, height: h, fill: 'none', stroke: INK.axis, 'stroke-width': 0.5 });
  // A short bar gets fewer ticks (one per 28 px), but at least two labelled ones.
  let count = Math.min(spec.ticks ?? 5, Math.max(2, Math.floor(h / 28)));
  let axis = numericAxis({ ...spec, domain, ticks: count }, [], 5);
  while (axis.ticks.length < 2 && count < 10) axis = numericAxis({ ...spec, domain, ticks: ++count }, [], 5);
  axis.scale.range([frame.y1, frame.y0]);
  let widest = 0;
  for (const t of pixelTicks(axis)) {
    el(g, 'line', { class: 'tick', x1: x0 + BAR_WIDTH, y1: t.at, x2: x0 + BAR_WIDTH + TICK_LENGTH, y2: t.at, stroke: INK.axis });
    label(g, t.label, { x: x0 + BAR_WIDTH + TICK_LENGTH + 3, y: t.at, dy: '0.32em' });
    widest = Math.max(widest, textWidth(t.label));
  }
  const titleX = x0 + BAR_WIDTH + TICK_LENGTH + 3 + widest + 8 + FONT_SIZE;
  label(g, axisTitle(spec), { class: 'title', transform: `translate(${num(titleX)},${num((frame.y0 + frame.y1) / 2)}) rotate(-90)`, 'text-anchor': 'middle' });
}

// ---------------------------------------------------------------------------------------------
// Bar and dot charts over an integer index

/** Label every k-th index value, k from 1, 2, 5, 10, 20, 50 …, so that labels do not collide. */
function labelEvery(index: readonly number[], step: number): number {
  const widest = maxOf(index, (v) => textWidth(String(v))) ?? 0;
  for (let decade = 1; ; decade *= 10) {
    for (const k of [1, 2, 5]) if (k * decade * step >= widest + 6 || k * decade >= index.length) return k * decade;
  }
}

/** More dots than this in one series are drawn as one path (svg.ts `markerRun`). */
const MARKER_RUN_FROM = 256;

function indexedChart(spec: IndexedChartSpec & { y: AxisSpec }, kind: 'bar' | 'dot'): string {
  const references = spec.reference ?? [];
  const values = spec.groups.flatMap((g) => g.values);
  const y = numericAxis(spec.y, [...values, ...references.map((r) => r.value)], 5, kind === 'bar' ? [0] : []);
  const legend = spec.groups.map((g, k): LegendEntry => {
    const style = seriesStyle(k);
    return { text: g.name, swatch: kind === 'bar' ? fillSwatch(categoryColour(k), k) : markerSwatch(style.marker, style.colour) };
  });
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label));
  if (kind === 'bar') hatchDefs(root, spec.groups.length);
  y.scale.range([frame.y1, frame.y0]);
  const keys = spec.index.map(String);
  const band = scaleBand<string>().domain(keys).range([frame.x0, frame.x1]).paddingInner(0.2).paddingOuter(0.1);
  const inner = scaleBand<number>().domain(spec.groups.map((_, k) => k)).range([0, band.bandwidth()]).padding(kind === 'bar' ? 0.05 : 0.2);
  const every = labelEvery(spec.index, band.step());
  const xTicks = spec.index.map((v, p) => ({ at: (band(keys[p]) ?? 0) + band.bandwidth() / 2, label: every === 1 || v % every === 0 ? String(v) : '' }));
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle(spec.y), true, yTitleX);

  // Bars are clipped: an explicit domain above zero cuts them at the axis.
  const marks = kind === 'bar' ? el(clipTo(root, frame), 'g', { class: 'bars' }) : el(root, 'g', { class: 'markers' });
  const base = y.scale(0);
  spec.groups.forEach((g, k) => {
    const style = seriesStyle(k);
    const dots: Array<[number, number]> = [];
    g.values.forEach((v, p) => {
      if (p >= keys.length || !y.usable(v)) return;
      const left = (band(keys[p]) ?? 0) + (inner(k) ?? 0);
      const py = y.scale(v);
      if (kind === 'dot') {
        if (inside(frame, left + inner.bandwidth() / 2, py)) dots.push([left + inner.bandwidth() / 2, py]);
        return;
      }
      const box = { x: left, y: Math.min(py, base), width: inner.bandwidth(), height: Math.abs(py - base) };
      el(marks, 'rect', { ...box, fill: categoryColour(k), stroke: INK.axis, 'stroke-width': 0.5 });
      const hatch = hatchFill(k);
      if (hatch) el(marks, 'rect', { ...box, fill: hatch });
    });
    if (dots.length > MARKER_RUN_FROM) markerRun(marks, style.marker, dots, style.colour);
    else for (const [px, py] of dots) marker(marks, style.marker, px, py, style.colour);
  });
  drawAxisBottom(root, frame, xTicks, axisTitle(spec.x), false);

  for (const r of references) {
    const py = y.scale(r.value);
    if (!y.usable(r.value) || !inside(frame, frame.x0, py)) continue;
    const g = el(root, 'g', { class: 'reference' });
    el(g, 'line', { x1: frame.x0, y1: py, x2: frame.x1, y2: py, stroke: INK.reference, 'stroke-width': 1.2, 'stroke-dasharray': DASH });
    label(g, r.label, { ...TEXT_HALO, x: frame.x1 - 3, y: py - 4, 'text-anchor': 'end' });
  }
  return serialise(root);
}

export function barChart(spec: BarChartSpec): string {
  return indexedChart(spec, 'bar');
}

export function dotChart(spec: DotChartSpec): string {
  return indexedChart(spec, 'dot');
}

// ---------------------------------------------------------------------------------------------
// Histogram

export interface Bin {
  x0: number;
  x1: number;
  count: number;
}

/**
 * Counts of the finite samples in bins [x0, x1), the last one closed (d3-array's `bin`). Without thresholds the
 * edges are d3's nice ticks over the sample extent, about `bins` of them, by default
 * ⌈log₂ n⌉ + 1 (Sturges, 1926, J. Am. Stat. Assoc. 21, 65–66), as d3-array's `bin` does.
 * No finite samples and no thresholds give no bins.
 */
export function histogramBins(samples: readonly number[], options: { bins?: number; thresholds?: readonly number[] } = {}): Bin[] {
  const finite = samples.filter(Number.isFinite);
  let edges: number[];
  if (options.thresholds) {
    edges = [...new Set(options.thresholds.filter(Number.isFinite))].sort((a, b) => a - b);
  } else {
    const range = extentOf(finite, Number.isFinite);
    if (!range) return [];
    const count = options.bins ?? Math.ceil(Math.log2(finite.length)) + 1;
    const scale = scaleLinear().domain(widen(range, false)).nice(count);
    edges = scale.ticks(count);
    const [lo, hi] = scale.domain();
    if (edges[0] > lo) edges.unshift(lo);
    if (edges[edges.length - 1] < hi) edges.push(hi);
  }
  if (edges.length < 2) return [];
  // d3-array's bin counts into [x0, x1) with the last bin closed, dropping samples outside.
  const lo = edges[0]!;
  const hi = edges[edges.length - 1]!;
  const binned = bin().domain([lo, hi]).thresholds(edges.slice(1, -1))(finite);
  return binned.map((b, k) => ({ x0: edges[k]!, x1: edges[k + 1]!, count: b.length }));
}

export function histogram(spec: HistogramSpec): string {
  const bins = histogramBins(spec.samples, { bins: spec.bins, thresholds: spec.thresholds });
  const references = spec.reference ?? [];
  const x = numericAxis(spec.x, [...bins.flatMap((b) => [b.x0, b.x1]), ...references.map((r) => r.value)], 6);
  const y = numericAxis({ label: spec.y?.label ?? 'count' }, bins.map((b) => b.count), 5, [0]);
  y.ticks = y.ticks.filter((t) => Number.isInteger(t.value));
  const colour = seriesStyle(0).colour;
  const legend: LegendEntry[] = [
    ...(spec.name === undefined ? [] : [{ text: spec.name, swatch: fillSwatch(colour, 0) }]),
    ...references.map((r) => ({ text: r.label, swatch: lineSwatch(INK.reference, true, undefined, 1.2) })),
  ];
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label));
  x.scale.range([frame.x0, frame.x1]);
  y.scale.range([frame.y1, frame.y0]);
  drawAxisBottom(root, frame, pixelTicks(x), axisTitle(spec.x), false);
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle({ label: spec.y?.label ?? 'count' }), true, yTitleX);

  const plot = clipTo(root, frame);
  const bars = el(plot, 'g', { class: 'bars', fill: colour });
  for (const b of bins) {
    if (b.count === 0) continue;
    const left = x.scale(b.x0);
    const top = y.scale(b.count);
    el(bars, 'rect', { x: left + 0.5, y: top, width: Math.max(0, x.scale(b.x1) - left - 1), height: frame.y1 - top });
  }
  for (const r of references) {
    const px = x.scale(r.value);
    if (!Number.isFinite(r.value) || !inside(frame, px, frame.y0)) continue;
    const g = el(root, 'g', { class: 'reference' });
    el(g, 'line', { x1: px, y1: frame.y0, x2: px, y2: frame.y1, stroke: INK.reference, 'stroke-width': 1.2, 'stroke-dasharray': DASH });
    label(g, r.label, { ...TEXT_HALO, x: px + 3, y: frame.y0 + FONT_SIZE, 'text-anchor': 'start' });
  }
  return serialise(root);
}

// ---------------------------------------------------------------------------------------------
// Region map

/**
 * Segments of the isoline value = level through samples on an integer grid (x = i, y = j), by
 * marching squares, the two-dimensional case of marching cubes (Lorensen & Cline, 1987,
 * Computer Graphics 21(4), 163–169). Crossings are linearly interpolated along cell edges; a
 * saddle cell is resolved by the mean of its corners. Cells with a non-finite corner are skipped.
 * Written here rather than taken from d3-contour: its contours are filled polygons of the
 * region above a threshold, closed along the grid border, while these maps need open isolines
 * with labels, and cells with missing (failed) points left out.
 */
export function isoSegments(values: Grid, level: number): [Point, Point][] {
  const segments: [Point, Point][] = [];
  const at = (a: number, b: number) => (level - a) / (b - a);
  for (let j = 0; j + 1 < values.length; j++) {
    const row = values[j];
    const next = values[j + 1];
    for (let i = 0; i + 1 < Math.min(row.length, next.length); i++) {
      const v00 = row[i];
      const v10 = row[i + 1];
      const v01 = next[i];
      const v11 = next[i + 1];
      if (![v00, v10, v01, v11].every(Number.isFinite)) continue;
      const h00 = v00 >= level;
      const h10 = v10 >= level;
      const h01 = v01 >= level;
      const h11 = v11 >= level;
      const bottom: Point = [i + at(v00, v10), j];
      const right: Point = [i + 1, j + at(v10, v11)];
      const top: Point = [i + at(v01, v11), j + 1];
      const left: Point = [i, j + at(v00, v01)];
      const crossed = [h00 !== h10 && bottom, h10 !== h11 && right, h01 !== h11 && top, h00 !== h01 && left].filter((p): p is Point => p !== false);
      if (crossed.length === 2) segments.push([crossed[0], crossed[1]]);
      else if (crossed.length === 4) {
        const centreHigh = (v00 + v10 + v01 + v11) / 4 >= level;
        if (centreHigh === h00) segments.push([bottom, right], [top, left]);
        else segments.push([bottom, left], [right, top]);
      }
    }
  }
  return segments;
}

/**
 * Segments chained into polylines through shared end points (neighbouring cells compute a shared
 * crossing from the same two samples, so the points match exactly), so dashes run on unbroken.
 */
export function joinSegments(segments: readonly (readonly [Point, Point])[]): Point[][] {
  const key = (p: Point) => `${p[0]},${p[1]}`;
  const ends = new Map<string, number[]>();
  segments.forEach(([a, b], s) => {
    for (const p of [a, b]) ends.set(key(p), [...(ends.get(key(p)) ?? []), s]);
  });
  const used = new Array<boolean>(segments.length).fill(false);
  /** Follows unused segments from `from`, appending their far ends to `path`. */
  const extend = (path: Point[], from: Point) => {
    for (let at = from; ; ) {
      const s = (ends.get(key(at)) ?? []).find((t) => !used[t]);
      if (s === undefined) return;
      used[s] = true;
      const [a, b] = segments[s];
      at = key(a) === key(at) ? b : a;
      path.push(at);
    }
  };
  const polylines: Point[][] = [];
  segments.forEach(([a, b], s) => {
    if (used[s]) return;
    used[s] = true;
    const forward: Point[] = [b];
    extend(forward, b);
    const backward: Point[] = [];
    extend(backward, a);
    polylines.push([...backward.reverse(), a, ...forward]);
  });
  return polylines;
}

const CONTOUR_DASHES = [undefined, '5 3', '2 2'] as const;

function shortNumber(v: number): string {
  return String(Number(v.toPrecision(4)));
}

export function regionMap(spec: RegionMapSpec): string {
  const x = numericAxis(spec.x, [], 6);
  const y = numericAxis(spec.y, [], 5);
  const contours = spec.contours ?? [];
  const legend: LegendEntry[] = [
    ...spec.classes.map((name, c) => ({ text: name, swatch: fillSwatch(categoryColour(c), c) })),
    ...contours.map((c, m) => ({ text: axisTitle(c), swatch: contourSwatch(m) })),
  ];
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label));
  hatchDefs(root, spec.classes.length);
  x.scale.range([frame.x0, frame.x1]);
  y.scale.range([frame.y1, frame.y0]);

  const { nx, ny } = gridSize(spec.cells);
  const ex = cellEdges(frame.x0, frame.x1, nx);
  const ey = cellEdges(frame.y1, frame.y0, ny);
  const isClass = (c: number) => Number.isInteger(c) && c >= 0 && c < spec.classes.length;
  const regions = el(root, 'g', { class: 'regions', 'shape-rendering': 'crispEdges' });
  spec.cells.forEach((row, j) => {
    // Runs of equal cells along a row become one rectangle.
    for (let i = 0; i < row.length; ) {
      const c = row[i];
      let end = i + 1;
      while (end < row.length && row[end] === c) end++;
      if (isClass(c)) {
        const box = { x: ex[i], y: ey[j + 1], width: ex[end] - ex[i], height: ey[j] - ey[j + 1] };
        el(regions, 'rect', { ...box, fill: categoryColour(c) });
        const hatch = hatchFill(c);
        if (hatch) el(regions, 'rect', { ...box, fill: hatch });
      }
      i = end;
    }
  });
  drawAxisBottom(root, frame, pixelTicks(x), axisTitle(spec.x), false);
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle(spec.y), false, yTitleX);

  const lines = clipTo(root, frame);
  contours.forEach((c, m) => drawContours(lines, root, frame, c, m));
  drawPoints(root, frame, spec.points ?? [], x.scale, y.scale);
  return serialise(root);
}

function contourSwatch(m: number): LegendEntry['swatch'] {
  return (parent, cx, cy) => void el(parent, 'line', { x1: cx - 12, y1: cy, x2: cx + 12, y2: cy, stroke: INK.text, 'stroke-width': 1.2, 'stroke-dasharray': CONTOUR_DASHES[m % CONTOUR_DASHES.length] });
}

/** Isolines of one contour spec, each level labelled at its rightmost point. */
function drawContours(clipped: SvgNode, root: SvgNode, frame: Frame, spec: ContourSpec, m: number): void {
  const { nx, ny } = gridSize(spec.values);
  const px = (i: number) => frame.x0 + ((frame.x1 - frame.x0) * (i + 0.5)) / nx;
  const py = (j: number) => frame.y1 - ((frame.y1 - frame.y0) * (j + 0.5)) / ny;
  const format = spec.format ?? shortNumber;
  const labels = el(root, 'g', { class: 'contour-labels', 'font-size': FONT_SIZE - 1 });
  for (const level of spec.levels) {
    const segments = isoSegments(spec.values, level);
    if (segments.length === 0) continue;
    const d = joinSegments(segments)
      .map((polyline) => polyline.map((p, k) => `${k === 0 ? 'M' : 'L'}${num(px(p[0]))},${num(py(p[1]))}`).join(''))
      .join('');
    el(clipped, 'path', { class: 'contour', d, fill: 'none', stroke: INK.text, 'stroke-width': 1.2, 'stroke-linecap': 'round', 'stroke-dasharray': CONTOUR_DASHES[m % CONTOUR_DASHES.length] });
    let best: Point = [-Infinity, 0];
    for (const [a, b] of segments) {
      const mid: Point = [px((a[0] + b[0]) / 2), py((a[1] + b[1]) / 2)];
      if (mid[0] > best[0] || (mid[0] === best[0] && mid[1] < best[1])) best = mid;
    }
    label(labels, format(level), { ...TEXT_HALO, x: best[0] - 3, y: best[1] - 3, 'text-anchor': 'end' });
  }
}

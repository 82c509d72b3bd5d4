/**
 * The region map: a grid of classified cells (e.g. pinned, leaking, backflow) in category colours
 * and hatches, with labelled contour lines of other quantities over it, a traced region (its
 * outline drawn piece by piece, each piece labelled), outlined boxes and marked points; no two
 * labels overlap; optionally a point a page script moves (`movable`, placed by `movableAt`).
 * Exports `regionMap`, `movableAt` and the spec types.
 */
import { INK, categoryColour } from '../palette.js';
import {
  FONT_SIZE, clipTo, drawAxisBottom, drawAxisLeft, el, fillSwatch, hatchDefs, hatchFill, num, serialise,
  type Frame, type LegendEntry, type SvgNode,
} from '../svg.js';
import { axisTitle, beginChart, drawNotes, inside, notesRoom, numericAxis, pixelTicks } from './axes.js';
import { isoSegments, joinSegments } from './contours.js';
import { LabelPlacer, cellEdges, drawPoints, gridSize } from './grid.js';
import type { ChartSpec, Grid, GridAxisSpec, MarkedPoint, Point } from './spec.js';

export interface ContourSpec {
  label: string;
  unit?: string;
  /** Sample values at the cell centres of an evenly spaced grid over the same rectangle. */
  values: Grid;
  levels: readonly number[];
  format?: (value: number) => string;
}

/** A polyline in axis units with its label. */
export interface LabelledLine {
  points: readonly Point[];
  label: string;
}

/** Dashed lines with one legend entry: closed outlines (a searched box) or open strokes (excursions). */
export interface DashedMark {
  label: string;
  lines: ReadonlyArray<readonly Point[]>;
  closed: boolean;
  /** Dash pattern, px. */
  dash: string;
}

/** A region found exactly (not by cells): its closed outline and the labelled pieces of it. */
export interface TracedRegion {
  /** Legend text of the region. */
  label: string;
  /** The class whose colour and hatch fill it. */
  fillClass: number;
  polygon: readonly Point[];
  pieces: readonly LabelledLine[];
}

export interface RegionMapSpec extends ChartSpec {
  x: GridAxisSpec;
  y: GridAxisSpec;
  /** Class names; a cell holds an index into this list (anything else leaves it blank). */
  classes: readonly string[];
  cells: Grid;
  contours?: readonly ContourSpec[];
  points?: readonly MarkedPoint[];
  region?: TracedRegion;
  /** Dashed marks (e.g. the box searched, how far the settings may move), each with a legend entry. */
  outlines?: readonly DashedMark[];
  /**
   * A point a page script moves (a live report's operating point), with its legend entry: drawn
   * hidden at the origin, in a group (class `movable-point`) that carries `attrs` and what
   * `movableAt` needs to place it: the plot frame (`data-frame`, px) and the axis domains
   * (`data-x-domain`, `data-y-domain`, axis units).
   */
  movable?: { label: string; attrs: Readonly<Record<string, string>> };
}

/** What a movable point's group says of the plot: the frame and the axes' domains. */
export interface MovableFrame {
  frame?: string;
  xDomain?: string;
  yDomain?: string;
}

/**
 * Where a movable point goes for `at` (axis units), as the transform of its group, or undefined
 * outside the plot: the axes are linear, from domain to frame.
 */
export function movableAt(data: MovableFrame, at: Point): string | undefined {
  const numbers = (text: string | undefined) => (text ?? '').split(' ').map(Number);
  const [x0, y0, x1, y1] = numbers(data.frame);
  const [xa, xb] = numbers(data.xDomain);
  const [ya, yb] = numbers(data.yDomain);
  const px = x0! + ((at[0] - xa!) / (xb! - xa!)) * (x1! - x0!);
  const py = y1! - ((at[1] - ya!) / (yb! - ya!)) * (y1! - y0!);
  if (!(Number.isFinite(px) && Number.isFinite(py) && inside({ x0: x0!, y0: y0!, x1: x1!, y1: y1! }, px, py))) return undefined;
  return `translate(${num(px)},${num(py)})`;
}

/** The movable point's symbol about (cx, cy): a ring with a cross, unlike the filled dots of marked points. */
function movableSymbol(parent: SvgNode, cx: number, cy: number): void {
  el(parent, 'circle', { cx, cy, r: 6, fill: INK.halo, 'fill-opacity': 0.6, stroke: INK.text, 'stroke-width': 2 });
  el(parent, 'path', { d: `M${num(cx - 9)},${num(cy)}H${num(cx + 9)}M${num(cx)},${num(cy - 9)}V${num(cy + 9)}`, stroke: INK.text, 'stroke-width': 1.4 });
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
    ...(spec.region ? [{ text: spec.region.label, swatch: regionSwatch(spec.region.fillClass) }] : []),
    ...(spec.outlines ?? []).map((o) => ({ text: o.label, swatch: outlineSwatch(o) })),
    ...(spec.movable ? [{ text: spec.movable.label, swatch: (parent: SvgNode, cx: number, cy: number) => movableSymbol(parent, cx, cy) }] : []),
  ];
  const notes = spec.notes ?? [];
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label), { bottom: notesRoom(notes) });
  drawNotes(root, frame, notes);
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
  const px = (p: Point): Point => [x.scale(p[0]), y.scale(p[1])];
  const path = (points: readonly Point[], close: boolean) => points.map((p, k) => `${k === 0 ? 'M' : 'L'}${num(px(p)[0])},${num(px(p)[1])}`).join('') + (close ? 'Z' : '');
  const region = spec.region;
  if (region && region.polygon.length > 2) {
    const fill = el(lines, 'g', { class: 'traced-region' });
    el(fill, 'path', { d: path(region.polygon, true), fill: categoryColour(region.fillClass), 'fill-opacity': 0.85 });
    const hatch = hatchFill(region.fillClass);
    if (hatch) el(fill, 'path', { d: path(region.polygon, true), fill: hatch });
  }
  const placer = new LabelPlacer(frame);
  contours.forEach((c, m) => drawContours(lines, root, frame, c, m, placer));
  if (region) {
    // Each piece of the outline is drawn at least 2 px wide, so that a band thinner than a pixel still shows.
    const outline = el(lines, 'g', { class: 'region-outline', fill: 'none', stroke: INK.text, 'stroke-width': 2, 'stroke-linejoin': 'round' });
    for (const piece of region.pieces) el(outline, 'path', { class: 'region-piece', d: path(piece.points, false) });
  }
  const outlines = el(lines, 'g', { class: 'outlines', fill: 'none', stroke: INK.text, 'stroke-width': 1.4 });
  for (const o of spec.outlines ?? []) for (const line of o.lines) el(outlines, 'path', { class: 'outline', d: path(line, o.closed), 'stroke-dasharray': o.dash });
  drawPoints(root, frame, spec.points ?? [], x.scale, y.scale, placer);
  if (spec.movable) {
    const [xa, xb] = x.scale.domain();
    const [ya, yb] = y.scale.domain();
    const g = el(root, 'g', {
      class: 'movable-point', visibility: 'hidden', 'data-frame': [frame.x0, frame.y0, frame.x1, frame.y1].map(num).join(' '),
      'data-x-domain': `${xa} ${xb}`, 'data-y-domain': `${ya} ${yb}`, ...spec.movable.attrs,
    });
    movableSymbol(g, 0, 0);
  }
  if (region) {
    const labels = el(root, 'g', { class: 'region-labels', 'font-size': FONT_SIZE - 1 });
    for (const piece of region.pieces) if (piece.label) placer.place(labels, piece.label, pieceAnchors(piece.points.map(px)));
  }
  return serialise(root);
}

/** Where a piece's label may go: beside points along it (middle first), on either side. */
function pieceAnchors(points: readonly Point[]): Array<{ x: number; y: number; anchor: 'start' | 'end' | 'middle' }> {
  const out: Array<{ x: number; y: number; anchor: 'start' | 'end' | 'middle' }> = [];
  if (points.length === 0) return out;
  for (const f of [0.5, 0.35, 0.65, 0.2, 0.8, 0.05, 0.95]) {
    const k = Math.min(points.length - 1, Math.round(f * (points.length - 1)));
    const [cx, cy] = points[k]!;
    for (const [dx, dy, anchor] of [[0, -10, 'middle'], [0, 10, 'middle'], [6, 0, 'start'], [-6, 0, 'end']] as const) out.push({ x: cx + dx, y: cy + dy, anchor });
  }
  return out;
}

function regionSwatch(k: number): LegendEntry['swatch'] {
  const fill = fillSwatch(categoryColour(k), k);
  return (parent, cx, cy) => {
    fill(parent, cx, cy);
    el(parent, 'rect', { x: cx - 12, y: cy - 6, width: 24, height: 12, fill: 'none', stroke: INK.text, 'stroke-width': 2 });
  };
}

function outlineSwatch(mark: DashedMark): LegendEntry['swatch'] {
  const style = { fill: 'none', stroke: INK.text, 'stroke-width': 1.4, 'stroke-dasharray': mark.dash };
  return (parent, cx, cy) =>
    void (mark.closed
      ? el(parent, 'rect', { x: cx - 11, y: cy - 5, width: 22, height: 10, ...style })
      : el(parent, 'path', { d: `M${num(cx - 11)},${num(cy)}L${num(cx + 11)},${num(cy)}M${num(cx)},${num(cy - 5)}L${num(cx)},${num(cy + 5)}`, ...style }));
}

function contourSwatch(m: number): LegendEntry['swatch'] {
  return (parent, cx, cy) => void el(parent, 'line', { x1: cx - 12, y1: cy, x2: cx + 12, y2: cy, stroke: INK.text, 'stroke-width': 1.2, 'stroke-dasharray': CONTOUR_DASHES[m % CONTOUR_DASHES.length] });
}

/** Isolines of one contour spec, each level labelled at its rightmost point. */
function drawContours(clipped: SvgNode, root: SvgNode, frame: Frame, spec: ContourSpec, m: number, placer: LabelPlacer): void {
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
    // Labelled at the rightmost free place along the line (the label ends there).
    const mids = segments.map(([a, b]): Point => [px((a[0] + b[0]) / 2), py((a[1] + b[1]) / 2)]).sort((p, q) => q[0] - p[0] || p[1] - q[1]);
    const step = Math.max(1, Math.floor(mids.length / 12));
    placer.place(labels, format(level), mids.filter((_, k) => k % step === 0).map((p) => ({ x: p[0] - 3, y: p[1] - 8, anchor: 'end' as const })));
  }
}

/**
 * The region map: a grid of classified cells (e.g. pinned, leaking, backflow) in category colours
 * and hatches, with labelled contour lines of other quantities over it and marked points.
 * Exports `regionMap` and its spec types.
 */
import { INK, categoryColour } from '../palette.js';
import {
  FONT_SIZE, TEXT_HALO, clipTo, drawAxisBottom, drawAxisLeft, el, fillSwatch, hatchDefs, hatchFill, label, num, serialise,
  type Frame, type LegendEntry, type SvgNode,
} from '../svg.js';
import { axisTitle, beginChart, numericAxis, pixelTicks } from './axes.js';
import { isoSegments, joinSegments } from './contours.js';
import { cellEdges, drawPoints, gridSize } from './grid.js';
import type { ChartSpec, Grid, GridAxisSpec, MarkedPoint, Point } from './spec.js';

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

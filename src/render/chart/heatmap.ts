/**
 * The heatmap: cell values over a rectangle in viridis colours with their colour bar, overlay
 * lines and marked points, by default at equal scale on both axes (a too-thin side stretched,
 * and the stretch stated). Exports `heatmap` and its spec types.
 */
import { scaleSequential } from 'd3-scale';
import { line } from 'd3-shape';
import { DASH, INK, viridis } from '../palette.js';
import {
  DIGITS, FONT_SIZE, TICK_LENGTH, clipTo, drawAxisBottom, drawAxisLeft, el, label, num, resizeDocument, serialise, textWidth,
  type Frame, type LegendEntry, type SvgNode,
} from '../svg.js';
import { BOTTOM_ROOM, PAD, axisTitle, beginChart, extentOf, numericAxis, pixelTicks, widen } from './axes.js';
import { BAR_GAP, BAR_WIDTH, drawColourBar, type ColourBarSpec } from './colourBar.js';
import { cellEdges, drawPoints, gridSize } from './grid.js';
import type { ChartSpec, Grid, MarkedPoint, Point, RectAxisSpec } from './spec.js';

export interface OverlayLine {
  /** Shown in the legend when given. */
  name?: string;
  points: readonly Point[];
  dashed?: boolean;
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

function drawOverlayLine(parent: SvgNode, d: string, dashed: boolean): void {
  el(parent, 'path', { class: 'overlay halo', d, fill: 'none', stroke: '#000000', 'stroke-width': 3.4, 'stroke-linejoin': 'round' });
  el(parent, 'path', { class: 'overlay', d, fill: 'none', stroke: INK.halo, 'stroke-width': 1.4, 'stroke-linejoin': 'round', 'stroke-dasharray': dashed ? DASH : undefined });
}

function overlaySwatch(dashed: boolean): LegendEntry['swatch'] {
  return (parent, cx, cy) => drawOverlayLine(parent, `M${num(cx - 12)},${num(cy)}H${num(cx + 12)}`, dashed);
}

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

/**
 * The colour bar beside a heatmap: the colour scale in strips, its ticks and its title. Exports
 * `drawColourBar`, its spec type and the bar's size constants.
 */
import { INK } from '../palette.js';
import { FONT_SIZE, TICK_LENGTH, el, label, num, textWidth, type Frame, type SvgNode } from '../svg.js';
import { axisTitle, numericAxis, pixelTicks } from './axes.js';
import { cellEdges } from './grid.js';

export interface ColourBarSpec {
  label: string;
  unit?: string;
  /** Values outside are drawn in the end colours; default: the extent of the finite values. */
  domain?: readonly [number, number];
  ticks?: number;
  format?: (value: number) => string;
}

export const BAR_GAP = 16;
export const BAR_WIDTH = 12;
export const BAR_STRIPS = 64;

export function drawColourBar(parent: SvgNode, frame: Frame, spec: ColourBarSpec, domain: readonly [number, number], colour: (v: number) => string): void {
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

/**
 * The one colour bar of the renderers: a continuous colour scale drawn upright in strips, from
 * domain[0] at the bottom to domain[1] at the top, outlined, with ticks and their labels on its
 * right. Used beside a heatmap (./chart/colourBar.ts) and beside the chip drawing (pressure,
 * approach to equilibrium, ./chipDrawing/bars.ts); each caller chooses the ticks and places the
 * title. Exports `drawColourBar` and `COLOUR_BAR_WIDTH`.
 */
import { INK } from './palette.js';
import { TICK_LENGTH, el, label, textWidth, type PixelTick, type SvgNode } from './svg.js';
import { cellEdges } from './chart/grid.js';

/** Width of the bar, px. */
export const COLOUR_BAR_WIDTH = 12;
/** Strips of the bar, each 1/64 of its range. */
const STRIPS = 64;

/**
 * The bar at x over the pixel rows y0 (top) … y1 (bottom) in a group of class `cls`, with `ticks`
 * at their pixel rows. Returns the group and the width of the widest tick label.
 */
export function drawColourBar(
  parent: SvgNode, x: number, y0: number, y1: number, domain: readonly [number, number], colour: (v: number) => string, ticks: readonly PixelTick[], cls: string,
): { group: SvgNode; widest: number } {
  const g = el(parent, 'g', { class: cls });
  const edges = cellEdges(y1, y0, STRIPS);
  const strips = el(g, 'g', { 'shape-rendering': 'crispEdges' });
  for (let k = 0; k < STRIPS; k++) {
    const v = domain[0] + ((domain[1] - domain[0]) * (k + 0.5)) / STRIPS;
    el(strips, 'rect', { x, y: edges[k + 1], width: COLOUR_BAR_WIDTH, height: edges[k] - edges[k + 1], fill: colour(v) });
  }
  el(g, 'rect', { x, y: y0, width: COLOUR_BAR_WIDTH, height: y1 - y0, fill: 'none', stroke: INK.axis, 'stroke-width': 0.5 });
  let widest = 0;
  for (const t of ticks) {
    el(g, 'line', { class: 'tick', x1: x + COLOUR_BAR_WIDTH, y1: t.at, x2: x + COLOUR_BAR_WIDTH + TICK_LENGTH, y2: t.at, stroke: INK.axis });
    label(g, t.label, { x: x + COLOUR_BAR_WIDTH + TICK_LENGTH + 3, y: t.at, dy: '0.32em' });
    widest = Math.max(widest, textWidth(t.label));
  }
  return { group: g, widest };
}

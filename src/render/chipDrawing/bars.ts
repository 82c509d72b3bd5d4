/**
 * The scale bar under a drawing to scale and the colour bars beside the chip (pressure, approach
 * to equilibrium). Exports `drawScaleBar`, `drawColourBar`, `colourBarRoom`, `COLOUR_BAR`,
 * `PRESSURE_TITLE` and the `ColourScale` type.
 */
import { scaleLinear } from 'd3-scale';
import { DISPLAY, show } from '../../units/format.js';
import { INK } from '../palette.js';
import { el, label, num, textWidth, type SvgNode } from '../svg.js';
import { niceFloor } from './placement.js';

export const COLOUR_BAR = { gap: 24, width: 12, room: 90 };

/** A continuous colour scale for the bar beside the chip: SI domain, display factor and title. */
export interface ColourScale {
  kind: 'pressure' | 'approach';
  title: string;
  domain: [number, number];
  factor: number;
  colour: (v: number) => string;
}

export const PRESSURE_TITLE = 'pressure (kPa)';

/** Width a colour bar takes to the right of the chip: gap, bar, tick labels, and its title above. */
export function colourBarRoom(title: string): number {
  return COLOUR_BAR.gap + Math.max(COLOUR_BAR.width + COLOUR_BAR.room, textWidth(title));
}

/** A bar of a round length, about 120 px, with its length written above. */
export function drawScaleBar(parent: SvgNode, x: number, y: number, pxPerMetre: number): void {
  const metres = niceFloor(120 / pxPerMetre);
  const w = metres * pxPerMetre;
  const g = el(parent, 'g', { class: 'scale-bar' });
  el(g, 'path', { d: `M${num(x)},${num(y)}V${num(y + 8)}H${num(x + w)}V${num(y)}`, fill: 'none', stroke: INK.text, 'stroke-width': 1.5 });
  el(g, 'rect', { x, y: y + 5, width: w / 2, height: 3, fill: INK.text });
  const text = show(metres, metres >= 1e-3 ? DISPLAY.lengthMm : DISPLAY.length);
  label(g, text, { x: x + w + 6, y: y + 8 });
}

export function drawColourBar(root: SvgNode, x: number, y: number, h: number, scale: ColourScale): void {
  const { domain, colour } = scale;
  const g = el(root, 'g', { class: `colour-bar ${scale.kind}` });
  const strips = 48;
  const strip = el(g, 'g', { 'shape-rendering': 'crispEdges' });
  for (let k = 0; k < strips; k++) {
    const v = domain[0] + ((domain[1] - domain[0]) * (k + 0.5)) / strips;
    const top = y + h - (h * (k + 1)) / strips;
    el(strip, 'rect', { x, y: top, width: COLOUR_BAR.width, height: h / strips + 0.3, fill: colour(v) });
  }
  el(g, 'rect', { x, y, width: COLOUR_BAR.width, height: h, fill: 'none', stroke: INK.axis, 'stroke-width': 0.5 });
  const axis = scaleLinear().domain(domain.map((v) => v * scale.factor)).range([y + h, y]);
  const format = axis.tickFormat(5);
  for (const t of axis.ticks(5)) {
    el(g, 'line', { x1: x + COLOUR_BAR.width, y1: axis(t), x2: x + COLOUR_BAR.width + 5, y2: axis(t), stroke: INK.axis });
    label(g, format(t), { x: x + COLOUR_BAR.width + 8, y: axis(t), dy: '0.32em' });
  }
  label(g, scale.title, { class: 'title', x, y: y - 8 });
}

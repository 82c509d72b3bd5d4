/**
 * The scale bar under a drawing to scale and the colour bars beside the chip (pressure, approach
 * to equilibrium). Exports `drawScaleBar`, `drawColourBar`, `colourBarRoom`, `COLOUR_BAR`,
 * `PRESSURE_TITLE` and the `ColourScale` type.
 */
import { scaleLinear } from 'd3-scale';
import { DISPLAY, show } from '../../units/format.js';
import { COLOUR_BAR_WIDTH, drawColourBar as drawBar } from '../colourBar.js';
import { INK } from '../palette.js';
import { el, label, num, textWidth, type SvgNode } from '../svg.js';
import { niceFloor } from './placement.js';

export const COLOUR_BAR = { gap: 24, width: COLOUR_BAR_WIDTH, room: 90 };

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

/** A colour bar at x, its top at y and h px tall, with about five ticks in the display unit and its title above. */
export function drawColourBar(root: SvgNode, x: number, y: number, h: number, scale: ColourScale): void {
  const axis = scaleLinear().domain(scale.domain.map((v) => v * scale.factor)).range([y + h, y]);
  const format = axis.tickFormat(5);
  const ticks = axis.ticks(5).map((t) => ({ at: axis(t), label: format(t) }));
  const { group } = drawBar(root, x, y, y + h, scale.domain, scale.colour, ticks, `colour-bar ${scale.kind}`);
  label(group, scale.title, { class: 'title', x, y: y - 8 });
}

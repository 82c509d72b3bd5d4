/**
 * The colour bar beside a heatmap: its ticks (fewer on a short bar) and its title, around the
 * renderers' one colour bar (../colourBar.ts). Exports `drawColourBar`, its spec type and the
 * bar's size constants.
 */
import { COLOUR_BAR_WIDTH, drawColourBar as drawBar } from '../colourBar.js';
import { FONT_SIZE, TICK_LENGTH, label, num, type Frame, type SvgNode } from '../svg.js';
import { axisTitle, numericAxis, pixelTicks } from './axes.js';

export interface ColourBarSpec {
  label: string;
  unit?: string;
  /** Values outside are drawn in the end colours; default: the extent of the finite values. */
  domain?: readonly [number, number];
  ticks?: number;
  format?: (value: number) => string;
}

export const BAR_GAP = 16;
export const BAR_WIDTH = COLOUR_BAR_WIDTH;

/** The colour bar right of the plot frame, its ticks fewer on a short bar, its title turned upright at its right. */
export function drawColourBar(parent: SvgNode, frame: Frame, spec: ColourBarSpec, domain: readonly [number, number], colour: (v: number) => string): void {
  const h = frame.y1 - frame.y0;
  const x0 = frame.x1 + BAR_GAP;
  // A short bar gets fewer ticks (one per 28 px), but at least two labelled ones.
  let count = Math.min(spec.ticks ?? 5, Math.max(2, Math.floor(h / 28)));
  let axis = numericAxis({ ...spec, domain, ticks: count }, [], 5);
  while (axis.ticks.length < 2 && count < 10) axis = numericAxis({ ...spec, domain, ticks: ++count }, [], 5);
  axis.scale.range([frame.y1, frame.y0]);
  const { group, widest } = drawBar(parent, x0, frame.y0, frame.y1, domain, colour, pixelTicks(axis), 'colour-bar');
  const titleX = x0 + BAR_WIDTH + TICK_LENGTH + 3 + widest + 8 + FONT_SIZE;
  label(group, axisTitle(spec), { class: 'title', transform: `translate(${num(titleX)},${num((frame.y0 + frame.y1) / 2)}) rotate(-90)`, 'text-anchor': 'middle' });
}

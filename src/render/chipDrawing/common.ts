/**
 * What the parts of the chip drawing share: the phase colours and patterns, the backflow colour,
 * the precision of positions inside a contactor's frame, screen points and tooltips. Exports
 * `PHASE_COLOURS`, `PHASE_B_HATCH`, `MIXED`, `BACKFLOW_COLOUR`, `FRACTION_DIGITS`, `frac`,
 * `ARROW`, `MIN_LABEL_PITCH`, `Point` and `appendTitle`.
 */
import type { PhaseName } from '../../network/model.js';
import { OKABE_ITO } from '../palette.js';
import { el, hatchFill, type SvgNode } from '../svg.js';

/**
 * Phase colours from Okabe & Ito (2008, see ../palette.ts), the same as the first two series of
 * the charts (../chipCharts.ts puts phase A first): sky blue and vermillion stay apart under
 * protan, deutan and tritan vision. For greyscale print phase B also carries the hatch that the
 * bar charts lay over their second group, and the interface is a black line between the bands.
 */
export const PHASE_COLOURS: Record<PhaseName, string> = { A: OKABE_ITO.skyBlue, B: OKABE_ITO.vermillion };
export const PHASE_B_HATCH = hatchFill(1)!;
export const MIXED = 'url(#stratiflow-chip-mixed)';
/** Backflow: yellow, the one Okabe–Ito colour used for neither phase, behind a double arrowhead. */
export const BACKFLOW_COLOUR = OKABE_ITO.yellow;

/** Decimals of band and interface positions inside a contactor's unit frame. */
export const FRACTION_DIGITS = 7;

/** Size of a flow-direction arrowhead, px. */
export const ARROW = 4;
/** Split labels need neighbours at least this far apart, px (a line of text and some air). */
export const MIN_LABEL_PITCH = 18;

/** One value rounded to FRACTION_DIGITS decimals, as attribute text. */
export function frac(v: number): string {
  const k = 10 ** FRACTION_DIGITS;
  return String(Math.round(v * k) / k + 0);
}

export interface Point {
  x: number;
  y: number;
}

/** A tooltip: the SVG title child of `node`. */
export function appendTitle(node: SvgNode, text: string): void {
  const t = el(node, 'title');
  t.node.appendChild(t.node.ownerDocument!.createTextNode(text));
}

/**
 * Colours and series styles for drawings. Exports the Okabe–Ito colours, `seriesStyle` (colour,
 * marker shape and dash for the i-th series of a chart), `categoryColour` (fills of classes and
 * bar groups), `viridis` (the sequential scale of continuous maps) and the neutral inks.
 * Only constants and pure look-ups: no drawing, no I/O.
 *
 * Every colour choice has to survive two readers: one with a colour-vision deficiency and one
 * holding a greyscale print. So series differ in colour *and* marker shape (and in dash where
 * the caller asks), and fills differ in colour *and* hatch (see HATCHES in ./svg.ts).
 */
import { interpolateViridis } from 'd3-scale-chromatic';
import { rgb } from 'd3-color';

/**
 * Okabe, M. & Ito, K. (2008), "Color Universal Design (CUD): how to make figures and
 * presentations that are friendly to colorblind people", J*FLY, https://jfly.uni-koeln.de/color/.
 * Colours distinguishable under protan, deutan and tritan vision.
 */
export const OKABE_ITO = {
  black: '#000000', // 0, 0, 0
  orange: '#e69f00', // 230, 159, 0
  skyBlue: '#56b4e9', // 86, 180, 233
  bluishGreen: '#009e73', // 0, 158, 115
  yellow: '#f0e442', // 240, 228, 66
  blue: '#0072b2', // 0, 114, 178
  vermillion: '#d55e00', // 213, 94, 0
  reddishPurple: '#cc79a7', // 204, 121, 167
} as const;

/** Neutral inks for axes, text and grid lines. */
export const INK = {
  text: '#1a1a1a',
  axis: '#333333',
  grid: '#e3e3e3',
  reference: '#555555',
  halo: '#ffffff',
  background: '#ffffff',
} as const;

/**
 * Order of line and marker colours on a white ground. Yellow is left out: its contrast
 * against white (about 1.3 : 1) is too low for thin lines; it serves as a fill only.
 */
const LINE_COLOURS = [
  OKABE_ITO.blue,
  OKABE_ITO.vermillion,
  OKABE_ITO.bluishGreen,
  OKABE_ITO.reddishPurple,
  OKABE_ITO.orange,
  OKABE_ITO.skyBlue,
  OKABE_ITO.black,
] as const;

/** Fill order, alternating light and dark so neighbours in a legend differ in grey too. */
const FILL_COLOURS = [
  OKABE_ITO.skyBlue,
  OKABE_ITO.vermillion,
  OKABE_ITO.yellow,
  OKABE_ITO.blue,
  OKABE_ITO.orange,
  OKABE_ITO.bluishGreen,
  OKABE_ITO.reddishPurple,
] as const;

export type MarkerShape = 'circle' | 'square' | 'triangle' | 'diamond' | 'triangleDown' | 'cross' | 'plus';

const MARKERS: readonly MarkerShape[] = ['circle', 'square', 'triangle', 'diamond', 'triangleDown', 'cross', 'plus'];

/** Dash pattern of a series drawn dashed (SVG stroke-dasharray, px). */
export const DASH = '6 3';

export interface SeriesStyle {
  colour: string;
  marker: MarkerShape;
}

/** Style of the i-th series; colour and marker both repeat after seven series. */
export function seriesStyle(i: number): SeriesStyle {
  return { colour: LINE_COLOURS[i % LINE_COLOURS.length], marker: MARKERS[i % MARKERS.length] };
}

/** Fill of the i-th class or bar group; repeats after seven. */
export function categoryColour(i: number): string {
  return FILL_COLOURS[i % FILL_COLOURS.length];
}

/**
 * viridis, the perceptually uniform sequential map of matplotlib (Smith & van der Walt, 2015,
 * "A better default colormap for matplotlib", SciPy 2015), from d3-scale-chromatic. Lightness
 * rises monotonically, so it reads in greyscale and under the common colour-vision deficiencies.
 */
/** viridis at t ∈ [0, 1] as '#rrggbb'; t outside is clamped, NaN gives the low end. */
export function viridis(t: number): string {
  const u = Number.isNaN(t) ? 0 : Math.min(1, Math.max(0, t));
  return rgb(interpolateViridis(u)).formatHex();
}

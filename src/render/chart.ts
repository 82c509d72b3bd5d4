/**
 * Charts as pure functions: a typed spec in, an SVG string out. This module is the one import for
 * callers; each chart kind lives in a file of its own under ./chart/:
 * - `lineChart` (line.ts), `heatmap` (heatmap.ts, with its colour bar in colourBar.ts),
 *   `barChart` and `dotChart` (indexed.ts), `histogram` (histogram.ts), `regionMap` (regionMap.ts);
 * - the data steps: histogram binning, `histogramBins` (bins.ts), and contour lines,
 *   `isoSegments` and `joinSegments` (contours.ts);
 * - the shared spec types (spec.ts), axes and chart frame (axes.ts), grid pieces (grid.ts).
 * Scales, ticks and tick labels come from d3-scale; drawing primitives from ./svg.ts.
 *
 * Values are drawn in the unit they arrive in. The caller converts SI values to the display unit
 * and names that unit in the axis spec (`{ label: 'depth', unit: 'µm' }`), or passes a `format`
 * for tick labels; nothing here converts units, reads files or measures fonts.
 *
 * Defined results instead of exceptions: non-finite values (and non-positive ones on a log
 * axis) are left out and break lines; an empty chart draws its axes over [0, 1] (log: [1, 10]);
 * a domain of zero width is widened around its value (±50 %, ±1 about zero, ×/÷10 on log axes).
 * An explicit domain that is not finite, or not positive on a log axis, is the caller's error
 * and throws a RangeError.
 */
export type { AxisSpec, ChartSpec, Grid, GridAxisSpec, LinearAxisSpec, MarkedPoint, Point, RectAxisSpec, ReferenceLine } from './chart/spec.js';
export { lineChart, type LineChartSpec, type LineSeries } from './chart/line.js';
export { heatmap, type HeatmapSpec, type OverlayLine } from './chart/heatmap.js';
export type { ColourBarSpec } from './chart/colourBar.js';
export { barChart, dotChart, type BarChartSpec, type DotChartSpec, type IndexedChartSpec, type IndexedGroup } from './chart/indexed.js';
export { histogram, type HistogramSpec } from './chart/histogram.js';
export { histogramBins, type Bin } from './chart/bins.js';
export { movableAt, regionMap, type ContourSpec, type MovableFrame, type RegionMapSpec } from './chart/regionMap.js';
export { isoSegments, joinSegments } from './chart/contours.js';

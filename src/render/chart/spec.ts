/**
 * The spec types the chart kinds share: points and grids of values, axes, the chart's title and
 * size, marked points and reference lines. Types only; each chart kind adds its own spec in its
 * own module.
 */

export type Point = readonly [number, number];
/** values[j][i]: column i runs along x, row j along y (row 0 at the low end of y). */
export type Grid = ReadonlyArray<ReadonlyArray<number>>;

export interface AxisSpec {
  /** Quantity name, e.g. 'holdup'. */
  label: string;
  /** Display unit, printed as "label (unit)"; the values must already be in it. */
  unit?: string;
  scale?: 'linear' | 'log';
  /** Fixed extent; without it the data extent, widened to nice tick values. */
  domain?: readonly [number, number];
  /** Approximate tick count (d3 `ticks(count)`). */
  ticks?: number;
  /** Text of a labelled tick; default d3 `tickFormat`. */
  format?: (value: number) => string;
}

export type LinearAxisSpec = Omit<AxisSpec, 'scale'>;
/** An axis spanning a given rectangle side. */
export type RectAxisSpec = LinearAxisSpec & { domain: readonly [number, number] };
/** An axis spanning a grid of cells, evenly spaced on the axis' scale (linear or log). */
export type GridAxisSpec = AxisSpec & { domain: readonly [number, number] };

export interface ChartSpec {
  title?: string;
  /** Size in px; defaults 640 × 400, at least 240 × 180. */
  width?: number;
  height?: number;
  /** Lines written under the plot (e.g. what the data leave out). */
  notes?: readonly string[];
}

export interface MarkedPoint {
  at: Point;
  label?: string;
}


export interface ReferenceLine {
  value: number;
  label: string;
}

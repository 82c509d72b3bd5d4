/**
 * What every chart kind stands on: numeric axes (scale, ticks and tick labels from d3-scale, with
 * the defined results for empty, degenerate and non-finite data stated in ../chart.ts) and the
 * chart frame (title, legend and the room left for the plot). Exports `numericAxis`,
 * `pixelTicks`, `axisTitle`, `extentOf`, `widen`, `beginChart`, `inside`, `markerSwatch` and
 * the layout constants. Draws nothing of the data itself.
 */
import { scaleLinear, scaleLog, type ScaleLinear, type ScaleLogarithmic } from 'd3-scale';
import type { MarkerShape } from '../palette.js';
import {
  FONT_SIZE, TICK_LENGTH, TITLE_SIZE, createDocument, drawLegend, label, legendSize, marker, textWidth,
  type Frame, type LegendEntry, type PixelTick, type SvgNode,
} from '../svg.js';
import type { AxisSpec, ChartSpec } from './spec.js';

export const PAD = 10;
/** Room below the plot for tick labels and the axis title. */
export const BOTTOM_ROOM = TICK_LENGTH + 2 * FONT_SIZE + 12;

export type NumericScale = ScaleLinear<number, number> | ScaleLogarithmic<number, number>;

export interface NumericAxis {
  scale: NumericScale;
  /** Ticks in data values; an empty label marks a minor tick of a log axis. */
  ticks: { value: number; label: string }[];
  usable: (v: number) => boolean;
  /**
   * Set when an automatic linear domain found its data uniform to UNIFORM_TO (relative to their
   * largest magnitude): the value they share. Charts say so in words under the plot, since the
   * axis alone (widened to MIN_RELATIVE_SPAN) cannot tell "equal" from "close".
   */
  uniform?: number;
  /**
   * Set when the data spread wider than UNIFORM_TO but less than NOTED_SPREAD of their size (a
   * symmetric chip solved to the solver's tolerance): their middle and relative spread, which
   * charts also say in words, since on the widened axis the points cannot be told apart.
   */
  nearlyUniform?: NearlyUniform;
}

export interface NearlyUniform {
  value: number;
  /** (largest − smallest) / largest magnitude. */
  relative: number;
}

/**
 * Smallest span of an automatic linear axis, relative to the largest magnitude of its data: below
 * it the tick labels would need more than five significant digits and show the rounding of the
 * data (a symmetric 1024-contactor tree gave ticks 1.9999999999995 … 2.0000000000025).
 */
export const MIN_RELATIVE_SPAN = 1e-3;
/** Data within this share of their largest magnitude are called uniform: a few ulps of double precision times the size of a network solve. */
export const UNIFORM_TO = 1e-12;
/**
 * Data spread less than this share of their size are told in words as well: on an axis of
 * MIN_RELATIVE_SPAN they differ by under 1 % of its height, less than a dot's size.
 */
export const NOTED_SPREAD = MIN_RELATIVE_SPAN / 100;

/** `[lo, hi]` widened to at least MIN_RELATIVE_SPAN of its largest magnitude, about its middle; `uniform` when it spans at most UNIFORM_TO of it. */
export function relativeSpan([lo, hi]: readonly [number, number]): { domain: [number, number]; uniform?: number; nearlyUniform?: NearlyUniform } {
  const size = Math.max(Math.abs(lo), Math.abs(hi));
  const span = hi - lo;
  if (size === 0 || span >= MIN_RELATIVE_SPAN * size) return { domain: [lo, hi] };
  const mid = (lo + hi) / 2;
  const half = (MIN_RELATIVE_SPAN * size) / 2;
  const domain: [number, number] = [mid - half, mid + half];
  if (span <= UNIFORM_TO * size) return { domain, uniform: mid };
  return span < NOTED_SPREAD * size ? { domain, nearlyUniform: { value: mid, relative: span / size } } : { domain };
}

export function axisTitle(axis: { label: string; unit?: string }): string {
  return axis.unit ? `${axis.label} (${axis.unit})` : axis.label;
}

export function extentOf(values: Iterable<number>, usable: (v: number) => boolean): [number, number] | undefined {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (!usable(v)) continue;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  return lo <= hi ? [lo, hi] : undefined;
}

export function widen([lo, hi]: readonly [number, number], log: boolean): [number, number] {
  if (lo !== hi) return [lo, hi];
  if (log) return [lo / 10, lo * 10];
  const pad = lo === 0 ? 1 : Math.abs(lo) / 2;
  return [lo - pad, hi + pad];
}

/** Scale and ticks of an axis; `include` values are kept in an automatic domain (e.g. 0 for bars). */
export function numericAxis(spec: AxisSpec, values: Iterable<number>, defaultTicks: number, include: readonly number[] = []): NumericAxis {
  const log = spec.scale === 'log';
  const usable = (v: number) => Number.isFinite(v) && (!log || v > 0);
  const count = spec.ticks ?? defaultTicks;
  let scale: NumericScale;
  let uniform: number | undefined;
  let nearlyUniform: NearlyUniform | undefined;
  if (spec.domain) {
    if (!spec.domain.every(Number.isFinite)) throw new RangeError(`axis "${spec.label}" needs a finite domain`);
    if (log && !(spec.domain[0] > 0 && spec.domain[1] > 0)) throw new RangeError(`log axis "${spec.label}" needs a positive domain`);
    const domain = widen(spec.domain, log);
    scale = log ? scaleLog().domain(domain) : scaleLinear().domain(domain);
  } else {
    const data = extentOf([...values, ...include], usable);
    let domain = widen(data ?? (log ? [1, 10] : [0, 1]), log);
    // Data of zero width keep the defined widening of `widen`; a sliver of rounding noise gets the minimum relative span.
    if (!log && data) {
      const relative = relativeSpan(data);
      if (data[0] !== data[1]) domain = relative.domain;
      if (data[0] !== 0 || data[1] !== 0) uniform = data[0] === data[1] ? data[0] : relative.uniform;
      nearlyUniform = relative.nearlyUniform;
    }
    scale = log ? scaleLog().domain(domain).nice() : scaleLinear().domain(domain).nice(count);
  }
  // '~g' keeps log labels short (1e-9, 0.01, 100) where the default SI prefixes would clash with units.
  const format = log ? scale.tickFormat(count, '~g') : scale.tickFormat(count);
  const ticks = scale.ticks(count).map((value) => {
    const auto = format(value);
    return { value, label: auto !== '' && spec.format ? spec.format(value) : auto };
  });
  return { scale, ticks, usable, ...(uniform !== undefined ? { uniform } : {}), ...(nearlyUniform ? { nearlyUniform } : {}) };
}

/** The value finite `values` share when they are uniform to UNIFORM_TO of their largest magnitude (not all zero), else undefined. */
export function uniformValue(values: Iterable<number>): number | undefined {
  const range = extentOf(values, Number.isFinite);
  return range ? relativeSpan(range).uniform : undefined;
}

/** The middle and relative spread of finite `values` that are nearly uniform (see NumericAxis.nearlyUniform), else undefined. */
export function nearlyUniformValue(values: Iterable<number>): NearlyUniform | undefined {
  const range = extentOf(values, Number.isFinite);
  return range ? relativeSpan(range).nearlyUniform : undefined;
}

/**
 * The sentence a chart writes under its plot about data that are uniform (`uniformValue`), or
 * nearly so (`nearlyUniformValue`: then with their relative spread).
 */
export function uniformNote(name: string, value: number | NearlyUniform, unit: string | undefined): string {
  const shared = typeof value === 'number' ? value : value.value;
  const how = typeof value === 'number' ? `uniform to ${UNIFORM_TO.toExponential(0)} of its size` : `within ${value.relative.toExponential(1)} of its size`;
  return `${name}: every value ${Number(shared.toPrecision(6))}${unit ? ` ${unit}` : ''}, ${how}.`;
}

export function pixelTicks(axis: NumericAxis): PixelTick[] {
  return axis.ticks.map((t) => ({ at: axis.scale(t.value), label: t.label }));
}

export interface Layout {
  root: SvgNode;
  width: number;
  height: number;
  /** Room for the plot; charts that keep an aspect ratio use part of it. */
  frame: Frame;
  yTitleX: number;
  /** Right edge of the title and the legend. */
  headRight: number;
}

/** The document with title and legend, and the plot frame left over for axes with these labels. */
export function beginChart(spec: ChartSpec, legend: readonly LegendEntry[], yLabels: readonly string[], room: { right?: number; bottom?: number } = {}): Layout {
  const width = Math.max(240, spec.width ?? 640);
  const height = Math.max(180, spec.height ?? 400);
  const root = createDocument(width, height, spec.title);
  let top = PAD;
  if (spec.title !== undefined) {
    label(root, spec.title, { class: 'chart-title', x: PAD, y: top + TITLE_SIZE, 'font-size': TITLE_SIZE, 'font-weight': 'bold' });
    top += TITLE_SIZE + 8;
  }
  drawLegend(root, legend, PAD, top, width - 2 * PAD);
  const legendBox = legendSize(legend, width - 2 * PAD);
  top += legendBox.height;
  const headRight = PAD + Math.max(legendBox.width, spec.title === undefined ? 0 : textWidth(spec.title, TITLE_SIZE));
  const x0 = PAD + FONT_SIZE + 8 + Math.max(0, ...yLabels.map((s) => textWidth(s))) + TICK_LENGTH + 3;
  const y0 = top + 8;
  const frame = {
    x0,
    y0,
    x1: Math.max(x0 + 40, width - PAD - (room.right ?? 0) - 12),
    y1: Math.max(y0 + 40, height - PAD - BOTTOM_ROOM - (room.bottom ?? 0)),
  };
  return { root, width, height, frame, yTitleX: PAD + FONT_SIZE, headRight };
}

/** Room under the plot for the notes of a chart (one line each). */
export function notesRoom(notes: readonly string[]): number {
  return notes.length * (FONT_SIZE + 4);
}

/** Notes in italics under the axis title, one line each (the room `notesRoom` left). */
export function drawNotes(root: SvgNode, frame: Frame, notes: readonly string[]): void {
  notes.forEach((note, i) => label(root, note, { class: 'note', x: PAD, y: frame.y1 + BOTTOM_ROOM + (i + 1) * (FONT_SIZE + 4) - 2, 'font-style': 'italic' }));
}

export function inside(frame: Frame, x: number, y: number): boolean {
  return x >= frame.x0 - 0.5 && x <= frame.x1 + 0.5 && y >= frame.y0 - 0.5 && y <= frame.y1 + 0.5;
}

export function markerSwatch(shape: MarkerShape, colour: string): LegendEntry['swatch'] {
  return (parent, cx, cy) => void marker(parent, shape, cx, cy, colour);
}

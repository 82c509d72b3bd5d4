/**
 * Bar and dot charts over an integer index (e.g. contactor numbers): one bar or dot per index
 * and group, labelled indices thinned so that they do not collide, and labelled reference lines.
 * Exports `barChart`, `dotChart` and their spec types.
 */
import { max as maxOf } from 'd3-array';
import { scaleBand } from 'd3-scale';
import { DASH, INK, categoryColour, seriesStyle } from '../palette.js';
import {
  TEXT_HALO, clipTo, drawAxisBottom, drawAxisLeft, el, fillSwatch, hatchDefs, hatchFill, label, marker, markerRun, num, serialise, textWidth,
  type SvgNode,
  type LegendEntry,
} from '../svg.js';
import { axisTitle, beginChart, drawNotes, inside, markerSwatch, notesRoom, numericAxis, pixelTicks, nearlyUniformValue, uniformNote, uniformValue } from './axes.js';
import type { AxisSpec, ChartSpec, LinearAxisSpec, ReferenceLine } from './spec.js';

export interface IndexedGroup {
  name: string;
  /** values[k] belongs to index[k]; non-finite values are left out. */
  values: readonly number[];
}

export interface IndexedChartSpec extends ChartSpec {
  /** Distinct integers, e.g. contactor numbers. */
  index: readonly number[];
  x: { label: string; unit?: string };
  groups: readonly IndexedGroup[];
  /** Horizontal lines across the plot, labelled at their right end (e.g. the mean). */
  reference?: readonly ReferenceLine[];
}

/** Bars start at zero, so their axis is linear. */
export interface BarChartSpec extends IndexedChartSpec {
  y: LinearAxisSpec;
}

export interface DotChartSpec extends IndexedChartSpec {
  y: AxisSpec;
}

/** Label every k-th index value, k from 1, 2, 5, 10, 20, 50 …, so that labels do not collide. */
function labelEvery(index: readonly number[], step: number): number {
  const widest = maxOf(index, (v) => textWidth(String(v))) ?? 0;
  for (let decade = 1; ; decade *= 10) {
    for (const k of [1, 2, 5]) if (k * decade * step >= widest + 6 || k * decade >= index.length) return k * decade;
  }
}

/** More dots than this in one series are drawn as one path (svg.ts `markerRun`). */
const MARKER_RUN_FROM = 256;
/**
 * More dots per px of chart width than this and a series is drawn as its envelope (`envelope`):
 * at 16 384 contactors in a 700 px plot some 23 dots share each pixel column, the markers of
 * one column cover each other, and the path of every marker was most of the chart's text.
 */
const ENVELOPE_FROM_DOTS_PER_PX = 2;
/** Unlabelled ticks (one per index) only while they stand this far apart, px; closer they fill the axis black. */
const MINOR_TICK_PX = 3;

/**
 * A dense series as its envelope: per pixel column of the plot one vertical stroke from the
 * smallest to the largest value that falls in it (min–max decimation), all in one path. Every
 * extreme stays visible — one starved contactor among thousands still reaches the axis —
 * where averaging would hide it.
 */
function envelope(parent: SvgNode, dots: ReadonlyArray<readonly [number, number]>, colour: string, strokeWidth: number): void {
  const columns = new Map<number, [number, number]>();
  for (const [px, py] of dots) {
    const column = Math.round(px);
    const range = columns.get(column);
    if (!range) columns.set(column, [py, py]);
    else {
      if (py < range[0]) range[0] = py;
      if (py > range[1]) range[1] = py;
    }
  }
  let d = '';
  for (const [column, [top, bottom]] of columns) d += `M${num(column)},${num(top - strokeWidth / 2)}V${num(bottom + strokeWidth / 2)}`;
  el(parent, 'path', { class: 'envelope', d, fill: 'none', stroke: colour, 'stroke-width': strokeWidth });
}

function indexedChart(spec: IndexedChartSpec & { y: AxisSpec }, kind: 'bar' | 'dot'): string {
  const references = spec.reference ?? [];
  const values = spec.groups.flatMap((g) => g.values);
  const y = numericAxis(spec.y, [...values, ...references.map((r) => r.value)], 5, kind === 'bar' ? [0] : []);
  const legend = spec.groups.map((g, k): LegendEntry => {
    const style = seriesStyle(k);
    return { text: g.name, swatch: kind === 'bar' ? fillSwatch(categoryColour(k), k) : markerSwatch(style.marker, style.colour) };
  });
  // Each group says in words when it is uniform: the axis is widened to its minimum relative span, so the dots alone cannot tell.
  const notes: string[] = [];
  for (const g of spec.groups) {
    const value = uniformValue(g.values) ?? nearlyUniformValue(g.values);
    if (value !== undefined) notes.push(uniformNote(g.name, value, spec.y.unit));
  }
  notes.push(...(spec.notes ?? []));
  // Decided on the chart's width (the plot's is not known before the notes are placed): a bound a little above the plot's.
  const dense = kind === 'dot' && spec.index.length > ENVELOPE_FROM_DOTS_PER_PX * (spec.width ?? 640);
  if (dense) {
    notes.push('Too many points to mark one by one: each pixel column spans the smallest to the largest value that falls in it.');
  }
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label), { bottom: notesRoom(notes) });
  drawNotes(root, frame, notes);
  if (kind === 'bar') hatchDefs(root, spec.groups.length);
  y.scale.range([frame.y1, frame.y0]);
  const keys = spec.index.map(String);
  const band = scaleBand<string>().domain(keys).range([frame.x0, frame.x1]).paddingInner(0.2).paddingOuter(0.1);
  const inner = scaleBand<number>().domain(spec.groups.map((_, k) => k)).range([0, band.bandwidth()]).padding(kind === 'bar' ? 0.05 : 0.2);
  const every = labelEvery(spec.index, band.step());
  const minorTicks = band.step() >= MINOR_TICK_PX;
  const xTicks = spec.index
    .map((v, p) => ({ at: (band(keys[p]) ?? 0) + band.bandwidth() / 2, label: every === 1 || v % every === 0 ? String(v) : '' }))
    .filter((t) => minorTicks || t.label !== '');
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle(spec.y), true, yTitleX);

  // Bars are clipped: an explicit domain above zero cuts them at the axis.
  const marks = kind === 'bar' ? el(clipTo(root, frame), 'g', { class: 'bars' }) : el(root, 'g', { class: 'markers' });
  const base = y.scale(0);
  spec.groups.forEach((g, k) => {
    const style = seriesStyle(k);
    const dots: Array<[number, number]> = [];
    g.values.forEach((v, p) => {
      if (p >= keys.length || !y.usable(v)) return;
      const left = (band(keys[p]) ?? 0) + (inner(k) ?? 0);
      const py = y.scale(v);
      if (kind === 'dot') {
        if (inside(frame, left + inner.bandwidth() / 2, py)) dots.push([left + inner.bandwidth() / 2, py]);
        return;
      }
      const box = { x: left, y: Math.min(py, base), width: inner.bandwidth(), height: Math.abs(py - base) };
      el(marks, 'rect', { ...box, fill: categoryColour(k), stroke: INK.axis, 'stroke-width': 0.5 });
      const hatch = hatchFill(k);
      if (hatch) el(marks, 'rect', { ...box, fill: hatch });
    });
    if (dense) envelope(marks, dots, style.colour, 3 - k);
    else if (dots.length > MARKER_RUN_FROM) markerRun(marks, style.marker, dots, style.colour);
    else for (const [px, py] of dots) marker(marks, style.marker, px, py, style.colour);
  });
  drawAxisBottom(root, frame, xTicks, axisTitle(spec.x), false);

  for (const r of references) {
    const py = y.scale(r.value);
    if (!y.usable(r.value) || !inside(frame, frame.x0, py)) continue;
    const g = el(root, 'g', { class: 'reference' });
    el(g, 'line', { x1: frame.x0, y1: py, x2: frame.x1, y2: py, stroke: INK.reference, 'stroke-width': 1.2, 'stroke-dasharray': DASH });
    label(g, r.label, { ...TEXT_HALO, x: frame.x1 - 3, y: py - 4, 'text-anchor': 'end' });
  }
  return serialise(root);
}

export function barChart(spec: BarChartSpec): string {
  return indexedChart(spec, 'bar');
}

export function dotChart(spec: DotChartSpec): string {
  return indexedChart(spec, 'dot');
}

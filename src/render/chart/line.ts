/**
 * The line chart: series of points joined (with a few markers to tell them apart) or as markers
 * only, on linear or log axes. Exports `lineChart` and its spec types.
 */
import { line } from 'd3-shape';
import { DASH, seriesStyle } from '../palette.js';
import { DIGITS, clipTo, drawAxisBottom, drawAxisLeft, el, lineSwatch, marker, serialise, type LegendEntry } from '../svg.js';
import { axisTitle, beginChart, drawNotes, inside, markerSwatch, notesRoom, numericAxis, pixelTicks, uniformNote } from './axes.js';
import type { AxisSpec, ChartSpec, Point } from './spec.js';

export interface LineSeries {
  name: string;
  points: readonly Point[];
  dashed?: boolean;
  /** 'line' (default): joined, with a few markers to tell the series apart; 'points': markers only. */
  show?: 'line' | 'points';
}

export interface LineChartSpec extends ChartSpec {
  x: AxisSpec;
  y: AxisSpec;
  series: readonly LineSeries[];
}

/** Markers along a joined series: about eight, staggered between series so they rarely overlap. */
function markerIndices(n: number, series: number, of: number, every: boolean): number[] {
  if (every) return Array.from({ length: n }, (_, k) => k);
  const step = Math.max(1, Math.ceil(n / 8));
  const indices: number[] = [];
  for (let k = Math.floor((step * (series + 1)) / (of + 1)); k < n; k += step) indices.push(k);
  return indices;
}

export function lineChart(spec: LineChartSpec): string {
  const logX = spec.x.scale === 'log';
  const logY = spec.y.scale === 'log';
  const ok = (p: Point) => Number.isFinite(p[0]) && Number.isFinite(p[1]) && (!logX || p[0] > 0) && (!logY || p[1] > 0);
  const points = spec.series.flatMap((s) => s.points.filter(ok));
  const x = numericAxis(spec.x, points.map((p) => p[0]), 6);
  const y = numericAxis(spec.y, points.map((p) => p[1]), 5);
  const legend = spec.series.map((s, i): LegendEntry => {
    const { colour, marker: shape } = seriesStyle(i);
    return { text: s.name, swatch: s.show === 'points' ? markerSwatch(shape, colour) : lineSwatch(colour, s.dashed === true, shape) };
  });
  const shared = y.uniform ?? y.nearlyUniform;
  const notes = [...(shared !== undefined ? [uniformNote(spec.y.label, shared, spec.y.unit)] : []), ...(spec.notes ?? [])];
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label), { bottom: notesRoom(notes) });
  drawNotes(root, frame, notes);
  x.scale.range([frame.x0, frame.x1]);
  y.scale.range([frame.y1, frame.y0]);
  drawAxisBottom(root, frame, pixelTicks(x), axisTitle(spec.x), true);
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle(spec.y), true, yTitleX);

  const plot = clipTo(root, frame);
  const marks = el(root, 'g', { class: 'markers' });
  spec.series.forEach((s, i) => {
    const { colour, marker: shape } = seriesStyle(i);
    if (s.show !== 'points') {
      const path = line<Point>().defined(ok).x((p) => x.scale(p[0])).y((p) => y.scale(p[1])).digits(DIGITS)(s.points);
      if (path) {
        el(plot, 'path', { class: 'series', d: path, fill: 'none', stroke: colour, 'stroke-width': 1.8, 'stroke-linejoin': 'round', 'stroke-dasharray': s.dashed ? DASH : undefined });
      }
    }
    for (const k of markerIndices(s.points.length, i, spec.series.length, s.show === 'points')) {
      const p = s.points[k];
      if (!ok(p)) continue;
      const px = x.scale(p[0]);
      const py = y.scale(p[1]);
      if (inside(frame, px, py)) marker(marks, shape, px, py, colour);
    }
  });
  return serialise(root);
}

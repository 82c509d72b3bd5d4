/**
 * The histogram: counts of samples in bins (./bins.ts) as bars, with labelled reference lines.
 * Exports `histogram` and its spec type.
 */
import { DASH, INK, seriesStyle } from '../palette.js';
import { FONT_SIZE, TEXT_HALO, clipTo, drawAxisBottom, drawAxisLeft, el, fillSwatch, label, lineSwatch, serialise, type LegendEntry } from '../svg.js';
import { axisTitle, beginChart, inside, numericAxis, pixelTicks } from './axes.js';
import { histogramBins } from './bins.js';
import type { ChartSpec, LinearAxisSpec, ReferenceLine } from './spec.js';

export interface HistogramSpec extends ChartSpec {
  samples: readonly number[];
  x: LinearAxisSpec;
  /** Default 'count'. */
  y?: { label: string };
  /** Legend entry of the bars. */
  name?: string;
  /** Approximate bin count; default Sturges' rule. */
  bins?: number;
  /** Explicit bin edges (ascending); samples outside them are not counted. */
  thresholds?: readonly number[];
  /** Vertical lines (e.g. the mean, a limit), labelled at their top. */
  reference?: readonly ReferenceLine[];
}

export function histogram(spec: HistogramSpec): string {
  const bins = histogramBins(spec.samples, { bins: spec.bins, thresholds: spec.thresholds });
  const references = spec.reference ?? [];
  const x = numericAxis(spec.x, [...bins.flatMap((b) => [b.x0, b.x1]), ...references.map((r) => r.value)], 6);
  const y = numericAxis({ label: spec.y?.label ?? 'count' }, bins.map((b) => b.count), 5, [0]);
  y.ticks = y.ticks.filter((t) => Number.isInteger(t.value));
  const colour = seriesStyle(0).colour;
  const legend: LegendEntry[] = [
    ...(spec.name === undefined ? [] : [{ text: spec.name, swatch: fillSwatch(colour, 0) }]),
    ...references.map((r) => ({ text: r.label, swatch: lineSwatch(INK.reference, true, undefined, 1.2) })),
  ];
  const { root, frame, yTitleX } = beginChart(spec, legend, y.ticks.map((t) => t.label));
  x.scale.range([frame.x0, frame.x1]);
  y.scale.range([frame.y1, frame.y0]);
  drawAxisBottom(root, frame, pixelTicks(x), axisTitle(spec.x), false);
  drawAxisLeft(root, frame, pixelTicks(y), axisTitle({ label: spec.y?.label ?? 'count' }), true, yTitleX);

  const plot = clipTo(root, frame);
  const bars = el(plot, 'g', { class: 'bars', fill: colour });
  for (const b of bins) {
    if (b.count === 0) continue;
    const left = x.scale(b.x0);
    const top = y.scale(b.count);
    el(bars, 'rect', { x: left + 0.5, y: top, width: Math.max(0, x.scale(b.x1) - left - 1), height: frame.y1 - top });
  }
  for (const r of references) {
    const px = x.scale(r.value);
    if (!Number.isFinite(r.value) || !inside(frame, px, frame.y0)) continue;
    const g = el(root, 'g', { class: 'reference' });
    el(g, 'line', { x1: px, y1: frame.y0, x2: px, y2: frame.y1, stroke: INK.reference, 'stroke-width': 1.2, 'stroke-dasharray': DASH });
    label(g, r.label, { ...TEXT_HALO, x: px + 3, y: frame.y0 + FONT_SIZE, 'text-anchor': 'start' });
  }
  return serialise(root);
}

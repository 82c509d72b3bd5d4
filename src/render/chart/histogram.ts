/**
 * The histogram: counts of samples in bins (d3-array's `bin` over d3's nice edges) as bars, with
 * labelled reference lines. Exports `histogram`, `histogramBins` and their types.
 */
import { bin } from 'd3-array';
import { scaleLinear } from 'd3-scale';
import { DASH, INK, seriesStyle } from '../palette.js';
import { FONT_SIZE, TEXT_HALO, clipTo, drawAxisBottom, drawAxisLeft, el, fillSwatch, label, lineSwatch, serialise, type LegendEntry } from '../svg.js';
import { axisTitle, beginChart, extentOf, inside, numericAxis, pixelTicks, widen } from './axes.js';
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

export interface Bin {
  x0: number;
  x1: number;
  count: number;
}

/**
 * Counts of the finite samples in bins [x0, x1), the last one closed (d3-array's `bin`). Without thresholds the
 * edges are d3's nice ticks over the sample extent, about `bins` of them, by default
 * ⌈log₂ n⌉ + 1 (Sturges, 1926, J. Am. Stat. Assoc. 21, 65–66), as d3-array's `bin` does.
 * No finite samples and no thresholds give no bins.
 */
export function histogramBins(samples: readonly number[], options: { bins?: number; thresholds?: readonly number[] } = {}): Bin[] {
  const finite = samples.filter(Number.isFinite);
  let edges: number[];
  if (options.thresholds) {
    edges = [...new Set(options.thresholds.filter(Number.isFinite))].sort((a, b) => a - b);
  } else {
    const range = extentOf(finite, Number.isFinite);
    if (!range) return [];
    const count = options.bins ?? Math.ceil(Math.log2(finite.length)) + 1;
    const scale = scaleLinear().domain(widen(range, false)).nice(count);
    edges = scale.ticks(count);
    const [lo, hi] = scale.domain();
    if (edges[0] > lo) edges.unshift(lo);
    if (edges[edges.length - 1] < hi) edges.push(hi);
  }
  if (edges.length < 2) return [];
  // d3-array's bin counts into [x0, x1) with the last bin closed, dropping samples outside.
  const lo = edges[0]!;
  const hi = edges[edges.length - 1]!;
  const binned = bin().domain([lo, hi]).thresholds(edges.slice(1, -1))(finite);
  return binned.map((b, k) => ({ x0: edges[k]!, x1: edges[k + 1]!, count: b.length }));
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

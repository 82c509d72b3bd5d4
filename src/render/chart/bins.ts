/**
 * Histogram binning: counts of samples in bins over d3's nice edges (d3-array's `bin`). Exports
 * `histogramBins` and the `Bin` type. A pure data step: numbers in, counts out; nothing is drawn.
 */
import { bin } from 'd3-array';
import { scaleLinear } from 'd3-scale';
import { extentOf, widen } from './axes.js';

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

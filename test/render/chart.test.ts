import { describe, expect, it } from 'vitest';
import { XMLValidator } from 'fast-xml-parser';
import {
  barChart, dotChart, heatmap, histogram, histogramBins, isoSegments, joinSegments, lineChart, regionMap,
  type BarChartSpec, type DotChartSpec, type HeatmapSpec, type HistogramSpec, type LineChartSpec, type RegionMapSpec,
} from '../../src/render/chart.js';
import { OKABE_ITO, viridis } from '../../src/render/palette.js';
import { escapeXml, fixed } from '../../src/render/svg.js';

const MARKUP = `<b>&"'`;
const MARKUP_ESCAPED = '&lt;b&gt;&amp;&quot;&apos;';

/** Text contents of all <text> elements, unescaped. */
function texts(svg: string): string[] {
  const unescape = (s: string) => s.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&apos;/g, "'").replace(/&amp;/g, '&');
  return [...svg.matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => unescape(m[1]));
}

/** The <g class="…"> group (no nested groups inside). */
function group(svg: string, cls: string): string {
  const start = svg.indexOf(`<g class="${cls}"`);
  expect(start).toBeGreaterThanOrEqual(0);
  return svg.slice(start, svg.indexOf('</g>', start));
}

/** x of the labelled tick of the x axis whose label is `text`. */
function xTickAt(svg: string, text: string): number {
  const m = group(svg, 'axis x').match(new RegExp(`<text x="([-\\d.]+)"[^>]*>${text}</text>`));
  expect(m, `x tick ${text}`).not.toBeNull();
  return Number(m![1]);
}

/** y of the labelled tick of the y axis whose label is `text`. */
function yTickAt(svg: string, text: string): number {
  const m = group(svg, 'axis y').match(new RegExp(`<text x="[-\\d.]+" y="([-\\d.]+)"[^>]*>${text}</text>`));
  expect(m, `y tick ${text}`).not.toBeNull();
  return Number(m![1]);
}

function markers(svg: string): [number, number][] {
  return [...group(svg, 'markers').matchAll(/translate\(([-\d.]+),([-\d.]+)\)/g)].map((m) => [Number(m[1]), Number(m[2])]);
}

const lineSpec: LineChartSpec = {
  title: `holdup curves ${MARKUP}`,
  x: { label: 'holdup', unit: '-', domain: [0, 1] },
  y: { label: 'flow fraction', unit: '-', domain: [0, 1] },
  series: [
    { name: 'viscosity ratio 3.4', points: Array.from({ length: 21 }, (_, i): [number, number] => [i / 20, (i / 20) ** 2]) },
    { name: 'equal viscosities', points: [[0, 0], [1, 1]], dashed: true },
    { name: `measured ${MARKUP}`, show: 'points', points: [[0.4, 0.2], [0.3, 0.7]] },
  ],
};

const nx = 40;
const ny = 10;
const heatSpec: HeatmapSpec = {
  title: 'velocity over the cross-section',
  x: { label: 'width', unit: 'µm', domain: [0, 200] },
  y: { label: 'depth', unit: 'µm', domain: [0, 100] },
  values: Array.from({ length: ny }, (_, j) => Array.from({ length: nx }, (_, i) => Math.sin((Math.PI * (i + 0.5)) / nx) * Math.sin((Math.PI * (j + 0.5)) / ny))),
  colour: { label: `speed ${MARKUP}`, unit: 'mm/s' },
  lines: [{ name: 'interface', points: [[80, 0], [80, 100]], dashed: true }],
  points: [{ at: [100, 50], label: 'velocity maximum' }],
};

const contactors = [1, 2, 3, 4, 5, 6];
const barSpec: BarChartSpec = {
  title: 'flow per contactor',
  index: contactors,
  x: { label: 'contactor' },
  y: { label: 'flow', unit: 'µL/min' },
  groups: [
    { name: 'phase A', values: [10, 11, 9.5, 10.2, 10.8, 9.9] },
    { name: `phase B ${MARKUP}`, values: [5, 5.5, 4.8, 5.1, Number.NaN, 5.2] },
  ],
  reference: [{ value: 7.5, label: 'mean' }],
};
const dotSpec: DotChartSpec = { ...barSpec, y: { label: 'flow', unit: 'µL/min', scale: 'log' } };

const histSpec: HistogramSpec = {
  title: `spread ${MARKUP}`,
  samples: [0.1, 0.2, 0.25, 0.4, 0.45, 0.5, 0.9, 1.0, Number.NaN],
  x: { label: 'holdup', unit: '-' },
  name: 'Monte Carlo samples',
  reference: [{ value: 0.5, label: 'nominal' }],
};

const regionSpec: RegionMapSpec = {
  title: 'operating window',
  x: { label: 'flow of A', unit: 'µL/min', scale: 'log', domain: [0.1, 100] },
  y: { label: 'flow of B', unit: 'µL/min', domain: [0, 50] },
  classes: ['stratified', `A breaks through ${MARKUP}`, 'B breaks through'],
  cells: Array.from({ length: 12 }, (_, j) => Array.from({ length: 16 }, (_, i) => (i + j < 10 ? 0 : i > 12 ? 2 : 1))),
  contours: [{ label: 'pressure drop', unit: 'kPa', values: Array.from({ length: 8 }, (_, j) => Array.from({ length: 8 }, (_, i) => i + j)), levels: [4, 9] }],
  points: [{ at: [1, 20], label: 'design point' }],
};

const charts: [string, () => string, string[]][] = [
  ['lineChart', () => lineChart(lineSpec), ['holdup (-)', 'flow fraction (-)', 'viscosity ratio 3.4', 'equal viscosities', `measured ${MARKUP}`]],
  ['heatmap', () => heatmap(heatSpec), ['width (µm)', 'depth (µm)', `speed ${MARKUP} (mm/s)`, 'interface', 'velocity maximum']],
  ['barChart', () => barChart(barSpec), ['contactor', 'flow (µL/min)', 'phase A', `phase B ${MARKUP}`, 'mean']],
  ['dotChart', () => dotChart(dotSpec), ['contactor', 'flow (µL/min)', 'phase A', `phase B ${MARKUP}`, 'mean']],
  ['histogram', () => histogram(histSpec), ['holdup (-)', 'count', 'Monte Carlo samples', 'nominal']],
  ['regionMap', () => regionMap(regionSpec), ['flow of A (µL/min)', 'flow of B (µL/min)', 'stratified', `A breaks through ${MARKUP}`, 'B breaks through', 'pressure drop (kPa)', 'design point']],
];

describe.each(charts)('%s', (_name, draw, expectedTexts) => {
  const svg = draw();

  it('is well-formed XML', () => {
    expect(XMLValidator.validate(svg)).toBe(true);
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
  });

  it('shows its axis titles with units and its legend entries', () => {
    const shown = texts(svg);
    for (const t of expectedTexts) expect(shown).toContain(t);
  });

  it('escapes markup characters in user text', () => {
    expect(svg).toContain(MARKUP_ESCAPED);
    expect(svg).not.toContain('<b>');
  });

  it('is byte-identical from one call to the next', () => {
    expect(draw()).toBe(svg);
  });

  it('writes every number attribute with at most two decimals', () => {
    const numbers = [...svg.matchAll(/ (?:x|y|x1|x2|y1|y2|width|height)="(-?[\d.]+)"/g)].map((m) => m[1]);
    expect(numbers.length).toBeGreaterThan(0);
    for (const n of numbers) expect(n).toMatch(/^-?\d+(\.\d{1,2})?$/);
  });
});

describe('lineChart', () => {
  it('puts a data point at the pixel of the axis ticks with its coordinates', () => {
    const svg = lineChart(lineSpec);
    // The third series is drawn as markers only, after the sparse markers of the first two.
    const [px, py] = markers(svg).at(-2)!; // (0.4, 0.2)
    expect(px).toBe(xTickAt(svg, '0.4'));
    expect(py).toBe(yTickAt(svg, '0.2'));
  });

  it('puts a point between ticks at the linearly interpolated pixel (±0.01 px rounding)', () => {
    const svg = lineChart(lineSpec);
    const [px, py] = markers(svg).at(-1)!; // (0.3, 0.7)
    expect(Math.abs(px - (xTickAt(svg, '0.2') + xTickAt(svg, '0.4')) / 2)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(py - (yTickAt(svg, '0.6') + yTickAt(svg, '0.8')) / 2)).toBeLessThanOrEqual(0.01);
  });

  it('places points on a log axis at their decade ticks and leaves out non-positive values', () => {
    const svg = lineChart({
      x: { label: 'flow', unit: 'µL/min', scale: 'log' },
      y: { label: 'pressure drop', unit: 'kPa', scale: 'log' },
      series: [{ name: 'drop', show: 'points', points: [[0.1, 1], [10, 100], [0, 5], [-1, 5]] }],
    });
    expect(XMLValidator.validate(svg)).toBe(true);
    const drawn = markers(svg);
    expect(drawn).toHaveLength(2);
    expect(drawn[1]).toEqual([xTickAt(svg, '10'), yTickAt(svg, '100')]);
  });

  it('draws empty axes over [0, 1] for a chart without points', () => {
    const svg = lineChart({ x: { label: 'a' }, y: { label: 'b' }, series: [] });
    expect(XMLValidator.validate(svg)).toBe(true);
    expect(texts(svg)).toEqual(expect.arrayContaining(['0.0', '1.0', 'a', 'b']));
  });

  it('breaks a line at a non-finite value', () => {
    const svg = lineChart({ x: { label: 'a' }, y: { label: 'b' }, series: [{ name: 's', points: [[0, 0], [1, Number.NaN], [2, 1], [3, 2]] }] });
    const d = svg.match(/class="series" d="([^"]+)"/)![1];
    expect(d.match(/M/g)).toHaveLength(2);
  });
});

describe('heatmap', () => {
  /** Lengths of the x and y axis lines. */
  function plotSize(svg: string): [number, number] {
    const x = group(svg, 'axis x').match(/class="domain" x1="([\d.]+)" y1="[\d.]+" x2="([\d.]+)"/)!;
    const y = group(svg, 'axis y').match(/class="domain" x1="[\d.]+" y1="([\d.]+)" x2="[\d.]+" y2="([\d.]+)"/)!;
    return [Number(x[2]) - Number(x[1]), Number(y[2]) - Number(y[1])];
  }

  it('keeps the aspect ratio of the physical rectangle (±0.02 px rounding)', () => {
    const [w, h] = plotSize(heatmap(heatSpec));
    expect(Math.abs(w - 2 * h)).toBeLessThanOrEqual(0.02);
  });

  it('stretches an extreme rectangle and says so', () => {
    const svg = heatmap({ ...heatSpec, x: { ...heatSpec.x, domain: [0, 1000] }, y: { ...heatSpec.y, domain: [0, 10] } });
    const note = texts(svg).find((t) => t.startsWith('vertical scale stretched ×'))!;
    expect(note).toBeDefined();
    const factor = Number(note.split('×')[1]);
    const [w, h] = plotSize(svg);
    expect(Math.abs((w / h) * factor - 100)).toBeLessThanOrEqual(0.1);
  });

  it('colours one cell per finite value, leaving non-finite cells blank', () => {
    const values = [[0, 1, Number.NaN], [2, 3, 4]];
    const svg = heatmap({ ...heatSpec, values, lines: [], points: [] });
    expect(group(svg, 'cells').match(/<rect /g)).toHaveLength(5);
    expect(group(svg, 'cells')).toContain(`fill="${viridis(0)}"`);
    expect(group(svg, 'cells')).toContain(`fill="${viridis(1)}"`);
  });
});

describe('barChart and dotChart', () => {
  it('draws one bar per finite value, and hatches the second group', () => {
    const svg = barChart(barSpec);
    const bars = svg.slice(svg.indexOf('<g class="bars"'));
    expect(bars.match(/<rect [^>]*fill="#/g)).toHaveLength(11);
    expect(svg).toContain('url(#stratiflow-hatch-1)');
  });

  it('gives each group its own marker shape in a dot chart', () => {
    const svg = dotChart(dotSpec);
    const shapes = new Set([...group(svg, 'markers').matchAll(/ d="([^"]+)"/g)].map((m) => m[1]));
    expect(shapes.size).toBe(2);
  });

  it('draws a long series as one path holding every dot', () => {
    // Regression of scale: 16 384 contactors built one element per dot, and the charts took 5.4 s.
    const n = 1000;
    const index = Array.from({ length: n }, (_, i) => i + 1);
    const values = index.map((i) => Math.sin(i / 50));
    const svg = dotChart({ title: 'many', x: { label: 'contactor' }, y: { label: 'value' }, index, groups: [{ name: 'one', values }] });
    const runs = [...group(svg, 'markers').matchAll(/<path class="marker-run"[^>]* d="([^"]+)"/g)].map((m) => m[1]!);
    expect(runs).toHaveLength(1);
    // A circle marker is two arcs from its rightmost point: one "M" per dot.
    expect(runs[0]!.split('M').length - 1).toBe(n);
    expect(group(svg, 'markers')).not.toMatch(/class="marker"/);
  });
  it('draws a series denser than the pixels as its min–max envelope, which keeps a lone outlier, and drops the per-index ticks', () => {
    // Regression of scale: 16 384 contactors drew 16 384 tick marks and a marker each, 1 s of the report's charts.
    const n = 16384;
    const index = Array.from({ length: n }, (_, i) => i + 1);
    const values = index.map((i) => (i === 9000 ? 0 : 1 + 0.1 * Math.sin(i / 2000)));
    const svg = dotChart({ title: 'many', width: 760, x: { label: 'contactor' }, y: { label: 'value', domain: [0, 1.2] }, index, groups: [{ name: 'one', values }] });
    const paths = [...group(svg, 'markers').matchAll(/<path class="envelope"[^>]* d="([^"]+)"/g)].map((m) => m[1]!);
    expect(paths).toHaveLength(1);
    const columns = [...paths[0]!.matchAll(/M([-\d.]+),([-\d.]+)V([-\d.]+)/g)].map((m) => [Number(m[1]), Number(m[2]), Number(m[3])]);
    // At most one stroke per pixel column of the 760 px chart.
    expect(columns.length).toBeLessThanOrEqual(760);
    expect(new Set(columns.map((c) => c[0])).size).toBe(columns.length);
    // The outlier reaches the bottom of the plot: the value 0 at the axis, within the stroke's half width (1.5 px).
    const bottom = Math.max(...columns.map((c) => c[2]!));
    const axisY = Number(/<line class="domain" x1="[-\d.]+" y1="([-\d.]+)"/.exec(group(svg, 'axis x'))![1]);
    expect(Math.abs(bottom - axisY)).toBeLessThanOrEqual(1.5 + 0.01);
    expect(group(svg, 'axis x').match(/class="tick"/g)!.length).toBeLessThan(30);
    expect(texts(svg)).toContain('Too many points to mark one by one: each pixel column spans the smallest to the largest value that falls in it.');
  });
});

describe('axes of data uniform up to rounding', () => {
  // Equal contactors of a symmetric tree, as a network solve returns them: 2 µL/min to within a few
  // ulps (1e-15 relative, about the rounding of double precision on sums of ~10 terms).
  const values = Array.from({ length: 1024 }, (_, k) => 2 * (1 + ((k % 7) - 3) * 1e-15));
  const spec = (v: number[]): DotChartSpec => ({
    index: v.map((_, k) => k + 1), x: { label: 'contactor number' }, y: { label: 'flow', unit: 'µL/min' }, groups: [{ name: 'phase A', values: v }],
  });
  const yLabels = (svg: string) => [...group(svg, 'axis y').matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => m[1]!).filter((t) => /^[-\d.]+$/.test(t));

  it('spans at least 1e-3 of the data\'s size, so tick labels need no more than five significant digits', () => {
    const labels = yLabels(dotChart(spec(values)));
    expect(labels.length).toBeGreaterThanOrEqual(2);
    for (const l of labels) expect(l.replace(/^-|\./g, '').replace(/^0+/, '').length).toBeLessThanOrEqual(5);
    const ticks = labels.map(Number);
    expect(Math.max(...ticks) - Math.min(...ticks)).toBeGreaterThanOrEqual(0.5e-3 * 2);
  });

  it('says in words that the data are uniform to 1e-12, naming the value', () => {
    expect(texts(dotChart(spec(values)))).toContain('phase A: every value 2 µL/min, uniform to 1e-12 of its size.');
    const line = lineChart({ x: { label: 'x' }, y: { label: 'pressure', unit: 'kPa' }, series: [{ name: 's', points: values.map((v, k) => [k, v] as const) }] });
    expect(texts(line)).toContain('pressure: every value 2 kPa, uniform to 1e-12 of its size.');
  });

  it('says in words how little nearly uniform data spread, as the even 1024-contactor tree of make tree --levels 10 solves (2.4e-12 measured)', () => {
    const nearly = values.map((v, k) => v * (1 + (k % 2) * 2.4e-12));
    expect(texts(dotChart(spec(nearly)))).toContain('phase A: every value 2 µL/min, within 2.4e-12 of its size.');
    const line = lineChart({ x: { label: 'x' }, y: { label: 'pressure', unit: 'kPa' }, series: [{ name: 's', points: nearly.map((v, k) => [k, v] as const) }] });
    expect(texts(line)).toContain('pressure: every value 2 kPa, within 2.4e-12 of its size.');
    // Spread over 1 % of the widened axis (NOTED_SPREAD, 1e-5 of the size): the dots show it, no words.
    expect(texts(dotChart(spec(values.map((v, k) => v * (1 + (k % 2) * 2e-5))))).some((t) => t.includes('every value'))).toBe(false);
  });

  it('says nothing of uniform data where the values spread wider than 1e-12', () => {
    const spread = values.map((v, k) => v * (1 + k * 1e-9));
    expect(texts(dotChart(spec(spread))).some((t) => t.includes('uniform'))).toBe(false);
  });
});

describe('histogramBins', () => {
  it('counts samples in [x0, x1) with the last bin closed', () => {
    expect(histogramBins([0.1, 0.2, 0.25, 0.5, 0.9, 1.0], { thresholds: [0, 0.5, 1] })).toEqual([
      { x0: 0, x1: 0.5, count: 3 },
      { x0: 0.5, x1: 1, count: 3 },
    ]);
  });

  it('leaves out non-finite samples and those outside explicit thresholds', () => {
    const bins = histogramBins([Number.NaN, -1, 0.2, 2], { thresholds: [0, 1] });
    expect(bins).toEqual([{ x0: 0, x1: 1, count: 1 }]);
  });

  it('covers every finite sample with nice edges by default (Sturges: 8 samples → 4, nice step 0.2 → 5 bins)', () => {
    const bins = histogramBins(histSpec.samples);
    expect(bins.reduce((n, b) => n + b.count, 0)).toBe(8);
    expect(bins[0].x0).toBe(0);
    expect(bins.at(-1)!.x1).toBe(1);
    expect(bins.length).toBe(5);
  });

  it('gives no bins for no finite samples', () => {
    expect(histogramBins([Number.NaN])).toEqual([]);
  });
});

describe('contours', () => {
  it('crosses a linear ramp where it reaches the level', () => {
    const ramp = [[0, 1, 2], [0, 1, 2]];
    expect(isoSegments(ramp, 1.5)).toEqual([[[1.5, 0], [1.5, 1]]]);
  });

  it('chains segments into one polyline through shared ends', () => {
    const values = Array.from({ length: 5 }, (_, j) => Array.from({ length: 5 }, (_, i) => i + j));
    const polylines = joinSegments(isoSegments(values, 3.5));
    expect(polylines).toHaveLength(1);
    expect(polylines[0]).toHaveLength(8); // the line i + j = 3.5 crosses 4 vertical and 4 horizontal grid lines
  });

  it('resolves a saddle cell by the mean of its corners', () => {
    // Corners 1 and 1 on one diagonal, 0 and 0 on the other; mean 0.5 ≥ 0.4 joins the high corners.
    const segments = isoSegments([[1, 0], [0, 1]], 0.4);
    expect(segments).toHaveLength(2);
    expect(segments).toContainEqual([[0.6, 0], [1, 0.4]]); // cuts off the low corner (1, 0)
  });
});

describe('palette and primitives', () => {
  it('keeps the Okabe–Ito values (Okabe & Ito, 2008)', () => {
    expect(OKABE_ITO).toMatchObject({ orange: '#e69f00', skyBlue: '#56b4e9', bluishGreen: '#009e73', blue: '#0072b2', vermillion: '#d55e00' });
  });

  it('ends viridis at the first and last entries of its published table', () => {
    expect(viridis(0)).toBe('#440154');
    expect(viridis(1)).toBe('#fde725');
    expect(viridis(0.5)).toBe('#21918c'); // entry 128
  });

  it('escapes all five XML characters', () => {
    expect(escapeXml(`a<b>&"'`)).toBe('a&lt;b&gt;&amp;&quot;&apos;');
  });

  it('drops characters that XML 1.0 cannot hold and keeps the rest', () => {
    expect(escapeXml('a\u0001b\uD800c\t😀µ')).toBe('abc\t😀µ');
  });

  it('rounds halves away from zero and never writes -0', () => {
    expect(fixed(3.115)).toBe(-fixed(-3.115));
    expect(Object.is(fixed(-0.001), 0)).toBe(true);
  });
});

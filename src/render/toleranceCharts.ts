/**
 * Charts of a tolerance study (src/analyses/tolerance.ts) from the shared chart functions in
 * ./chart.ts: a histogram of every spread between contactors with the nominal value and the
 * first-order mean marked (and both standard deviations in the title), the probability that some split leaks against a multiple of
 * the tolerances (first-order curve, sampled points with 95 % intervals), and each contactor's
 * leak probability. Exports `toleranceCharts` → named SVG strings. Pure: data in, strings out.
 */
import { barChart, histogram, lineChart, type LineSeries, type Point, type ReferenceLine } from './chart.js';
import type { SpreadEstimate, ToleranceResult } from '../analyses/tolerance.js';

export interface NamedChart {
  /** File name: lower case, no directory. */
  name: string;
  svg: string;
}

const FILE_STEM: Record<SpreadEstimate['key'], string> = {
  'total.cv': 'total-cv',
  'total.ratio': 'total-ratio',
  'flowA.cv': 'flow-a-cv',
  'flowA.ratio': 'flow-a-ratio',
  'flowB.cv': 'flow-b-cv',
  'flowB.ratio': 'flow-b-ratio',
  'holdup.cv': 'holdup-cv',
  'holdup.ratio': 'holdup-ratio',
};

/** Three significant digits, for figures in titles. */
function fixedDigits(v: number): string {
  return Number(v.toPrecision(3)).toString();
}

function spreadHistogram(r: ToleranceResult, s: SpreadEstimate): NamedChart {
  const cv = s.key.endsWith('.cv');
  const scale = cv ? 100 : 1;
  const samples = r.rows.flatMap((row) => (row.spreads ? [row.spreads[s.key] * scale] : []));
  const reference: ReferenceLine[] = [{ value: s.nominal * scale, label: 'nominal' }];
  if (s.firstOrder) reference.push({ value: s.firstOrder.mean * scale, label: 'first-order mean' });
  const unit = cv ? ' %' : '';
  const sds = [s.sampled ? `${fixedDigits(s.sampled.sd * scale)}${unit} sampled` : '', s.firstOrder ? `${fixedDigits(s.firstOrder.sd * scale)}${unit} first order` : ''].filter(Boolean);
  return {
    name: `spread-${FILE_STEM[s.key]}.svg`,
    svg: histogram({
      title: `${s.label}${sds.length ? `: sd ${sds.join(', ')}` : ''}`,
      samples,
      x: { label: s.label, unit: cv ? '%' : undefined },
      y: { label: 'realisations' },
      name: `${samples.length} realisations`,
      reference,
    }),
  };
}

function failureChart(r: ToleranceResult): NamedChart {
  const series: LineSeries[] = [];
  if (r.firstOrderCurve.length) series.push({ name: 'first-order model', points: r.firstOrderCurve.map((p): Point => [p.scale, 100 * (1 - p.pinned)]) });
  const sampled = r.sweep.filter((p) => p.pinned !== null);
  if (sampled.length) {
    series.push({ name: 'sampled', show: 'points', points: sampled.map((p): Point => [p.scale, 100 * (1 - p.pinned!.value)]) });
    series.push({ name: 'sampled, 95 % limits', show: 'points', points: sampled.flatMap((p): Point[] => [[p.scale, 100 * (1 - p.pinned!.high)], [p.scale, 100 * (1 - p.pinned!.low)]]) });
  }
  return {
    name: 'failure.svg',
    svg: lineChart({
      title: 'Probability that some split leaks',
      x: { label: 'tolerances', unit: '× given', domain: [0, Math.max(2, ...r.sweep.map((p) => p.scale))] },
      y: { label: 'probability', unit: '%', domain: [0, 100] },
      series,
    }),
  };
}

function leakChart(r: ToleranceResult): NamedChart {
  const withSplit = r.contactors.filter((c) => c.split !== null);
  const groups = [{ name: 'sampled', values: withSplit.map((c) => 100 * (c.leakProbability ?? NaN)) }];
  if (withSplit.some((c) => c.firstOrderLeakProbability !== null)) groups.push({ name: 'first-order model', values: withSplit.map((c) => 100 * (c.firstOrderLeakProbability ?? NaN)) });
  return {
    name: 'contactor-leaks.svg',
    svg: barChart({
      title: 'Probability that each contactor\'s split leaks',
      index: withSplit.map((c) => c.index),
      x: { label: 'contactor' },
      y: { label: 'probability', unit: '%' },
      groups,
    }),
  };
}

export function toleranceCharts(r: ToleranceResult): NamedChart[] {
  const charts: NamedChart[] = [];
  if (r.sampled) for (const s of r.spreads) charts.push(spreadHistogram(r, s));
  if (r.pinned !== null || r.firstOrderCurve.length) charts.push(failureChart(r));
  if (r.contactors.some((c) => c.split !== null) && (r.sampled || r.contactors.some((c) => c.firstOrderLeakProbability !== null))) charts.push(leakChart(r));
  return charts;
}

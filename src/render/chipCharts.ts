/**
 * Charts of a solved chip: per contactor the flow of each phase, the holdup and the deviation
 * from the mean, against contactor number; and the pressure along each manifold (profiles from
 * analyses/manifolds.ts). Exports `chipCharts` (all of them, titled, as SVG text) and the
 * `ChipChart` type. Pure: solved chip and manifolds in, SVG out; the charts themselves come
 * from ./chart.ts.
 */
import type { SolvedChip } from '../analyses/chip.js';
import type { Manifold } from '../analyses/manifolds.js';
import type { PhaseName } from '../network/model.js';
import { DISPLAY, show } from '../units/format.js';
import { barChart, dotChart, lineChart, type LineSeries } from './chart.js';
import { max as maxOf, min as minOf } from 'd3-array';

export interface ChipChart {
  /** Short stable name, usable as a file name or an HTML id. */
  id: string;
  title: string;
  svg: string;
}

/** More contactors than this are drawn as dots: bars would be thinner than a pixel or two. */
const MAX_BARS = 48;
const WIDTH = 760;
const HEIGHT = 340;
/**
 * Smallest spans of the holdup (–) and deviation (%) axes: a chip whose contactors are equal up
 * to rounding (a symmetric tree) would otherwise get an axis spanning 1e-15.
 */
const MIN_SPAN = { holdup: 0.01, deviation: 2 };

/** A fixed domain of at least `span` around the values (within [lo, hi]), or undefined when they spread wider. */
function atLeast(values: number[], span: number, lo = -Infinity, hi = Infinity): [number, number] | undefined {
  const finite = values.filter(Number.isFinite);
  if (finite.length === 0) return undefined;
  const min = minOf(finite) ?? Infinity;
  const max = maxOf(finite) ?? -Infinity;
  if (max - min >= span) return undefined;
  const start = Math.min(Math.max((min + max) / 2 - span / 2, lo), hi - span);
  return [start, start + span];
}

export function chipCharts(solved: SolvedChip, manifoldProfiles: Manifold[]): ChipChart[] {
  const { chip, result } = solved;
  const rows = result.contactors;
  const charts: ChipChart[] = [];
  const flow = DISPLAY.flow;
  const phase = (p: PhaseName) => `phase ${p} (${chip.phases[p].label})`;
  if (rows.length > 0) {
    const index = rows.map((r) => r.index);
    const x = { label: 'contactor number' };
    const flows = {
      title: 'Flow of each phase per contactor',
      width: WIDTH,
      height: HEIGHT,
      index,
      x,
      y: { label: 'flow', unit: flow.symbol },
      groups: [
        { name: phase('A'), values: rows.map((r) => r.flowA * flow.factor) },
        { name: phase('B'), values: rows.map((r) => r.flowB * flow.factor) },
      ],
    };
    charts.push({ id: 'flows', title: flows.title, svg: rows.length <= MAX_BARS ? barChart(flows) : dotChart(flows) });

    const holdup = result.summary.spread.holdup;
    const holdupTitle = 'Holdup of phase A per contactor (share of the channel width)';
    charts.push({
      id: 'holdup',
      title: holdupTitle,
      svg: dotChart({
        title: holdupTitle,
        width: WIDTH,
        height: HEIGHT,
        index,
        x,
        y: { label: 'holdup of A', unit: '–', domain: atLeast(rows.map((r) => r.holdupA), MIN_SPAN.holdup, 0, 1) },
        groups: [{ name: phase('A'), values: rows.map((r) => r.holdupA) }],
        reference: [{ value: holdup.mean, label: `mean ${holdup.mean.toFixed(3)}` }],
      }),
    });

    const { total, flowA, flowB } = result.summary.spread;
    const deviation = (v: number, mean: number) => (mean !== 0 ? 100 * (v / mean - 1) : Number.NaN);
    const deviationTitle = 'Deviation of each contactor from the mean';
    const groups = [
      { name: `flow of ${phase('A')}`, values: rows.map((r) => deviation(r.flowA, flowA.mean)) },
      { name: `flow of ${phase('B')}`, values: rows.map((r) => deviation(r.flowB, flowB.mean)) },
      { name: 'total flow', values: rows.map((r) => deviation(r.flowA + r.flowB, total.mean)) },
    ];
    charts.push({
      id: 'deviation',
      title: deviationTitle,
      svg: dotChart({
        title: deviationTitle,
        width: WIDTH,
        height: HEIGHT,
        index,
        x,
        y: { label: 'deviation from the mean', unit: '%', domain: atLeast(groups.flatMap((g) => g.values), MIN_SPAN.deviation) },
        groups,
        reference: [{ value: 0, label: 'mean' }],
      }),
    });
  }

  // Phase A first: its series takes the first chart colour (blue), near phase A's sky blue in the drawing.
  const manifolds = [...manifoldProfiles].sort((a, b) => a.phase.localeCompare(b.phase));
  for (const role of ['distribution', 'collection'] as const) {
    const list = manifolds.filter((m) => m.role === role);
    if (list.length === 0) continue;
    const series: LineSeries[] = list.map((m) => ({
      name: `${phase(m.phase)}, from ${m.entry}${m.branched ? ' (branched: every node)' : ''}`,
      points: m.profile.map((p) => [p.distance * DISPLAY.lengthMm.factor, p.pressure * DISPLAY.pressure.factor] as [number, number]),
      show: m.branched ? 'points' : 'line',
    }));
    const title = `Pressure along the ${role} manifolds`;
    const tubing = list.flatMap((m) => m.tubing.map((t) => `Tubing ${t.segment} (${show(t.length, DISPLAY.lengthMm, 3)}, not drawn): pressure drop ${show(t.pressureDrop, DISPLAY.pressure, 4)}.`));
    charts.push({
      id: `pressure-${role}`,
      title,
      svg: lineChart({
        title,
        width: WIDTH,
        height: HEIGHT,
        x: { label: `distance along the manifold from its ${role === 'distribution' ? 'inlet' : 'outlet'} port`, unit: DISPLAY.lengthMm.symbol },
        y: { label: 'pressure', unit: DISPLAY.pressure.symbol },
        series,
        notes: tubing,
      }),
    });
  }
  return charts;
}

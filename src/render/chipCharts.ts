/**
 * Charts of a solved chip: per contactor the flow of each phase, the holdup and the deviation
 * from the mean, against contactor number; and the pressure along each manifold. Exports
 * `chipCharts` (all of them, titled, as SVG text), `findManifolds` (the manifolds and their
 * pressure profiles) and the `ChipChart` and `Manifold` types. Pure: solved chip in, SVG out;
 * the charts themselves come from ./chart.ts.
 *
 * A manifold is a connected set of channels that touch neither a merge nor a split: the lines
 * from an inlet to the feeds and from the drains to an outlet, whatever their group is called.
 * Its profile is the pressure of each node against the distance along the channels from the
 * manifold's inlet or outlet.
 */
import type { SolvedChip } from '../analyses/chip.js';
import type { PhaseName } from '../network/model.js';
import { DISPLAY } from '../units/format.js';
import { barChart, dotChart, lineChart, type LineSeries } from './chart.js';
import { max as maxOf, min as minOf } from 'd3-array';

export interface ChipChart {
  /** Short stable name, usable as a file name or an HTML id. */
  id: string;
  title: string;
  svg: string;
}

export interface Manifold {
  role: 'distribution' | 'collection';
  /** The phase its nodes nominally carry. */
  phase: PhaseName;
  /** The inlet or outlet it starts from; the node at the pressure extreme when it has none. */
  entry: string;
  /** Every node with its distance from the entry along the channels (m) and its pressure (Pa), by distance. */
  profile: Array<{ node: string; distance: number; pressure: number }>;
  /** True when the manifold branches (a tree), false for a single chain. */
  branched: boolean;
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

export function findManifolds(solved: SolvedChip): Manifold[] {
  const { chip, network, result } = solved;
  const kind = new Map(chip.nodes.map((n) => [n.id, n.kind]));
  const twoPhaseEnd = (id: string) => kind.get(id) === 'merge' || kind.get(id) === 'split';
  const links = chip.segments.filter((s) => !twoPhaseEnd(s.from) && !twoPhaseEnd(s.to));
  const adjacent = new Map<string, Array<{ to: string; length: number }>>();
  for (const s of links) {
    adjacent.set(s.from, [...(adjacent.get(s.from) ?? []), { to: s.to, length: s.length }]);
    adjacent.set(s.to, [...(adjacent.get(s.to) ?? []), { to: s.from, length: s.length }]);
  }
  const feedsMerge = new Set(chip.segments.filter((s) => kind.get(s.to) === 'merge').map((s) => s.from));
  const drainsSplit = new Set(chip.segments.filter((s) => kind.get(s.from) === 'split').map((s) => s.to));
  const pressure = new Map(result.nodes.map((n) => [n.id, n.pressure]));
  const nominal = (id: string) => network.ports[network.portsOf.get(id)![0]!]!.nominal;

  const seen = new Set<string>();
  const manifolds: Manifold[] = [];
  for (const start of chip.nodes.map((n) => n.id)) {
    if (seen.has(start) || !adjacent.has(start)) continue;
    const members: string[] = [];
    const stack = [start];
    seen.add(start);
    while (stack.length > 0) {
      const id = stack.pop()!;
      members.push(id);
      for (const { to } of adjacent.get(id)!) {
        if (!seen.has(to)) {
          seen.add(to);
          stack.push(to);
        }
      }
    }
    const inlet = members.find((id) => kind.get(id) === 'inlet');
    const outlet = members.find((id) => kind.get(id) === 'outlet');
    const role = inlet !== undefined || (outlet === undefined && members.some((id) => feedsMerge.has(id))) ? 'distribution' : 'collection';
    if (role === 'collection' && outlet === undefined && !members.some((id) => drainsSplit.has(id))) continue;
    const byPressure = [...members].sort((a, b) => pressure.get(b)! - pressure.get(a)!);
    const entry = (role === 'distribution' ? inlet : outlet) ?? (role === 'distribution' ? byPressure[0]! : byPressure[byPressure.length - 1]!);
    const distance = shortestDistances(entry, members, adjacent);
    const profile = members
      .map((node) => ({ node, distance: distance.get(node)!, pressure: pressure.get(node)! }))
      .sort((a, b) => a.distance - b.distance || a.node.localeCompare(b.node));
    const phase: PhaseName = nominal(entry) >= 0.5 ? 'A' : 'B';
    manifolds.push({ role, phase, entry, profile, branched: members.some((id) => adjacent.get(id)!.length > 2) });
  }
  return manifolds;
}

/** Dijkstra over the members from `entry`; unreachable members (none in a component) stay Infinity. */
function shortestDistances(entry: string, members: string[], adjacent: Map<string, Array<{ to: string; length: number }>>): Map<string, number> {
  const distance = new Map(members.map((id) => [id, Infinity]));
  distance.set(entry, 0);
  const done = new Set<string>();
  // The candidates are kept in a plain array: manifolds are chains and trees, so it stays short.
  const open = [entry];
  while (open.length > 0) {
    let best = 0;
    for (let i = 1; i < open.length; i++) if (distance.get(open[i]!)! < distance.get(open[best]!)!) best = i;
    const id = open.splice(best, 1)[0]!;
    if (done.has(id)) continue;
    done.add(id);
    for (const { to, length } of adjacent.get(id)!) {
      const d = distance.get(id)! + length;
      if (d < distance.get(to)!) {
        distance.set(to, d);
        open.push(to);
      }
    }
  }
  return distance;
}

export function chipCharts(solved: SolvedChip): ChipChart[] {
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
  const manifolds = findManifolds(solved).sort((a, b) => a.phase.localeCompare(b.phase));
  for (const role of ['distribution', 'collection'] as const) {
    const list = manifolds.filter((m) => m.role === role);
    if (list.length === 0) continue;
    const series: LineSeries[] = list.map((m) => ({
      name: `${phase(m.phase)}, from ${m.entry}${m.branched ? ' (branched: every node)' : ''}`,
      points: m.profile.map((p) => [p.distance * DISPLAY.lengthMm.factor, p.pressure * DISPLAY.pressure.factor] as [number, number]),
      show: m.branched ? 'points' : 'line',
    }));
    const title = `Pressure along the ${role} manifolds`;
    charts.push({
      id: `pressure-${role}`,
      title,
      svg: lineChart({
        title,
        width: WIDTH,
        height: HEIGHT,
        x: { label: `distance from the ${role === 'distribution' ? 'inlet' : 'outlet'} along the channels`, unit: DISPLAY.lengthMm.symbol },
        y: { label: 'pressure', unit: DISPLAY.pressure.symbol },
        series,
      }),
    });
  }
  return charts;
}

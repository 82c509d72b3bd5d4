/**
 * What a chip solution tells the user in words: the loader's warnings about the layout, leaking
 * splits, contactors that run backwards or are starved of a phase, contactors outside the
 * ranges of stratified flow, mixed segments, backflow into a phase's line or an inlet, pressure
 * over the rating, and a solve that did not converge. Exports `chipWarnings` and
 * `FLOW_REGIME_LIMITS`. Values are shown through ../units/format.ts.
 */
import { max as maxOf, min as minOf } from 'd3-array';
import { DISPLAY, show } from '../units/format.js';
import type { Network } from '../network/assemble.js';
import { layersStacked } from '../physics/section.js';
import type { NetworkSolution } from '../solver/newton.js';
import type { ChipSummary, ContactorResult, SegmentResult, SplitResult } from './chip.js';

/**
 * Ranges in which stratified laminar co-flow with a flat interface is expected (common practice,
 * rules of thumb): Reynolds number below ~500 (well laminar, short entrance lengths), capillary
 * number below ~0.1 (viscous stresses too weak to deform or break the interface), Bond number
 * below ~0.5 (gravity too weak to tilt a side-by-side interface).
 */
export const FLOW_REGIME_LIMITS = { reynolds: 500, capillary: 0.1, bond: 0.5 };

export interface SolutionTables {
  plainSegments: readonly SegmentResult[];
  contactorSegments: readonly SegmentResult[];
  rows: readonly ContactorResult[];
  splits: readonly SplitResult[];
  inlets: ChipSummary['inlets'];
  maxPressure: number;
}

/** The warnings in the order users read them: the solve's state first, then the layout's, then per contactor, then the chip's. */
export function chipWarnings(network: Network, raw: NetworkSolution, tables: SolutionTables): string[] {
  const { chip, ports, plains, contactors } = network;
  // What the loader found suspicious in the layout comes first.
  const warnings: string[] = [...(chip.warnings ?? [])];
  const splitById = new Map(tables.splits.map((s) => [s.id, s]));
  contactors.forEach((el, c) => {
    const row = tables.rows[c]!;
    const split = row.split === null ? undefined : splitById.get(row.split)!;
    if (split && split.state !== 'pinned') {
      warnings.push(`split ${split.id}: ${split.state === 'leaking-B-to-A' ? 'phase B breaks through into the A outlet' : 'phase A breaks through into the B outlet'} (${formatFlow(split.leak)}); purity of outlets ${(100 * split.purityNear).toFixed(2)}% / ${(100 * split.purityFar).toFixed(2)}%`);
    }
    if (tables.contactorSegments[c]!.reversed) warnings.push(`contactor ${el.segment.id}: flow runs backwards, from the split to the merge`);
    const feed = raw.feedStates[c]!;
    if (feed !== 'open') {
      const nearIsA = raw.laneComposition[2 * c]! >= raw.laneComposition[2 * c + 1]!;
      const filling = (feed === 'nearFills') === nearIsA ? 'A' : 'B';
      const starved = filling === 'A' ? 'B' : 'A';
      warnings.push(`contactor ${el.segment.id}: phase ${starved} does not enter; ${filling} fills the channel and pushes ${formatFlow(Math.abs(raw.crossover[c]!))} back into the ${starved} feed at merge ${el.segment.from}`);
    }
  });
  warnings.push(...regimeWarnings(network, tables.rows));
  for (const seg of tables.plainSegments) {
    if (seg.kind === 'mixed') warnings.push(`segment ${seg.id}: carries both phases mixed (homogeneous model; A fraction ${(seg.flowA / (seg.flowA + seg.flowB)).toFixed(4)})`);
  }
  plains.forEach((el, e) => {
    const nominalA = ports[el.from]!.nominal;
    const xa = raw.plainComposition[e]!;
    if (raw.plainFlow[e]! < 0 && Math.abs(xa - nominalA) > 1e-6) {
      warnings.push(`segment ${el.segment.id}: backflow — ${xa >= 0.5 ? 'phase A' : 'phase B'} flows back into the line of phase ${nominalA >= 0.5 ? 'A' : 'B'}`);
    }
  });
  for (const inlet of tables.inlets) if (inlet.flow < 0) warnings.push(`inlet ${inlet.id}: liquid flows back into the inlet (${formatFlow(-inlet.flow)})`);
  const p = raw.pressure;
  if (chip.maxPressure !== undefined && tables.maxPressure > chip.maxPressure) {
    const over = chip.nodes.filter((n) => (network.portsOf.get(n.id) ?? []).some((i) => p[i]! > chip.maxPressure!)).map((n) => n.id);
    warnings.push(`pressure ${show(tables.maxPressure, DISPLAY.pressure)} exceeds the rating of ${show(chip.maxPressure, DISPLAY.pressure)} at ${over.slice(0, 5).join(', ')}${over.length > 5 ? ` and ${over.length - 5} more` : ''}`);
  }
  if (!raw.converged) warnings.unshift(`the solve did not converge: ${raw.message ?? ''}${raw.unsettled.length ? ` (${raw.unsettled.join(', ')})` : ''}`);
  return warnings;
}

/** One line per flow-regime number that some contactors exceed, naming them and the range of values. */
function regimeWarnings(network: Network, rows: readonly ContactorResult[]): string[] {
  const regime = { reynolds: [] as Array<[string, number]>, capillary: [] as Array<[string, number]>, bond: [] as Array<[string, number]> };
  rows.forEach((row, c) => {
    if (row.reynolds > FLOW_REGIME_LIMITS.reynolds) regime.reynolds.push([row.id, row.reynolds]);
    if (row.capillary !== null && row.capillary > FLOW_REGIME_LIMITS.capillary) regime.capillary.push([row.id, row.capillary]);
    if (row.bond !== null && row.bond > FLOW_REGIME_LIMITS.bond && !layersStacked(network.contactors[c]!.section)) regime.bond.push([row.id, row.bond]);
  });
  const regimeText = {
    reynolds: `Reynolds number above ${FLOW_REGIME_LIMITS.reynolds}: inertia may disturb the stratified flow`,
    capillary: `capillary number above ${FLOW_REGIME_LIMITS.capillary}: the interface may not stay flat`,
    bond: `Bond number above ${FLOW_REGIME_LIMITS.bond}: gravity may tilt the interface`,
  };
  const lines: string[] = [];
  for (const key of ['reynolds', 'capillary', 'bond'] as const) {
    const hits = regime[key];
    if (hits.length === 0) continue;
    const values = hits.map(([, v]) => v);
    const range = `${minOf(values)!.toPrecision(3)}${hits.length > 1 ? `–${maxOf(values)!.toPrecision(3)}` : ''}`;
    const names = hits.length <= 3 ? hits.map(([id]) => id).join(', ') : `${hits[0]![0]} … ${hits[hits.length - 1]![0]}`;
    lines.push(`${hits.length} contactor${hits.length > 1 ? 's' : ''} (${names}): ${regimeText[key]} (${range})`);
  }
  return lines;
}

function formatFlow(q: number): string {
  return show(q, DISPLAY.flow, 3);
}

/**
 * The whole-chip answer: solve the network and turn the raw solution into what users read —
 * per-node pressures, per-segment phase flows and holdups, split states and purities, the
 * per-contactor table, the spread between contactors and the warnings.
 * Exports `solveChip`, `summariseSolution` and the result types. No I/O.
 */
import { GRAVITY } from '../physics/constants.js';
import { DISPLAY, show } from '../units/format.js';
import { assembleNetwork, type Network } from '../network/assemble.js';
import { solveNetwork, type NetworkSolution, type SolverWorkspace, type SplitState, type WarmStart } from '../solver/newton.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip, PhaseName } from '../network/model.js';
import { area, hydraulicDiameter } from '../physics/section.js';
import { spannedDimension } from '../network/topology.js';
import { max as maxOf, min as minOf } from 'd3-array';

/**
 * Ranges in which stratified laminar co-flow with a flat interface is expected (common practice,
 * rules of thumb): Reynolds number below ~500 (well laminar, short entrance lengths), capillary
 * number below ~0.1 (viscous stresses too weak to deform or break the interface), Bond number
 * below ~0.5 (gravity too weak to tilt a side-by-side interface).
 */
export const FLOW_REGIME_LIMITS = { reynolds: 500, capillary: 0.1, bond: 0.5 };
/** Compositions closer than this to pure count as a single phase. */
const PURE = 1e-9;

export type LeakState = 'pinned' | 'leaking-A-to-B' | 'leaking-B-to-A';

export interface NodeResult {
  id: string;
  kind: string;
  /** Pa; at merges and splits the pressure of phase A's side. */
  pressure: number;
  pressureA?: number;
  pressureB?: number;
  /** Fraction of A leaving the node. */
  compositionA: number;
}

export interface SegmentResult {
  id: string;
  kind: 'single' | 'contactor' | 'mixed';
  /** The phase a single-phase segment carries. */
  phase: PhaseName | null;
  /** m³/s, signed along from → to. */
  flowA: number;
  flowB: number;
  holdupA: number | null;
  /** p_from − p_to, Pa. */
  pressureDrop: number;
  reversed: boolean;
}

export interface SplitResult {
  id: string;
  contactor: string;
  state: LeakState;
  /** p_B − p_A, Pa. */
  pressureDifference: number;
  window: [number, number];
  /** Distance of Δ from the nearer window limit, Pa (negative when at a limit and leaking). */
  margin: number;
  /** m³/s of the phase that crosses into the other outlet. */
  leak: number;
  purityNear: number;
  purityFar: number;
  nearPhase: PhaseName;
}

export interface ContactorResult {
  index: number;
  id: string;
  flowA: number;
  flowB: number;
  /** flowA / flowB. */
  flowRatio: number;
  holdupA: number;
  velocityA: number;
  velocityB: number;
  residenceA: number;
  residenceB: number;
  pressureDrop: number;
  length: number;
  split: string | null;
  state: LeakState | 'open';
  purityA: number | null;
  purityB: number | null;
  reynolds: number;
  capillary: number | null;
  bond: number | null;
}

export interface Spread {
  min: number;
  max: number;
  mean: number;
  /** max/min */
  ratio: number;
  /** Coefficient of variation: population standard deviation over mean. */
  cv: number;
}

export interface ChipSummary {
  throughputA: number;
  throughputB: number;
  spread: { total: Spread; flowA: Spread; flowB: Spread; holdup: Spread };
  inlets: Array<{ id: string; phase: PhaseName; pressure: number; flow: number }>;
  outlets: Array<{ id: string; pressure: number; flowA: number; flowB: number }>;
  maxPressure: number;
}

export interface ChipSolution {
  converged: boolean;
  iterations: number;
  residual: number;
  message?: string;
  unsettled: string[];
  nodes: NodeResult[];
  segments: SegmentResult[];
  splits: SplitResult[];
  contactors: ContactorResult[];
  summary: ChipSummary;
  warnings: string[];
}

export interface SolvedChip {
  chip: Chip;
  network: Network;
  raw: NetworkSolution;
  result: ChipSolution;
}

/** `workspace` carries holdup tables and sparse factors between the solves of a sweep (solver/newton.ts). */
export function solveChip(chip: Chip, options: SolverOptions = {}, warm?: WarmStart, workspace?: SolverWorkspace): SolvedChip {
  const network = assembleNetwork(chip);
  const raw = solveNetwork(network, options, warm, workspace);
  return { chip, network, raw, result: summariseSolution(network, raw) };
}

export function warmStartFrom(solved: SolvedChip): WarmStart {
  const { raw } = solved;
  return { pressure: raw.pressure, holdup: raw.holdup, leak: raw.leak, splitStates: raw.splitStates, crossover: raw.crossover, feedStates: raw.feedStates, composition: raw.composition };
}

function leakStateName(state: SplitState): LeakState {
  // High limit: p_B − p_A too large, B pushes into A's outlet.
  return state === 'pinned' ? 'pinned' : state === 'high' ? 'leaking-B-to-A' : 'leaking-A-to-B';
}

export function spreadOf(values: number[]): Spread {
  if (values.length === 0) return { min: 0, max: 0, mean: 0, ratio: 1, cv: 0 };
  const min = minOf(values)!;
  const max = maxOf(values)!;
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  const variance = values.reduce((a, v) => a + (v - mean) ** 2, 0) / values.length;
  return { min, max, mean, ratio: min !== 0 ? max / min : Infinity, cv: mean !== 0 ? Math.sqrt(variance) / Math.abs(mean) : 0 };
}

export function summariseSolution(network: Network, raw: NetworkSolution): ChipSolution {
  const { chip, ports, plains, contactors, splits } = network;
  const { A, B } = chip.phases;
  // What the loader found suspicious in the layout comes first.
  const warnings: string[] = [...(chip.warnings ?? [])];
  const p = raw.pressure;

  const nodes: NodeResult[] = chip.nodes.map((node) => {
    const list = network.portsOf.get(node.id)!;
    if (list.length === 1) return { id: node.id, kind: node.kind, pressure: p[list[0]!]!, compositionA: raw.composition[list[0]!]! };
    const nearIsA = ports[list[0]!]!.nominal >= 0.5;
    const [pa, pb] = nearIsA ? [p[list[0]!]!, p[list[1]!]!] : [p[list[1]!]!, p[list[0]!]!];
    return { id: node.id, kind: node.kind, pressure: pa, pressureA: pa, pressureB: pb, compositionA: raw.composition[list[0]!]! };
  });

  const segmentById = new Map<string, SegmentResult>();
  plains.forEach((el, e) => {
    const q = raw.plainFlow[e]!;
    const xa = raw.plainComposition[e]!;
    const pure = xa > 1 - PURE || xa < PURE;
    segmentById.set(el.segment.id, {
      id: el.segment.id,
      kind: pure ? 'single' : 'mixed',
      phase: pure ? (xa >= 0.5 ? 'A' : 'B') : null,
      flowA: q * xa,
      flowB: q * (1 - xa),
      holdupA: null,
      pressureDrop: p[el.from]! - p[el.to]!,
      reversed: q < 0,
    });
  });

  const contactorRows: ContactorResult[] = [];
  const splitResults: SplitResult[] = [];
  const regime = { reynolds: [] as Array<[string, number]>, capillary: [] as Array<[string, number]>, bond: [] as Array<[string, number]> };
  const splitOfContactor = new Map(splits.map((s, i) => [s.contactor, i]));
  const plainIndex = new Map(plains.map((el, e) => [el.segment.id, e]));
  contactors.forEach((el, c) => {
    const qn = raw.laneFlow[2 * c]!;
    const qf = raw.laneFlow[2 * c + 1]!;
    const xn = raw.laneComposition[2 * c]!;
    const xf = raw.laneComposition[2 * c + 1]!;
    const alpha = raw.holdup[c]!;
    const nearIsA = xn >= xf;
    // A starved layer keeps a trace of flow (its holdup edge); below 1e-9 of the contactor's flow it is reported as none.
    const trace = 1e-9 * (Math.abs(qn) + Math.abs(qf));
    const clean = (q: number) => (Math.abs(q) < trace ? 0 : q);
    const flowA = clean(qn * xn + qf * xf);
    const flowB = clean(qn * (1 - xn) + qf * (1 - xf));
    const holdupA = nearIsA ? alpha : 1 - alpha;
    const drop = p[el.nearIn]! - p[el.nearOut]!;
    segmentById.set(el.segment.id, { id: el.segment.id, kind: 'contactor', phase: null, flowA, flowB, holdupA, pressureDrop: drop, reversed: qn + qf < 0 });

    const s = splitOfContactor.get(el);
    let state: ContactorResult['state'] = 'open';
    let purityA: number | null = null;
    let purityB: number | null = null;
    if (s !== undefined) {
      const sp = splits[s]!;
      const sign = sp.nearPhase === 'A' ? 1 : -1;
      const delta = sign * (p[sp.far]! - p[sp.near]!);
      const [low, high] = sp.window;
      const leakState = leakStateName(raw.splitStates[s]!);
      const nearOut = raw.plainComposition[plainIndex.get(sp.node.outlets[0])!]!;
      const farOut = raw.plainComposition[plainIndex.get(sp.node.outlets[1])!]!;
      const purityNear = sp.nearPhase === 'A' ? nearOut : 1 - nearOut;
      const purityFar = sp.nearPhase === 'A' ? 1 - farOut : farOut;
      splitResults.push({
        id: sp.node.id,
        contactor: el.segment.id,
        state: leakState,
        pressureDifference: delta,
        window: [low, high],
        margin: Math.min(delta - low, high - delta),
        leak: Math.abs(raw.leak[s]!),
        purityNear,
        purityFar,
        nearPhase: sp.nearPhase,
      });
      state = leakState;
      purityA = sp.nearPhase === 'A' ? purityNear : purityFar;
      purityB = sp.nearPhase === 'A' ? purityFar : purityNear;
      if (leakState !== 'pinned') {
        warnings.push(`split ${sp.node.id}: ${leakState === 'leaking-B-to-A' ? 'phase B breaks through into the A outlet' : 'phase A breaks through into the B outlet'} (${formatFlow(Math.abs(raw.leak[s]!))}); purity of outlets ${(100 * purityNear).toFixed(2)}% / ${(100 * purityFar).toFixed(2)}%`);
      }
    }
    const sectionArea = area(el.section);
    const areaA = holdupA * sectionArea;
    const areaB = (1 - holdupA) * sectionArea;
    const velocityA = areaA > 0 ? flowA / areaA : 0;
    const velocityB = areaB > 0 ? flowB / areaB : 0;
    const dh = hydraulicDiameter(el.section);
    const reynolds = Math.max((A.density * Math.abs(velocityA) * dh) / A.viscosity, (B.density * Math.abs(velocityB) * dh) / B.viscosity);
    const tension = chip.interfacialTension;
    const capillary = tension ? Math.max(A.viscosity * Math.abs(velocityA), B.viscosity * Math.abs(velocityB)) / tension : null;
    const span = spannedDimension(el.segment);
    const bond = tension ? (Math.abs(A.density - B.density) * GRAVITY * span ** 2) / tension : null;
    contactorRows.push({
      index: c + 1,
      id: el.segment.id,
      flowA,
      flowB,
      flowRatio: flowB !== 0 ? flowA / flowB : Infinity,
      holdupA,
      velocityA,
      velocityB,
      residenceA: velocityA !== 0 ? el.segment.length / Math.abs(velocityA) : Infinity,
      residenceB: velocityB !== 0 ? el.segment.length / Math.abs(velocityB) : Infinity,
      pressureDrop: drop,
      length: el.segment.length,
      split: s !== undefined ? splits[s]!.node.id : null,
      state,
      purityA,
      purityB,
      reynolds,
      capillary,
      bond,
    });
    if (reynolds > FLOW_REGIME_LIMITS.reynolds) regime.reynolds.push([el.segment.id, reynolds]);
    if (capillary !== null && capillary > FLOW_REGIME_LIMITS.capillary) regime.capillary.push([el.segment.id, capillary]);
    if (bond !== null && bond > FLOW_REGIME_LIMITS.bond && el.section.orientation === 'side') regime.bond.push([el.segment.id, bond]);
    if (qn + qf < 0) warnings.push(`contactor ${el.segment.id}: flow runs backwards, from the split to the merge`);
    const feed = raw.feedStates[c]!;
    if (feed !== 'open') {
      const filling = (feed === 'nearFills') === nearIsA ? 'A' : 'B';
      const starved = filling === 'A' ? 'B' : 'A';
      warnings.push(`contactor ${el.segment.id}: phase ${starved} does not enter; ${filling} fills the channel and pushes ${formatFlow(Math.abs(raw.crossover[c]!))} back into the ${starved} feed at merge ${el.segment.from}`);
    }
  });

  const regimeText = {
    reynolds: `Reynolds number above ${FLOW_REGIME_LIMITS.reynolds}: inertia may disturb the stratified flow`,
    capillary: `capillary number above ${FLOW_REGIME_LIMITS.capillary}: the interface may not stay flat`,
    bond: `Bond number above ${FLOW_REGIME_LIMITS.bond}: gravity may tilt the interface`,
  };
  for (const key of ['reynolds', 'capillary', 'bond'] as const) {
    const hits = regime[key];
    if (hits.length === 0) continue;
    const values = hits.map(([, v]) => v);
    const range = `${minOf(values)!.toPrecision(3)}${hits.length > 1 ? `–${maxOf(values)!.toPrecision(3)}` : ''}`;
    const names = hits.length <= 3 ? hits.map(([id]) => id).join(', ') : `${hits[0]![0]} … ${hits[hits.length - 1]![0]}`;
    warnings.push(`${hits.length} contactor${hits.length > 1 ? 's' : ''} (${names}): ${regimeText[key]} (${range})`);
  }
  for (const seg of segmentById.values()) {
    if (seg.kind === 'mixed') warnings.push(`segment ${seg.id}: carries both phases mixed (homogeneous model; A fraction ${(seg.flowA / (seg.flowA + seg.flowB)).toFixed(4)})`);
  }
  plains.forEach((el, e) => {
    const nominalA = ports[el.from]!.nominal;
    const xa = raw.plainComposition[e]!;
    if (raw.plainFlow[e]! < 0 && Math.abs(xa - nominalA) > 1e-6) {
      warnings.push(`segment ${el.segment.id}: backflow — ${xa >= 0.5 ? 'phase A' : 'phase B'} flows back into the line of phase ${nominalA >= 0.5 ? 'A' : 'B'}`);
    }
  });
  const inlets: ChipSummary['inlets'] = [];
  const outlets: ChipSummary['outlets'] = [];
  const netOut = new Float64Array(ports.length);
  const netOutA = new Float64Array(ports.length);
  plains.forEach((el, e) => {
    const q = raw.plainFlow[e]!;
    const xa = raw.plainComposition[e]!;
    netOut[el.from] += q;
    netOut[el.to] -= q;
    netOutA[el.from] += q * xa;
    netOutA[el.to] -= q * xa;
  });
  let throughputA = 0;
  let throughputB = 0;
  for (const [i, port] of ports.entries()) {
    const node = port.node;
    if (node.kind === 'inlet') {
      const flow = port.fixed !== undefined ? netOut[i]! : port.injection;
      inlets.push({ id: node.id, phase: node.phase, pressure: p[i]!, flow });
      if (flow < 0) warnings.push(`inlet ${node.id}: liquid flows back into the inlet (${formatFlow(-flow)})`);
      if (node.phase === 'A') throughputA += Math.max(0, flow);
      else throughputB += Math.max(0, flow);
    }
    if (node.kind === 'outlet') outlets.push({ id: node.id, pressure: p[i]!, flowA: -netOutA[i]!, flowB: -(netOut[i]! - netOutA[i]!) });
  }
  const maxPressure = maxOf(p) ?? -Infinity;
  if (chip.maxPressure !== undefined && maxPressure > chip.maxPressure) {
    const over = chip.nodes.filter((n) => (network.portsOf.get(n.id) ?? []).some((i) => p[i]! > chip.maxPressure!)).map((n) => n.id);
    warnings.push(`pressure ${show(maxPressure, DISPLAY.pressure)} exceeds the rating of ${show(chip.maxPressure, DISPLAY.pressure)} at ${over.slice(0, 5).join(', ')}${over.length > 5 ? ` and ${over.length - 5} more` : ''}`);
  }
  if (!raw.converged) warnings.unshift(`the solve did not converge: ${raw.message ?? ''}${raw.unsettled.length ? ` (${raw.unsettled.join(', ')})` : ''}`);

  const segments = chip.segments.map((s) => segmentById.get(s.id)!);
  return {
    converged: raw.converged,
    iterations: raw.iterations,
    residual: raw.residual,
    message: raw.message,
    unsettled: raw.unsettled,
    nodes,
    segments,
    splits: splitResults,
    contactors: contactorRows,
    summary: {
      throughputA,
      throughputB,
      spread: {
        total: spreadOf(contactorRows.map((r) => r.flowA + r.flowB)),
        flowA: spreadOf(contactorRows.map((r) => r.flowA)),
        flowB: spreadOf(contactorRows.map((r) => r.flowB)),
        holdup: spreadOf(contactorRows.map((r) => r.holdupA)),
      },
      inlets,
      outlets,
      maxPressure,
    },
    warnings,
  };
}

function formatFlow(q: number): string {
  return show(q, DISPLAY.flow, 3);
}

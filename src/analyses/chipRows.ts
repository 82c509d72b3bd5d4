/**
 * The tables of a chip solution, computed from the network's raw solution: node pressures, the
 * plain segments, the contactors with their splits and flow-regime numbers, and the flows at the
 * inlets and outlets. Exports `nodeResults`, `plainSegmentResults`, `contactorResults`,
 * `portResults` and `PURE`. Numbers only, in SI units; what the user is told about them is written in
 * ./chipWarnings.ts.
 */
import { GRAVITY } from '../physics/constants.js';
import { area, hydraulicDiameter } from '../physics/section.js';
import type { Network } from '../network/assemble.js';
import { spannedDimension } from '../network/topology.js';
import type { NetworkSolution, SplitState } from '../solver/newton.js';
import type { ChipSummary, ContactorResult, LeakState, NodeResult, SegmentResult, SplitResult } from './chip.js';

/** Compositions closer than this to pure count as a single phase (a segment here, an outlet in ./verdict.ts). */
export const PURE = 1e-9;

function leakStateName(state: SplitState): LeakState {
  // High limit: p_B − p_A too large, B pushes into A's outlet.
  return state === 'pinned' ? 'pinned' : state === 'high' ? 'leaking-B-to-A' : 'leaking-A-to-B';
}

/** Pressure and outgoing composition of every node; merges and splits give both sides' pressures. */
export function nodeResults(network: Network, raw: NetworkSolution): NodeResult[] {
  const { chip, ports } = network;
  const p = raw.pressure;
  return chip.nodes.map((node) => {
    const list = network.portsOf.get(node.id)!;
    if (list.length === 1) return { id: node.id, kind: node.kind, pressure: p[list[0]!]!, compositionA: raw.composition[list[0]!]! };
    const nearIsA = ports[list[0]!]!.nominal >= 0.5;
    const [pa, pb] = nearIsA ? [p[list[0]!]!, p[list[1]!]!] : [p[list[1]!]!, p[list[0]!]!];
    return { id: node.id, kind: node.kind, pressure: pa, pressureA: pa, pressureB: pb, compositionA: raw.composition[list[0]!]! };
  });
}

/** The segments outside contactors, in the network's order of plain elements. */
export function plainSegmentResults(network: Network, raw: NetworkSolution): SegmentResult[] {
  const p = raw.pressure;
  return network.plains.map((el, e) => {
    const q = raw.plainFlow[e]!;
    const xa = raw.plainComposition[e]!;
    const pure = xa > 1 - PURE || xa < PURE;
    return {
      id: el.segment.id,
      kind: pure ? 'single' : 'mixed',
      phase: pure ? (xa >= 0.5 ? 'A' : 'B') : null,
      flowA: q * xa,
      flowB: q * (1 - xa),
      holdupA: null,
      pressureDrop: p[el.from]! - p[el.to]!,
      reversed: q < 0,
    };
  });
}

/**
 * Per contactor: its segment, its row of the contactor table (phase flows, holdup, velocities,
 * residence times, the state and purities of its split, and the Reynolds, capillary and Bond
 * numbers), and the result of its split if it has one, in the network's order of contactors.
 * Reynolds number from the larger of the two phases' ρ|u|d_h/μ; capillary number μ|u|/γ of the
 * faster phase; Bond number Δρ·g·d²/γ over the dimension d the interface spans.
 */
export function contactorResults(network: Network, raw: NetworkSolution): { segments: SegmentResult[]; rows: ContactorResult[]; splits: SplitResult[] } {
  const { chip, plains, contactors, splits } = network;
  const { A, B } = chip.phases;
  const p = raw.pressure;
  const segments: SegmentResult[] = [];
  const rows: ContactorResult[] = [];
  const splitResults: SplitResult[] = [];
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
    segments.push({ id: el.segment.id, kind: 'contactor', phase: null, flowA, flowB, holdupA, pressureDrop: drop, reversed: qn + qf < 0 });

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
    rows.push({
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
  });
  return { segments, rows, splits: splitResults };
}

/**
 * Flows at the ports: each inlet's pressure and flow (the net outflow where its pressure is set,
 * the injection where its flow is), each outlet's phase flows, and the phase throughputs (inlet
 * flows into the chip).
 */
export function portResults(network: Network, raw: NetworkSolution): Pick<ChipSummary, 'inlets' | 'outlets' | 'throughputA' | 'throughputB'> {
  const { ports, plains } = network;
  const p = raw.pressure;
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
      if (node.phase === 'A') throughputA += Math.max(0, flow);
      else throughputB += Math.max(0, flow);
    }
    if (node.kind === 'outlet') outlets.push({ id: node.id, pressure: p[i]!, flowA: -netOutA[i]!, flowB: -(netOut[i]! - netOutA[i]!) });
  }
  return { inlets, outlets, throughputA, throughputB };
}

/**
 * From the chip model to the hydraulic network the solver works on: pressure ports (one per
 * node, two per merge and split: near and far side), elements (plain segments, two-lane
 * contactors, split leak paths), boundary conditions, and the nominal phase of every port.
 * Exports `assembleNetwork` and the network types. Does no solving.
 */
import { conductance, layerAxes, type TwoLayerSection } from '../physics/section.js';
import { wallProfileOf } from '../physics/shapedSection.js';
import type { Chip, ChipNode, ChipSegment, PhaseName, SplitNode } from './model.js';
import { splitWindowOf, spannedDimension } from './topology.js';

export interface Port {
  node: ChipNode;
  side: 'near' | 'far' | 'single';
  /** Fixed pressure (Pa) for boundary ports, else undefined. */
  fixed?: number;
  /** Injected flow (m³/s) at a flow-set inlet. */
  injection: number;
  /** Phase fraction of A that a boundary port supplies when flow leaves it into the chip. */
  supplies?: number;
  /** Nominal fraction of A (design flow direction, no leaks). */
  nominal: number;
}

export interface PlainElement {
  kind: 'plain';
  segment: ChipSegment;
  from: number;
  to: number;
  /** Resistance per unit viscosity, 1/m³: Δp = r0·μ·Q. */
  r0: number;
}

export interface ContactorElement {
  kind: 'contactor';
  segment: ChipSegment;
  section: TwoLayerSection;
  /**
   * The dimension the layers share out and the one the interface spans: a rectangle's per its
   * orientation; an etched or trapezoidal section's top width and depth (layers side by side).
   */
  across: number;
  along: number;
  /** Ports at the start (merge) and end (split or plain node) of each lane. */
  nearIn: number;
  farIn: number;
  nearOut: number;
  farOut: number;
  /** Reference conductance per length (m³/(Pa·s)) that scales this contactor's constraint row. */
  scale: number;
  /** Split at the end, if any. */
  split?: SplitElement;
}

export interface SplitElement {
  node: SplitNode;
  contactor: ContactorElement;
  near: number;
  far: number;
  /** Allowed p_B − p_A, Pa. */
  window: [number, number];
  /** The phase the near lane nominally carries. */
  nearPhase: PhaseName;
}

export interface Network {
  chip: Chip;
  ports: Port[];
  plains: PlainElement[];
  contactors: ContactorElement[];
  splits: SplitElement[];
  /** Port indices of each node: [single] or [near, far]. */
  portsOf: Map<string, number[]>;
}

export function assembleNetwork(chip: Chip): Network {
  const ports: Port[] = [];
  const portsOf = new Map<string, number[]>();
  for (const node of chip.nodes) {
    const make = (side: Port['side']): number => {
      const port: Port = { node, side, injection: 0, nominal: 0.5 };
      if (node.kind === 'inlet') {
        if (node.pressure !== undefined) port.fixed = node.pressure;
        else port.injection = node.flow!;
        port.supplies = node.phase === 'A' ? 1 : 0;
      }
      if (node.kind === 'outlet') port.fixed = node.pressure;
      ports.push(port);
      return ports.length - 1;
    };
    portsOf.set(node.id, node.kind === 'merge' || node.kind === 'split' ? [make('near'), make('far')] : [make('single')]);
  }
  const nodeById = new Map(chip.nodes.map((n) => [n.id, n]));
  const portAt = (nodeId: string, segmentId: string): number => {
    const node = nodeById.get(nodeId)!;
    const list = portsOf.get(nodeId)!;
    if (node.kind === 'merge') return list[node.inlets.indexOf(segmentId as never) === 1 ? 1 : 0]!;
    if (node.kind === 'split') return list[node.outlets.indexOf(segmentId as never) === 1 ? 1 : 0]!;
    return list[0]!;
  };

  const plains: PlainElement[] = [];
  const contactors: ContactorElement[] = [];
  for (const segment of chip.segments) {
    const from = nodeById.get(segment.from)!;
    if (from.kind === 'merge') {
      const section = segment.section as TwoLayerSection;
      const [nearIn, farIn] = portsOf.get(from.id)!;
      const endPorts = portsOf.get(segment.to)!;
      const { across, along } = section.shape === 'rect' ? layerAxes(section) : { across: wallProfileOf(section).topWidth, along: section.depth };
      const mu = Math.sqrt(chip.phases.A.viscosity * chip.phases.B.viscosity);
      contactors.push({
        kind: 'contactor',
        segment,
        section,
        across,
        along,
        nearIn: nearIn!,
        farIn: farIn!,
        nearOut: endPorts[0]!,
        farOut: endPorts[endPorts.length - 1]!,
        scale: conductance(section, mu) / segment.length,
      });
    } else {
      plains.push({ kind: 'plain', segment, from: portAt(segment.from, segment.id), to: portAt(segment.to, segment.id), r0: segment.length / conductance(segment.section, 1) });
    }
  }

  propagateNominal(ports, plains, contactors);

  const splits: SplitElement[] = [];
  for (const c of contactors) {
    const end = nodeById.get(c.segment.to)!;
    if (end.kind !== 'split') continue;
    const [near, far] = portsOf.get(end.id)!;
    const nearPhase: PhaseName = ports[c.nearIn]!.nominal >= 0.5 ? 'A' : 'B';
    const window = splitWindowOf(chip, end, spannedDimension(c.segment))!;
    const split: SplitElement = { node: end, contactor: c, near: near!, far: far!, window, nearPhase };
    c.split = split;
    splits.push(split);
  }
  for (const port of ports) {
    if (port.node.kind === 'outlet') port.supplies = port.node.phase ? (port.node.phase === 'A' ? 1 : 0) : port.nominal;
  }
  return { chip, ports, plains, contactors, splits, portsOf };
}

/**
 * Nominal composition: inlets supply their phase and everything flows from → to; a port takes
 * the mean of what arrives. Ports are settled in topological order (Kahn's algorithm), so each
 * is visited once; ports on a loop, which have no such order, keep 0.5. Not graphlib's topsort:
 * it is recursive, overflows the call stack on the long chains of a large ladder, and throws on
 * a loop instead of settling the rest.
 */
function propagateNominal(ports: Port[], plains: PlainElement[], contactors: ContactorElement[]): void {
  const downstream: number[][] = ports.map(() => []);
  const upstream: number[][] = ports.map(() => []);
  const link = (from: number, to: number) => {
    downstream[from]!.push(to);
    upstream[to]!.push(from);
  };
  for (const e of plains) link(e.from, e.to);
  for (const c of contactors) {
    link(c.nearIn, c.nearOut);
    link(c.farIn, c.farOut);
  }
  const waiting = upstream.map((list) => list.length);
  const queue: number[] = [];
  ports.forEach((p, i) => {
    if (p.node.kind === 'inlet') p.nominal = p.supplies!;
    if (waiting[i] === 0) queue.push(i);
  });
  for (let head = 0; head < queue.length; head++) {
    const i = queue[head]!;
    const port = ports[i]!;
    const from = upstream[i]!;
    if (port.node.kind !== 'inlet' && from.length > 0) {
      port.nominal = from.reduce((sum, j) => sum + ports[j]!.nominal, 0) / from.length;
    }
    for (const j of downstream[i]!) if (--waiting[j]! === 0) queue.push(j);
  }
}

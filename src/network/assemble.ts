/**
 * From the chip model to the hydraulic network the solver works on: pressure ports (one per
 * node, two per merge and split: near and far side), elements (plain segments, two-lane
 * contactors, split leak paths), boundary conditions, and the nominal phase of every port.
 * Exports `assembleNetwork`, `restampNetwork` (the same topology with other sizes or fluids,
 * for sweeps) and the network types. Does no solving.
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
  /**
   * Curvature of the interface, 1/m (positive when the far lane's phase is at the higher
   * pressure, so the arc bulges into the near lane); 0 for a flat interface. Set by the
   * curved-interface iteration (solver/curvedInterface.ts), never by the layout.
   */
  curvature: number;
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
  /**
   * Set (N/m) while a curved interface is solved with Newton coupling: every contactor's
   * curvature is then Δ/γ of the iterate, a dependence of its lanes (solver/assembly.ts).
   * Set and cleared by solver/curvedInterface.ts, never by the layout.
   */
  curvedTension?: number;
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
      const [nearIn, farIn] = portsOf.get(from.id)!;
      const endPorts = portsOf.get(segment.to)!;
      contactors.push(contactorElement(chip, segment, nearIn!, farIn!, endPorts[0]!, endPorts[endPorts.length - 1]!));
    } else {
      plains.push(plainElement(segment, portAt(segment.from, segment.id), portAt(segment.to, segment.id)));
    }
  }

  propagateNominal(ports, plains, contactors);

  const splits: SplitElement[] = [];
  for (const c of contactors) {
    const end = nodeById.get(c.segment.to)!;
    if (end.kind !== 'split') continue;
    const [near, far] = portsOf.get(end.id)!;
    const nearPhase: PhaseName = ports[c.nearIn]!.nominal >= 0.5 ? 'A' : 'B';
    splits.push(splitElement(chip, c, end, near!, far!, nearPhase));
  }
  for (const port of ports) {
    if (port.node.kind === 'outlet') port.supplies = port.node.phase ? (port.node.phase === 'A' ? 1 : 0) : port.nominal;
  }
  return { chip, ports, plains, contactors, splits, portsOf };
}

/**
 * The network of `chip` when it has the nodes of `template.chip` (the same array) and segments
 * that join the same nodes in the same order, differing only in sections, lengths, fluids,
 * interfacial tension or contact angles (a realisation of a tolerance study): the ports, their
 * nominal compositions and the numbering are the template's, and only what those quantities
 * set is computed again (resistances, lane geometry and scales, split windows). The same values
 * as `assembleNetwork(chip)`, without the topology work; any other chip is assembled afresh.
 */
export function restampNetwork(template: Network, chip: Chip): Network {
  const old = template.chip;
  const sameTopology =
    chip.nodes === old.nodes && chip.segments.length === old.segments.length && chip.segments.every((s, i) => s.from === old.segments[i]!.from && s.to === old.segments[i]!.to);
  if (!sameTopology) return assembleNetwork(chip);
  // Plains and contactors stand in segment order (assembleNetwork), splits in contactor order.
  const plains: PlainElement[] = [];
  const contactors: ContactorElement[] = [];
  const splits: SplitElement[] = [];
  chip.segments.forEach((segment, i) => {
    const plain = template.plains[plains.length];
    if (plain?.segment === old.segments[i]) {
      plains.push(plainElement(segment, plain.from, plain.to));
      return;
    }
    const el = template.contactors[contactors.length]!;
    const c = contactorElement(chip, segment, el.nearIn, el.farIn, el.nearOut, el.farOut);
    contactors.push(c);
    if (el.split) splits.push(splitElement(chip, c, el.split.node, el.split.near, el.split.far, el.split.nearPhase));
  });
  return { chip, ports: template.ports, plains, contactors, splits, portsOf: template.portsOf };
}

/** A plain segment: Hagen–Poiseuille resistance per unit viscosity, r0 = L/k(section) (physics/section.ts). */
function plainElement(segment: ChipSegment, from: number, to: number): PlainElement {
  return { kind: 'plain', segment, from, to, r0: segment.length / conductance(segment.section, 1) };
}

/** A contactor's lanes; its constraint row is scaled by the conductance per length at the geometric mean viscosity. */
function contactorElement(chip: Chip, segment: ChipSegment, nearIn: number, farIn: number, nearOut: number, farOut: number): ContactorElement {
  const section = segment.section as TwoLayerSection;
  const { across, along } = section.shape === 'rect' ? layerAxes(section) : { across: wallProfileOf(section).topWidth, along: section.depth };
  const mu = Math.sqrt(chip.phases.A.viscosity * chip.phases.B.viscosity);
  return { kind: 'contactor', segment, section, across, along, nearIn, farIn, nearOut, farOut, scale: conductance(section, mu) / segment.length, curvature: 0 };
}

/** The split at the end of contactor `c`, linked both ways, with its Young–Laplace window (topology.ts). */
function splitElement(chip: Chip, c: ContactorElement, node: SplitNode, near: number, far: number, nearPhase: PhaseName): SplitElement {
  const window = splitWindowOf(chip, node, spannedDimension(c.segment))!;
  const split: SplitElement = { node, contactor: c, near, far, window, nearPhase };
  c.split = split;
  return split;
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

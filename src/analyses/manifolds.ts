/**
 * The manifolds of a solved chip and the pressure along them. Exports `findManifolds` and the
 * `Manifold` type. Computes only; the charts are drawn by render/chipCharts.ts.
 *
 * A manifold is a connected set of channels that touch neither a merge nor a split: the lines
 * from an inlet to the feeds and from the drains to an outlet, whatever their group is called.
 * Its profile is the pressure of each node against the distance along the channels from the
 * manifold's entry: in a manifold without loops (a chain or a tree, as generated ladders and
 * trees have) the one path to each node, walked; where channels close a loop, Dijkstra's shortest
 * paths (graphlib). The walk is by hand because graphlib's multigraph and Dijkstra took 0.3 s
 * for each 16 385-node manifold of a 16 384-contactor ladder (1.2 s of its report). Tubing (tube-shaped segments) is not
 * part of a manifold: the entry is then the chip port the tubing joins, and the tubing's pressure
 * drop is given apart (`tubing`), so that 300 mm of tube does not squeeze the manifold's few
 * millimetres to a sliver of the chart.
 */
import { Graph, alg } from '@dagrejs/graphlib';
import type { SolvedChip } from './chip.js';
import type { PhaseName } from '../network/model.js';
import { connectedComponents } from '../network/topology.js';

export interface Manifold {
  role: 'distribution' | 'collection';
  /** The phase its nodes nominally carry. */
  phase: PhaseName;
  /** The chip port its tubing joins, else the inlet or outlet it starts from, else the node at the pressure extreme. */
  entry: string;
  /** Every node with its distance from the entry along the channels (m) and its pressure (Pa), by distance. */
  profile: Array<{ node: string; distance: number; pressure: number }>;
  /** True when the manifold branches (a tree), false for a single chain. */
  branched: boolean;
  /** The tubing that joins the manifold: segment, length (m) and the size of its pressure drop (Pa). */
  tubing: Array<{ segment: string; length: number; pressureDrop: number }>;
}

export function findManifolds(solved: SolvedChip): Manifold[] {
  const { chip, network, result } = solved;
  const kind = new Map(chip.nodes.map((n) => [n.id, n.kind]));
  const twoPhaseEnd = (id: string) => kind.get(id) === 'merge' || kind.get(id) === 'split';
  const onChip = chip.segments.filter((s) => !twoPhaseEnd(s.from) && !twoPhaseEnd(s.to));
  const links = onChip.filter((s) => s.section.shape !== 'tube');
  const tubes = onChip.filter((s) => s.section.shape === 'tube');
  const degree = new Map<string, number>();
  for (const s of links) for (const end of [s.from, s.to]) degree.set(end, (degree.get(end) ?? 0) + 1);
  const linksOf = new Map<string, typeof links>();
  const feedsMerge = new Set(chip.segments.filter((s) => kind.get(s.to) === 'merge').map((s) => s.from));
  const drainsSplit = new Set(chip.segments.filter((s) => kind.get(s.from) === 'split').map((s) => s.to));
  const pressure = new Map(result.nodes.map((n) => [n.id, n.pressure]));
  const nominal = (id: string) => network.ports[network.portsOf.get(id)![0]!]!.nominal;

  const members = chip.nodes.map((n) => n.id).filter((id) => degree.has(id));
  const components = connectedComponents(members, links);
  const componentOf = new Map<string, number>();
  components.forEach((list, c) => list.forEach((id) => componentOf.set(id, c)));
  for (const s of links) {
    const c = String(componentOf.get(s.from));
    const list = linksOf.get(c);
    if (list) list.push(s);
    else linksOf.set(c, [s]);
  }

  const segmentResult = new Map(result.segments.map((r) => [r.id, r]));
  const manifolds: Manifold[] = [];
  components.forEach((nodes, c) => {
    const inlet = nodes.find((id) => kind.get(id) === 'inlet');
    const outlet = nodes.find((id) => kind.get(id) === 'outlet');
    const role = inlet !== undefined || (outlet === undefined && nodes.some((id) => feedsMerge.has(id))) ? 'distribution' : 'collection';
    if (role === 'collection' && outlet === undefined && !nodes.some((id) => drainsSplit.has(id))) return;
    const byPressure = [...nodes].sort((a, b) => pressure.get(b)! - pressure.get(a)!);
    const members = new Set(nodes);
    const joining = tubes.filter((t) => members.has(t.from) !== members.has(t.to));
    const port = joining.map((t) => (members.has(t.from) ? t.from : t.to)).find(Boolean);
    const entry = port ?? (role === 'distribution' ? inlet : outlet) ?? (role === 'distribution' ? byPressure[0]! : byPressure[byPressure.length - 1]!);
    const tubing = joining.map((t) => ({ segment: t.id, length: t.length, pressureDrop: Math.abs(segmentResult.get(t.id)!.pressureDrop) }));
    const channels = linksOf.get(String(c)) ?? [];
    const distance = channels.length === nodes.length - 1 ? treeDistances(entry, channels) : shortestDistances(entry, nodes, channels);
    const profile = nodes
      .map((node) => ({ node, distance: distance.get(node)!, pressure: pressure.get(node)! }))
      .sort((a, b) => a.distance - b.distance || (a.node < b.node ? -1 : a.node > b.node ? 1 : 0));
    const phase: PhaseName = nominal(entry) >= 0.5 ? 'A' : 'B';
    manifolds.push({ role, phase, entry, profile, branched: nodes.some((id) => degree.get(id)! > 2), tubing });
  });
  return manifolds;
}

interface Channel {
  id: string;
  from: string;
  to: string;
  length: number;
}

/** Distance from `entry` along the channels of a connected manifold without loops (n − 1 channels for n nodes): the one path to each node, walked depth first. */
function treeDistances(entry: string, channels: readonly Channel[]): Map<string, number> {
  const next = new Map<string, Array<[string, number]>>();
  const link = (a: string, b: string, length: number) => {
    const list = next.get(a);
    if (list) list.push([b, length]);
    else next.set(a, [[b, length]]);
  };
  for (const s of channels) {
    link(s.from, s.to, s.length);
    link(s.to, s.from, s.length);
  }
  const distance = new Map([[entry, 0]]);
  const stack = [entry];
  while (stack.length > 0) {
    const node = stack.pop()!;
    const here = distance.get(node)!;
    for (const [other, length] of next.get(node) ?? []) {
      if (distance.has(other)) continue;
      distance.set(other, here + length);
      stack.push(other);
    }
  }
  return distance;
}

/** Shortest distance from `entry` along the channels (Dijkstra, graphlib), for manifolds whose channels close loops. */
function shortestDistances(entry: string, nodes: readonly string[], channels: readonly Channel[]): Map<string, number> {
  // Channels are undirected here; parallel channels between two nodes are separate edges.
  const g = new Graph({ directed: false, multigraph: true });
  for (const id of nodes) g.setNode(id);
  for (const s of channels) g.setEdge(s.from, s.to, s.length, s.id);
  const paths = alg.dijkstra(g, entry, (e) => g.edge(e) as number, (v) => g.nodeEdges(v) ?? []);
  return new Map(nodes.map((id) => [id, paths[id]!.distance]));
}

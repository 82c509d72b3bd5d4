/**
 * Topology of a chip: the roles of segments (feed, contactor, outlet arm, plain), and the checks
 * that make a chip solvable. Exports `isContactor`, `checkTopology` (throws every problem found,
 * each naming its element, and returns the chip's index), `splitWindowOf`, `spannedDimension`,
 * `componentRoots` and `connectedComponents`.
 */
import { StratiflowError, StratiflowErrors } from '../errors.js';
import type { Chip, ChipNode, ChipSegment, SplitNode } from './model.js';
import { interfaceSpan } from '../physics/shapedSection.js';
import { indexChip, segmentsAt, type ChipIndex } from './chipIndex.js';

/** A contactor is a segment that starts at a merge: it carries the stratified co-flow. */
export function isContactor(chip: Chip, segment: ChipSegment): boolean {
  return chip.nodes.some((n) => n.id === segment.from && n.kind === 'merge');
}

/**
 * The allowed range of p_B − p_A at a split, Pa. An explicit window (on the split, then the chip)
 * wins; otherwise the Young–Laplace pressure of an interface spanning the dimension d that the
 * interface spans in the contactor (the depth for side-by-side layers), pinned at the splitter
 * edge with contact angles between the receding and advancing limits, measured through phase A:
 *   Δp ∈ [2γ cos θ_adv / d, 2γ cos θ_rec / d]
 * (Young–Laplace for a cylindrical meniscus in a slot of width d, de Gennes, Brochard-Wyart &
 * Quéré, Capillarity and Wetting Phenomena, 2004, §1.2 and §3.1 on pinning between the
 * receding and advancing angles; the factor 2 is the slot's curvature 2cosθ/d).
 */
export function splitWindowOf(chip: Chip, split: SplitNode, spannedDimension: number): [number, number] | undefined {
  if (split.window) return split.window;
  if (chip.splitWindow) return chip.splitWindow;
  if (chip.interfacialTension === undefined || !chip.contactAngle) return undefined;
  const g = chip.interfacialTension;
  return [(2 * g * Math.cos(chip.contactAngle.advancing)) / spannedDimension, (2 * g * Math.cos(chip.contactAngle.receding)) / spannedDimension];
}

/**
 * The span the interface crosses in a contactor, m: a rectangle's depth (side by side) or width
 * (stacked); in an etched or trapezoidal section the depth under the interface at holdup ½
 * (interfaceSpan of the section code), which is the full depth: the interface then stands over
 * the flat bottom, or at the apex of a half-disc or triangle. Where the interface stands over a
 * curved or sloping wall the span is shorter and the window wider, so this is the narrowest
 * window the contactor can have (the window does not follow the solved holdup).
 */
export function spannedDimension(segment: ChipSegment): number {
  const s = segment.section;
  if (s.shape === 'tube') return NaN;
  if (s.shape !== 'rect') return interfaceSpan(s, 0.5);
  return s.orientation === 'side' ? s.depth : s.width;
}

/**
 * Every problem that makes `chip` unsolvable, thrown together (StratiflowErrors), each naming
 * its element; returns the chip's index (./chipIndex.ts) for the checks that follow.
 */
export function checkTopology(chip: Chip, index: ChipIndex = indexChip(chip)): ChipIndex {
  const problems: StratiflowError[] = [];
  const fail = (element: string, message: string, field?: string) =>
    problems.push(new StratiflowError('bad-layout', message, { file: chip.source, element, field }));
  const { nodes, segments } = chip;
  const { canonical, from, to, leaving, arriving } = index;

  nodes.forEach((n, i) => {
    if (index.repeatedNode[i]) fail(`node ${n.id}`, 'duplicate id', 'id');
  });
  segments.forEach((s, i) => {
    if (index.repeatedSegment[i]) fail(`segment ${s.id}`, 'duplicate id', 'id');
    if (from[i]! < 0) fail(`segment ${s.id}`, `unknown node "${s.from}"`, 'from');
    if (to[i]! < 0) fail(`segment ${s.id}`, `unknown node "${s.to}"`, 'to');
    if (s.from === s.to) fail(`segment ${s.id}`, 'starts and ends at the same node', 'to');
  });

  const count = (lists: ChipIndex['leaving'], node: number) => lists.start[node + 1]! - lists.start[node]!;
  const startsAtMerge = (segment: number) => from[segment]! >= 0 && nodes[from[segment]!]!.kind === 'merge';
  nodes.forEach((n, i) => {
    const at = canonical[i]!;
    if (n.kind === 'merge') {
      for (const [k, segId] of n.inlets.entries()) {
        const s = index.segment.get(segId);
        if (s === undefined) fail(`node ${n.id}`, `unknown segment "${segId}"`, `inlets.${k}`);
        else if (segments[s]!.to !== n.id) fail(`node ${n.id}`, `segment "${segId}" does not end at this merge`, `inlets.${k}`);
        else if (startsAtMerge(s)) fail(`node ${n.id}`, `segment "${segId}" is itself a contactor; a merge needs two single-phase inlets`, `inlets.${k}`);
      }
      if (n.inlets[0] === n.inlets[1]) fail(`node ${n.id}`, 'the two inlets must be different segments', 'inlets');
      if (count(arriving, at) !== 2) fail(`node ${n.id}`, `a merge needs exactly two arriving segments (its inlets), found ${count(arriving, at)}`, 'inlets');
      const out = segmentsAt(leaving, at);
      if (out.length !== 1) fail(`node ${n.id}`, `a merge needs exactly one leaving segment (the contactor), found ${out.length}`);
      else if (segments[out[0]!]!.section.shape === 'tube') fail(`segment ${segments[out[0]!]!.id}`, 'a contactor must be rectangular, etched or trapezoidal (not a tube)', 'shape');
    }
    if (n.kind === 'split') {
      const into = segmentsAt(arriving, at);
      if (into.length !== 1 || !startsAtMerge(into[0]!)) fail(`node ${n.id}`, 'a split needs exactly one arriving segment, a contactor that starts at a merge');
      for (const [k, segId] of n.outlets.entries()) {
        const s = index.segment.get(segId);
        if (s === undefined) fail(`node ${n.id}`, `unknown segment "${segId}"`, `outlets.${k}`);
        else if (segments[s]!.from !== n.id) fail(`node ${n.id}`, `segment "${segId}" does not start at this split`, `outlets.${k}`);
      }
      if (n.outlets[0] === n.outlets[1]) fail(`node ${n.id}`, 'the two outlets must be different segments', 'outlets');
      if (count(leaving, at) !== 2) fail(`node ${n.id}`, `a split needs exactly two leaving segments (its outlets), found ${count(leaving, at)}`, 'outlets');
      if (!n.window && !chip.splitWindow && (chip.interfacialTension === undefined || !chip.contactAngle)) {
        fail(`node ${n.id}`, 'no pressure window: give interfacialTension and contactAngleA, or splitWindow', 'window');
      }
    }
    if (n.kind === 'inlet' || n.kind === 'outlet') {
      if (count(arriving, at) + count(leaving, at) === 0) fail(`node ${n.id}`, `an ${n.kind} must have a segment`);
    }
  });
  segments.forEach((s, i) => {
    const end = to[i]! >= 0 ? nodes[to[i]!]! : undefined;
    if (end?.kind === 'merge' && !end.inlets.includes(s.id)) fail(`segment ${s.id}`, `ends at merge "${end.id}" but is not one of its inlets`, 'to');
    const start = from[i]! >= 0 ? nodes[from[i]!]! : undefined;
    if (start?.kind === 'split' && !start.outlets.includes(s.id)) fail(`segment ${s.id}`, `starts at split "${start.id}" but is not one of its outlets`, 'from');
  });

  const references = nodes.filter((n) => n.kind === 'outlet' || (n.kind === 'inlet' && n.pressure !== undefined));
  if (references.length === 0) fail('chip', 'no pressure reference: give at least one outlet or one inlet with a pressure');

  if (problems.length === 0) {
    // Every node's component must hold an outlet or an inlet with a pressure.
    const root = componentRoots(nodes.length, from, to);
    const referenced = new Uint8Array(nodes.length);
    const size = new Int32Array(nodes.length);
    nodes.forEach((n, i) => {
      const r = root[i]!;
      size[r]++;
      if (n.kind === 'outlet' || (n as { pressure?: number }).pressure !== undefined) referenced[r] = 1;
    });
    // Each component is named by its first node, the components in the order of those nodes.
    nodes.forEach((n, i) => {
      if (root[i] === i && !referenced[i]) fail(`node ${n.id}`, `has no path to an outlet (nor do ${size[i]! - 1} nodes connected to it)`);
    });
  }
  if (problems.length > 0) throw new StratiflowErrors(problems);
  return index;
}

/**
 * The component of each of `count` nodes joined by links from[k]–to[k] (direction ignored;
 * links with an end < 0 are left out), as its smallest member, so the components come in the
 * order of their first node. Union–find with path halving, the smaller root kept (Tarjan, 1975,
 * J. ACM 22:215). Written by hand because graphlib, the graph library of this project, takes
 * about 1.1 s to build the graph of a 16 384-contactor ladder and its components search is
 * recursive (it overflows the call stack on long chains); this takes some 20 ms.
 */
export function componentRoots(count: number, from: ArrayLike<number>, to: ArrayLike<number>): Int32Array {
  const parent = Int32Array.from({ length: count }, (_, i) => i);
  const root = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]!]!;
      i = parent[i]!;
    }
    return i;
  };
  for (let k = 0; k < from.length; k++) {
    if (from[k]! < 0 || to[k]! < 0) continue;
    const a = root(from[k]!);
    const b = root(to[k]!);
    if (a !== b) parent[Math.max(a, b)] = Math.min(a, b);
  }
  for (let i = 0; i < count; i++) parent[i] = root(i);
  return parent;
}

/** Connected components of the nodes `ids` joined by `links` (componentRoots), each in the order of `ids`. */
export function connectedComponents(ids: string[], links: Iterable<{ from: string; to: string }>): string[][] {
  const index = new Map<string, number>();
  ids.forEach((id, i) => index.set(id, i));
  const from: number[] = [];
  const to: number[] = [];
  for (const link of links) {
    from.push(index.get(link.from) ?? -1);
    to.push(index.get(link.to) ?? -1);
  }
  const root = componentRoots(ids.length, from, to);
  const byRoot = new Map<number, string[]>();
  ids.forEach((id, i) => {
    const list = byRoot.get(root[i]!);
    if (list) list.push(id);
    else byRoot.set(root[i]!, [id]);
  });
  return [...byRoot.values()];
}

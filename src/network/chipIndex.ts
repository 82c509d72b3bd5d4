/**
 * Nodes and segments of a chip by number: each id's position, each segment's end nodes, and the
 * segments leaving and arriving at each node, in compressed lists. The layout checks
 * (./topology.ts, ../layout/phases.ts) walk chips of 10⁵ segments and more; string-keyed maps
 * and a list object per node cost them most of a second there (measured at 16 384 contactors),
 * typed arrays a small part of that. Exports `indexChip` and `ChipIndex`.
 *
 * Where ids repeat (a layout error that checkTopology reports), an id means its last node or
 * segment, as a map filled in order would.
 */
import type { Chip } from './model.js';

export interface ChipIndex {
  /** Position in chip.nodes of each node id (the last node of a repeated id). */
  node: Map<string, number>;
  /** Position in chip.segments of each segment id (the last of a repeated id). */
  segment: Map<string, number>;
  /** The node that each node's id names: itself, or the last node of its repeated id. */
  canonical: Int32Array;
  /** 1 where a node's id was used by an earlier node; a segment's by an earlier segment or by any node. */
  repeatedNode: Uint8Array;
  repeatedSegment: Uint8Array;
  /** Each segment's end nodes (canonical positions), −1 where the id names no node. */
  from: Int32Array;
  to: Int32Array;
  /** Segments leaving node i: leaving.list[leaving.start[i] .. leaving.start[i + 1]), in segment order. */
  leaving: { start: Int32Array; list: Int32Array };
  arriving: { start: Int32Array; list: Int32Array };
}

/** Compressed lists of the segments whose `end` is each node (segments with no such node left out). */
function listsBy(end: Int32Array, nodes: number): { start: Int32Array; list: Int32Array } {
  const start = new Int32Array(nodes + 1);
  for (const e of end) if (e >= 0) start[e + 1]++;
  for (let i = 0; i < nodes; i++) start[i + 1] += start[i]!;
  const fill = start.slice(0, nodes);
  const list = new Int32Array(start[nodes]!);
  end.forEach((e, s) => {
    if (e >= 0) list[fill[e]!++] = s;
  });
  return { start, list };
}

export function indexChip(chip: Chip): ChipIndex {
  const node = new Map<string, number>();
  const repeatedNode = new Uint8Array(chip.nodes.length);
  chip.nodes.forEach((n, i) => {
    if (node.has(n.id)) repeatedNode[i] = 1;
    node.set(n.id, i);
  });
  const segment = new Map<string, number>();
  const repeatedSegment = new Uint8Array(chip.segments.length);
  chip.segments.forEach((s, i) => {
    if (segment.has(s.id) || node.has(s.id)) repeatedSegment[i] = 1;
    segment.set(s.id, i);
  });
  const canonical = Int32Array.from(chip.nodes, (n) => node.get(n.id)!);
  const from = Int32Array.from(chip.segments, (s) => node.get(s.from) ?? -1);
  const to = Int32Array.from(chip.segments, (s) => node.get(s.to) ?? -1);
  return { node, segment, canonical, repeatedNode, repeatedSegment, from, to, leaving: listsBy(from, chip.nodes.length), arriving: listsBy(to, chip.nodes.length) };
}

/** The segments (positions) of one node's compressed list. */
export function segmentsAt(lists: { start: Int32Array; list: Int32Array }, node: number): Int32Array {
  return lists.list.subarray(lists.start[node]!, lists.start[node + 1]!);
}

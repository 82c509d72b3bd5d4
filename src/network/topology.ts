/**
 * Topology of a chip: the roles of segments (feed, contactor, outlet arm, plain), and the checks
 * that make a chip solvable. Exports `isContactor`, `checkTopology` (throws every problem found,
 * each naming its element), `splitWindowOf`, `spannedDimension` and `connectedComponents`.
 */
import { StratiflowError, StratiflowErrors } from '../errors.js';
import type { Chip, ChipNode, ChipSegment, SplitNode } from './model.js';
import { interfaceSpan } from '../physics/shapedSection.js';

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

export function checkTopology(chip: Chip): void {
  const problems: StratiflowError[] = [];
  const fail = (element: string, message: string, field?: string) =>
    problems.push(new StratiflowError('bad-layout', message, { file: chip.source, element, field }));

  const nodeById = new Map<string, ChipNode>();
  for (const n of chip.nodes) {
    if (nodeById.has(n.id)) fail(`node ${n.id}`, 'duplicate id', 'id');
    nodeById.set(n.id, n);
  }
  const segmentById = new Map<string, ChipSegment>();
  for (const s of chip.segments) {
    if (segmentById.has(s.id) || nodeById.has(s.id)) fail(`segment ${s.id}`, 'duplicate id', 'id');
    segmentById.set(s.id, s);
    for (const end of ['from', 'to'] as const) {
      if (!nodeById.has(s[end])) fail(`segment ${s.id}`, `unknown node "${s[end]}"`, end);
    }
    if (s.from === s.to) fail(`segment ${s.id}`, 'starts and ends at the same node', 'to');
  }

  const arrivingAt = new Map<string, ChipSegment[]>();
  const leavingFrom = new Map<string, ChipSegment[]>();
  for (const s of chip.segments) {
    if (!arrivingAt.has(s.to)) arrivingAt.set(s.to, []);
    if (!leavingFrom.has(s.from)) leavingFrom.set(s.from, []);
    arrivingAt.get(s.to)!.push(s);
    leavingFrom.get(s.from)!.push(s);
  }
  const arriving = (id: string) => arrivingAt.get(id) ?? [];
  const leaving = (id: string) => leavingFrom.get(id) ?? [];
  const startsAtMerge = (s: ChipSegment) => nodeById.get(s.from)?.kind === 'merge';
  for (const n of chip.nodes) {
    const element = `node ${n.id}`;
    if (n.kind === 'merge') {
      for (const [i, segId] of n.inlets.entries()) {
        const s = segmentById.get(segId);
        if (!s) fail(element, `unknown segment "${segId}"`, `inlets.${i}`);
        else if (s.to !== n.id) fail(element, `segment "${segId}" does not end at this merge`, `inlets.${i}`);
        else if (startsAtMerge(s)) fail(element, `segment "${segId}" is itself a contactor; a merge needs two single-phase inlets`, `inlets.${i}`);
      }
      if (n.inlets[0] === n.inlets[1]) fail(element, 'the two inlets must be different segments', 'inlets');
      if (arriving(n.id).length !== 2) fail(element, `a merge needs exactly two arriving segments (its inlets), found ${arriving(n.id).length}`, 'inlets');
      const out = leaving(n.id);
      if (out.length !== 1) fail(element, `a merge needs exactly one leaving segment (the contactor), found ${out.length}`);
      else if (out[0]!.section.shape === 'tube') fail(`segment ${out[0]!.id}`, 'a contactor must be rectangular, etched or trapezoidal (not a tube)', 'shape');
    }
    if (n.kind === 'split') {
      const into = arriving(n.id);
      if (into.length !== 1 || !startsAtMerge(into[0]!)) fail(element, 'a split needs exactly one arriving segment, a contactor that starts at a merge');
      for (const [i, segId] of n.outlets.entries()) {
        const s = segmentById.get(segId);
        if (!s) fail(element, `unknown segment "${segId}"`, `outlets.${i}`);
        else if (s.from !== n.id) fail(element, `segment "${segId}" does not start at this split`, `outlets.${i}`);
      }
      if (n.outlets[0] === n.outlets[1]) fail(element, 'the two outlets must be different segments', 'outlets');
      if (leaving(n.id).length !== 2) fail(element, `a split needs exactly two leaving segments (its outlets), found ${leaving(n.id).length}`, 'outlets');
      if (!n.window && !chip.splitWindow && (chip.interfacialTension === undefined || !chip.contactAngle)) {
        fail(element, 'no pressure window: give interfacialTension and contactAngleA, or splitWindow', 'window');
      }
    }
    if (n.kind === 'inlet' || n.kind === 'outlet') {
      if (arriving(n.id).length + leaving(n.id).length === 0) fail(element, `an ${n.kind} must have a segment`);
    }
  }
  for (const s of chip.segments) {
    const to = nodeById.get(s.to);
    if (to?.kind === 'merge' && !to.inlets.includes(s.id)) fail(`segment ${s.id}`, `ends at merge "${to.id}" but is not one of its inlets`, 'to');
    const from = nodeById.get(s.from);
    if (from?.kind === 'split' && !from.outlets.includes(s.id)) fail(`segment ${s.id}`, `starts at split "${from.id}" but is not one of its outlets`, 'from');
  }

  const references = chip.nodes.filter((n) => n.kind === 'outlet' || (n.kind === 'inlet' && n.pressure !== undefined));
  if (references.length === 0) fail('chip', 'no pressure reference: give at least one outlet or one inlet with a pressure');

  if (problems.length === 0) {
    for (const component of connectedComponents(chip.nodes.map((n) => n.id), chip.segments)) {
      const hasOutlet = component.some((id) => nodeById.get(id)?.kind === 'outlet' || (nodeById.get(id) as { pressure?: number }).pressure !== undefined);
      if (!hasOutlet) fail(`node ${component[0]}`, `has no path to an outlet (nor do ${component.length - 1} nodes connected to it)`);
    }
  }
  if (problems.length > 0) throw new StratiflowErrors(problems);
}

/**
 * Connected components of the nodes `ids` joined by `links` (direction ignored), each in the
 * order of `ids`; the components in the order of their first node. Union–find with path halving
 * and union by size (Tarjan, 1975, J. ACM 22:215). Written by hand because graphlib, the graph
 * library of this project, takes about 1.1 s to build the graph of a 16 384-contactor ladder
 * and its components search is recursive (it overflows the call stack on long chains); this
 * takes some 20 ms.
 */
export function connectedComponents(ids: string[], links: Iterable<{ from: string; to: string }>): string[][] {
  const index = new Map<string, number>();
  ids.forEach((id, i) => index.set(id, i));
  const parent = Int32Array.from(ids, (_, i) => i);
  const size = new Int32Array(ids.length).fill(1);
  const root = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]!]!;
      i = parent[i]!;
    }
    return i;
  };
  for (const { from, to } of links) {
    const a = index.get(from);
    const b = index.get(to);
    if (a === undefined || b === undefined) continue;
    let ra = root(a);
    let rb = root(b);
    if (ra === rb) continue;
    if (size[ra]! < size[rb]!) [ra, rb] = [rb, ra];
    parent[rb] = ra;
    size[ra] += size[rb]!;
  }
  const byRoot = new Map<number, string[]>();
  ids.forEach((id, i) => {
    const r = root(i);
    const list = byRoot.get(r);
    if (list) list.push(id);
    else byRoot.set(r, [id]);
  });
  return [...byRoot.values()];
}

/**
 * The phase every channel of a chip is meant to carry, traced from the inlets along the design
 * direction of the segments (from → to) through junctions, and the checks that a contactor chip
 * can work: an inlet of each phase, the two inlets of a merge carrying different phases, the
 * phases not meeting in a manifold before a merge, and each outlet arm of a split leading to an
 * outlet of the phase of its lane. Exports `checkPhases(chip)` → `{ problems, warnings }`.
 *
 * Conventions (src/network/model.ts): a merge lists its inlets [near, far] and the near lane of
 * its contactor carries whatever the near inlet brings; a split lists its outlets [near, far].
 * An outlet's phase is the one the file gives, otherwise the phase most of the streams reaching
 * it bring. Runs on a chip that passed checkTopology; reads the chip and changes nothing.
 */
import { StratiflowError } from '../errors.js';
import type { Chip, ChipNode, ChipSegment, MergeNode, OutletNode, PhaseName, SplitNode } from '../network/model.js';
import { indexChip, segmentsAt, type ChipIndex } from '../network/chipIndex.js';

const other = (phase: PhaseName): PhaseName => (phase === 'A' ? 'B' : 'A');

/** Where a stream starts: an inlet, or a split that sends its lanes on. */
interface Source {
  kind: 'inlet' | 'split';
  id: string;
}

/**
 * What each segment carries (by position): each phase with the first source that sends it, in
 * two arrays rather than a map per segment (a chip of 10⁵ segments, measured: ./chipIndex.ts).
 */
class Carried {
  readonly A: (Source | undefined)[];
  readonly B: (Source | undefined)[];
  constructor(segments: number) {
    this.A = new Array<Source | undefined>(segments).fill(undefined);
    this.B = new Array<Source | undefined>(segments).fill(undefined);
  }
  get(segment: number, phase: PhaseName): Source | undefined {
    return (phase === 'A' ? this.A : this.B)[segment];
  }
  size(segment: number): number {
    return (this.A[segment] ? 1 : 0) + (this.B[segment] ? 1 : 0);
  }
  /** The phase of a segment that carries exactly one. */
  only(segment: number): PhaseName {
    return this.A[segment] ? 'A' : 'B';
  }
}

interface Stream {
  segment: number;
  phase: PhaseName;
  source: Source;
}

const named = (source: Source) => `${source.kind} ${source.id}`;

/**
 * The phase problems and warnings of a chip that passed checkTopology (whose index it may be
 * given, to save building it again).
 */
export function checkPhases(chip: Chip, index: ChipIndex = indexChip(chip)): { problems: StratiflowError[]; warnings: string[] } {
  const problems: StratiflowError[] = [];
  const warnings: string[] = [];
  const fail = (element: string, message: string, field?: string) =>
    problems.push(new StratiflowError('bad-layout', message, { file: chip.source, element, field }));
  const { nodes, segments } = chip;
  const nodeAt = (id: string) => index.canonical[index.node.get(id)!]!;
  const segmentAt = (id: string) => index.segment.get(id)!;

  const merges = nodes.filter((n): n is MergeNode => n.kind === 'merge');
  if (merges.length === 0) return { problems, warnings };
  const inlets = nodes.filter((n) => n.kind === 'inlet');
  const missing = (['A', 'B'] as const).filter((phase) => !inlets.some((n) => n.phase === phase));
  for (const phase of missing) fail('chip', `no inlet of phase ${phase}: every contactor needs an inlet of each phase`);
  if (missing.length > 0) return { problems, warnings };

  // Streams spread through junctions only; a merge, split, inlet or outlet ends them.
  const carried = new Carried(segments.length);
  const spread = (starts: Stream[]) => {
    const stack = starts;
    while (stack.length) {
      const { segment, phase, source } = stack.pop()!;
      const here = phase === 'A' ? carried.A : carried.B;
      if (here[segment]) continue;
      here[segment] = source;
      const end = index.to[segment]!;
      if (end >= 0 && nodes[end]!.kind === 'junction') {
        for (const next of segmentsAt(index.leaving, end)) stack.push({ segment: next, phase, source });
      }
    }
  };
  const streamsFrom = (node: ChipNode, phaseOf: (s: ChipSegment) => PhaseName): Stream[] => {
    const source: Source = { kind: node.kind === 'inlet' ? 'inlet' : 'split', id: node.id };
    return Array.from(segmentsAt(index.leaving, nodeAt(node.id)), (segment) => ({ segment, phase: phaseOf(segments[segment]!), source }));
  };
  spread(inlets.flatMap((n) => (n.kind === 'inlet' ? streamsFrom(n, () => n.phase) : [])));

  // A split's streams start once its merge's near lane is known; a split may feed a later merge.
  const nearLane = new Map<string, PhaseName>();
  const splitAfter = new Map<string, SplitNode>();
  for (const m of merges) {
    const out = segmentsAt(index.leaving, nodeAt(m.id));
    const end = out.length > 0 ? index.to[out[0]!]! : -1;
    const split = end >= 0 ? nodes[end] : undefined;
    if (split?.kind === 'split') splitAfter.set(m.id, split);
  }
  const laneOf = (m: MergeNode): PhaseName | undefined => {
    const [near, far] = m.inlets.map(segmentAt) as [number, number];
    if (carried.size(near) !== 1 || carried.size(far) !== 1) return undefined;
    const phase = carried.only(near);
    return carried.get(far, phase) ? undefined : phase;
  };
  for (let settled = false; !settled; ) {
    settled = true;
    for (const m of merges) {
      if (nearLane.has(m.id)) continue;
      const lane = laneOf(m);
      if (lane === undefined) continue;
      nearLane.set(m.id, lane);
      settled = false;
      const split = splitAfter.get(m.id);
      if (split) spread(streamsFrom(split, (s) => (s.id === split.outlets[0] ? lane : other(lane))));
    }
  }

  nodes.forEach((n, i) => {
    if (n.kind !== 'junction') return;
    const into = segmentsAt(index.arriving, index.canonical[i]!);
    let hasA = false;
    let hasB = false;
    let both = false;
    for (const s of into) {
      hasA ||= carried.A[s] !== undefined;
      hasB ||= carried.B[s] !== undefined;
      both ||= carried.size(s) === 2;
    }
    if (!(hasA && hasB && !both)) return;
    const from = (phase: PhaseName) => carried.get(into.find((s) => carried.get(s, phase) !== undefined)!, phase)!;
    const fromSplits = from('A').kind === 'split' || from('B').kind === 'split';
    const text = `phase A (from ${named(from('A'))}) and phase B (from ${named(from('B'))}) meet at this junction`;
    if (fromSplits) warnings.push(`junction ${n.id}: ${text} and leave mixed`);
    else fail(`node ${n.id}`, `${text}, before any merge; each feed manifold must carry one phase`);
  });

  for (const m of merges) {
    const sides = m.inlets.map((id) => ({ id, segment: segmentAt(id) }));
    const unreached = sides.filter((side) => carried.size(side.segment) === 0);
    if (unreached.length > 0) {
      const names = unreached.map((side) => side.id).join(' and ');
      warnings.push(`merge ${m.id}: no inlet reaches ${names} along the direction the segments are written (from → to); the phases of its contactor are not checked`);
      continue;
    }
    if (sides.some((side) => carried.size(side.segment) === 2)) continue; // reported at the junction where they meet
    const [near, far] = sides.map((side) => {
      const phase = carried.only(side.segment);
      return { ...side, phase, source: named(carried.get(side.segment, phase)!) };
    });
    if (near!.phase === far!.phase) {
      fail(`node ${m.id}`, `both inlets carry phase ${near!.phase} (${near!.id} from ${near!.source}, ${far!.id} from ${far!.source}); a merge needs one inlet of each phase`, 'inlets');
    }
  }

  warnings.push(...orientationWarnings(merges, nearLane));
  checkSplits(chip, index, { nearLane, splitAfter }, fail, warnings);
  return { problems, warnings };
}

/** A chip whose contactors take different phases on their near side: legal, but often a slip. */
function orientationWarnings(merges: MergeNode[], nearLane: Map<string, PhaseName>): string[] {
  const withNear = (phase: PhaseName) => merges.filter((m) => nearLane.get(m.id) === phase).map((m) => m.id);
  const [a, b] = [withNear('A'), withNear('B')];
  if (a.length === 0 || b.length === 0) return [];
  const [odd, oddPhase, usual] = b.length <= a.length ? [b, 'B', a] : [a, 'A', b];
  const names = odd.length > 5 ? `${odd.slice(0, 5).join(', ')} and ${odd.length - 5} more` : odd.join(', ');
  return [`merge${odd.length > 1 ? 's' : ''} ${names}: phase ${oddPhase} on the near side (first inlet), while ${usual.length} other merge${usual.length > 1 ? 's take' : ' takes'} phase ${other(oddPhase as PhaseName)} there; check the order of ${odd.length > 1 ? 'their' : 'its'} inlets and outlets`];
}

interface Lanes {
  nearLane: Map<string, PhaseName>;
  splitAfter: Map<string, SplitNode>;
}

/** Each split's outlet arms lead to outlets of the phase of their lane. */
function checkSplits(chip: Chip, index: ChipIndex, g: Lanes, fail: (element: string, message: string, field?: string) => void, warnings: string[]): void {
  const { nodes } = chip;
  // Which outlets each segment leads to, and whether it leads to a merge: found backwards from
  // every outlet (there are few) and from all merges at once, so a long manifold is walked once
  // each. A walk marks what it has seen with its own number.
  const seenBy = new Int32Array(chip.segments.length).fill(-1);
  let walk = 0;
  const backwards = (targets: number[], mark: (s: number) => void) => {
    walk++;
    const stack: number[] = [];
    for (const t of targets) stack.push(...segmentsAt(index.arriving, t));
    while (stack.length) {
      const s = stack.pop()!;
      if (seenBy[s] === walk) continue;
      seenBy[s] = walk;
      mark(s);
      const start = index.from[s]!;
      if (nodes[start]!.kind === 'junction') stack.push(...segmentsAt(index.arriving, start));
    }
  };
  const outletsOf: (OutletNode[] | undefined)[] = new Array<OutletNode[] | undefined>(chip.segments.length).fill(undefined);
  nodes.forEach((o, i) => {
    if (o.kind === 'outlet') backwards([index.canonical[i]!], (s) => (outletsOf[s] ??= []).push(o));
  });
  const toMerge = new Uint8Array(chip.segments.length);
  const mergeNodes: number[] = [];
  nodes.forEach((n, i) => {
    if (n.kind === 'merge') mergeNodes.push(index.canonical[i]!);
  });
  backwards(mergeNodes, (s) => (toMerge[s] = 1));
  const reach = (start: number) => ({ outlets: outletsOf[start] ?? [], toMerge: toMerge[start] === 1 });
  const arms: { split: SplitNode; merge: string; lane: PhaseName; near: ReturnType<typeof reach>; far: ReturnType<typeof reach> }[] = [];
  for (const [mergeId, split] of g.splitAfter) {
    const lane = g.nearLane.get(mergeId);
    if (lane === undefined) continue;
    const [near, far] = split.outlets.map((id) => reach(index.segment.get(id)!));
    arms.push({ split, merge: mergeId, lane, near: near!, far: far! });
  }

  // Undeclared outlets take the phase most arms bring them; a tie leaves them undecided.
  const votes = new Map<OutletNode, Record<PhaseName, number>>();
  for (const arm of arms) {
    for (const [list, phase] of [[arm.near.outlets, arm.lane], [arm.far.outlets, other(arm.lane)]] as const) {
      for (const o of list) {
        const v = votes.get(o) ?? { A: 0, B: 0 };
        v[phase]++;
        votes.set(o, v);
      }
    }
  }
  const phaseOf = (o: OutletNode): PhaseName | undefined => {
    if (o.phase) return o.phase;
    const v = votes.get(o)!;
    return v.A === v.B ? undefined : v.A > v.B ? 'A' : 'B';
  };
  for (const [o, v] of votes) {
    if (!o.phase && v.A > 0 && v.A === v.B) warnings.push(`outlet ${o.id}: collects phase A and phase B in equal measure (from ${v.A} split arm${v.A > 1 ? 's' : ''} each); give it a phase to have the order of the split outlets checked`);
  }

  for (const { split, merge, lane, near, far } of arms) {
    const [nearId, farId] = split.outlets;
    for (const [id, arm] of [[nearId, near], [farId, far]] as const) {
      if (arm.outlets.length === 0 && !arm.toMerge) warnings.push(`split ${split.id}: its outlet ${id} reaches no outlet along the direction the segments are written (from → to); its phase is not checked`);
    }
    const wrong = (arm: ReturnType<typeof reach>, phase: PhaseName) => arm.outlets.filter((o) => phaseOf(o) !== undefined && phaseOf(o) !== phase);
    const nearWrong = wrong(near, lane);
    const farWrong = wrong(far, other(lane));
    if (nearWrong.length === 0 && farWrong.length === 0) continue;
    const leadsTo = (id: string, arm: ReturnType<typeof reach>) => `${id} leads to ${arm.outlets.map((o) => `outlet ${o.id} (phase ${phaseOf(o) ?? 'undecided'})`).join(' and ')}`;
    const parts = [nearWrong.length ? leadsTo(nearId, near) : undefined, farWrong.length ? leadsTo(farId, far) : undefined].filter(Boolean);
    const crossed = nearWrong.length === near.outlets.length && farWrong.length === far.outlets.length;
    const hint = crossed ? `; list the outlets as [${farId}, ${nearId}], or the inlets of merge ${merge} the other way round` : '';
    fail(`node ${split.id}`, `the near lane carries phase ${lane} and the far lane phase ${other(lane)}, but ${parts.join(' and ')}${hint}`, 'outlets');
  }
}

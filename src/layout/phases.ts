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

/** Appends to the list under `key`, starting it when missing. */
const add = <K, V>(map: Map<K, V[]>, key: K, value: V) => (map.get(key) ?? map.set(key, []).get(key)!).push(value);

const other = (phase: PhaseName): PhaseName => (phase === 'A' ? 'B' : 'A');

/** Where a stream starts: an inlet, or a split that sends its lanes on. */
interface Source {
  kind: 'inlet' | 'split';
  id: string;
}

/** What a segment carries: each phase with the first source that sends it. */
type Carried = Map<PhaseName, Source>;

interface Stream {
  segment: ChipSegment;
  phase: PhaseName;
  source: Source;
}

const named = (source: Source) => `${source.kind} ${source.id}`;

export function checkPhases(chip: Chip): { problems: StratiflowError[]; warnings: string[] } {
  const problems: StratiflowError[] = [];
  const warnings: string[] = [];
  const fail = (element: string, message: string, field?: string) =>
    problems.push(new StratiflowError('bad-layout', message, { file: chip.source, element, field }));

  const nodeById = new Map(chip.nodes.map((n) => [n.id, n]));
  const segmentById = new Map(chip.segments.map((s) => [s.id, s]));
  const leaving = new Map<string, ChipSegment[]>();
  const arriving = new Map<string, ChipSegment[]>();
  for (const s of chip.segments) {
    add(leaving, s.from, s);
    add(arriving, s.to, s);
  }
  const merges = chip.nodes.filter((n): n is MergeNode => n.kind === 'merge');
  if (merges.length === 0) return { problems, warnings };
  const inlets = chip.nodes.filter((n) => n.kind === 'inlet');
  const missing = (['A', 'B'] as const).filter((phase) => !inlets.some((n) => n.phase === phase));
  for (const phase of missing) fail('chip', `no inlet of phase ${phase}: every contactor needs an inlet of each phase`);
  if (missing.length > 0) return { problems, warnings };

  // Streams spread through junctions only; a merge, split, inlet or outlet ends them.
  const carried = new Map<string, Carried>();
  const carriedBy = (s: ChipSegment): Carried => carried.get(s.id) ?? new Map();
  const spread = (starts: Stream[]) => {
    const stack = [...starts];
    while (stack.length) {
      const { segment, phase, source } = stack.pop()!;
      const here: Carried = carried.get(segment.id) ?? new Map();
      if (here.has(phase)) continue;
      here.set(phase, source);
      carried.set(segment.id, here);
      if (nodeById.get(segment.to)?.kind === 'junction') {
        for (const next of leaving.get(segment.to) ?? []) stack.push({ segment: next, phase, source });
      }
    }
  };
  const streamsFrom = (node: ChipNode, phaseOf: (s: ChipSegment) => PhaseName): Stream[] =>
    (leaving.get(node.id) ?? []).map((segment) => ({ segment, phase: phaseOf(segment), source: { kind: node.kind === 'inlet' ? 'inlet' : 'split', id: node.id } }));
  spread(inlets.flatMap((n) => (n.kind === 'inlet' ? streamsFrom(n, () => n.phase) : [])));

  // A split's streams start once its merge's near lane is known; a split may feed a later merge.
  const nearLane = new Map<string, PhaseName>();
  const splitAfter = new Map<string, SplitNode>();
  for (const m of merges) {
    const split = nodeById.get((leaving.get(m.id) ?? [])[0]?.to ?? '');
    if (split?.kind === 'split') splitAfter.set(m.id, split);
  }
  const laneOf = (m: MergeNode): PhaseName | undefined => {
    const [near, far] = m.inlets.map((id) => carriedBy(segmentById.get(id)!));
    if (near!.size !== 1 || far!.size !== 1) return undefined;
    const phase = [...near!.keys()][0]!;
    return far!.has(phase) ? undefined : phase;
  };
  for (let settled = false; !settled; ) {
    settled = true;
    for (const m of merges) {
      const lane = laneOf(m);
      if (lane === undefined || nearLane.has(m.id)) continue;
      nearLane.set(m.id, lane);
      settled = false;
      const split = splitAfter.get(m.id);
      if (split) spread(streamsFrom(split, (s) => (s.id === split.outlets[0] ? lane : other(lane))));
    }
  }

  for (const n of chip.nodes) {
    if (n.kind !== 'junction') continue;
    const into = (arriving.get(n.id) ?? []).map(carriedBy);
    const meet = into.some((c) => c.has('A')) && into.some((c) => c.has('B')) && !into.some((c) => c.size === 2);
    if (!meet) continue;
    const from = (phase: PhaseName) => into.find((c) => c.has(phase))!.get(phase)!;
    const fromSplits = from('A').kind === 'split' || from('B').kind === 'split';
    const text = `phase A (from ${named(from('A'))}) and phase B (from ${named(from('B'))}) meet at this junction`;
    if (fromSplits) warnings.push(`junction ${n.id}: ${text} and leave mixed`);
    else fail(`node ${n.id}`, `${text}, before any merge; each feed manifold must carry one phase`);
  }

  for (const m of merges) {
    const sides = m.inlets.map((id) => ({ id, carried: carriedBy(segmentById.get(id)!) }));
    const unreached = sides.filter((side) => side.carried.size === 0);
    if (unreached.length > 0) {
      const names = unreached.map((side) => side.id).join(' and ');
      warnings.push(`merge ${m.id}: no inlet reaches ${names} along the direction the segments are written (from → to); the phases of its contactor are not checked`);
      continue;
    }
    if (sides.some((side) => side.carried.size === 2)) continue; // reported at the junction where they meet
    const [near, far] = sides.map((side) => ({ ...side, phase: [...side.carried.keys()][0]!, source: named([...side.carried.values()][0]!) }));
    if (near!.phase === far!.phase) {
      fail(`node ${m.id}`, `both inlets carry phase ${near!.phase} (${near!.id} from ${near!.source}, ${far!.id} from ${far!.source}); a merge needs one inlet of each phase`, 'inlets');
    }
  }

  warnings.push(...orientationWarnings(merges, nearLane));
  checkSplits(chip, { nodeById, segmentById, arriving, nearLane, splitAfter }, fail, warnings);
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

interface Graph {
  nodeById: Map<string, ChipNode>;
  segmentById: Map<string, ChipSegment>;
  arriving: Map<string, ChipSegment[]>;
  nearLane: Map<string, PhaseName>;
  splitAfter: Map<string, SplitNode>;
}

/** Each split's outlet arms lead to outlets of the phase of their lane. */
function checkSplits(chip: Chip, g: Graph, fail: (element: string, message: string, field?: string) => void, warnings: string[]): void {
  // Which outlets each segment leads to, and whether it leads to a merge: found backwards from
  // every outlet (there are few) and from all merges at once, so a long manifold is walked once each.
  const backwards = (targets: ChipNode[], mark: (s: ChipSegment) => void) => {
    const seen = new Set<string>();
    const stack = targets.flatMap((t) => g.arriving.get(t.id) ?? []);
    while (stack.length) {
      const s = stack.pop()!;
      if (seen.has(s.id)) continue;
      seen.add(s.id);
      mark(s);
      if (g.nodeById.get(s.from)!.kind === 'junction') stack.push(...(g.arriving.get(s.from) ?? []));
    }
  };
  const outletsOf = new Map<string, OutletNode[]>();
  for (const o of chip.nodes) {
    if (o.kind === 'outlet') backwards([o], (s) => add(outletsOf, s.id, o));
  }
  const toMerge = new Set<string>();
  backwards(chip.nodes.filter((n) => n.kind === 'merge'), (s) => toMerge.add(s.id));
  const reach = (start: ChipSegment) => ({ outlets: outletsOf.get(start.id) ?? [], toMerge: toMerge.has(start.id) });
  const arms: { split: SplitNode; merge: string; lane: PhaseName; near: ReturnType<typeof reach>; far: ReturnType<typeof reach> }[] = [];
  for (const [mergeId, split] of g.splitAfter) {
    const lane = g.nearLane.get(mergeId);
    if (lane === undefined) continue;
    const [near, far] = split.outlets.map((id) => reach(g.segmentById.get(id)!));
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

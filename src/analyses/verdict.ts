/**
 * Whether a solved chip works at its settings — the one verdict that tune, window and solve
 * share. A point works when the solve converged, every split is pinned, no contactor is starved
 * of a phase, nothing flows against the design direction (into an inlet, the other phase back up
 * a feed line, a contactor from its split to its merge), every split outlet is pure and no
 * pressure is above the chip's rating. `operatingVerdict` lists every reason a point does not
 * work, each naming its element; an empty list is success.
 * Exports `operatingVerdict`, `starvedPhase`, `describeProblems` and the types. No I/O; numbers
 * stay SI (renderers format them).
 */
import type { SolvedChip, ContactorResult } from './chip.js';
import { PURE } from './chipRows.js';
import { RELATIVE_FLOW_RESOLUTION } from './resolution.js';
import type { Network } from '../network/assemble.js';
import type { PhaseName } from '../network/model.js';

export const PROBLEM_KINDS = ['unconverged', 'over-rating', 'starved', 'backflow', 'leaking', 'impure'] as const;
export type ProblemKind = (typeof PROBLEM_KINDS)[number];

export interface OperatingProblem {
  kind: ProblemKind;
  /** The element as a reader names it: `contactor k1`, `split s3`, `segment fB1`, `inlet inB`, `node m2`. */
  element: string;
  /** Its id in the layout. */
  id: string;
  /** What is wrong there, in words (no numbers). */
  reason: string;
}

/** A line carries the other phase when its composition differs from its nominal one by more than this. */
const FOREIGN_PHASE = 1e-6;

const other = (phase: PhaseName): PhaseName => (phase === 'A' ? 'B' : 'A');

/**
 * The phase a contactor is starved of, or null: the one that does not enter it while the other
 * flows (the solve reports a starved layer's trace flow as exactly none).
 */
export function starvedPhase(row: Pick<ContactorResult, 'flowA' | 'flowB'>): PhaseName | null {
  if (row.flowB === 0 && row.flowA !== 0) return 'B';
  if (row.flowA === 0 && row.flowB !== 0) return 'A';
  return null;
}

/** The plain elements between the inlets and the merges (in their design direction). */
function feedLines(network: Network): number[] {
  const leaving = new Map<number, number[]>();
  network.plains.forEach((el, e) => leaving.set(el.from, [...(leaving.get(el.from) ?? []), e]));
  const lines: number[] = [];
  const seen = new Set<number>();
  const stack = network.ports.flatMap((p, i) => (p.node.kind === 'inlet' ? [i] : []));
  while (stack.length > 0) {
    const port = stack.pop()!;
    if (seen.has(port) || network.ports[port]!.node.kind === 'merge') continue;
    seen.add(port);
    for (const e of leaving.get(port) ?? []) {
      lines.push(e);
      stack.push(network.plains[e]!.to);
    }
  }
  return lines;
}

/** Every reason the solved chip does not work at its settings; empty when it works. */
export function operatingVerdict(solved: SolvedChip): OperatingProblem[] {
  const { result, network, raw, chip } = solved;
  if (!result.converged) return [{ kind: 'unconverged', element: 'chip', id: chip.name, reason: `the solve did not converge${result.message ? `: ${result.message}` : ''}` }];
  const problems: OperatingProblem[] = [];
  const add = (kind: ProblemKind, element: string, id: string, reason: string) => problems.push({ kind, element: `${element} ${id}`, id, reason });

  const rating = chip.maxPressure;
  if (rating !== undefined && result.summary.maxPressure > rating) {
    for (const node of result.nodes) {
      if (Math.max(node.pressure, node.pressureA ?? -Infinity, node.pressureB ?? -Infinity) > rating) add('over-rating', 'node', node.id, "pressure above the chip's rating");
    }
  }
  for (const row of result.contactors) {
    const starved = starvedPhase(row);
    if (starved) add('starved', 'contactor', row.id, `no phase ${starved} enters; ${other(starved)} fills the channel and pushes back into the ${starved} feed`);
  }
  const throughput = result.summary.throughputA + result.summary.throughputB;
  for (const inlet of result.summary.inlets) {
    // A negative inlet flow within the flow resolution of the solution is rounding, not backflow.
    if (inlet.flow < -RELATIVE_FLOW_RESOLUTION * throughput) add('backflow', 'inlet', inlet.id, 'liquid flows back into the inlet');
  }
  for (const e of feedLines(network)) {
    const el = network.plains[e]!;
    const nominal = network.ports[el.from]!.nominal;
    if (raw.plainFlow[e]! < 0 && Math.abs(raw.plainComposition[e]! - nominal) > FOREIGN_PHASE) {
      const line: PhaseName = nominal >= 0.5 ? 'A' : 'B';
      add('backflow', 'segment', el.segment.id, `phase ${other(line)} flows back up the feed line of phase ${line}`);
    }
  }
  for (const seg of result.segments) {
    if (seg.kind === 'contactor' && seg.reversed) add('backflow', 'contactor', seg.id, 'flow runs backwards, from the split to the merge');
  }
  for (const split of result.splits) {
    if (split.state !== 'pinned') add('leaking', 'split', split.id, split.state === 'leaking-A-to-B' ? 'phase A breaks through into the B outlet' : 'phase B breaks through into the A outlet');
    const far = other(split.nearPhase);
    // An outlet is pure when less than PURE (./chipRows.ts) of what it carries is the other phase, as a stream counts single-phase.
    const impure = ([[split.nearPhase, split.purityNear], [far, split.purityFar]] as const).filter(([, purity]) => !(purity >= 1 - PURE));
    for (const [phase] of impure) add('impure', 'split', split.id, `the ${phase} outlet carries phase ${other(phase)}`);
  }
  return problems;
}

/** The problems as one sentence for a message: the first `most`, then how many more. */
export function describeProblems(problems: readonly OperatingProblem[], most = 4): string {
  const shown = problems.slice(0, most).map((p) => `${p.element}: ${p.reason}`);
  const rest = problems.length - shown.length;
  return shown.join('; ') + (rest > 0 ? `; and ${rest} more` : '');
}

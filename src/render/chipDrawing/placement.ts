/**
 * Where the chip goes on the page: node positions in px, to scale from the layout's coordinates
 * (enlarged where contactors crowd, widths exaggerated to a round factor where they would be too
 * thin), or as a schematic where coordinates are missing (contactors side by side in the order of
 * the layout; dagre's layered drawing for a chip without contactors). Exports `placeToScale`,
 * `placeAutomatically`, `planWidth`, `closestPair`, `niceFloor` and the `Placement` type.
 */
import dagre from '@dagrejs/dagre';
import { extent, max as maxOf, min as minOf } from 'd3-array';
import type { SolvedChip } from '../../analyses/chip.js';
import type { ChipSegment } from '../../network/model.js';
import { DISPLAY, fmt, show } from '../../units/format.js';
import type { Point } from './common.js';

/** Fit of the chip at its natural scale before dense chips are enlarged, px. */
const FIT = { width: 1100, height: 1000 };
/** Contactors closer than this (px) at the fitting scale enlarge the drawing … */
const MIN_PITCH_PX = 14;
/** … up to this longest side of the chip, px. */
const MAX_SIDE_PX = 16000;
const MIN_CONTACTOR_PX = 8;
/** Widest share of the contactor pitch a contactor may take when widths are exaggerated automatically. */
const MAX_PITCH_SHARE = 0.6;
/** Automatic placement: narrowest contactor and widest channel, px. */
const AUTO_WIDTH = { contactor: 10, widest: 50 };

/** The smallest of 1, 2, 5 × 10^k not below v (v > 0). */
function niceCeil(v: number): number {
  const decade = 10 ** Math.floor(Math.log10(v));
  return [1, 2, 5, 10].map((m) => m * decade).find((n) => n >= v * (1 - 1e-12))!;
}

/** The largest of 1, 2, 5 × 10^k not above v (v > 0). */
export function niceFloor(v: number): number {
  const decade = 10 ** Math.floor(Math.log10(v));
  return [5, 2, 1].map((m) => m * decade).find((n) => n <= v * (1 + 1e-12))!;
}

/** Plan-view width of a channel (the top width of an etched or trapezoidal one), m. */
export function planWidth(segment: ChipSegment): number {
  const s = segment.section;
  switch (s.shape) {
    case 'rect':
      return s.width;
    case 'tube':
      return s.diameter;
    case 'etched':
      return s.maskWidth + 2 * s.depth;
    case 'trapezoid':
      return s.bottomWidth + (s.wallAngle >= Math.PI / 2 ? 0 : (2 * s.depth) / Math.tan(s.wallAngle));
  }
}

export interface Placement {
  /** Node positions in px, relative to the chip's top left. */
  at: Map<string, Point>;
  width: number;
  height: number;
  /** px per m of length, or null when the placement is automatic (not to scale). */
  pxPerMetre: number | null;
  /** px per m of channel width. */
  widthPx: number;
  /** Sentence on scale and widths for the caption. */
  note: string;
}

/** Smallest distance between any two of the points (Infinity for fewer than two). */
export function closestPair(points: Point[]): number {
  const sorted = [...points].sort((a, b) => a.x - b.x || a.y - b.y);
  let best = Infinity;
  for (let i = 0; i < sorted.length; i++) {
    for (let j = i + 1; j < sorted.length && sorted[j]!.x - sorted[i]!.x < best; j++) {
      const d = Math.hypot(sorted[j]!.x - sorted[i]!.x, sorted[j]!.y - sorted[i]!.y);
      if (d > 0) best = Math.min(best, d);
    }
  }
  return best;
}

export function placeToScale(solved: SolvedChip, contactors: ChipSegment[], widthScale: number | undefined): Placement {
  const { chip } = solved;
  const xs = chip.nodes.map((n) => n.x!);
  const ys = chip.nodes.map((n) => n.y!);
  const [x0, x1] = extent(xs) as [number, number];
  const [y0, y1] = extent(ys) as [number, number];
  const dx = x1 - x0;
  const dy = y1 - y0;
  const fits = [dx > 0 ? FIT.width / dx : Infinity, dy > 0 ? FIT.height / dy : Infinity];
  let s = minOf(fits) ?? Infinity;
  if (!Number.isFinite(s)) s = 1e5;
  const byId = new Map(chip.nodes.map((n) => [n.id, n]));
  const middles = contactors.map((c) => {
    const a = byId.get(c.from)!;
    const b = byId.get(c.to)!;
    return { x: (a.x! + b.x!) / 2, y: (a.y! + b.y!) / 2 };
  });
  const pitch = closestPair(middles);
  if (Number.isFinite(pitch)) s = Math.max(s, MIN_PITCH_PX / pitch);
  const longest = Math.max(dx, dy);
  if (longest > 0) s = Math.min(s, Math.max(MAX_SIDE_PX / longest, minOf(fits) ?? Infinity));

  let factor = widthScale;
  if (factor === undefined) {
    const widths = (contactors.length > 0 ? contactors : chip.segments).map(planWidth);
    const need = MIN_CONTACTOR_PX / ((minOf(widths) ?? Infinity) * s);
    const cap = Number.isFinite(pitch) ? (MAX_PITCH_SHARE * pitch) / (maxOf(widths) ?? -Infinity) : Infinity;
    factor = need <= 1 ? 1 : niceCeil(need) <= cap ? niceCeil(need) : cap > 1 ? niceFloor(cap) : 1;
  }
  const at = new Map(chip.nodes.map((n) => [n.id, { x: (n.x! - x0) * s, y: (y1 - n.y!) * s }]));
  const note = `Plan view to scale${factor !== 1 ? `; channel widths drawn ×${fmt(factor)}` : ''}.`;
  return { at, width: dx * s, height: dy * s, pxPerMetre: s, widthPx: s * factor, note };
}

/** Automatic placement: the gap between rows of nodes, px (wide channels get more), and the contactors' length in rows. */
const AUTO_ROW = { gap: 40, contactorRows: 5 };

/**
 * The schematic of a chip without coordinates. With contactors: the contactors stand side by
 * side in the order of the layout, merges above and splits below; every other node sits over
 * the middle of the contactors it is fewest channels away from (so the junctions of a manifold
 * follow the contactors they feed, in order), in a row by that number of channels, phase A's
 * row nearer the contactors than phase B's. A chip without contactors is laid out by dagre
 * (a layered drawing).
 */
export function placeAutomatically(solved: SolvedChip, contactors: ChipSegment[], widthScale: number | undefined): Placement {
  const { chip } = solved;
  const widths = chip.segments.map(planWidth);
  const narrow = minOf((contactors.length > 0 ? contactors : chip.segments).map(planWidth)) ?? Infinity;
  let k = niceCeil(AUTO_WIDTH.contactor / narrow);
  const widestPlan = maxOf(widths) ?? -Infinity;
  if (widestPlan * k > AUTO_WIDTH.widest) k = niceFloor(AUTO_WIDTH.widest / widestPlan);
  k *= widthScale ?? 1;
  const widest = widestPlan * k;
  const widestContactor = (maxOf(contactors.map(planWidth)) ?? 0) * k;
  const raw = contactors.length > 0 ? besideContactors(solved, contactors, widest, widestContactor) : layered(solved, widest);
  const points = [...raw.values()];
  const minX = minOf(points.map((p) => p.x)) ?? 0;
  const minY = minOf(points.map((p) => p.y)) ?? 0;
  const at = new Map(chip.nodes.map((n) => [n.id, { x: raw.get(n.id)!.x - minX, y: raw.get(n.id)!.y - minY }]));
  const width = (maxOf(points.map((p) => p.x)) ?? 0) - minX;
  const height = (maxOf(points.map((p) => p.y)) ?? 0) - minY;
  const missing = chip.nodes.filter((n) => n.x === undefined || n.y === undefined).length;
  const how = contactors.length > 0 ? 'the contactors side by side in the order of the layout, every other node beside the contactors it serves' : 'by the dagre graph-layout library';
  const per = 1 / k; // m per px
  const note =
    `Positions laid out automatically (${missing} of ${chip.nodes.length} nodes have no coordinates), ${how}: ` +
    `a schematic, lengths not to scale; channel widths drawn at 1 px per ${show(per, DISPLAY.length, 3)}.`;
  return { at, width, height, pxPerMetre: null, widthPx: k, note };
}

/**
 * Node positions of the schematic with contactors (see placeAutomatically). Two breadth-first
 * searches over the channels outside contactors, one from the merges and one from the splits
 * (neither passes through a merge or split), give each node its number of channels to the
 * nearest contactors and the range of their indices; a node takes the side it is nearer to.
 */
function besideContactors(solved: SolvedChip, contactors: ChipSegment[], widest: number, widestContactor: number): Map<string, Point> {
  const { chip, network } = solved;
  const pitch = Math.max(36, widestContactor * 2.5, widest * 0.8);
  const row = AUTO_ROW.gap + widest;
  const length = AUTO_ROW.contactorRows * row;
  const kind = new Map(chip.nodes.map((n) => [n.id, n.kind]));
  const contactorIds = new Set(contactors.map((c) => c.id));
  const neighbours = new Map<string, string[]>();
  for (const s of chip.segments) {
    if (contactorIds.has(s.id)) continue;
    neighbours.set(s.from, [...(neighbours.get(s.from) ?? []), s.to]);
    neighbours.set(s.to, [...(neighbours.get(s.to) ?? []), s.from]);
  }
  const search = (ends: Map<string, number>) => {
    const found = new Map<string, { hops: number; lo: number; hi: number }>();
    let frontier = [...ends.keys()];
    for (const [id, c] of ends) found.set(id, { hops: 0, lo: c, hi: c });
    for (let hops = 1; frontier.length > 0; hops++) {
      const next: string[] = [];
      for (const id of frontier) {
        const here = found.get(id)!;
        for (const other of neighbours.get(id) ?? []) {
          if (kind.get(other) === 'merge' || kind.get(other) === 'split') continue;
          const seen = found.get(other);
          if (!seen) {
            found.set(other, { hops, lo: here.lo, hi: here.hi });
            next.push(other);
          } else if (seen.hops === hops) {
            seen.lo = Math.min(seen.lo, here.lo);
            seen.hi = Math.max(seen.hi, here.hi);
          }
        }
      }
      frontier = next;
    }
    return found;
  };
  const merges = new Map<string, number>();
  const splits = new Map<string, number>();
  contactors.forEach((c, i) => {
    if (!merges.has(c.from)) merges.set(c.from, i);
    if (!splits.has(c.to)) splits.set(c.to, i);
  });
  const fromMerges = search(merges);
  const fromSplits = search(splits);
  const phaseRank = (id: string) => (network.ports[network.portsOf.get(id)![0]!]!.nominal >= 0.5 ? 0 : 1);
  const at = new Map<string, Point>();
  const unplaced: string[] = [];
  for (const n of chip.nodes) {
    const up = fromMerges.get(n.id);
    const down = fromSplits.get(n.id);
    const x = (r: { lo: number; hi: number }) => ((r.lo + r.hi) / 2) * pitch;
    if (up && up.hops === 0) at.set(n.id, { x: x(up), y: 0 });
    else if (down && down.hops === 0) at.set(n.id, { x: x(down), y: length });
    // Phase B's nodes stand a third of a pitch toward the contactors' far side (their left, facing
    // up the page), so that its channels do not run through phase A's nodes.
    else if (up && (!down || up.hops <= down.hops)) at.set(n.id, { x: x(up) - (phaseRank(n.id) * pitch) / 3, y: -(2 * (up.hops - 1) + phaseRank(n.id) + 1) * row });
    else if (down) at.set(n.id, { x: x(down) - (phaseRank(n.id) * pitch) / 3, y: length + (2 * (down.hops - 1) + phaseRank(n.id) + 1) * row });
    else unplaced.push(n.id);
  }
  // Nodes that reach no contactor (not in a working chip, but drawn all the same) go in a row of their own.
  const bottom = (maxOf([...at.values()].map((p) => p.y)) ?? 0) + row;
  unplaced.forEach((id, i) => at.set(id, { x: i * pitch, y: bottom }));
  // Nodes that would fall on one point are spread along their row.
  const byPoint = new Map<string, string[]>();
  for (const n of chip.nodes) {
    const p = at.get(n.id)!;
    const key = `${Math.round(p.x)},${Math.round(p.y)}`;
    byPoint.set(key, [...(byPoint.get(key) ?? []), n.id]);
  }
  for (const ids of byPoint.values()) {
    ids.forEach((id, i) => {
      const p = at.get(id)!;
      at.set(id, { x: p.x + (i - (ids.length - 1) / 2) * (pitch / Math.max(2, ids.length)), y: p.y });
    });
  }
  return at;
}

/** dagre's layered drawing of a chip without contactors. */
function layered(solved: SolvedChip, widest: number): Map<string, Point> {
  const { chip } = solved;
  const g = new dagre.graphlib.Graph({ multigraph: true });
  g.setGraph({ rankdir: 'TB', nodesep: widest + 28, ranksep: 70 + widest, edgesep: widest + 12, marginx: 0, marginy: 0 });
  g.setDefaultEdgeLabel(() => ({}));
  // dagre keeps its graph in plain objects keyed by name: it is given index names, so that any id
  // of the layout (`__proto__`, `hasOwnProperty`) stays data.
  const name = new Map(chip.nodes.map((n, i) => [n.id, `n${i}`]));
  for (const n of chip.nodes) g.setNode(name.get(n.id)!, { width: 12, height: 12 });
  chip.segments.forEach((s, e) => g.setEdge(name.get(s.from)!, name.get(s.to)!, {}, `e${e}`));
  dagre.layout(g);
  return new Map(chip.nodes.map((n) => {
    const p = g.node(name.get(n.id)!) as { x: number; y: number };
    return [n.id, { x: p.x, y: p.y }];
  }));
}

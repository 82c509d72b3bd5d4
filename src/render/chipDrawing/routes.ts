/**
 * Where each channel of the chip drawing runs and how wide it is drawn, so that channels of
 * different phases neither overlap nor hide each other: `clearWidths` narrows exaggerated widths
 * where two channels that do not meet would touch, and `sideBySide` shifts channels that leave a
 * node in the same direction (the two feeders of a merge, the two drains of a split) so that they
 * run side by side instead of on top of each other. Exports both, `channelGap` and `segmentDistance`.
 * Geometry of the drawing only: positions and widths in px in, positions and widths out.
 */
import type { Chip, ChipSegment } from '../../network/model.js';
import type { Point } from './common.js';

/** Air between channels that must not touch, px: two hairlines of the wall outline and a pixel between. */
export const channelGap = 2;

/**
 * Distance from p to the segment a–b. Math.sqrt of the sum of squares, not Math.hypot: drawing
 * coordinates are far from overflow, and hypot was a third of a 16 384-contactor drawing's geometry.
 */
function pointSegment(p: Point, a: Point, b: Point): number {
  const dx = b.x - a.x;
  const dy = b.y - a.y;
  const l2 = dx * dx + dy * dy;
  const t = l2 > 0 ? Math.max(0, Math.min(1, ((p.x - a.x) * dx + (p.y - a.y) * dy) / l2)) : 0;
  const ex = p.x - a.x - t * dx;
  const ey = p.y - a.y - t * dy;
  return Math.sqrt(ex * ex + ey * ey);
}

const cross = (o: Point, a: Point, b: Point) => (a.x - o.x) * (b.y - o.y) - (a.y - o.y) * (b.x - o.x);

/** Distance between the segments p1–p2 and q1–q2: 0 where they cross or overlap. */
export function segmentDistance(p1: Point, p2: Point, q1: Point, q2: Point): number {
  const d1 = cross(q1, q2, p1);
  const d2 = cross(q1, q2, p2);
  const d3 = cross(p1, p2, q1);
  const d4 = cross(p1, p2, q2);
  if (((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0))) return 0;
  return Math.min(pointSegment(p1, q1, q2), pointSegment(p2, q1, q2), pointSegment(q1, p1, p2), pointSegment(q2, p1, p2));
}

/**
 * Drawn widths, px: each segment at `wanted` (its exaggerated width), narrowed where a segment of
 * another look (`look`: its phase, or two-phase) that it does not meet would come closer than
 * channelGap, but never below `floor` (its width at the length scale, so a drawing to scale never
 * shows a channel narrower than it is). Two channels that would touch share the room between
 * their centre lines in proportion to their widths: w_a/2 + w_b/2 ≤ d − channelGap. Channels of
 * one phase may run together (they hold the same fluid). A crossing keeps its widths: where the
 * centre line of one passes through the body the other has at its floor width
 * (d < max(floor_a, floor_b)/2: they cross on the chip itself) one channel is drawn over the
 * other. Narrowing one pair can leave another still touching, so the pairs are looked at again
 * until nothing changes. Candidate pairs come from a grid
 * of cells, so large chips do not compare every pair.
 */
export function clearWidths(
  segments: readonly ChipSegment[], ends: (s: ChipSegment) => [Point, Point], wanted: (s: ChipSegment) => number, floor: (s: ChipSegment) => number,
  look: (s: ChipSegment) => string,
): { width: Map<string, number>; narrowed: number } {
  const want = segments.map(wanted);
  const looks = segments.map(look);
  const endPoints = segments.map(ends);
  // Each segment's reach: its ends, widened by half its width and the gap. Two segments can touch
  // only where their reaches overlap; the grid holds each segment in the cells its reach covers,
  // and each pair is looked at only in the first cell both reaches cover.
  const extent = endPoints.map(([a, b], i) => {
    const r = want[i]! / 2 + channelGap;
    return { x0: Math.min(a.x, b.x) - r, x1: Math.max(a.x, b.x) + r, y0: Math.min(a.y, b.y) - r, y1: Math.max(a.y, b.y) + r };
  });
  const size = 32;
  const boxes = extent.map((e) => ({ x0: Math.floor(e.x0 / size), x1: Math.floor(e.x1 / size), y0: Math.floor(e.y0 / size), y1: Math.floor(e.y1 / size) }));
  // Per cell, the segments of each look: channels of one phase are never paired, so only pairs
  // across looks (and between two-phase channels) are looked at.
  const cells = new Map<number, Map<string, number[]>>();
  // Cell keys as numbers: x and y below 2^20 cells of the drawing either way.
  const cellKey = (x: number, y: number) => (x + 2 ** 20) * 2 ** 21 + (y + 2 ** 20);
  boxes.forEach((box, i) => {
    for (let x = box.x0; x <= box.x1; x++) {
      for (let y = box.y0; y <= box.y1; y++) {
        const key = cellKey(x, y);
        let byLook = cells.get(key);
        if (!byLook) cells.set(key, (byLook = new Map()));
        const list = byLook.get(looks[i]!);
        if (list) list.push(i);
        else byLook.set(looks[i]!, [i]);
      }
    }
  });
  const meet = (s: ChipSegment, t: ChipSegment) => s.from === t.from || s.from === t.to || s.to === t.from || s.to === t.to;
  /** Pairs that would touch: index, index, distance of centre lines, flat. */
  const close: number[] = [];
  const consider = (i: number, j: number, cx: number, cy: number) => {
    const bi = boxes[i]!;
    const bj = boxes[j]!;
    if (cx !== Math.max(bi.x0, bj.x0) || cy !== Math.max(bi.y0, bj.y0)) return;
    const ei = extent[i]!;
    const ej = extent[j]!;
    if (ei.x1 < ej.x0 || ej.x1 < ei.x0 || ei.y1 < ej.y0 || ej.y1 < ei.y0) return;
    const s = segments[i]!;
    const t = segments[j]!;
    if (meet(s, t)) return;
    const [a, b] = endPoints[i]!;
    const [c, d] = endPoints[j]!;
    const distance = segmentDistance(a, b, c, d);
    if (distance > 0 && (want[i]! + want[j]!) / 2 + channelGap > distance) close.push(i, j, distance);
  };
  for (const [key, byLook] of cells) {
    const cx = Math.floor(key / 2 ** 21) - 2 ** 20;
    const cy = (key % 2 ** 21) - 2 ** 20;
    const groups = [...byLook.entries()];
    for (let g = 0; g < groups.length; g++) {
      const [name, list] = groups[g]!;
      if (name === 'two-phase') for (let p = 0; p < list.length; p++) for (let q = p + 1; q < list.length; q++) consider(list[p]!, list[q]!, cx, cy);
      for (let h = g + 1; h < groups.length; h++) for (const i of list) for (const j of groups[h]![1]) consider(i, j, cx, cy);
    }
  }
  const drawn = Float64Array.from(want);
  const floors = segments.map(floor);
  // A crossing by the true widths: the centre line of one runs through the body the other has on
  // the chip. By the drawn widths instead, a channel drawn many times wider than it is would
  // "cross" every neighbour its exaggeration reaches, and cover it.
  const crossing = (k: number) => close[k + 2]! < Math.max(floors[close[k]!]!, floors[close[k + 1]!]!) / 2;
  for (let changed = true, round = 0; changed && round < 8; round++) {
    changed = false;
    for (let k = 0; k < close.length; k += 3) {
      const i = close[k]!;
      const j = close[k + 1]!;
      const distance = close[k + 2]!;
      const ws = drawn[i]!;
      const wt = drawn[j]!;
      if (crossing(k) || (ws + wt) / 2 + channelGap <= distance) continue;
      const room = 2 * Math.max(0, distance - channelGap);
      const narrowS = Math.max(floors[i]!, (room * ws) / (ws + wt));
      const narrowT = Math.max(floors[j]!, (room * wt) / (ws + wt));
      if (narrowS < ws - 1e-9 || narrowT < wt - 1e-9) changed = true;
      drawn[i] = Math.min(ws, narrowS);
      drawn[j] = Math.min(wt, narrowT);
    }
  }
  const width = new Map(segments.map((s, i) => [s.id, drawn[i]!]));
  const narrowed = segments.filter((_, i) => drawn[i]! < want[i]! - 1e-9).length;
  return { width, narrowed };
}

/**
 * Both ends of every segment, shifted so that channels that meet at a merge or split, or leave a
 * node in the same direction, run side by side. At a merge (split) the first inlet (outlet) ends
 * on the contactor's near side, on the left looking downstream, the second on the far side, each
 * half its width and half channelGap off the centre line. Elsewhere a bundle of segments that
 * leave a node in the same direction is laid side by side across it, channelGap apart, centred
 * on the node, in the order of the layout. A bundled segment is shifted parallel to itself (so
 * that the bundle stays apart along its length); a lone segment into a merge or split only at
 * that end. `along` gives each contactor's merge and split positions, by merge and split id.
 */
export function sideBySide(
  chip: Chip, segments: readonly ChipSegment[], at: Map<string, Point>, width: (s: ChipSegment) => number, along: Map<string, [Point, Point]>,
): Map<string, [Point, Point]> {
  const order = new Map(chip.segments.map((s, i) => [s.id, i]));
  const byNode = new Map<string, ChipSegment[]>();
  for (const s of segments) {
    for (const id of [s.from, s.to]) {
      const list = byNode.get(id);
      if (list) list.push(s);
      else byNode.set(id, [s]);
    }
  }
  const shift = new Map<string, { from?: Point; to?: Point; parallel: boolean }>();
  const put = (s: ChipSegment, node: string, d: Point, parallel: boolean) => {
    const entry = shift.get(s.id) ?? { parallel: false };
    if (s.from === node) entry.from = d;
    else entry.to = d;
    entry.parallel ||= parallel;
    shift.set(s.id, entry);
  };
  const directionKey = (p: Point, s: ChipSegment, node: string) => {
    const q = at.get(s.from === node ? s.to : s.from)!;
    // Directions agree to 1e-6 rad: coordinates of a layout are exact to far better than that.
    return String(Math.round(Math.atan2(q.y - p.y, q.x - p.x) * 1e6));
  };
  for (const node of chip.nodes) {
    const list = byNode.get(node.id);
    if (!list) continue;
    const p = at.get(node.id)!;
    const contactor = along.get(node.id);
    if ((node.kind === 'merge' || node.kind === 'split') && contactor) {
      const [near, far] = node.kind === 'merge' ? node.inlets : node.outlets;
      const [m, s] = contactor;
      const length = Math.hypot(s.x - m.x, s.y - m.y);
      // On screen (y down) the left of a traveller heading (cx, cy) lies at (cy, −cx).
      const left = { x: (s.y - m.y) / length, y: -(s.x - m.x) / length };
      const nearSeg = list.find((x) => x.id === near);
      const farSeg = list.find((x) => x.id === far);
      const bundled = nearSeg && farSeg && directionKey(p, nearSeg, node.id) === directionKey(p, farSeg, node.id);
      for (const [seg, side] of [[nearSeg, 1], [farSeg, -1]] as const) {
        if (!seg) continue;
        const o = side * (width(seg) / 2 + channelGap / 2);
        put(seg, node.id, { x: left.x * o, y: left.y * o }, Boolean(bundled));
      }
      continue;
    }
    if (list.length < 2) continue;
    const bundles = new Map<string, ChipSegment[]>();
    for (const s of list) {
      const key = directionKey(p, s, node.id);
      const bundle = bundles.get(key);
      if (bundle) bundle.push(s);
      else bundles.set(key, [s]);
    }
    for (const bundle of bundles.values()) {
      if (bundle.length < 2) continue;
      const first = bundle[0]!;
      const q = at.get(first.from === node.id ? first.to : first.from)!;
      const length = Math.hypot(q.x - p.x, q.y - p.y);
      const across = { x: -(q.y - p.y) / length, y: (q.x - p.x) / length };
      bundle.sort((s, t) => order.get(s.id)! - order.get(t.id)!);
      const total = bundle.reduce((sum, s) => sum + width(s), 0) + channelGap * (bundle.length - 1);
      let offset = -total / 2;
      for (const s of bundle) {
        const o = offset + width(s) / 2;
        offset += width(s) + channelGap;
        put(s, node.id, { x: across.x * o, y: across.y * o }, true);
      }
    }
  }
  const zero = { x: 0, y: 0 };
  const routes = new Map<string, [Point, Point]>();
  for (const s of segments) {
    const a = at.get(s.from)!;
    const b = at.get(s.to)!;
    const e = shift.get(s.id);
    const da = e?.from ?? (e?.parallel ? e.to! : zero);
    const db = e?.to ?? (e?.parallel ? e.from! : zero);
    routes.set(s.id, [{ x: a.x + da.x, y: a.y + da.y }, { x: b.x + db.x, y: b.y + db.y }]);
  }
  return routes;
}

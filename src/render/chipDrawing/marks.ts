/**
 * Marks on the chip drawing: inlets and outlets (and node pressures when coloured by pressure),
 * flow-direction and backflow arrows, and the outlet splits (pinned, or leaking with the purity
 * of the invaded outlet). Exports `drawPorts`, `drawArrows` and `drawSplits`.
 */
import { max as maxOf } from 'd3-array';
import type { SolvedChip } from '../../analyses/chip.js';
import { RELATIVE_FLOW_RESOLUTION } from '../../analyses/resolution.js';
import type { ChipSegment, PhaseName } from '../../network/model.js';
import { fmt } from '../../units/format.js';
import { INK } from '../palette.js';
import { FONT_SIZE, TEXT_HALO, el, label, textWidth, type SvgNode } from '../svg.js';
import { percent } from './captions.js';
import { ARROW, BACKFLOW_COLOUR, PHASE_COLOURS, appendTitle, type Point } from './common.js';
import { arrowhead, leakTriangle, pinnedDiamond } from './geometry.js';

export function drawPorts(
  root: SvgNode, solved: SolvedChip, at: Map<string, Point>, drawnWidth: (s: ChipSegment) => number,
  pressureColour: ((p: number) => string) | undefined, nodePressure: (id: string) => number,
): void {
  const { chip, network } = solved;
  const g = el(root, 'g', { class: 'ports' });
  const names = el(root, 'g', { class: 'port-labels', 'font-weight': 'bold' });
  const attached = new Map<string, number>();
  for (const s of chip.segments) for (const id of [s.from, s.to]) attached.set(id, Math.max(attached.get(id) ?? 0, drawnWidth(s)));
  if (pressureColour) {
    const dots = el(root, 'g', { class: 'node-pressures', stroke: INK.text, 'stroke-width': 0.6 });
    for (const n of chip.nodes) {
      if (n.kind === 'inlet' || n.kind === 'outlet') continue;
      const p = at.get(n.id)!;
      el(dots, 'circle', { 'data-node': n.id, cx: p.x, cy: p.y, r: 3, fill: pressureColour(nodePressure(n.id)) });
    }
  }
  for (const n of chip.nodes) {
    if (n.kind !== 'inlet' && n.kind !== 'outlet') continue;
    const p = at.get(n.id)!;
    const r = Math.min(16, Math.max(6, (attached.get(n.id) ?? 0) / 2 + 3));
    const port = network.ports[network.portsOf.get(n.id)![0]!]!;
    const phase: PhaseName = n.kind === 'inlet' ? n.phase : n.phase ?? (port.nominal >= 0.5 ? 'A' : 'B');
    const fill = pressureColour ? pressureColour(nodePressure(n.id)) : PHASE_COLOURS[phase];
    if (n.kind === 'inlet') el(g, 'circle', { class: 'inlet', 'data-node': n.id, cx: p.x, cy: p.y, r, fill, stroke: INK.text, 'stroke-width': 1.6 });
    else el(g, 'rect', { class: 'outlet', 'data-node': n.id, x: p.x - r, y: p.y - r, width: 2 * r, height: 2 * r, fill, stroke: INK.text, 'stroke-width': 1.6 });
    label(names, n.id, { ...TEXT_HALO, x: p.x + r + 3, y: p.y - r - 2 });
  }
}

export function drawArrows(root: SvgNode, solved: SolvedChip, drawable: ChipSegment[], ends: (s: ChipSegment) => [Point, Point], drawnWidth: (s: ChipSegment) => number): void {
  const { result } = solved;
  const byId = new Map(result.segments.map((s) => [s.id, s]));
  const peak = maxOf(result.segments, (s) => Math.abs(s.flowA + s.flowB)) ?? 0;
  const normal: string[] = [];
  const g = el(root, 'g', { class: 'flow-direction' });
  const back = el(root, 'g', { class: 'backflow-arrows', fill: BACKFLOW_COLOUR, stroke: INK.text, 'stroke-width': 1 });
  for (const s of drawable) {
    const r = byId.get(s.id)!;
    const q = r.flowA + r.flowB;
    // Backflow is marked wherever the solution flags it; other arrows only where the flow is above
    // the solution's flow resolution (a share of the largest flow).
    if (!r.reversed && !(Math.abs(q) > RELATIVE_FLOW_RESOLUTION * peak)) continue;
    const [a, b] = ends(s);
    const length = Math.hypot(b.x - a.x, b.y - a.y);
    const size = Math.max(ARROW, Math.min(drawnWidth(s) * 0.35, 7));
    const theta = Math.atan2(b.y - a.y, b.x - a.x) + (q < 0 ? Math.PI : 0);
    const mid = { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2 };
    if (r.reversed) {
      const big = size + 1.5;
      el(back, 'path', { class: 'backflow', 'data-segment': s.id, d: arrowhead(mid, theta, big, -big * 0.9) + arrowhead(mid, theta, big, big * 0.9) });
    } else if (length >= 2.5 * size) {
      normal.push(arrowhead(mid, theta, size));
    }
  }
  if (normal.length > 0) el(g, 'path', { d: normal.join(''), fill: INK.halo, stroke: INK.text, 'stroke-width': 1 });
}

/**
 * The direction of a leak mark, rad on screen: across the channel end, from the side of the
 * invading phase to the other one, for a contactor running at `along` whose near side (the
 * left looking downstream) holds `nearPhase`.
 */
export function leakAngle(along: number, invader: PhaseName, nearPhase: PhaseName): number {
  return along + (invader === nearPhase ? Math.PI / 2 : -Math.PI / 2);
}

/**
 * The direction of phase A's leak mark at the first contactor that ends in a split (0 without
 * one), for the legend: so that its triangles point as the drawing's do, where the contactors
 * run one way (B's points the other way round).
 */
export function legendLeakAngle(solved: SolvedChip, at: Map<string, Point>): number {
  const byId = new Map(solved.result.splits.map((s) => [s.id, s]));
  const c = solved.network.contactors.find((k) => k.split);
  if (!c) return 0;
  const a = at.get(c.segment.from)!;
  const p = at.get(c.segment.to)!;
  return leakAngle(Math.atan2(p.y - a.y, p.x - a.x), 'A', byId.get(c.split!.node.id)!.nearPhase);
}

/** Marks every outlet split; returns how many leak labels found no room. */
export function drawSplits(root: SvgNode, solved: SolvedChip, at: Map<string, Point>, drawnWidth: (s: ChipSegment) => number, canvasWidth: number): number {
  const { network, result } = solved;
  const byId = new Map(result.splits.map((s) => [s.id, s]));
  const g = el(root, 'g', { class: 'splits' });
  const texts: Array<{ p: Point; room: number; text: string }> = [];
  const splitPoints: Point[] = [];
  for (const c of network.contactors) {
    if (!c.split) continue;
    const s = byId.get(c.split.node.id)!;
    const a = at.get(c.segment.from)!;
    const p = at.get(c.segment.to)!;
    splitPoints.push(p);
    const along = Math.atan2(p.y - a.y, p.x - a.x);
    const w = drawnWidth(c.segment);
    const title = `split ${s.id} (${s.contactor}): ${s.state}; p_B − p_A ${fmt(s.pressureDifference)} Pa, window ${fmt(s.window[0])} … ${fmt(s.window[1])} Pa; outlet purities ${percent(s.nearPhase === 'A' ? s.purityNear : s.purityFar)} A, ${percent(s.nearPhase === 'A' ? s.purityFar : s.purityNear)} B`;
    const mark = el(g, 'g', { class: `split ${s.state}`, 'data-split': s.id });
    appendTitle(mark, title);
    if (s.state === 'pinned') {
      el(mark, 'path', { d: pinnedDiamond(p, Math.max(5.5, Math.min(w * 0.5, 9))), fill: INK.text, stroke: INK.halo, 'stroke-width': 1.2 });
      continue;
    }
    const invader: PhaseName = s.state === 'leaking-A-to-B' ? 'A' : 'B';
    const theta = leakAngle(along, invader, s.nearPhase);
    el(mark, 'path', { d: leakTriangle(p, theta, Math.max(7, Math.min(w * 0.8, 14))), fill: PHASE_COLOURS[invader], stroke: INK.text, 'stroke-width': 1.4 });
    const purity = invader === 'A' ? (s.nearPhase === 'B' ? s.purityNear : s.purityFar) : s.nearPhase === 'A' ? s.purityNear : s.purityFar;
    texts.push({ p, room: Math.max(7, Math.min(w * 0.8, 14)) + 3, text: `${invader}→${invader === 'A' ? 'B' : 'A'} ${(100 * purity).toFixed(1)} %` });
  }
  if (texts.length === 0) return 0;
  // Labels stay horizontal beside their split, clear of the other splits' marks and of each other;
  // a label that finds no room is left out (the split table and the tooltip keep its purity).
  const height = FONT_SIZE + 2;
  const boxes: Array<{ x0: number; x1: number; y0: number; y1: number }> = splitPoints.map((q) => ({ x0: q.x - 7, x1: q.x + 7, y0: q.y - 7, y1: q.y + 7 }));
  const overlaps = (b: { x0: number; x1: number; y0: number; y1: number }) => boxes.some((o) => b.x0 < o.x1 && o.x0 < b.x1 && b.y0 < o.y1 && o.y0 < b.y1);
  const labels = el(g, 'g', { class: 'split-labels', 'font-size': FONT_SIZE - 1 });
  let hidden = 0;
  for (const t of texts) {
    const w = textWidth(t.text, FONT_SIZE - 1);
    const tries = [
      { x0: t.p.x + t.room, y0: t.p.y - height / 2 },
      { x0: t.p.x - t.room - w, y0: t.p.y - height / 2 },
    ];
    const box = tries.map((b) => ({ x0: b.x0, x1: b.x0 + w, y0: b.y0, y1: b.y0 + height })).find((b) => b.x0 >= 2 && b.x1 <= canvasWidth - 2 && !overlaps(b));
    if (!box) {
      hidden++;
      continue;
    }
    boxes.push(box);
    label(labels, t.text, { ...TEXT_HALO, 'stroke-width': 2.5, x: box.x0, y: box.y0 + height / 2, dy: '0.32em' });
  }
  return hidden;
}

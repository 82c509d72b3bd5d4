/**
 * The contactors of the chip drawing: two bands split by the interface at the solved holdup (or
 * coloured by approach to equilibrium), walls and interface in the channel's own frame, tooltips,
 * contactor numbers and approach labels where there is room. Exports `drawContactors`.
 */
import { max as maxOf } from 'd3-array';
import type { SolvedChip } from '../../analyses/chip.js';
import type { ChipSegment } from '../../network/model.js';
import type { ExtractionColouring } from '../extractionCharts.js';
import { INK } from '../palette.js';
import { FONT_SIZE, TEXT_HALO, el, label, num, textWidth, type SvgNode } from '../svg.js';
import { flowText } from './captions.js';
import { MIN_LABEL_PITCH, MIXED, PHASE_B_HATCH, PHASE_COLOURS, appendTitle, frac, type Point } from './common.js';
import { channelFrame, lanePath } from './geometry.js';
import { closestPair } from './placement.js';

export function drawContactors(
  root: SvgNode, solved: SolvedChip, at: Map<string, Point>, drawnWidth: (s: ChipSegment) => number, extraction: ExtractionColouring | undefined,
): void {
  const { network, raw, result } = solved;
  const group = el(root, 'g', { class: 'contactors' });
  const labels: Array<{ p: Point; text: string }> = [];
  const approachLabels: Array<{ p: Point; theta: number; room: number; text: string }> = [];
  network.contactors.forEach((c, k) => {
    const a = at.get(c.segment.from)!;
    const b = at.get(c.segment.to)!;
    if (Math.hypot(b.x - a.x, b.y - a.y) <= 0.5) return;
    const row = result.contactors[k]!;
    const nearIsA = raw.laneComposition[2 * k]! >= raw.laneComposition[2 * k + 1]!;
    const near = nearIsA ? row.holdupA : 1 - row.holdupA;
    const w = drawnWidth(c.segment);
    const frame = channelFrame(a, b, w);
    const approachFill = extraction?.fill.get(c.segment.id);
    const approachText = extraction?.label.get(c.segment.id);
    const g = el(group, 'g', {
      class: `contactor${(c.section.shape === 'rect' && c.section.orientation === 'stacked') ? ' stacked' : ''}${approachFill !== undefined ? ' by-approach' : ''}`,
      'data-segment': c.segment.id,
      'data-index': String(row.index),
      'data-near-phase': nearIsA ? 'A' : 'B',
      'data-holdup-a': frac(row.holdupA),
      // The overview strip of the report links here (../overviewStrip.ts).
      id: `contactor-${row.index}`,
    });
    const approachTitle = extraction && approachText !== undefined ? `, ${extraction.title} ${approachText}` : '';
    appendTitle(g, `${c.segment.id}: A ${flowText(row.flowA)}, B ${flowText(row.flowB)}, holdup of A ${row.holdupA.toFixed(4)}, outlet ${row.state}${approachTitle}`);
    // Bands in screen coordinates (so that the hatch and stripes keep their size); each lane's
    // look follows what it carries: A, B (hatched) or a mixture (striped).
    const lanes: Array<[number, number, number, string]> = [[0, near, raw.laneComposition[2 * k]!, 'near'], [near, 1, raw.laneComposition[2 * k + 1]!, 'far']];
    for (const [v0, v1, x, side] of lanes) {
      if (v1 - v0 <= 0) continue;
      const d = lanePath(frame, v0, v1);
      const look = x > 1 - 1e-9 ? 'A' : x < 1e-9 ? 'B' : 'mixed';
      el(g, 'path', { class: `band ${side} phase-${look}`, d, fill: approachFill ?? (look === 'mixed' ? MIXED : PHASE_COLOURS[look]) });
      if (look === 'B') el(g, 'path', { class: 'hatch', d, fill: PHASE_B_HATCH });
    }
    // The channel's own frame: walls and interface. Strokes along u are as thick on screen as
    // their width times the drawn channel width.
    const inner = el(g, 'g', { class: 'frame', transform: frame.transform });
    el(inner, 'path', { class: 'wall', d: 'M0,0H1M0,1H1', fill: 'none', stroke: INK.axis, 'stroke-width': frac(1.2 / w) });
    el(inner, 'line', { class: 'interface', x1: '0', y1: frac(near), x2: '1', y2: frac(near), stroke: '#000000', 'stroke-width': frac((w < 6 ? 1 : 1.6) / w) });
    // Numbers a quarter of the way down, clear of the flow arrow at the middle.
    labels.push({ p: frame.at(0.25, 0.5), text: String(row.index) });
    if (approachText !== undefined) approachLabels.push({ p: frame.at(0.75, 0.5), theta: Math.atan2(b.y - a.y, b.x - a.x), room: 0.4 * Math.hypot(b.x - a.x, b.y - a.y), text: approachText });
  });
  drawApproachLabels(root, approachLabels);
  // Contactor numbers, every k-th when they would crowd each other.
  if (labels.length === 0) return;
  const spacing = closestPair(labels.map((l) => l.p));
  const widest = maxOf(labels.map((l) => textWidth(l.text, FONT_SIZE - 1))) ?? -Infinity;
  let every = 1;
  for (const step of [1, 2, 5, 10, 20, 50, 100, 200, 500, 1000]) {
    every = step;
    if (!Number.isFinite(spacing) || step * spacing >= widest + 6) break;
  }
  const numbers = el(root, 'g', { class: 'contactor-numbers', 'font-size': FONT_SIZE - 1, 'text-anchor': 'middle' });
  labels.forEach((l, i) => {
    const index = i + 1;
    if (every === 1 || index % every === 0 || index === 1) label(numbers, l.text, { ...TEXT_HALO, x: l.p.x, y: l.p.y, dy: '0.32em' });
  });
}

/**
 * Approach labels run along their contactors, three quarters of the way down (clear of the number
 * and the flow arrow); shown only where neighbours leave room for a line of text and each label
 * fits in its stretch of channel.
 */
function drawApproachLabels(root: SvgNode, labels: Array<{ p: Point; theta: number; room: number; text: string }>): void {
  if (labels.length === 0 || closestPair(labels.map((l) => l.p)) < MIN_LABEL_PITCH) return;
  if (labels.some((l) => textWidth(l.text, FONT_SIZE - 1) > l.room)) return;
  const g = el(root, 'g', { class: 'approach-labels', 'font-size': FONT_SIZE - 1, 'text-anchor': 'middle' });
  for (const l of labels) {
    const deg = (l.theta * 180) / Math.PI;
    const upright = deg > 90 ? deg - 180 : deg < -90 ? deg + 180 : deg;
    label(g, l.text, { ...TEXT_HALO, transform: `translate(${num(l.p.x)},${num(l.p.y)}) rotate(${num(upright)})`, x: 0, y: 0, dy: '0.32em' });
  }
}

/**
 * The channels of the chip drawing outside the contactors, with the underlays that flag
 * channels over the pressure rating (dashed) or with backflow (solid yellow). Single-phase and
 * mixed channels are a dark outline layer under a fill layer, so that joints merge; segments of
 * one look share one path, which keeps large chips small. Exports `drawUnderlays` and
 * `drawChannels`.
 */
import type { SolvedChip } from '../../analyses/chip.js';
import type { ChipSegment } from '../../network/model.js';
import { INK } from '../palette.js';
import { el, num, type SvgNode } from '../svg.js';
import { BACKFLOW_COLOUR, MIXED, PHASE_B_HATCH, PHASE_COLOURS, type Point } from './common.js';

/** Underlays: channels over the pressure rating (dashed) and with backflow (solid), each per segment. */
export function drawUnderlays(
  root: SvgNode, solved: SolvedChip, drawable: ChipSegment[], ends: (s: ChipSegment) => [Point, Point], drawnWidth: (s: ChipSegment) => number, nodePeak: (id: string) => number,
): void {
  const { chip, result } = solved;
  const over = chip.maxPressure === undefined ? [] : drawable.filter((s) => Math.max(nodePeak(s.from), nodePeak(s.to)) > chip.maxPressure!);
  const overGroup = el(root, 'g', { class: 'over-rating-marks', fill: 'none', stroke: INK.text, 'stroke-dasharray': '5 3', 'stroke-linecap': 'butt' });
  for (const s of over) {
    const [a, b] = ends(s);
    el(overGroup, 'line', { class: 'over-rating', 'data-segment': s.id, x1: a.x, y1: a.y, x2: b.x, y2: b.y, 'stroke-width': drawnWidth(s) + 9 });
  }
  const reversedIds = new Set(result.segments.filter((s) => s.reversed).map((s) => s.id));
  const backGroup = el(root, 'g', { class: 'backflow-marks', fill: 'none', stroke: BACKFLOW_COLOUR, 'stroke-linecap': 'round' });
  for (const s of drawable.filter((d) => reversedIds.has(d.id))) {
    const [a, b] = ends(s);
    el(backGroup, 'line', { class: 'backflow-halo', 'data-segment': s.id, x1: a.x, y1: a.y, x2: b.x, y2: b.y, 'stroke-width': drawnWidth(s) + 8 });
  }
}

/** The plain (non-contactor) channels, in their phase's colour or, given `pressureColour`, by the mean pressure of their ends. */
export function drawChannels(
  root: SvgNode, solved: SolvedChip, plain: ChipSegment[], ends: (s: ChipSegment) => [Point, Point], drawnWidth: (s: ChipSegment) => number,
  pressureColour: ((p: number) => string) | undefined, nodePressure: (id: string) => number,
): void {
  const segmentResult = new Map(solved.result.segments.map((s) => [s.id, s]));
  const fillOf = (id: string): string => {
    const r = segmentResult.get(id)!;
    return r.kind === 'single' ? PHASE_COLOURS[r.phase!] : MIXED;
  };
  const paths = (layer: SvgNode, cls: string, colour: (s: ChipSegment) => string, extra: number, only = plain) => {
    const groups = new Map<string, string[]>();
    for (const s of only) {
      const [a, b] = ends(s);
      const key = `${colour(s)}|${num(drawnWidth(s) + extra)}`;
      const part = `M${num(a.x)},${num(a.y)}L${num(b.x)},${num(b.y)}`;
      const group = groups.get(key);
      if (group) group.push(part);
      else groups.set(key, [part]);
    }
    for (const [key, parts] of groups) {
      const [stroke, w] = key.split('|');
      el(layer, 'path', { class: cls, d: parts.join(''), stroke, 'stroke-width': w });
    }
  };
  const channels = el(root, 'g', { class: 'channels', fill: 'none', 'stroke-linecap': 'round', 'stroke-linejoin': 'round' });
  paths(channels, 'wall', () => INK.axis, 1.6);
  if (pressureColour) {
    for (const s of plain) {
      const [a, b] = ends(s);
      el(channels, 'line', { class: 'channel', 'data-segment': s.id, x1: a.x, y1: a.y, x2: b.x, y2: b.y, stroke: pressureColour((nodePressure(s.from) + nodePressure(s.to)) / 2), 'stroke-width': drawnWidth(s) });
    }
  } else {
    paths(channels, 'channel', (s) => fillOf(s.id), 0);
    const phaseB = plain.filter((s) => segmentResult.get(s.id)!.kind === 'single' && segmentResult.get(s.id)!.phase === 'B');
    paths(channels, 'hatch', () => PHASE_B_HATCH, 0, phaseB);
  }
}

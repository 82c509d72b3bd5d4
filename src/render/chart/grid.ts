/**
 * Pieces shared by the maps over a rectangle (heatmap, region map): pixel edges of even cells,
 * the size of a grid of values, and marked points with their labels. Exports `cellEdges`,
 * `gridSize` and `drawPoints`.
 */
import { max as maxOf } from 'd3-array';
import { INK } from '../palette.js';
import { TEXT_HALO, el, fixed, label, marker, textWidth, type Frame, type SvgNode } from '../svg.js';
import { inside, type NumericScale } from './axes.js';
import type { Grid, MarkedPoint } from './spec.js';

/** Pixel edges of n even cells across [a, b], rounded once so that neighbours share an edge. */
export function cellEdges(a: number, b: number, n: number): number[] {
  return Array.from({ length: n + 1 }, (_, i) => fixed(a + ((b - a) * i) / n));
}

export function gridSize(grid: Grid): { nx: number; ny: number } {
  return { nx: maxOf(grid, (row) => row.length) ?? 0, ny: grid.length };
}

/** Marked points: a dark circle ringed in white, its label beside it on the side with room. */
export function drawPoints(parent: SvgNode, frame: Frame, points: readonly MarkedPoint[], x: NumericScale, y: NumericScale): void {
  const g = el(parent, 'g', { class: 'points' });
  for (const p of points) {
    const px = x(p.at[0]);
    const py = y(p.at[1]);
    if (!Number.isFinite(px) || !Number.isFinite(py) || !inside(frame, px, py)) continue;
    marker(g, 'circle', px, py, INK.text, true);
    if (p.label === undefined) continue;
    const left = px + 7 + textWidth(p.label) > frame.x1;
    label(g, p.label, { ...TEXT_HALO, x: left ? px - 7 : px + 7, y: py, dy: '0.32em', 'text-anchor': left ? 'end' : 'start' });
  }
}

/**
 * Pieces shared by the maps over a rectangle (heatmap, region map): pixel edges of even cells,
 * the size of a grid of values, marked points with their labels, and `LabelPlacer`, which keeps
 * the labels of one chart from overlapping. Exports `cellEdges`, `gridSize`, `drawPoints` and
 * `LabelPlacer`.
 */
import { max as maxOf } from 'd3-array';
import { INK } from '../palette.js';
import { FONT_SIZE, TEXT_HALO, el, fixed, label, marker, textWidth, type Frame, type SvgNode } from '../svg.js';
import { inside, type NumericScale } from './axes.js';
import type { Grid, MarkedPoint } from './spec.js';

/** Pixel edges of n even cells across [a, b], rounded once so that neighbours share an edge. */
export function cellEdges(a: number, b: number, n: number): number[] {
  return Array.from({ length: n + 1 }, (_, i) => fixed(a + ((b - a) * i) / n));
}

export function gridSize(grid: Grid): { nx: number; ny: number } {
  return { nx: maxOf(grid, (row) => row.length) ?? 0, ny: grid.length };
}

interface Box {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

/**
 * Places labels so that none overlaps another (or a marked point) and each stays inside the
 * frame: every label is tried at its candidate anchors in order and put at the first free one,
 * or left out when none is (the caller says elsewhere what it names).
 */
export class LabelPlacer {
  private readonly taken: Box[] = [];

  constructor(private readonly frame: Frame) {}

  /** Keeps a rectangle free (a marker). */
  reserve(x: number, y: number, half: number): void {
    this.taken.push({ x0: x - half, y0: y - half, x1: x + half, y1: y + half });
  }

  /** Draws `text` at the first free candidate (anchor x, y at the text's middle height); false when none is free. */
  place(parent: SvgNode, text: string, candidates: ReadonlyArray<{ x: number; y: number; anchor: 'start' | 'end' | 'middle' }>): boolean {
    const width = textWidth(text);
    const height = FONT_SIZE + 2;
    for (const c of candidates) {
      const x0 = c.anchor === 'start' ? c.x : c.anchor === 'end' ? c.x - width : c.x - width / 2;
      const box = { x0, y0: c.y - height / 2, x1: x0 + width, y1: c.y + height / 2 };
      const f = this.frame;
      if (box.x0 < f.x0 || box.x1 > f.x1 || box.y0 < f.y0 || box.y1 > f.y1) continue;
      if (this.taken.some((t) => box.x0 < t.x1 && t.x0 < box.x1 && box.y0 < t.y1 && t.y0 < box.y1)) continue;
      this.taken.push(box);
      label(parent, text, { ...TEXT_HALO, x: c.x, y: c.y, dy: '0.32em', 'text-anchor': c.anchor });
      return true;
    }
    return false;
  }
}

/** Marked points: a dark circle ringed in white, its label beside it where there is room. */
export function drawPoints(parent: SvgNode, frame: Frame, points: readonly MarkedPoint[], x: NumericScale, y: NumericScale, placer = new LabelPlacer(frame)): void {
  const g = el(parent, 'g', { class: 'points' });
  const shown = points.map((p) => [x(p.at[0]), y(p.at[1])] as const).map(([px, py]) => (Number.isFinite(px) && Number.isFinite(py) && inside(frame, px, py) ? [px, py] as const : undefined));
  shown.forEach((at) => at && placer.reserve(at[0], at[1], 5));
  points.forEach((p, k) => {
    const at = shown[k];
    if (!at) return;
    const [px, py] = at;
    marker(g, 'circle', px, py, INK.text, true);
    if (p.label === undefined) return;
    placer.place(g, p.label, [
      { x: px + 7, y: py, anchor: 'start' },
      { x: px - 7, y: py, anchor: 'end' },
      { x: px, y: py - 12, anchor: 'middle' },
      { x: px, y: py + 12, anchor: 'middle' },
      { x: px + 7, y: py - 12, anchor: 'start' },
      { x: px - 7, y: py + 12, anchor: 'end' },
    ]);
  });
}

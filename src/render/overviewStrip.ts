/**
 * The overview of a chip's contactors at any number of them: one heat strip per quantity (flow
 * of A, flow of B, holdup of A, split margin) against contactor number, every contactor a cell
 * in viridis between the strip's smallest and largest value (written at its ends), so that a
 * chip of 4096 contactors fits in one page width. Each cell links to its contactor in the chip
 * drawing (`#contactor-<number>`, the ids of ./chipDrawing/contactors.ts), so a click scrolls
 * the drawing there without any script. Where contactors outnumber the pixels of the strip, the
 * cells hold runs of neighbours, each coloured by and linked to its contactor farthest from the
 * strip's mean (one starved contactor among 16 384 still shows; cells a fraction of a pixel wide
 * were blended by the browser, and 65 536 of them were most of a large report's time).
 * Exports `overviewStrip`. Pure: solved chip in, SVG out.
 */
import { max as maxOf, mean as meanOf, min as minOf } from 'd3-array';
import type { SolvedChip } from '../analyses/chip.js';
import { DISPLAY, fmt } from '../units/format.js';
import { nearlyUniformValue, relativeSpan, uniformValue, UNIFORM_TO } from './chart/axes.js';
import { INK, viridis } from './palette.js';
import { FONT_SIZE, TEXT_HALO, TITLE_SIZE, createDocument, el, label, serialise, textWidth } from './svg.js';

const WIDTH = 1100;
const ROW = { height: 18, gap: 22 };
const PAD = 10;
/** Narrowest cell, px: below it neighbours share a cell. */
const MIN_CELL_PX = 1;

interface Strip {
  title: string;
  unit: string;
  /** Display values by contactor, NaN where the contactor has none (no split). */
  values: number[];
}

/** The strips of a solved chip, in display units. */
function strips(solved: SolvedChip): Strip[] {
  const { result } = solved;
  // Margins below the pressure the solution resolves are 0, as the split table prints them (fmtResolved).
  const resolution = result.summary.pressureResolution;
  const margin = new Map(result.splits.map((s) => [s.contactor, Math.abs(s.margin) < resolution ? 0 : s.margin]));
  const flow = DISPLAY.flow;
  return [
    { title: 'flow of A', unit: flow.symbol, values: result.contactors.map((r) => r.flowA * flow.factor) },
    { title: 'flow of B', unit: flow.symbol, values: result.contactors.map((r) => r.flowB * flow.factor) },
    { title: 'holdup of A', unit: '–', values: result.contactors.map((r) => r.holdupA) },
    { title: 'split margin', unit: 'Pa', values: result.contactors.map((r) => margin.get(r.id) ?? Number.NaN) },
  ];
}

export function overviewStrip(solved: SolvedChip): string {
  const rows = solved.result.contactors;
  const list = strips(solved);
  const labelRoom = (maxOf(list, (s) => textWidth(`${s.title} (${s.unit})`)) ?? 0) + 8;
  const valueRoom = 70;
  const x0 = PAD + labelRoom + valueRoom;
  const x1 = WIDTH - PAD - valueRoom;
  const top = PAD + TITLE_SIZE + 10;
  const perCell = Math.max(1, Math.ceil((rows.length * MIN_CELL_PX) / (x1 - x0)));
  const noteRoom = perCell > 1 ? FONT_SIZE + 6 : 0;
  const height = top + list.length * (ROW.height + ROW.gap) + FONT_SIZE + PAD + noteRoom;
  const root = createDocument(WIDTH, height, 'Overview of every contactor');
  label(root, `Every contactor at a glance (${rows.length}): colour from the smallest to the largest value of each row; click a place to see it in the drawing`, {
    class: 'chart-title', x: PAD, y: PAD + TITLE_SIZE, 'font-size': TITLE_SIZE, 'font-weight': 'bold',
  });
  const cell = rows.length > 0 ? (x1 - x0) / rows.length : 0;
  if (perCell > 1) {
    label(root, `${rows.length} contactors in ${Math.ceil(rows.length / perCell)} cells of up to ${perCell}: each cell shows (and links to) its contactor farthest from the row's mean`, {
      class: 'note', x: PAD, y: height - PAD, 'font-style': 'italic', 'font-size': FONT_SIZE - 1,
    });
  }
  list.forEach((strip, k) => {
    const y = top + k * (ROW.height + ROW.gap);
    const g = el(root, 'g', { class: 'strip', 'data-quantity': strip.title });
    label(g, `${strip.title} (${strip.unit})`, { x: PAD, y: y + ROW.height / 2, dy: '0.32em' });
    const finite = strip.values.filter(Number.isFinite);
    const uniform = finite.length > 0 && (minOf(finite) ?? 0) === (maxOf(finite) ?? 0) ? finite[0] : uniformValue(finite);
    // Nearly uniform (a symmetric chip solved to the solver's tolerance): said in words as well, the colours cannot show it.
    const nearly = uniform === undefined ? nearlyUniformValue(finite) : undefined;
    const smallest = minOf(finite) ?? 0;
    const largest = maxOf(finite) ?? 1;
    const [lo, hi] = relativeSpan([smallest, largest]).domain;
    const colour = (v: number) => (uniform !== undefined ? viridis(0.5) : viridis(hi > lo ? (v - lo) / (hi - lo) : 0.5));
    const cells = el(g, 'g', { class: 'cells' });
    const mean = finite.length > 0 ? (meanOf(finite) ?? 0) : 0;
    for (let start = 0; start < rows.length; start += perCell) {
      // The cell's contactor: the one farthest from the mean (a finite value before a missing one).
      let pick = start;
      for (let i = start + 1; i < Math.min(start + perCell, rows.length); i++) {
        const v = strip.values[i]!;
        const best = strip.values[pick]!;
        if (Number.isFinite(v) && (!Number.isFinite(best) || Math.abs(v - mean) > Math.abs(best - mean))) pick = i;
      }
      const v = strip.values[pick]!;
      const index = rows[pick]!.index;
      const link = el(cells, 'a', { href: `#contactor-${index}` });
      el(link, 'rect', {
        x: x0 + start * cell, y, width: Math.max(cell * Math.min(perCell, rows.length - start), 0.5), height: ROW.height,
        fill: Number.isFinite(v) ? colour(v) : INK.halo, 'data-index': String(index),
        'data-contactors': perCell > 1 ? `${rows[start]!.index}-${rows[Math.min(start + perCell, rows.length) - 1]!.index}` : undefined,
      });
    }
    el(g, 'rect', { x: x0, y, width: x1 - x0, height: ROW.height, fill: 'none', stroke: INK.axis, 'stroke-width': 0.8 });
    if (finite.length === 0) {
      label(g, 'none', { x: x1 + 6, y: y + ROW.height / 2, dy: '0.32em' });
    } else if (uniform !== undefined || nearly !== undefined) {
      const how = uniform !== undefined ? `uniform to ${UNIFORM_TO.toExponential(0)}` : `within ${nearly!.relative.toExponential(1)} of it`;
      label(g, `every contactor ${fmt(uniform ?? nearly!.value)} ${strip.unit}, ${how}`, { ...TEXT_HALO, x: (x0 + x1) / 2, y: y + ROW.height / 2, dy: '0.32em', 'text-anchor': 'middle' });
    } else {
      label(g, fmt(smallest), { x: x0 - 6, y: y + ROW.height / 2, dy: '0.32em', 'text-anchor': 'end' });
      label(g, fmt(largest), { x: x1 + 6, y: y + ROW.height / 2, dy: '0.32em' });
    }
  });
  // Contactor numbers under the last strip: the first, the last and a few round ones between.
  const axisY = top + list.length * (ROW.height + ROW.gap) - ROW.gap + FONT_SIZE + 2;
  const step = [1, 2, 5, 10, 20, 50, 100, 200, 500, 1000].find((s) => s * cell >= 60) ?? 2000;
  const numbers = el(root, 'g', { class: 'numbers', 'text-anchor': 'middle', 'font-size': FONT_SIZE - 1 });
  rows.forEach((r, i) => {
    if (i === 0 || i === rows.length - 1 || (r.index % step === 0 && i > 0 && rows.length - 1 - i >= step / 2)) label(numbers, String(r.index), { x: x0 + (i + 0.5) * cell, y: axisY });
  });
  return serialise(root);
}

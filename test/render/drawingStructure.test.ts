import { describe, expect, it } from 'vitest';
import { ladderLayout, treeLayout } from '../../src/layout/generate.js';
import { layoutToChip, loadLayout, readLayoutText } from '../../src/layout/load.js';
import { parseDataText } from '../../src/files.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip, type SolvedChip } from '../../src/analyses/chip.js';
import { chipDrawing, type ChipDrawingOptions } from '../../src/render/chipDrawing.js';
import { textWidth } from '../../src/render/svg.js';
import { segmentDistance } from '../../src/render/chipDrawing/routes.js';
import { planWidth } from '../../src/render/chipDrawing/placement.js';
import { all, hasClass, matrixOf, parse, textOf, type Element } from '../support/svgTree.js';

/**
 * The structure of the chip drawing, read back from its SVG: every contactor drawn once, channels
 * of the two phases apart, distinct symbols, horizontal labels, and the order of an automatic
 * layout. Layouts: the bundled demo layouts and generated ladders and trees (invented values).
 */

const drive = { A: { pressure: 10e3 }, B: { pressure: 8e3 } };

function bare(layout: LayoutFile): LayoutFile {
  return { ...layout, nodes: layout.nodes.map(({ x: _x, y: _y, ...n }) => n) as LayoutFile['nodes'] };
}

function leaky(contactors: number): LayoutFile {
  const layout = ladderLayout({ contactors, drive });
  (layout.nodes.find((n) => n.id === 'outB') as { pressure: unknown }).pressure = 600;
  return layout;
}

const CHIPS: Array<[string, () => SolvedChip, ChipDrawingOptions?]> = [
  ['the enzyme demo layout', () => solveChip(loadLayout('layouts/enzyme-atps-16.yaml'))],
  ['the dye demo layout', () => solveChip(loadLayout('layouts/dye-octanol-8.yaml'))],
  // Both demo layouts are drawn ×2 by default: these are twice as wide again.
  ['the enzyme demo layout with channels drawn ×4', () => solveChip(loadLayout('layouts/enzyme-atps-16.yaml')), { widthScale: 4 }],
  ['the dye demo layout with channels drawn ×4', () => solveChip(loadLayout('layouts/dye-octanol-8.yaml')), { widthScale: 4 }],
  ['a leaking 64-contactor ladder', () => solveChip(layoutToChip(leaky(64), 'ladder.yaml'))],
  ['a 16-contactor tree', () => solveChip(layoutToChip(treeLayout({ drive }), 'tree.yaml'))],
  ['a 4-contactor ladder without coordinates', () => solveChip(layoutToChip(bare(ladderLayout({ contactors: 4, drive })), 'bare.yaml'))],
  ['a 64-contactor ladder without coordinates', () => solveChip(layoutToChip(bare(ladderLayout({ contactors: 64, drive })), 'bare.yaml'))],
];

type P = { x: number; y: number };
interface Stroke {
  a: P;
  b: P;
  width: number;
}

/** The contactor's centre line and drawn width, from its unit frame (u along, v across). */
function contactorStroke(g: Element): Stroke {
  const map = matrixOf(all(g, hasClass('frame'))[0]!.attrs.transform!);
  const [ax, ay] = map(0, 0.5);
  const [bx, by] = map(1, 0.5);
  const [nx, ny] = map(0, 0);
  const [fx, fy] = map(0, 1);
  return { a: { x: ax, y: ay }, b: { x: bx, y: by }, width: Math.hypot(fx - nx, fy - ny) };
}

/** Coordinates are written to 0.01 px (src/render/svg.ts DIGITS): two shapes may touch to that. */
const ROUNDING = 0.02;

const apart = (s: Stroke, t: Stroke) => segmentDistance(s.a, s.b, t.a, t.b) >= (s.width + t.width) / 2 - ROUNDING;
/**
 * A crossing on the chip itself: the centre lines cross, or the centre line of one passes through
 * the body the other has at its true width. (By the drawn widths, a channel drawn far wider than
 * it is would "cross" every neighbour it covers.)
 */
const crossing = (s: Piece, t: Piece) => {
  const d = segmentDistance(s.a, s.b, t.a, t.b);
  return d === 0 || d < Math.max(s.trueWidth, t.trueWidth) / 2;
};

interface Piece extends Stroke {
  id: string;
  phase: 'A' | 'B' | null;
  /** Its width at the drawing's length scale, px (0 in a schematic). */
  trueWidth: number;
}

/**
 * Every plain channel as drawn, from the drawing coloured by pressure (there each channel is a line
 * of its own, named by its segment), with its phase from the solution and its true width from the
 * layout at the scale of the scale bar.
 */
function plainChannels(solved: SolvedChip, options: ChipDrawingOptions = {}): Piece[] {
  const root = parse(chipDrawing(solved, { ...options, colourBy: 'pressure' }));
  const bars = all(root, hasClass('scale-bar'));
  let pxPerMetre = 0;
  if (bars.length > 0) {
    const [, x0, x1] = all(bars[0]!, (e) => e.name === 'path')[0]!.attrs.d!.match(/^M([-\d.]+),[-\d.]+V[-\d.]+H([-\d.]+)/)!;
    const text = textOf(bars[0]!);
    const metres = Number(text.match(/([\d.]+) (mm|µm)/)![1]) * (text.includes('mm') ? 1e-3 : 1e-6);
    pxPerMetre = (Number(x1) - Number(x0)) / metres;
  }
  const segment = new Map(solved.chip.segments.map((s) => [s.id, s]));
  const result = new Map(solved.result.segments.map((s) => [s.id, s]));
  return all(root, (e) => e.name === 'line' && hasClass('channel')(e)).map((l) => {
    const id = l.attrs['data-segment']!;
    const r = result.get(id)!;
    return {
      id,
      a: { x: Number(l.attrs.x1), y: Number(l.attrs.y1) },
      b: { x: Number(l.attrs.x2), y: Number(l.attrs.y2) },
      width: Number(l.attrs['stroke-width']),
      phase: r.kind === 'single' ? r.phase : null,
      trueWidth: planWidth(segment.get(id)!) * pxPerMetre,
    };
  });
}

describe.each(CHIPS)('the drawing of %s', (_name, solve, options = {}) => {
  const solved = solve();
  const root = parse(chipDrawing(solved, options));

  it('draws every contactor exactly once', () => {
    const drawn = all(root, hasClass('contactor')).map((g) => g.attrs['data-segment']).sort();
    expect(drawn).toEqual(solved.network.contactors.map((c) => c.segment.id).sort());
  });

  it('keeps neighbouring contactors apart', () => {
    const contactors = all(root, hasClass('contactor')).map(contactorStroke);
    for (let i = 0; i < contactors.length; i++) for (let j = i + 1; j < contactors.length; j++) expect(apart(contactors[i]!, contactors[j]!)).toBe(true);
  });

  it('keeps every phase-A channel off every phase-B channel, except where one crosses the other or the layout itself overlaps them', () => {
    const pieces = plainChannels(solved, options);
    const { A, B } = { A: pieces.filter((p) => p.phase === 'A'), B: pieces.filter((p) => p.phase === 'B') };
    expect(A.length).toBeGreaterThan(0);
    expect(B.length).toBeGreaterThan(0);
    for (const a of A) {
      for (const b of B) {
        if (apart(a, b) || crossing(a, b)) continue;
        // Closer than their true half-widths in the layout itself: then both are drawn at their true width, no wider.
        const d = segmentDistance(a.a, a.b, b.a, b.b);
        const own = (a.trueWidth + b.trueWidth) / 2 > d;
        expect(own && a.width <= a.trueWidth + ROUNDING && b.width <= b.trueWidth + ROUNDING, `${a.id} and ${b.id} overlap`).toBe(true);
      }
    }
  });

  it('draws the two inlets of every merge and the two outlets of every split side by side, apart', () => {
    const stroke = new Map(plainChannels(solved, options).map((p) => [p.id, p]));
    const pairs = solved.chip.nodes.flatMap((n) => (n.kind === 'merge' ? [n.inlets] : n.kind === 'split' ? [n.outlets] : []));
    expect(pairs).toHaveLength(2 * solved.network.contactors.length);
    for (const [near, far] of pairs) expect(apart(stroke.get(near)!, stroke.get(far)!), `${near} and ${far}`).toBe(true);
  });
});

describe('the chip drawing, read as a person would', () => {
  it('orders the contactors of a layout without coordinates along their manifolds, first to last', () => {
    for (const n of [4, 16]) {
      const root = parse(chipDrawing(solveChip(layoutToChip(bare(ladderLayout({ contactors: n, drive })), 'bare.yaml'))));
      const centres = all(root, hasClass('contactor')).map((g) => ({ index: Number(g.attrs['data-index']), x: contactorStroke(g).a.x }));
      centres.sort((a, b) => a.index - b.index);
      for (let i = 1; i < centres.length; i++) expect(centres[i]!.x).toBeGreaterThan(centres[i - 1]!.x);
    }
  });

  /** What a legend swatch or a mark looks like: element kinds, fills, strokes and path shapes, without positions. */
  const look = (elements: Element[]) =>
    elements
      .map((e) => `${e.name}:${e.attrs.fill ?? ''}:${e.attrs.stroke ?? ''}:${e.attrs['stroke-dasharray'] ?? ''}:${(e.attrs.d ?? '').replace(/[-\d.]+/g, '#')}`)
      .join('|');

  it('gives every meaning in the legend a symbol of its own', () => {
    const root = parse(chipDrawing(solveChip(layoutToChip(leaky(16), 'ladder.yaml'))));
    const legend = all(root, hasClass('legend'))[0]!;
    const swatches: Element[][] = [[]];
    for (const child of legend.children) {
      if (child.name === 'text') swatches.push([]);
      else swatches[swatches.length - 1]!.push(child);
    }
    const entries = swatches.slice(0, -1).map(look);
    expect(entries.length).toBe(legend.children.filter((c) => c.name === 'text').length);
    expect(new Set(entries).size, entries.join('\n')).toBe(entries.length);
  });

  /** Where a leak triangle (M tip L base L base Z) points, rad on screen. */
  const pointing = (d: string) => {
    const [tx, ty, ax, ay, bx, by] = d.match(/[-\d.]+/g)!.map(Number);
    return Math.atan2(ty! - (ay! + by!) / 2, tx! - (ax! + bx!) / 2);
  };
  const sameDirection = (a: number, b: number) => Math.abs(Math.atan2(Math.sin(a - b), Math.cos(a - b))) < 0.01;

  it('draws every leak mark pointing as its legend entry points, for leaks both ways and on the demo chip', () => {
    const demo = parseDataText(readLayoutText('layouts/enzyme-atps-16.yaml'), 'demo.yaml', 'layout file') as LayoutFile;
    const inB = demo.nodes.find((n) => n.id === 'inB') as { flow?: unknown; pressure?: unknown };
    delete inB.flow;
    inB.pressure = 14470; // 100 Pa above its solved pressure: every split leaks B into A
    for (const solved of [solveChip(layoutToChip(leaky(16), 'ladder.yaml')), solveChip(layoutToChip(demo, 'demo.yaml'))]) {
      const root = parse(chipDrawing(solved));
      const legend = all(all(root, hasClass('legend'))[0]!, (e) => e.name === 'path' && e.attrs['stroke-width'] === '1.4');
      const legendAngle = new Map(legend.map((e) => [e.attrs.fill!, pointing(e.attrs.d!)]));
      expect(legendAngle.size).toBe(2);
      const marks = all(root, (e) => hasClass('split')(e) && !hasClass('pinned')(e)).map((g) => g.children.find((c) => c.name === 'path')!);
      expect(marks.length).toBeGreaterThan(0);
      for (const m of marks) expect(sameDirection(pointing(m.attrs.d!), legendAngle.get(m.attrs.fill!)!), m.attrs.fill).toBe(true);
    }
  });

  it('marks inlets, outlets and pinned splits with three different shapes', () => {
    const solved = solveChip(loadLayout('layouts/enzyme-atps-16.yaml'));
    expect(solved.result.splits.some((s) => s.state === 'pinned')).toBe(true);
    const root = parse(chipDrawing(solved));
    const shapeOf = (e: Element) => (e.name === 'path' ? `path ${(e.attrs.d ?? '').replace(/[-\d.]+/g, '#')}` : e.name);
    const inlet = new Set(all(root, hasClass('inlet')).map(shapeOf));
    const outlet = new Set(all(root, hasClass('outlet')).map(shapeOf));
    const pinned = new Set(all(root, (e) => hasClass('split')(e) && hasClass('pinned')(e)).flatMap((g) => g.children.filter((c) => c.name !== 'title').map(shapeOf)));
    expect([inlet.size, outlet.size, pinned.size]).toEqual([1, 1, 1]);
    expect(new Set([...inlet, ...outlet, ...pinned]).size).toBe(3);
  });

  it('writes leak labels level, each clear of the other labels and inside the drawing', () => {
    const svg = chipDrawing(solveChip(layoutToChip(leaky(16), 'ladder.yaml')));
    const root = parse(svg);
    const width = Number(root.attrs.width);
    const texts = all(root, hasClass('split-labels')).flatMap((g) => g.children.filter((c) => c.name === 'text'));
    expect(texts.length).toBeGreaterThan(0);
    const boxes = texts.map((t) => {
      expect(t.attrs.transform).toBeUndefined();
      const x = Number(t.attrs.x);
      const y = Number(t.attrs.y);
      return { x0: x, x1: x + textWidth(textOf(t), 10), y0: y - 6, y1: y + 6 };
    });
    for (const b of boxes) expect(b.x0 >= 0 && b.x1 <= width).toBe(true);
    for (let i = 0; i < boxes.length; i++) {
      for (let j = i + 1; j < boxes.length; j++) {
        const [a, b] = [boxes[i]!, boxes[j]!];
        expect(a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1).toBe(false);
      }
    }
  });
});

describe('the geometry a drawing keeps for the next drawing of the same chip', () => {
  it('gives the same drawing as a fresh one when the same segments carry other phases after a change of settings', () => {
    // Pinned splits, then outlet B raised so that the drains carry mixtures: other looks, other widths.
    const first = solveChip(layoutToChip(ladderLayout({ contactors: 16, drive }), 'ladder.yaml'));
    const raised = { ...first.chip, nodes: first.chip.nodes.map((n) => (n.id === 'outB' && n.kind === 'outlet' ? { ...n, pressure: 600 } : n)) };
    const second = solveChip(raised);
    expect(second.chip.segments).toBe(first.chip.segments);
    expect(second.result.segments.map((s) => s.kind)).not.toEqual(first.result.segments.map((s) => s.kind));
    chipDrawing(first);
    const kept = chipDrawing(second);
    const fresh = chipDrawing(solveChip({ ...raised, segments: raised.segments.map((s) => ({ ...s })) }));
    expect(kept).toBe(fresh);
  });
});

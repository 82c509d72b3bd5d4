/**
 * SVG drawing primitives shared by the charts: the document, fixed-digit numbers, XML escaping,
 * text, markers, hatch fills, legends and axes in pixel space. Exports `fixed`, `num`,
 * `escapeXml`, `serialise`, `textWidth`, `createDocument`, `resizeDocument`, `el`, `label`,
 * `clipTo`, `marker`, `hatchDefs`, `hatchFill`, `drawLegend`, `legendSize`, `lineSwatch`,
 * `fillSwatch`, `drawAxisBottom`, `drawAxisLeft`, `useDomMarkup`, the sizes (`DIGITS`, `FONT_SIZE`, …),
 * `TEXT_HALO`, and the `SvgNode`, `Attrs`, `Frame`, `PixelTick`, `LegendEntry` types.
 * Knows nothing about data or scales (./chart.ts maps values to pixels) and measures no fonts:
 * text widths are estimates, so the output depends on the input alone.
 *
 * Elements are built with svg.js on an svgdom window; the text is written by `serialise` here,
 * not by svgdom, so that every user string is escaped in exactly one place (all five XML
 * characters, & < > " ') and every number attribute passes through `fixed`. A browser page that
 * only puts the text back into itself may switch to the DOM's own serialiser (`useDomMarkup`).
 */
import { createSVGWindow } from 'svgdom';
import { SVG, registerWindow, type Dom } from '@svgdotjs/svg.js';
import { DASH, INK, type MarkerShape } from './palette.js';
import { max as maxOf } from 'd3-array';

const window = createSVGWindow();
registerWindow(window, window.document);

export type SvgNode = Dom;

/** Digits after the decimal point of every coordinate: 0.01 px is below any display's pixel. */
export const DIGITS = 2;

export const FONT_SIZE = 11;
export const TITLE_SIZE = 13;
export const TICK_LENGTH = 5;

/**
 * v rounded to DIGITS decimals, halves away from zero (so a shape centred on the origin stays
 * symmetric); −0 becomes 0 so that the text never shows "-0".
 */
export function fixed(v: number): number {
  const k = 10 ** DIGITS;
  return (Math.sign(v) * Math.round(Math.abs(v) * k)) / k + 0;
}

/** `fixed(v)` as attribute or path text. */
export function num(v: number): string {
  return String(fixed(v));
}

const XML_ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' };
/** Any character escapeXml changes or drops (a surrogate only maybe: the full pattern decides). */
const NEEDS_ESCAPE = /[&<>"'\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF\uD800-\uDFFF]/;

/**
 * Text made safe for XML content and attribute values: the five markup characters become
 * entities, and characters that XML 1.0 forbids even as references (C0 controls other than
 * tab, newline and return; U+FFFE, U+FFFF; lone surrogates) are dropped.
 */
export function escapeXml(s: string): string {
  // Most strings of a drawing (numbers, ids, class names) need nothing: one test finds them.
  if (!NEEDS_ESCAPE.test(s)) return s;
  return s
    .replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g, '')
    .replace(/[&<>"']/g, (c) => XML_ENTITIES[c]);
}

/**
 * Width of a text in px, estimated at 0.6 em per character (a little above the average advance
 * of common sans-serif faces, so labels rather get too much room than too little).
 */
export function textWidth(s: string, size = FONT_SIZE): number {
  return [...s].length * size * 0.6;
}

/** XML text of an element tree; attributes in the order they were set. */
export function serialise(node: SvgNode): string {
  return markup(node.node);
}

/** How element trees become text: our own XML serialiser, byte-identical run to run, unless `useDomMarkup`. */
let markup: (node: Node) => string = serialiseNode;

/**
 * Serialise element trees by the DOM's own `outerHTML` from now on: for a browser page that puts
 * the text straight back into itself (the live report's redraw, as innerHTML), where the text
 * need not be byte-stable XML, and the browser's serialiser takes a fraction of the time that
 * ours spends reading attributes through the DOM.
 */
export function useDomMarkup(): void {
  markup = (node) => (node as Element).outerHTML;
}

function serialiseNode(node: Node): string {
  if (node.nodeType === 3) return escapeXml(node.nodeValue ?? '');
  if (node.nodeType !== 1) return '';
  const element = node as Element;
  // Plain loops and one string: a live report serialises every element of its page on each
  // redraw, and the arrays of map-and-join were a third of that time.
  let text = `<${element.nodeName}`;
  const { attributes, childNodes } = element;
  for (let i = 0; i < attributes.length; i++) {
    const a = attributes[i]!;
    text += ` ${a.name}="${escapeXml(a.value)}"`;
  }
  text += '>';
  for (let i = 0; i < childNodes.length; i++) text += serialiseNode(childNodes[i]!);
  return `${text}</${element.nodeName}>`;
}

export type Attrs = Readonly<Record<string, string | number | undefined>>;

/**
 * Attributes go onto the element svg.js made, as text: every value is already a string here
 * (numbers through `num`), so svg.js's own parsing of values in `attr` would only cost time
 * (measured: about a fifth of a live report's redraw at 64 contactors).
 */
function setAttrs(node: SvgNode, attrs: Attrs): void {
  const element = node.node as Element;
  for (const name in attrs) {
    const value = attrs[name];
    if (value !== undefined) element.setAttribute(name, typeof value === 'number' ? num(value) : value);
  }
}

/** A child element; number attributes are rounded, undefined ones left out. */
export function el(parent: SvgNode, name: string, attrs: Attrs = {}): SvgNode {
  // svg.js declares element() as returning the parent; at run time it returns the new child.
  const child = parent.element(name) as SvgNode;
  setAttrs(child, attrs);
  return child;
}

/** A <text> element holding `content` as a text node (escaped on serialisation). */
export function label(parent: SvgNode, content: string, attrs: Attrs): SvgNode {
  return appendText(el(parent, 'text', attrs), content);
}

function appendText(node: SvgNode, content: string): SvgNode {
  node.node.appendChild(window.document.createTextNode(content));
  return node;
}

/** Attributes that draw a white outline behind text, so labels stay legible over fills and lines. */
export const TEXT_HALO: Attrs = { stroke: INK.halo, 'stroke-width': 3, 'stroke-linejoin': 'round', 'paint-order': 'stroke' };

/** Plot rectangle in px: x0 < x1 left to right, y0 < y1 top to bottom. */
export interface Frame {
  x0: number;
  x1: number;
  y0: number;
  y1: number;
}

/**
 * The root <svg> with a white ground and an accessible <title>. The size can be changed later
 * with `resizeDocument` (charts that keep an aspect ratio crop to their content).
 */
export function createDocument(width: number, height: number, title: string | undefined): SvgNode {
  const root = SVG();
  setAttrs(root, { width, height, viewBox: `0 0 ${num(width)} ${num(height)}`, 'font-family': 'sans-serif', 'font-size': FONT_SIZE, fill: INK.text });
  if (title !== undefined) appendText(el(root, 'title'), title);
  el(root, 'rect', { class: 'background', width, height, fill: INK.background });
  return root;
}

export function resizeDocument(root: SvgNode, width: number, height: number): void {
  setAttrs(root, { width, height, viewBox: `0 0 ${num(width)} ${num(height)}` });
  for (const child of Array.from(root.node.childNodes)) {
    if (child.nodeType === 1 && (child as Element).getAttribute('class') === 'background') {
      (child as Element).setAttribute('width', num(width));
      (child as Element).setAttribute('height', num(height));
    }
  }
}

/**
 * A nested <svg> whose viewport is the frame: its content is clipped there (the SVG default for
 * inner viewports) and keeps the chart's coordinates, without ids or <clipPath>.
 */
export function clipTo(parent: SvgNode, frame: Frame): SvgNode {
  const x = frame.x0;
  const y = frame.y0;
  const w = frame.x1 - frame.x0;
  const h = frame.y1 - frame.y0;
  return el(parent, 'svg', { x, y, width: w, height: h, viewBox: `${num(x)} ${num(y)} ${num(w)} ${num(h)}`, overflow: 'hidden' });
}

/** Outline of a marker of about 2r across, centred on the origin. */
/** The outline of a marker of radius r centred at (cx, cy), in absolute path commands. */
function markerPath(shape: MarkerShape, r: number, cx = 0, cy = 0): string {
  const p = (x: number, y: number) => `${num(cx + x)},${num(cy + y)}`;
  const radii = `${num(r)},${num(r)}`;
  switch (shape) {
    case 'circle':
      return `M${p(r, 0)}A${radii},0,1,1,${p(-r, 0)}A${radii},0,1,1,${p(r, 0)}Z`;
    case 'square': {
      const s = 0.89 * r; // same area as the circle
      return `M${p(-s, -s)}H${num(cx + s)}V${num(cy + s)}H${num(cx - s)}Z`;
    }
    case 'triangle':
      return `M${p(0, -1.25 * r)}L${p(1.1 * r, 0.65 * r)}L${p(-1.1 * r, 0.65 * r)}Z`;
    case 'triangleDown':
      return `M${p(0, 1.25 * r)}L${p(1.1 * r, -0.65 * r)}L${p(-1.1 * r, -0.65 * r)}Z`;
    case 'diamond':
      return `M${p(0, -1.3 * r)}L${p(r, 0)}L${p(0, 1.3 * r)}L${p(-r, 0)}Z`;
    case 'cross':
      return `M${p(-r, -r)}L${p(r, r)}M${p(-r, r)}L${p(r, -r)}`;
    case 'plus':
      return `M${p(-1.2 * r, 0)}L${p(1.2 * r, 0)}M${p(0, -1.2 * r)}L${p(0, 1.2 * r)}`;
  }
}

const MARKER_RADIUS = 3.5;

/** A marker at (x, y). Open shapes (cross, plus) are stroked, the others filled. */
export function marker(parent: SvgNode, shape: MarkerShape, x: number, y: number, colour: string, halo = false): SvgNode {
  const open = shape === 'cross' || shape === 'plus';
  return el(parent, 'path', {
    class: 'marker',
    transform: `translate(${num(x)},${num(y)})`,
    d: markerPath(shape, MARKER_RADIUS),
    fill: open ? 'none' : colour,
    stroke: open ? colour : halo ? INK.halo : undefined,
    'stroke-width': open ? 1.6 : halo ? 1 : undefined,
  });
}

/**
 * Many markers of one shape and colour as one path element (`marker-run`): a chart of thousands
 * of contactors otherwise builds thousands of DOM elements, and the DOM emulation's insertion
 * cost grows with the number of siblings (at 16 384 contactors the charts took 5.4 s).
 */
export function markerRun(parent: SvgNode, shape: MarkerShape, points: ReadonlyArray<readonly [number, number]>, colour: string): SvgNode {
  const open = shape === 'cross' || shape === 'plus';
  return el(parent, 'path', {
    class: 'marker-run',
    d: points.map(([x, y]) => markerPath(shape, MARKER_RADIUS, x, y)).join(''),
    fill: open ? 'none' : colour,
    stroke: open ? colour : undefined,
    'stroke-width': open ? 1.6 : undefined,
  });
}

/**
 * Hatches laid over category fills so that classes differ in greyscale too: hatch k of a
 * category k (k ≥ 1; category 0 stays plain). Tiles are 6 px, seamless.
 * Ids are fixed and the content of each id is always the same, so several charts inlined in
 * one page may repeat a definition without changing each other's look.
 */
const HATCHES = [
  'M0,6L6,0M-1,1L1,-1M5,7L7,5', // rising diagonal
  'M0,0L6,6M-1,5L1,7M5,-1L7,1', // falling diagonal
  'M0,3H6', // horizontal
  'M3,0V6', // vertical
  'M0,3H6M3,0V6', // grid
  'M3,3h0.01', // dots (a round cap on a tiny stroke)
] as const;

function hatchId(k: number): string {
  return `stratiflow-hatch-${((k - 1) % HATCHES.length) + 1}`;
}

/** The fill that lays hatch k over a plain fill, or undefined for category 0. */
export function hatchFill(k: number): string | undefined {
  return k === 0 ? undefined : `url(#${hatchId(k)})`;
}

/** <defs> with the hatches of categories 1 … count−1. */
export function hatchDefs(root: SvgNode, count: number): void {
  if (count < 2) return;
  const defs = el(root, 'defs');
  for (let k = 1; k < Math.min(count, HATCHES.length + 1); k++) {
    const pattern = el(defs, 'pattern', { id: hatchId(k), width: 6, height: 6, patternUnits: 'userSpaceOnUse' });
    el(pattern, 'path', { d: HATCHES[k - 1], stroke: '#000000', 'stroke-opacity': 0.5, 'stroke-width': k === 6 ? 2.2 : 1, 'stroke-linecap': 'round', fill: 'none' });
  }
}

/** A legend entry: its text and a sample drawn in a SWATCH_WIDTH × row box centred at (cx, cy). */
export interface LegendEntry {
  text: string;
  swatch: (parent: SvgNode, cx: number, cy: number) => void;
}

const SWATCH_WIDTH = 24;
const LEGEND_ROW = 16;
const LEGEND_GAP = 14;

function entryWidth(entry: LegendEntry): number {
  return SWATCH_WIDTH + 5 + textWidth(entry.text) + LEGEND_GAP;
}

/** Left edges and rows of entries flowed left to right within `width`. */
function flowLegend(entries: readonly LegendEntry[], width: number): { x: number; row: number }[] {
  let x = 0;
  let row = 0;
  return entries.map((entry) => {
    const w = entryWidth(entry);
    if (x > 0 && x + w - LEGEND_GAP > width) {
      x = 0;
      row++;
    }
    const place = { x, row };
    x += w;
    return place;
  });
}

/** Size of the legend flowed within `width`: its height, and the width its longest row takes. */
export function legendSize(entries: readonly LegendEntry[], width: number): { width: number; height: number } {
  if (entries.length === 0) return { width: 0, height: 0 };
  const places = flowLegend(entries, width);
  const rowEnds = places.map((p, i) => p.x + entryWidth(entries[i]) - LEGEND_GAP);
  return { width: (maxOf(rowEnds) ?? -Infinity), height: (places[places.length - 1].row + 1) * LEGEND_ROW };
}

/** Entries in rows from (x, y), wrapping at `width`. */
export function drawLegend(parent: SvgNode, entries: readonly LegendEntry[], x: number, y: number, width: number): void {
  if (entries.length === 0) return;
  const g = el(parent, 'g', { class: 'legend' });
  flowLegend(entries, width).forEach((place, i) => {
    const cy = y + place.row * LEGEND_ROW + LEGEND_ROW / 2;
    const left = x + place.x;
    entries[i].swatch(g, left + SWATCH_WIDTH / 2, cy);
    label(g, entries[i].text, { x: left + SWATCH_WIDTH + 5, y: cy, dy: '0.32em' });
  });
}

/** A line sample for a legend, with an optional marker in its middle. */
export function lineSwatch(colour: string, dashed: boolean, shape?: MarkerShape, width = 1.8): LegendEntry['swatch'] {
  return (parent, cx, cy) => {
    el(parent, 'line', { x1: cx - SWATCH_WIDTH / 2, y1: cy, x2: cx + SWATCH_WIDTH / 2, y2: cy, stroke: colour, 'stroke-width': width, 'stroke-dasharray': dashed ? DASH : undefined });
    if (shape) marker(parent, shape, cx, cy, colour);
  };
}

/** A filled square sample for a legend, with hatch k over it. */
export function fillSwatch(colour: string, k: number): LegendEntry['swatch'] {
  return (parent, cx, cy) => {
    const box = { x: cx - 6, y: cy - 6, width: 12, height: 12 };
    el(parent, 'rect', { ...box, fill: colour, stroke: INK.axis, 'stroke-width': 0.5 });
    const hatch = hatchFill(k);
    if (hatch) el(parent, 'rect', { ...box, fill: hatch });
  };
}

/** A tick at pixel `at`; an empty label draws a short unlabelled (minor) tick. */
export interface PixelTick {
  at: number;
  label: string;
}

export function drawAxisBottom(parent: SvgNode, frame: Frame, ticks: readonly PixelTick[], title: string, grid: boolean): void {
  const g = el(parent, 'g', { class: 'axis x' });
  for (const t of ticks) {
    if (grid && t.label !== '') el(g, 'line', { class: 'grid', x1: t.at, y1: frame.y0, x2: t.at, y2: frame.y1, stroke: INK.grid });
    el(g, 'line', { class: 'tick', x1: t.at, y1: frame.y1, x2: t.at, y2: frame.y1 + (t.label === '' ? TICK_LENGTH / 2 : TICK_LENGTH), stroke: INK.axis });
    if (t.label !== '') label(g, t.label, { x: t.at, y: frame.y1 + TICK_LENGTH + FONT_SIZE + 1, 'text-anchor': 'middle' });
  }
  el(g, 'line', { class: 'domain', x1: frame.x0, y1: frame.y1, x2: frame.x1, y2: frame.y1, stroke: INK.axis });
  label(g, title, { class: 'title', x: (frame.x0 + frame.x1) / 2, y: frame.y1 + TICK_LENGTH + 2 * FONT_SIZE + 8, 'text-anchor': 'middle' });
}

export function drawAxisLeft(parent: SvgNode, frame: Frame, ticks: readonly PixelTick[], title: string, grid: boolean, titleX: number): void {
  const g = el(parent, 'g', { class: 'axis y' });
  for (const t of ticks) {
    if (grid && t.label !== '') el(g, 'line', { class: 'grid', x1: frame.x0, y1: t.at, x2: frame.x1, y2: t.at, stroke: INK.grid });
    el(g, 'line', { class: 'tick', x1: frame.x0 - (t.label === '' ? TICK_LENGTH / 2 : TICK_LENGTH), y1: t.at, x2: frame.x0, y2: t.at, stroke: INK.axis });
    if (t.label !== '') label(g, t.label, { x: frame.x0 - TICK_LENGTH - 3, y: t.at, dy: '0.32em', 'text-anchor': 'end' });
  }
  el(g, 'line', { class: 'domain', x1: frame.x0, y1: frame.y0, x2: frame.x0, y2: frame.y1, stroke: INK.axis });
  const mid = (frame.y0 + frame.y1) / 2;
  label(g, title, { class: 'title', transform: `translate(${num(titleX)},${num(mid)}) rotate(-90)`, 'text-anchor': 'middle' });
}

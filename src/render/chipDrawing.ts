/**
 * The solved chip in plan view, as one SVG: every channel at its node coordinates, two-phase
 * contactors as two bands split by the interface at the solved holdup, single-phase channels in
 * their phase's colour, flow direction, outlet split states, backflow, channels over the pressure
 * rating, a legend, a scale bar, the title and key figures; optionally the contactors coloured by
 * their approach to equilibrium (an ExtractionColouring of ./extractionCharts.ts) with its colour
 * bar. Exports `chipDrawing`, `PHASE_COLOURS` and the option type. Pure: solved chip in, SVG
 * text out; no I/O.
 *
 * Conventions a reader needs (also stated in the drawing):
 * - A contactor's near side (the phase arriving through the merge's first inlet) is drawn on the
 *   left of a traveller moving downstream (merge → split). Each contactor's walls and interface
 *   are drawn in its own frame: a unit square mapped onto the channel by its `transform`, u along
 *   (0 at the merge), v across (0 at the near wall, 1 at the far wall). The interface is the line
 *   v = h, h the width fraction of the near lane written with FRACTION_DIGITS decimals, so its
 *   position across the drawn channel is exact to 1e-7 of the drawn width whatever the rounding
 *   of the frame. The coloured bands beside it are drawn in screen coordinates (rounded to
 *   0.01 px) so that hatches and stripes keep their size.
 * - Contactors with stacked layers cannot show their interface in plan view; their bands give
 *   the share of the depth instead, as if the section were turned on its side.
 * - Without coordinates for every node the graph is laid out by dagre (layered drawing), and the
 *   drawing says that it is not to scale.
 */
import dagre from '@dagrejs/dagre';
import { scaleLinear } from 'd3-scale';
import type { SolvedChip } from '../analyses/chip.js';
import type { ChipSegment, PhaseName } from '../network/model.js';
import { DISPLAY, fmt, show } from '../units/format.js';
import { approachColour, type ExtractionColouring } from './extractionCharts.js';
import { INK, OKABE_ITO, viridis } from './palette.js';
import {
  FONT_SIZE, TEXT_HALO, TITLE_SIZE, createDocument, drawLegend, el, hatchDefs, hatchFill, label, legendSize, num, serialise, textWidth,
  type LegendEntry, type SvgNode,
} from './svg.js';
import { extent, max as maxOf, min as minOf } from 'd3-array';

export interface ChipDrawingOptions {
  /** 'phase' (default): channels in their phase's colour; 'pressure': nodes and single-phase channels by pressure. */
  colourBy?: 'phase' | 'pressure';
  /**
   * Factor by which channel widths are drawn wider than the length scale. Default: the smallest
   * of 1, 2, 5, 10, … that makes the narrowest contactor MIN_CONTACTOR_PX wide, as long as the
   * contactors do not overlap. With automatic placement it multiplies the automatic width scale.
   */
  widthScale?: number;
  /**
   * Colour each contactor named in `fill` by its approach to equilibrium (both bands, phase B
   * still hatched), label it where there is room, and add the colour bar of the 0 … 1 scale.
   * Contactors not named keep their phase colours.
   */
  extraction?: ExtractionColouring;
}

/**
 * Phase colours from Okabe & Ito (2008, see ./palette.ts), the same as the first two series of
 * the charts (./chipCharts.ts puts phase A first): sky blue and vermillion stay apart under
 * protan, deutan and tritan vision. For greyscale print phase B also carries the hatch that the
 * bar charts lay over their second group, and the interface is a black line between the bands.
 */
export const PHASE_COLOURS: Record<PhaseName, string> = { A: OKABE_ITO.skyBlue, B: OKABE_ITO.vermillion };
const PHASE_B_HATCH = hatchFill(1)!;
const MIXED = 'url(#stratiflow-chip-mixed)';
/** Backflow: yellow, the one Okabe–Ito colour used for neither phase, behind a double arrowhead. */
const BACKFLOW_COLOUR = OKABE_ITO.yellow;

/** Decimals of band and interface positions inside a contactor's unit frame. */
export const FRACTION_DIGITS = 7;

const PAD = 16;
const LINE = 15;
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
const ARROW = 4;
/** Split labels need neighbours at least this far apart, px (a line of text and some air). */
const MIN_LABEL_PITCH = 18;
const COLOUR_BAR = { gap: 24, width: 12, room: 90 };
const MIN_CANVAS_WIDTH = 760;

/** A continuous colour scale for the bar beside the chip: SI domain, display factor and title. */
interface ColourScale {
  kind: 'pressure' | 'approach';
  title: string;
  domain: [number, number];
  factor: number;
  colour: (v: number) => string;
}

const PRESSURE_TITLE = 'pressure (kPa)';

/** Width a colour bar takes to the right of the chip: gap, bar, tick labels, and its title above. */
function colourBarRoom(title: string): number {
  return COLOUR_BAR.gap + Math.max(COLOUR_BAR.width + COLOUR_BAR.room, textWidth(title));
}

/** One value rounded to FRACTION_DIGITS decimals, as attribute text. */
function frac(v: number): string {
  const k = 10 ** FRACTION_DIGITS;
  return String(Math.round(v * k) / k + 0);
}

/** The smallest of 1, 2, 5 × 10^k not below v (v > 0). */
function niceCeil(v: number): number {
  const decade = 10 ** Math.floor(Math.log10(v));
  return [1, 2, 5, 10].map((m) => m * decade).find((n) => n >= v * (1 - 1e-12))!;
}

/** The largest of 1, 2, 5 × 10^k not above v (v > 0). */
function niceFloor(v: number): number {
  const decade = 10 ** Math.floor(Math.log10(v));
  return [5, 2, 1].map((m) => m * decade).find((n) => n <= v * (1 + 1e-12))!;
}

/** Plan-view width of a channel (the top width of an etched or trapezoidal one), m. */
function planWidth(segment: ChipSegment): number {
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

interface Point {
  x: number;
  y: number;
}

interface Placement {
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
function closestPair(points: Point[]): number {
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

function placeToScale(solved: SolvedChip, contactors: ChipSegment[], widthScale: number | undefined): Placement {
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

function placeAutomatically(solved: SolvedChip, contactors: ChipSegment[], widthScale: number | undefined): Placement {
  const { chip } = solved;
  const widths = chip.segments.map(planWidth);
  const narrow = minOf((contactors.length > 0 ? contactors : chip.segments).map(planWidth)) ?? Infinity;
  let k = niceCeil(AUTO_WIDTH.contactor / narrow);
  const widestPlan = maxOf(widths) ?? -Infinity;
  if (widestPlan * k > AUTO_WIDTH.widest) k = niceFloor(AUTO_WIDTH.widest / widestPlan);
  k *= widthScale ?? 1;
  const widest = widestPlan * k;
  const g = new dagre.graphlib.Graph({ multigraph: true });
  g.setGraph({ rankdir: 'TB', nodesep: widest + 28, ranksep: 70 + widest, edgesep: widest + 12, marginx: 0, marginy: 0 });
  g.setDefaultEdgeLabel(() => ({}));
  // dagre keeps its graph in plain objects keyed by name: it is given index names, so that any id
  // of the layout (`__proto__`, `hasOwnProperty`) stays data.
  const name = new Map(chip.nodes.map((n, i) => [n.id, `n${i}`]));
  for (const n of chip.nodes) g.setNode(name.get(n.id)!, { width: 12, height: 12 });
  // Contactors span two ranks and pull straight, so that they stand out as the longest channels.
  const isContactor = new Set(contactors.map((c) => c.id));
  chip.segments.forEach((s, e) => g.setEdge(name.get(s.from)!, name.get(s.to)!, isContactor.has(s.id) ? { minlen: 2, weight: 4 } : {}, `e${e}`));
  dagre.layout(g);
  const raw = chip.nodes.map((n) => g.node(name.get(n.id)!) as { x: number; y: number });
  const minX = minOf(raw.map((p) => p.x)) ?? Infinity;
  const minY = minOf(raw.map((p) => p.y)) ?? Infinity;
  const at = new Map(chip.nodes.map((n, i) => [n.id, { x: raw[i]!.x - minX, y: raw[i]!.y - minY }]));
  const width = (maxOf(raw.map((p) => p.x)) ?? -Infinity) - minX;
  const height = (maxOf(raw.map((p) => p.y)) ?? -Infinity) - minY;
  const missing = chip.nodes.filter((n) => n.x === undefined || n.y === undefined).length;
  const per = 1 / k; // m per px
  const note =
    `Positions laid out automatically by the dagre graph-layout library (${missing} of ${chip.nodes.length} nodes have no coordinates): ` +
    `a schematic, lengths not to scale; channel widths drawn at 1 px per ${show(per, DISPLAY.length, 3)}.`;
  return { at, width, height, pxPerMetre: null, widthPx: k, note };
}

interface ChannelFrame {
  /** The SVG transform that maps the unit square onto the channel. */
  transform: string;
  /** Screen point of (u along, v across). */
  at: (u: number, v: number) => Point;
}

/** Affine map of the unit square onto a channel from a to b, drawn w px wide, near wall (v = 0) on the left. */
function channelFrame(a: Point, b: Point, w: number): ChannelFrame {
  const dx = b.x - a.x;
  const dy = b.y - a.y;
  const length = Math.hypot(dx, dy);
  // On screen (y down) a traveller heading along (dx, dy) has the right hand at (−dy, dx).
  const rx = (-dy / length) * w;
  const ry = (dx / length) * w;
  const m = [dx, dy, rx, ry, a.x - rx / 2, a.y - ry / 2].map((v) => Number(num(v)));
  return {
    transform: `matrix(${m.join(',')})`,
    at: (u, v) => ({ x: m[0]! * u + m[2]! * v + m[4]!, y: m[1]! * u + m[3]! * v + m[5]! }),
  };
}

/** The part v0 ≤ v ≤ v1 of a channel, as path text in screen coordinates. */
function lanePath(frame: ChannelFrame, v0: number, v1: number): string {
  const corners = [frame.at(0, v0), frame.at(1, v0), frame.at(1, v1), frame.at(0, v1)];
  return corners.map((p, i) => `${i === 0 ? 'M' : 'L'}${num(p.x)},${num(p.y)}`).join('') + 'Z';
}

/** Arrowhead of size r at p pointing along angle θ, as path text. */
function arrowhead(p: Point, theta: number, r: number, offset = 0): string {
  const c = Math.cos(theta);
  const s = Math.sin(theta);
  const at = (u: number, v: number) => `${num(p.x + (u + offset) * c - v * s)},${num(p.y + (u + offset) * s + v * c)}`;
  return `M${at(r, 0)}L${at(-r, r * 0.9)}L${at(-r * 0.4, 0)}L${at(-r, -r * 0.9)}Z`;
}

function percent(v: number): string {
  return `${(100 * v).toFixed(2)} %`;
}

const kPa = (p: number) => `${fmt(p * DISPLAY.pressure.factor, 4)} kPa`;
const flowText = (q: number) => `${fmt(q * DISPLAY.flow.factor, 4)} µL/min`;

export function chipDrawing(solved: SolvedChip, options: ChipDrawingOptions = {}): string {
  const { chip, network, result } = solved;
  const byPressure = options.colourBy === 'pressure';
  const { extraction } = options;
  const contactorSegments = network.contactors.map((c) => c.segment);
  const toScale = chip.nodes.every((n) => Number.isFinite(n.x) && Number.isFinite(n.y));
  const place = toScale ? placeToScale(solved, contactorSegments, options.widthScale) : placeAutomatically(solved, contactorSegments, options.widthScale);
  const drawnWidth = (s: ChipSegment) => planWidth(s) * place.widthPx;
  const widest = maxOf(chip.segments.map(drawnWidth)) ?? -Infinity;
  const margin = Math.max(48, widest / 2 + 28);

  // Header lines and the legend decide where the chip starts.
  const heads = keyFigures(solved);
  const legend = legendEntries(chip.phases.A.label, chip.phases.B.label, byPressure, extraction !== undefined);
  const barTitles = [...(byPressure ? [PRESSURE_TITLE] : []), ...(extraction ? [extraction.title] : [])];
  const barRoom = barTitles.reduce((sum, title) => sum + colourBarRoom(title), 0);
  const headWidth = Math.max(textWidth(chip.name, TITLE_SIZE), ...heads.map((h) => textWidth(h.text)));
  const width = Math.max(MIN_CANVAS_WIDTH, place.width + 2 * margin + barRoom, Math.min(headWidth + 2 * PAD, 1400));
  const legendBox = legendSize(legend, width - 2 * PAD);
  const chipTop = PAD + TITLE_SIZE + 6 + heads.length * LINE + 8 + legendBox.height + margin;
  const chipLeft = margin;
  const captions = [
    place.note,
    'Contactors: phase A and B as two bands, the interface as a black line at the solved holdup; the near side (first merge inlet) lies on the left looking downstream.',
    ...(network.contactors.some((c) => c.section.orientation === 'stacked')
      ? ['Contactors with stacked layers are drawn as if turned on their side: their bands show the shares of the depth.']
      : []),
    ...(extraction ? [extractionCaption(extraction, contactorSegments)] : []),
    'A model prediction for planning: stay below the pressure rating of the chip, fittings and tubing, and follow your lab safety rules.',
  ];
  const captionLines = captions.flatMap((c) => wrap(c, width - 2 * PAD));
  const footTop = chipTop + place.height + margin;
  const height = footTop + (place.pxPerMetre !== null ? 34 : 8) + captionLines.length * LINE + PAD;

  const root = createDocument(width, height, `${chip.name}: solved chip`);
  defs(root);
  label(root, chip.name, { class: 'chip-title', x: PAD, y: PAD + TITLE_SIZE, 'font-size': TITLE_SIZE, 'font-weight': 'bold' });
  const headGroup = el(root, 'g', { class: 'key-figures' });
  heads.forEach((h, i) => label(headGroup, h.text, { x: PAD, y: PAD + TITLE_SIZE + 6 + (i + 1) * LINE - 3, 'font-weight': h.strong ? 'bold' : undefined }));
  drawLegend(root, legend, PAD, PAD + TITLE_SIZE + 6 + heads.length * LINE + 8, width - 2 * PAD);

  const at = new Map([...place.at].map(([id, p]) => [id, { x: p.x + chipLeft, y: p.y + chipTop }]));
  const nodeResult = new Map(result.nodes.map((n) => [n.id, n]));
  const nodePressure = (id: string) => {
    const n = nodeResult.get(id)!;
    return n.pressureA !== undefined && n.pressureB !== undefined ? (n.pressureA + n.pressureB) / 2 : n.pressure;
  };
  const nodePeak = (id: string) => {
    const n = nodeResult.get(id)!;
    return Math.max(n.pressure, n.pressureA ?? -Infinity, n.pressureB ?? -Infinity);
  };
  const pressures = result.nodes.map((n) => nodePressure(n.id)).filter(Number.isFinite);
  const pressureDomain: [number, number] = pressures.length ? (extent(pressures) as [number, number]) : [0, 1];
  if (pressureDomain[0] === pressureDomain[1]) pressureDomain[1] = pressureDomain[0] + 1;
  const pressureColour = (p: number) => viridis((p - pressureDomain[0]) / (pressureDomain[1] - pressureDomain[0]));

  const segmentResult = new Map(result.segments.map((s) => [s.id, s]));
  const drawable = chip.segments.filter((s) => {
    const a = at.get(s.from)!;
    const b = at.get(s.to)!;
    return Math.hypot(b.x - a.x, b.y - a.y) > 0.5;
  });
  const contactorIds = new Set(contactorSegments.map((s) => s.id));
  const plain = drawable.filter((s) => !contactorIds.has(s.id));

  // Underlays: channels over the pressure rating (dashed) and with backflow (solid), each per segment.
  const over = chip.maxPressure === undefined ? [] : drawable.filter((s) => Math.max(nodePeak(s.from), nodePeak(s.to)) > chip.maxPressure!);
  const overGroup = el(root, 'g', { class: 'over-rating-marks', fill: 'none', stroke: INK.text, 'stroke-dasharray': '5 3', 'stroke-linecap': 'butt' });
  for (const s of over) {
    const a = at.get(s.from)!;
    const b = at.get(s.to)!;
    el(overGroup, 'line', { class: 'over-rating', 'data-segment': s.id, x1: a.x, y1: a.y, x2: b.x, y2: b.y, 'stroke-width': drawnWidth(s) + 9 });
  }
  const reversedIds = new Set(result.segments.filter((s) => s.reversed).map((s) => s.id));
  const backGroup = el(root, 'g', { class: 'backflow-marks', fill: 'none', stroke: BACKFLOW_COLOUR, 'stroke-linecap': 'round' });
  for (const s of drawable.filter((d) => reversedIds.has(d.id))) {
    const a = at.get(s.from)!;
    const b = at.get(s.to)!;
    el(backGroup, 'line', { class: 'backflow-halo', 'data-segment': s.id, x1: a.x, y1: a.y, x2: b.x, y2: b.y, 'stroke-width': drawnWidth(s) + 8 });
  }

  // Single-phase and mixed channels: a dark outline layer under a fill layer, so joints merge.
  // Segments of one look share one path, which keeps large chips small.
  const fillOf = (id: string): string => {
    const r = segmentResult.get(id)!;
    return r.kind === 'single' ? PHASE_COLOURS[r.phase!] : MIXED;
  };
  const paths = (layer: SvgNode, cls: string, colour: (s: ChipSegment) => string, extra: number, only = plain) => {
    const groups = new Map<string, string[]>();
    for (const s of only) {
      const a = at.get(s.from)!;
      const b = at.get(s.to)!;
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
  if (byPressure) {
    for (const s of plain) {
      const a = at.get(s.from)!;
      const b = at.get(s.to)!;
      el(channels, 'line', { class: 'channel', 'data-segment': s.id, x1: a.x, y1: a.y, x2: b.x, y2: b.y, stroke: pressureColour((nodePressure(s.from) + nodePressure(s.to)) / 2), 'stroke-width': drawnWidth(s) });
    }
  } else {
    paths(channels, 'channel', (s) => fillOf(s.id), 0);
    const phaseB = plain.filter((s) => segmentResult.get(s.id)!.kind === 'single' && segmentResult.get(s.id)!.phase === 'B');
    paths(channels, 'hatch', () => PHASE_B_HATCH, 0, phaseB);
  }

  drawContactors(root, solved, at, drawnWidth, extraction);
  drawPorts(root, solved, at, drawnWidth, byPressure ? pressureColour : undefined, nodePressure);
  drawArrows(root, solved, drawable, at, drawnWidth);
  drawSplits(root, solved, at, drawnWidth);

  const foot = el(root, 'g', { class: 'caption' });
  let y = footTop;
  if (place.pxPerMetre !== null) {
    drawScaleBar(foot, PAD, y + 10, place.pxPerMetre);
    y += 34;
  }
  captionLines.forEach((text, i) => label(foot, text, { x: PAD, y: y + (i + 1) * LINE - 3 }));
  const scales: ColourScale[] = [];
  if (byPressure) scales.push({ kind: 'pressure', title: PRESSURE_TITLE, domain: pressureDomain, factor: DISPLAY.pressure.factor, colour: pressureColour });
  if (extraction) scales.push({ kind: 'approach', title: extraction.title, domain: [0, 1], factor: 1, colour: approachColour });
  let barLeft = chipLeft + place.width + margin / 2;
  for (const scale of scales) {
    drawColourBar(root, barLeft + COLOUR_BAR.gap, chipTop, Math.max(120, Math.min(place.height, 400)), scale);
    barLeft += colourBarRoom(scale.title);
  }
  return serialise(root);
}

/** The caption sentence of the extraction colouring, naming the contactors it leaves out. */
function extractionCaption(extraction: ExtractionColouring, contactors: ChipSegment[]): string {
  const left = contactors.filter((s) => !extraction.fill.has(s.id)).length;
  return (
    `Contactors coloured by ${extraction.title} (0: no solute transferred, 1: at equilibrium by the outlet) in both bands, phase B hatched` +
    (left > 0 ? `; ${left} contactor${left === 1 ? '' : 's'} not analysed keep${left === 1 ? 's' : ''} the phase colours.` : '.')
  );
}

/** The lines under the title: convergence, throughput, spread, inlets, splits, backflow and pressure. */
function keyFigures(solved: SolvedChip): Array<{ text: string; strong?: boolean }> {
  const { chip, result } = solved;
  const phaseName = (p: PhaseName) => `${p} (${chip.phases[p].label})`;
  const { summary } = result;
  const sp = summary.spread;
  const leaking = result.splits.filter((s) => s.state !== 'pinned').length;
  const backflow = result.segments.filter((s) => s.reversed).length;
  const heads: Array<{ text: string; strong?: boolean }> = [];
  if (!result.converged) heads.push({ text: `NOT CONVERGED after ${result.iterations} steps: ${result.message ?? ''} — figures are from the last iterate`, strong: true });
  heads.push({ text: `throughput: ${phaseName('A')} ${flowText(summary.throughputA)} · ${phaseName('B')} ${flowText(summary.throughputB)}` });
  if (result.contactors.length > 0) {
    heads.push({ text: `spread between ${result.contactors.length} contactors: total flow max/min ${fmt(sp.total.ratio)}, CV ${(100 * sp.total.cv).toFixed(2)} % · holdup of A ${fmt(sp.holdup.min, 3)} … ${fmt(sp.holdup.max, 3)}` });
  }
  const inlets = summary.inlets.slice(0, 6).map((i) => `${i.id} ${kPa(i.pressure)} (${i.phase}, ${flowText(i.flow)})`);
  heads.push({ text: `inlets: ${inlets.join(' · ')}${summary.inlets.length > 6 ? ` and ${summary.inlets.length - 6} more` : ''}` });
  const rating = chip.maxPressure !== undefined ? ` (rating ${kPa(chip.maxPressure)})` : '';
  heads.push({
    text: `outlet splits: ${result.splits.length - leaking} of ${result.splits.length} pinned, ${leaking} leaking · backflow in ${backflow} segment${backflow === 1 ? '' : 's'} · highest pressure ${kPa(summary.maxPressure)}${rating}`,
    strong: leaking > 0 || backflow > 0,
  });
  return heads;
}

/** Fixed-content definitions: the hatch of phase B (shared with the charts) and the stripes of a mixed channel. */
function defs(root: SvgNode): void {
  hatchDefs(root, 2);
  const d = el(root, 'defs');
  const p = el(d, 'pattern', { id: 'stratiflow-chip-mixed', width: 8, height: 8, patternUnits: 'userSpaceOnUse', patternTransform: 'rotate(45)' });
  el(p, 'rect', { width: 4, height: 8, fill: PHASE_COLOURS.A });
  el(p, 'rect', { x: 4, width: 4, height: 8, fill: PHASE_COLOURS.B });
}

function legendEntries(labelA: string, labelB: string, byPressure: boolean, byApproach: boolean): LegendEntry[] {
  const band = (colour: string, hatch = false): LegendEntry['swatch'] => (g, cx, cy) => {
    el(g, 'rect', { x: cx - 10, y: cy - 5, width: 20, height: 10, fill: colour, stroke: INK.axis, 'stroke-width': 0.8 });
    if (hatch) el(g, 'rect', { x: cx - 10, y: cy - 5, width: 20, height: 10, fill: PHASE_B_HATCH });
  };
  return [
    { text: `phase A: ${labelA}`, swatch: band(PHASE_COLOURS.A) },
    { text: `phase B: ${labelB}`, swatch: band(PHASE_COLOURS.B, true) },
    {
      text: 'interface at the solved holdup',
      swatch: (g, cx, cy) => {
        el(g, 'rect', { x: cx - 10, y: cy - 6, width: 20, height: 7, fill: PHASE_COLOURS.A });
        el(g, 'rect', { x: cx - 10, y: cy + 1, width: 20, height: 5, fill: PHASE_COLOURS.B });
        el(g, 'rect', { x: cx - 10, y: cy + 1, width: 20, height: 5, fill: PHASE_B_HATCH });
        el(g, 'line', { x1: cx - 10, y1: cy + 1, x2: cx + 10, y2: cy + 1, stroke: '#000000', 'stroke-width': 1.5 });
      },
    },
    ...(byPressure ? [] : [{ text: 'both phases mixed (no interface)', swatch: band(MIXED) }]),
    ...(byApproach
      ? [{
          text: 'contactor by approach to equilibrium (colour bar), B hatched',
          swatch: (g: SvgNode, cx: number, cy: number) => {
            [0.15, 0.5, 0.85].forEach((t, i) => void el(g, 'rect', { x: cx - 10 + (20 * i) / 3, y: cy - 6, width: 20 / 3, height: 12, fill: approachColour(t) }));
            el(g, 'rect', { x: cx - 10, y: cy + 1, width: 20, height: 5, fill: PHASE_B_HATCH });
            el(g, 'line', { x1: cx - 10, y1: cy + 1, x2: cx + 10, y2: cy + 1, stroke: '#000000', 'stroke-width': 1.5 });
          },
        }]
      : []),
    { text: 'flow direction', swatch: (g, cx, cy) => void el(g, 'path', { d: arrowhead({ x: cx, y: cy }, 0, ARROW + 1), fill: INK.halo, stroke: INK.text, 'stroke-width': 1 }) },
    {
      text: 'backflow (against the design direction)',
      swatch: (g, cx, cy) => {
        el(g, 'line', { x1: cx - 11, y1: cy, x2: cx + 11, y2: cy, stroke: BACKFLOW_COLOUR, 'stroke-width': 12 });
        el(g, 'path', { d: arrowhead({ x: cx, y: cy }, 0, ARROW + 1, -3) + arrowhead({ x: cx, y: cy }, 0, ARROW + 1, 4), fill: BACKFLOW_COLOUR, stroke: INK.text, 'stroke-width': 1 });
      },
    },
    { text: 'outlet split pinned', swatch: (g, cx, cy) => void el(g, 'circle', { cx, cy, r: 4.5, fill: INK.halo, stroke: INK.text, 'stroke-width': 1.6 }) },
    { text: 'split leaking A into the B outlet (purity of that outlet)', swatch: (g, cx, cy) => void el(g, 'path', { d: leakTriangle({ x: cx, y: cy }, 0, 6), fill: PHASE_COLOURS.A, stroke: INK.text, 'stroke-width': 1.4 }) },
    { text: 'split leaking B into the A outlet', swatch: (g, cx, cy) => void el(g, 'path', { d: leakTriangle({ x: cx, y: cy }, Math.PI, 6), fill: PHASE_COLOURS.B, stroke: INK.text, 'stroke-width': 1.4 }) },
    { text: 'above the pressure rating', swatch: (g, cx, cy) => void el(g, 'line', { x1: cx - 11, y1: cy, x2: cx + 11, y2: cy, stroke: INK.text, 'stroke-width': 9, 'stroke-dasharray': '5 3' }) },
    { text: 'inlet', swatch: (g, cx, cy) => void el(g, 'circle', { cx, cy, r: 5, fill: INK.halo, stroke: INK.text, 'stroke-width': 1.6 }) },
    { text: 'outlet', swatch: (g, cx, cy) => void el(g, 'rect', { x: cx - 5, y: cy - 5, width: 10, height: 10, fill: INK.halo, stroke: INK.text, 'stroke-width': 1.6 }) },
  ];
}

function drawContactors(
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
      class: `contactor${c.section.orientation === 'stacked' ? ' stacked' : ''}${approachFill !== undefined ? ' by-approach' : ''}`,
      'data-segment': c.segment.id,
      'data-index': String(row.index),
      'data-near-phase': nearIsA ? 'A' : 'B',
      'data-holdup-a': frac(row.holdupA),
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

function drawPorts(
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

function drawArrows(root: SvgNode, solved: SolvedChip, drawable: ChipSegment[], at: Map<string, Point>, drawnWidth: (s: ChipSegment) => number): void {
  const { result } = solved;
  const byId = new Map(result.segments.map((s) => [s.id, s]));
  const peak = maxOf(result.segments, (s) => Math.abs(s.flowA + s.flowB)) ?? 0;
  const normal: string[] = [];
  const g = el(root, 'g', { class: 'flow-direction' });
  const back = el(root, 'g', { class: 'backflow-arrows', fill: BACKFLOW_COLOUR, stroke: INK.text, 'stroke-width': 1 });
  for (const s of drawable) {
    const r = byId.get(s.id)!;
    const q = r.flowA + r.flowB;
    // Backflow is marked wherever the solution flags it; other arrows only where flow is not nil.
    if (!r.reversed && !(Math.abs(q) > 1e-9 * peak)) continue;
    const a = at.get(s.from)!;
    const b = at.get(s.to)!;
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

/** A triangle of size r at p pointing along θ. */
function leakTriangle(p: Point, theta: number, r: number): string {
  const c = Math.cos(theta);
  const s = Math.sin(theta);
  const at = (u: number, v: number) => `${num(p.x + u * c - v * s)},${num(p.y + u * s + v * c)}`;
  return `M${at(r, 0)}L${at(-r * 0.6, r)}L${at(-r * 0.6, -r)}Z`;
}

function drawSplits(root: SvgNode, solved: SolvedChip, at: Map<string, Point>, drawnWidth: (s: ChipSegment) => number): void {
  const { network, result } = solved;
  const byId = new Map(result.splits.map((s) => [s.id, s]));
  const g = el(root, 'g', { class: 'splits' });
  const texts: Array<{ p: Point; theta: number; text: string }> = [];
  for (const c of network.contactors) {
    if (!c.split) continue;
    const s = byId.get(c.split.node.id)!;
    const a = at.get(c.segment.from)!;
    const p = at.get(c.segment.to)!;
    const along = Math.atan2(p.y - a.y, p.x - a.x);
    const w = drawnWidth(c.segment);
    const title = `split ${s.id} (${s.contactor}): ${s.state}; p_B − p_A ${fmt(s.pressureDifference)} Pa, window ${fmt(s.window[0])} … ${fmt(s.window[1])} Pa; outlet purities ${percent(s.nearPhase === 'A' ? s.purityNear : s.purityFar)} A, ${percent(s.nearPhase === 'A' ? s.purityFar : s.purityNear)} B`;
    const mark = el(g, 'g', { class: `split ${s.state}`, 'data-split': s.id });
    appendTitle(mark, title);
    if (s.state === 'pinned') {
      el(mark, 'circle', { cx: p.x, cy: p.y, r: Math.max(4.5, Math.min(w * 0.4, 8)), fill: INK.halo, stroke: INK.text, 'stroke-width': 1.6 });
      continue;
    }
    // The triangle points across the channel end from the invading phase's side to the other one.
    const invader: PhaseName = s.state === 'leaking-A-to-B' ? 'A' : 'B';
    const towardFar = invader === s.nearPhase;
    const theta = along + (towardFar ? Math.PI / 2 : -Math.PI / 2);
    el(mark, 'path', { d: leakTriangle(p, theta, Math.max(7, Math.min(w * 0.8, 14))), fill: PHASE_COLOURS[invader], stroke: INK.text, 'stroke-width': 1.4 });
    const purity = invader === 'A' ? (s.nearPhase === 'B' ? s.purityNear : s.purityFar) : s.nearPhase === 'A' ? s.purityNear : s.purityFar;
    texts.push({ p, theta: along, text: `${invader}→${invader === 'A' ? 'B' : 'A'} ${(100 * purity).toFixed(1)} %` });
  }
  if (texts.length === 0) return;
  // Labels run downstream from the split; shown only where neighbours leave room for a line of text.
  const spacing = closestPair(texts.map((t) => t.p));
  if (spacing < MIN_LABEL_PITCH) return;
  const labels = el(g, 'g', { class: 'split-labels', 'font-size': FONT_SIZE - 1 });
  for (const t of texts) {
    const deg = (t.theta * 180) / Math.PI;
    const upright = Math.abs(deg) > 90 ? deg - 180 : deg;
    const anchor = Math.abs(deg) > 90 ? 'end' : 'start';
    label(labels, t.text, { ...TEXT_HALO, 'stroke-width': 2.5, transform: `translate(${num(t.p.x)},${num(t.p.y)}) rotate(${num(upright)})`, x: Math.abs(deg) > 90 ? -14 : 14, y: 0, dy: '0.32em', 'text-anchor': anchor });
  }
}

function appendTitle(node: SvgNode, text: string): void {
  const t = el(node, 'title');
  t.node.appendChild(t.node.ownerDocument!.createTextNode(text));
}

/** Words of `text` in lines no wider than `width` px (by the estimate of textWidth). */
function wrap(text: string, width: number): string[] {
  const lines: string[] = [];
  let line = '';
  for (const word of text.split(' ')) {
    const next = line === '' ? word : `${line} ${word}`;
    if (line !== '' && textWidth(next) > width) {
      lines.push(line);
      line = word;
    } else line = next;
  }
  return line === '' ? lines : [...lines, line];
}

/** A bar of a round length, about 120 px, with its length written above. */
function drawScaleBar(parent: SvgNode, x: number, y: number, pxPerMetre: number): void {
  const metres = niceFloor(120 / pxPerMetre);
  const w = metres * pxPerMetre;
  const g = el(parent, 'g', { class: 'scale-bar' });
  el(g, 'path', { d: `M${num(x)},${num(y)}V${num(y + 8)}H${num(x + w)}V${num(y)}`, fill: 'none', stroke: INK.text, 'stroke-width': 1.5 });
  el(g, 'rect', { x, y: y + 5, width: w / 2, height: 3, fill: INK.text });
  const text = show(metres, metres >= 1e-3 ? DISPLAY.lengthMm : DISPLAY.length);
  label(g, text, { x: x + w + 6, y: y + 8 });
}

function drawColourBar(root: SvgNode, x: number, y: number, h: number, scale: ColourScale): void {
  const { domain, colour } = scale;
  const g = el(root, 'g', { class: `colour-bar ${scale.kind}` });
  const strips = 48;
  const strip = el(g, 'g', { 'shape-rendering': 'crispEdges' });
  for (let k = 0; k < strips; k++) {
    const v = domain[0] + ((domain[1] - domain[0]) * (k + 0.5)) / strips;
    const top = y + h - (h * (k + 1)) / strips;
    el(strip, 'rect', { x, y: top, width: COLOUR_BAR.width, height: h / strips + 0.3, fill: colour(v) });
  }
  el(g, 'rect', { x, y, width: COLOUR_BAR.width, height: h, fill: 'none', stroke: INK.axis, 'stroke-width': 0.5 });
  const axis = scaleLinear().domain(domain.map((v) => v * scale.factor)).range([y + h, y]);
  const format = axis.tickFormat(5);
  for (const t of axis.ticks(5)) {
    el(g, 'line', { x1: x + COLOUR_BAR.width, y1: axis(t), x2: x + COLOUR_BAR.width + 5, y2: axis(t), stroke: INK.axis });
    label(g, format(t), { x: x + COLOUR_BAR.width + 8, y: axis(t), dy: '0.32em' });
  }
  label(g, scale.title, { class: 'title', x, y: y - 8 });
}

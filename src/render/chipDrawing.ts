/**
 * The solved chip in plan view, as one SVG: every channel at its node coordinates, two-phase
 * contactors as two bands split by the interface at the solved holdup, single-phase channels in
 * their phase's colour, flow direction, outlet split states, backflow, channels over the pressure
 * rating, a legend, a scale bar, the title and key figures; optionally the contactors coloured by
 * their approach to equilibrium (an ExtractionColouring of ./extractionCharts.ts) with its colour
 * bar. Exports `chipDrawing`, `PHASE_COLOURS`, `FRACTION_DIGITS` and the option type. Pure: solved
 * chip in, SVG text out; no I/O. The parts live in ./chipDrawing/: placement, geometry, channels,
 * contactors, marks (ports, arrows, splits), legend, captions, and the scale and colour bars.
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
 * - Without coordinates for every node the chip is drawn as a schematic (./chipDrawing/placement.ts:
 *   contactors side by side in the order of the layout, the other nodes beside the contactors they
 *   serve), and the drawing says that it is not to scale.
 * - Channels never hide each other: widths are narrowed where channels of different phases would
 *   touch, and channels that leave a node in the same direction run side by side
 *   (./chipDrawing/routes.ts).
 */
import { extent, max as maxOf } from 'd3-array';
import type { SolvedChip } from '../analyses/chip.js';
import type { ChipSegment } from '../network/model.js';
import { DISPLAY } from '../units/format.js';
import { approachColour, type ExtractionColouring } from './extractionCharts.js';
import { viridis } from './palette.js';
import { TITLE_SIZE, createDocument, drawLegend, el, label, legendSize, serialise, textWidth } from './svg.js';
import { COLOUR_BAR, PRESSURE_TITLE, colourBarRoom, drawColourBar, drawScaleBar, type ColourScale } from './chipDrawing/bars.js';
import { extractionCaption, keyFigures, wrap } from './chipDrawing/captions.js';
import { drawChannels, drawUnderlays } from './chipDrawing/channels.js';
import { drawContactors } from './chipDrawing/contactors.js';
import { defs, legendEntries } from './chipDrawing/legend.js';
import { drawArrows, drawPorts, drawSplits, legendLeakAngle } from './chipDrawing/marks.js';
import { placeAutomatically, placeToScale, planWidth, type Placement } from './chipDrawing/placement.js';
import { clearWidths, sideBySide } from './chipDrawing/routes.js';
import type { Point } from './chipDrawing/common.js';

export { FRACTION_DIGITS, PHASE_COLOURS } from './chipDrawing/common.js';

export interface ChipDrawingOptions {
  /** 'phase' (default): channels in their phase's colour; 'pressure': nodes and single-phase channels by pressure. */
  colourBy?: 'phase' | 'pressure';
  /**
   * Factor by which channel widths are drawn wider than the length scale. Default: the smallest
   * of 1, 2, 5, 10, … that makes the narrowest contactor MIN_CONTACTOR_PX (./chipDrawing/placement.ts) wide, as long as the
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

const PAD = 16;
const LINE = 15;
const MIN_CANVAS_WIDTH = 760;

interface Geometry {
  place: Placement;
  /** Drawn width of every segment, px. */
  width: Map<string, number>;
  narrowed: number;
  /** Ends of every plain segment as drawn, relative to the chip's top left. */
  routes: Map<string, [Point, Point]>;
}

/**
 * The last geometries, by the chip's segment list: a live report redraws the same chip after
 * every change of a setting, and its placement, widths and routes change only with the node
 * coordinates, the width scale and which segments carry which phase (the key).
 */
const GEOMETRIES = new WeakMap<readonly ChipSegment[], { key: string; geometry: Geometry }>();

/** Where every node and channel goes and how wide each is drawn (./chipDrawing/placement.ts, ./chipDrawing/routes.ts). */
function chipGeometry(solved: SolvedChip, widthScale: number | undefined): Geometry {
  const { chip, network, result } = solved;
  const segmentResult = new Map(result.segments.map((r) => [r.id, r]));
  const look = (s: ChipSegment) => {
    const r = segmentResult.get(s.id)!;
    return r.kind === 'single' ? r.phase! : 'two-phase';
  };
  const key = `${widthScale}|${chip.segments.map(look).join(',')}|${chip.nodes.map((n) => `${n.x},${n.y}`).join(';')}`;
  const cached = GEOMETRIES.get(chip.segments);
  if (cached && cached.key === key) return cached.geometry;
  const contactorSegments = network.contactors.map((c) => c.segment);
  const toScale = chip.nodes.every((n) => Number.isFinite(n.x) && Number.isFinite(n.y));
  const place = toScale ? placeToScale(solved, contactorSegments, widthScale) : placeAutomatically(solved, contactorSegments, widthScale);
  const wanted = (s: ChipSegment) => planWidth(s) * place.widthPx;
  const floor = (s: ChipSegment) => (place.pxPerMetre !== null ? Math.min(wanted(s), planWidth(s) * place.pxPerMetre) : Math.min(wanted(s), 2));
  // Each merge and split knows its contactor's direction, for the near side of its channels.
  const contactorEnds = new Map<string, [Point, Point]>();
  for (const c of network.contactors) {
    const pair: [Point, Point] = [place.at.get(c.segment.from)!, place.at.get(c.segment.to)!];
    contactorEnds.set(c.segment.from, pair);
    contactorEnds.set(c.segment.to, pair);
  }
  const contactorIds = new Set(contactorSegments.map((s) => s.id));
  const plainSegments = chip.segments.filter((s) => !contactorIds.has(s.id));
  // Widths by the routes the wanted widths give (routing moves the ends at merges and splits
  // across), then the routes of those widths.
  const nodeEnds = (s: ChipSegment): [Point, Point] => [place.at.get(s.from)!, place.at.get(s.to)!];
  const firstRoutes = sideBySide(chip, plainSegments, place.at, wanted, contactorEnds);
  const cleared = clearWidths(chip.segments, (s) => firstRoutes.get(s.id) ?? nodeEnds(s), wanted, floor, look);
  const routes = sideBySide(chip, plainSegments, place.at, (s) => cleared.width.get(s.id)!, contactorEnds);
  const geometry = { place, width: cleared.width, narrowed: cleared.narrowed, routes };
  GEOMETRIES.set(chip.segments, { key, geometry });
  return geometry;
}

export function chipDrawing(solved: SolvedChip, options: ChipDrawingOptions = {}): string {
  const { chip, network, result } = solved;
  const byPressure = options.colourBy === 'pressure';
  const { extraction } = options;
  const contactorSegments = network.contactors.map((c) => c.segment);
  const { place, width: clearedWidth, narrowed, routes } = chipGeometry(solved, options.widthScale);
  const drawnWidth = (s: ChipSegment) => clearedWidth.get(s.id)!;
  const widest = maxOf(chip.segments.map(drawnWidth)) ?? -Infinity;
  const margin = Math.max(48, widest / 2 + 28);

  // Header lines and the legend decide where the chip starts.
  const heads = keyFigures(solved);
  const legend = legendEntries(chip.phases.A.label, chip.phases.B.label, byPressure, extraction !== undefined, legendLeakAngle(solved, place.at));
  const barTitles = [...(byPressure ? [PRESSURE_TITLE] : []), ...(extraction ? [extraction.title] : [])];
  const barRoom = barTitles.reduce((sum, title) => sum + colourBarRoom(title), 0);
  const headWidth = Math.max(textWidth(chip.name, TITLE_SIZE), ...heads.map((h) => textWidth(h.text)));
  const width = Math.max(MIN_CANVAS_WIDTH, place.width + 2 * margin + barRoom, Math.min(headWidth + 2 * PAD, 1400));
  const legendBox = legendSize(legend, width - 2 * PAD);
  const chipTop = PAD + TITLE_SIZE + 6 + heads.length * LINE + 8 + legendBox.height + margin;
  const chipLeft = margin;
  const captions = [
    place.note + (narrowed > 0 ? ` ${narrowed} channel${narrowed === 1 ? ' is' : 's are'} drawn narrower than that (never below their true width) where they would touch a neighbour.` : ''),
    'Contactors: phase A and B as two bands, the interface as a black line at the solved holdup; the near side (first merge inlet) lies on the left looking downstream.',
    ...(network.contactors.some((c) => (c.section.shape === 'rect' && c.section.orientation === 'stacked'))
      ? ['Contactors with stacked layers are drawn as if turned on their side: their bands show the shares of the depth.']
      : []),
    ...(result.splits.some((sp) => sp.state !== 'pinned')
      ? ['A leaking split is labelled with the purity of the outlet it leaks into, beside its mark where there is room; the split table and each mark\'s tooltip give them all.']
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

  const drawable = chip.segments.filter((s) => {
    const a = at.get(s.from)!;
    const b = at.get(s.to)!;
    return Math.hypot(b.x - a.x, b.y - a.y) > 0.5;
  });
  const contactorIds = new Set(contactorSegments.map((s) => s.id));
  const plain = drawable.filter((s) => !contactorIds.has(s.id));
  const moved = (p: Point): Point => ({ x: p.x + chipLeft, y: p.y + chipTop });
  const ends = (s: ChipSegment): [Point, Point] => {
    const route = routes.get(s.id);
    return route ? [moved(route[0]), moved(route[1])] : [at.get(s.from)!, at.get(s.to)!];
  };

  drawUnderlays(root, solved, drawable, ends, drawnWidth, nodePeak);
  drawChannels(root, solved, plain, ends, drawnWidth, byPressure ? pressureColour : undefined, nodePressure);

  drawContactors(root, solved, at, drawnWidth, extraction);
  drawPorts(root, solved, at, drawnWidth, byPressure ? pressureColour : undefined, nodePressure);
  drawArrows(root, solved, drawable, ends, drawnWidth);
  drawSplits(root, solved, at, drawnWidth, width);

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

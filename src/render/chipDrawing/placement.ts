/**
 * Where the chip goes on the page: node positions in px, to scale from the layout's coordinates
 * (enlarged where contactors crowd, widths exaggerated to a round factor where they would be too
 * thin), or laid out by dagre where coordinates are missing. Exports `placeToScale`,
 * `placeAutomatically`, `planWidth`, `closestPair`, `niceFloor` and the `Placement` type.
 */
import dagre from '@dagrejs/dagre';
import { extent, max as maxOf, min as minOf } from 'd3-array';
import type { SolvedChip } from '../../analyses/chip.js';
import type { ChipSegment } from '../../network/model.js';
import { DISPLAY, fmt, show } from '../../units/format.js';
import type { Point } from './common.js';

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

/** The smallest of 1, 2, 5 × 10^k not below v (v > 0). */
function niceCeil(v: number): number {
  const decade = 10 ** Math.floor(Math.log10(v));
  return [1, 2, 5, 10].map((m) => m * decade).find((n) => n >= v * (1 - 1e-12))!;
}

/** The largest of 1, 2, 5 × 10^k not above v (v > 0). */
export function niceFloor(v: number): number {
  const decade = 10 ** Math.floor(Math.log10(v));
  return [5, 2, 1].map((m) => m * decade).find((n) => n <= v * (1 + 1e-12))!;
}

/** Plan-view width of a channel (the top width of an etched or trapezoidal one), m. */
export function planWidth(segment: ChipSegment): number {
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

export interface Placement {
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
export function closestPair(points: Point[]): number {
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

export function placeToScale(solved: SolvedChip, contactors: ChipSegment[], widthScale: number | undefined): Placement {
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

export function placeAutomatically(solved: SolvedChip, contactors: ChipSegment[], widthScale: number | undefined): Placement {
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

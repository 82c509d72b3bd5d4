/**
 * The data behind the pictures of one cross-section: flow fraction against holdup for the given
 * channel (with the interface an arc of given curvature, beside the flat one, where asked) and
 * for comparison channels (other aspect ratios of a rectangle, or the rectangle as wide as an
 * etched or trapezoidal channel's bottom), and the limit of infinitely deep plates;
 * and the velocity over the cross-section with its maximum, interface and outline. Exports
 * `flowFractionCurves`, `sectionVelocity` and their types. Computes (SI units);
 * render/sectionCharts.ts draws.
 */
import { flowFractionAt, layerAxes, nominalSize, type RectSection, type TwoLayerSection } from '../physics/section.js';
import { twoLayerPlates } from '../physics/twoLayer.js';
import { velocityField, velocityMaximum, type VelocityMaximum } from '../physics/field.js';
import { shapedFlowFraction, wallProfileOf, type ShapedSection } from '../physics/shapedSection.js';
import { shapedVelocityField, shapedVelocityMaximum } from '../physics/shapedField.js';
import { arcChord } from '../physics/interfaceArc.js';
import { curvedFlowsAtChord, sectionProfile } from '../physics/curvedSection.js';

const HOLDUPS = Array.from({ length: 49 }, (_, i) => (i + 1) / 50);
/** A shaped section costs a spectral solve per point: 24 holdups draw its curve. */
const SHAPED_HOLDUPS = Array.from({ length: 24 }, (_, i) => (i + 1) / 25);
/** Holdups of the curve with a curved interface: each costs a solve with the arc (tenths of a second). */
const ARC_HOLDUPS = Array.from({ length: 11 }, (_, i) => 0.05 + 0.09 * i);
/** Ratios of the interface span to the layer thickness direction (along/across) drawn besides the given one. */
const ASPECTS = [0.25, 1, 4];

export interface FlowFractionCurve {
  /** along/across of the channel the curve belongs to; undefined for infinitely deep plates and shaped comparisons. */
  aspect?: number;
  /** What the curve is, when not a rectangle's aspect ratio or the plates: 'etched', 'trapezoid' or 'rectangle of the bottom width'. */
  kind?: 'etched' | 'trapezoid' | 'bottom-rectangle';
  given: boolean;
  /** For the given channel's curves when the interface is curved: which interface the curve is of. */
  interface?: 'arc' | 'flat';
  points: Array<[number, number]>;
}

export interface FlowFractionCurves {
  /** "depth/width" for side-by-side layers, "width/depth" for stacked ones. */
  ratioName: string;
  viscosityRatio: number;
  curves: FlowFractionCurve[];
  /** [holdup, flow fraction] of the operating point. */
  operatingPoint: [number, number];
}

const platesCurve = (muA: number, muB: number): FlowFractionCurve => ({
  given: false,
  points: HOLDUPS.map((a) => {
    const p = twoLayerPlates(1, a, muA, muB);
    return [a, p.kA / (p.kA + p.kB)];
  }),
});

/**
 * The curves of the section at the operating holdup; with `curvature` κ ≠ 0 (1/m, side-by-side
 * layers) the given channel's curve is that of the arc of curvature κ (physics/curvedSection.ts,
 * at ARC_HOLDUPS; a holdup whose arc does not fit in the section is left out), its flat curve
 * beside it, and the operating point on the arc's curve.
 */
export function flowFractionCurves(section: TwoLayerSection, muA: number, muB: number, holdup: number, curvature = 0): FlowFractionCurves {
  const flat = flatCurves(section, muA, muB, holdup);
  if (curvature === 0) return flat;
  const profile = sectionProfile(section);
  const onArc = (alpha: number) => {
    const k = curvedFlowsAtChord(profile, arcChord(profile, alpha, curvature), curvature, muA, muB);
    return k.qA / (k.qA + k.qB);
  };
  const points = ARC_HOLDUPS.flatMap((alpha): Array<[number, number]> => {
    try {
      return [[alpha, onArc(alpha)]];
    } catch (error) {
      if (error instanceof RangeError) return [];
      throw error;
    }
  });
  const own = flat.curves.find((c) => c.given)!;
  return {
    ...flat,
    curves: [{ ...own, interface: 'arc', points }, { ...own, given: false, interface: 'flat' }, ...flat.curves.filter((c) => !c.given)],
    operatingPoint: [holdup, onArc(holdup)],
  };
}

function flatCurves(section: TwoLayerSection, muA: number, muB: number, holdup: number): FlowFractionCurves {
  if (section.shape !== 'rect') return shapedCurves(section, muA, muB, holdup);
  const { across, along } = layerAxes(section);
  const curve = (alongOverAcross: number): Array<[number, number]> =>
    HOLDUPS.map((a) => [a, flowFractionAt({ ...section, ...dims(section, across, across * alongOverAcross) }, muA, muB, a).flowFraction]);
  const given = along / across;
  const curves: FlowFractionCurve[] = [{ aspect: given, given: true, points: curve(given) }];
  for (const r of ASPECTS) if (Math.abs(Math.log(r / given)) > 0.05) curves.push({ aspect: r, given: false, points: curve(r) });
  curves.push(platesCurve(muA, muB));
  return {
    ratioName: section.orientation === 'side' ? 'depth/width' : 'width/depth',
    viscosityRatio: muA / muB,
    curves,
    operatingPoint: [holdup, flowFractionAt(section, muA, muB, holdup).flowFraction],
  };
}

/** A shaped section, the rectangle as wide as its bottom and as deep (when the bottom is not empty), and the plates. */
function shapedCurves(section: ShapedSection, muA: number, muB: number, holdup: number): FlowFractionCurves {
  const curves: FlowFractionCurve[] = [{ kind: section.shape, given: true, points: SHAPED_HOLDUPS.map((a) => [a, shapedFlowFraction(section, a, muA, muB)]) }];
  const bottom = nominalSize(section, 'width');
  if (bottom > 0) {
    const rect: RectSection = { shape: 'rect', width: bottom, depth: section.depth, orientation: 'side' };
    curves.push({ kind: 'bottom-rectangle', given: false, points: HOLDUPS.map((a) => [a, flowFractionAt(rect, muA, muB, a).flowFraction]) });
  }
  curves.push(platesCurve(muA, muB));
  return {
    ratioName: 'depth/width',
    viscosityRatio: muA / muB,
    curves,
    operatingPoint: [holdup, shapedFlowFraction(section, holdup, muA, muB)],
  };
}

/** The section with the given across/along dimensions in its own orientation. */
function dims(section: RectSection, across: number, along: number): Pick<RectSection, 'width' | 'depth'> {
  return section.orientation === 'side' ? { width: across, depth: along } : { width: along, depth: across };
}

export interface SectionVelocity {
  /** Extent of the drawing: across the channel and up from its deepest point, m. */
  width: number;
  height: number;
  holdup: number;
  /** Velocity on a grid over the extent (rows up the depth), per unit gradient; NaN outside the section. */
  u: number[][];
  /** The interface, [across, up] in m. */
  interfaceLine: Array<[number, number]>;
  /** The outline of a shaped section (closed), [across, up] in m; none for a rectangle (the frame is its outline). */
  outline?: Array<[number, number]>;
  maximum: VelocityMaximum;
}

/** The velocity over the cross-section on a grid of about 64 points across its longer side. */
export function sectionVelocity(section: TwoLayerSection, muA: number, muB: number, holdup: number): SectionVelocity {
  if (section.shape !== 'rect') {
    const { topWidth, depth } = wallProfileOf(section);
    const nz = Math.max(8, Math.min(64, Math.round((64 * depth) / topWidth)));
    const field = shapedVelocityField(section, holdup, muA, muB, 64, nz);
    return { width: topWidth, height: depth, holdup, u: field.u, interfaceLine: field.interfaceLine, outline: field.outline, maximum: shapedVelocityMaximum(section, holdup, muA, muB) };
  }
  const ny = 64;
  const nz = Math.max(8, Math.min(64, Math.round((64 * section.depth) / section.width)));
  const field = velocityField(section, holdup, muA, muB, ny, nz);
  const at = field.interfaceAt;
  const interfaceLine: Array<[number, number]> =
    section.orientation === 'side'
      ? [[at, 0], [at, section.depth]]
      : [[0, at], [section.width, at]];
  return { width: section.width, height: section.depth, holdup, u: field.u, interfaceLine, maximum: velocityMaximum(section, holdup, muA, muB) };
}

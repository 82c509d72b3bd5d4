/**
 * The data behind the pictures of one cross-section: flow fraction against holdup for the given
 * channel, for a few other aspect ratios and for the limit of infinitely deep plates; and the
 * velocity over the cross-section with its maximum. Exports `flowFractionCurves`,
 * `sectionVelocity` and their types. Computes (SI units); render/sectionCharts.ts draws.
 */
import { flowFractionAt, layerAxes, type RectSection } from '../physics/section.js';
import { twoLayerPlates } from '../physics/twoLayer.js';
import { velocityField, velocityMaximum, type VelocityMaximum } from '../physics/field.js';

const HOLDUPS = Array.from({ length: 49 }, (_, i) => (i + 1) / 50);
/** Ratios of the interface span to the layer thickness direction (along/across) drawn besides the given one. */
const ASPECTS = [0.25, 1, 4];

export interface FlowFractionCurve {
  /** along/across of the channel the curve belongs to; undefined for infinitely deep plates. */
  aspect?: number;
  given: boolean;
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

export function flowFractionCurves(section: RectSection, muA: number, muB: number, holdup: number): FlowFractionCurves {
  const { across, along } = layerAxes(section);
  const curve = (alongOverAcross: number): Array<[number, number]> =>
    HOLDUPS.map((a) => [a, flowFractionAt({ ...section, ...dims(section, across, across * alongOverAcross) }, muA, muB, a).flowFraction]);
  const given = along / across;
  const curves: FlowFractionCurve[] = [{ aspect: given, given: true, points: curve(given) }];
  for (const r of ASPECTS) if (Math.abs(Math.log(r / given)) > 0.05) curves.push({ aspect: r, given: false, points: curve(r) });
  curves.push({
    given: false,
    points: HOLDUPS.map((a) => {
      const p = twoLayerPlates(1, a, muA, muB);
      return [a, p.kA / (p.kA + p.kB)];
    }),
  });
  return {
    ratioName: section.orientation === 'side' ? 'depth/width' : 'width/depth',
    viscosityRatio: muA / muB,
    curves,
    operatingPoint: [holdup, flowFractionAt(section, muA, muB, holdup).flowFraction],
  };
}

/** The section with the given across/along dimensions in its own orientation. */
function dims(section: RectSection, across: number, along: number): Pick<RectSection, 'width' | 'depth'> {
  return section.orientation === 'side' ? { width: across, depth: along } : { width: along, depth: across };
}

export interface SectionVelocity {
  section: RectSection;
  holdup: number;
  /** Velocity on a grid over the section (rows along the depth), m/s per unit gradient. */
  u: number[][];
  /** Where the interface sits across the section, m. */
  interfaceAt: number;
  maximum: VelocityMaximum;
}

/** The velocity over the cross-section on a grid of about 64 points across its longer side. */
export function sectionVelocity(section: RectSection, muA: number, muB: number, holdup: number): SectionVelocity {
  const ny = 64;
  const nz = Math.max(8, Math.min(64, Math.round((64 * section.depth) / section.width)));
  const field = velocityField(section, holdup, muA, muB, ny, nz);
  return { section, holdup, u: field.u, interfaceAt: field.interfaceAt, maximum: velocityMaximum(section, holdup, muA, muB) };
}

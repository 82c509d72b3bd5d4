/**
 * The single-cross-section question: at a given holdup or flow fraction, how do the two phases
 * share a channel? Exports `analyseSection` (typed input → typed summary, SI units) used by the
 * `section` command and by the report; with a pressure difference Δ and a tension, the curved
 * interface (./curvedSection.ts). Calls the physics; does no I/O.
 */
import { flowFractionAt, holdupForFlowFraction, area, type TwoLayerSection, type TwoPhaseState } from '../physics/section.js';
import { velocityMaximum, type VelocityMaximum } from '../physics/field.js';
import { shapedVelocityMaximum } from '../physics/shapedField.js';
import { interfaceSpan, wallProfileOf } from '../physics/shapedSection.js';
import { StratiflowError } from '../errors.js';
import { analyseCurvedSection } from './curvedSection.js';

export interface SectionQuery {
  /** A rectangle, or an etched or trapezoidal section (layers side by side). */
  section: TwoLayerSection;
  muA: number;
  muB: number;
  /** Exactly one of holdup and flowFraction. */
  holdup?: number;
  flowFraction?: number;
  /** Total flow of both phases, m³/s; when given, velocities and gradient are absolute. */
  totalFlow?: number;
  /** p_B − p_A, Pa, and the interfacial tension, N/m: when given, the interface is the arc of curvature Δ/γ (./curvedSection.ts). */
  delta?: number;
  tension?: number;
}

/** The arc of a curved interface and how far it moved the answer (./curvedSection.ts). */
export interface CurvedSectionSummary {
  delta: number;
  tension: number;
  /** κ = Δ/γ, 1/m (positive: bulging into A), and κ·depth/2 (the sine of the half-angle over the full depth). */
  curvature: number;
  dimensionless: number;
  /** With a flat interface: the holdup at this flow fraction (or the flow fraction at this holdup). */
  flatHoldup: number;
  flatFlowFraction: number;
  /** With the flow fraction given: holdup − flat holdup; with the holdup given: flow fraction − flat flow fraction. */
  given: 'holdup' | 'flowFraction';
  shift: number;
  /** ∂Q/∂Δ per unit gradient at fixed holdup, m⁴/(Pa²·s). */
  qPerGradientPerDelta: { a: number; b: number };
}

export interface SectionSummary {
  holdup: number;
  flowFraction: number;
  viscosityRatio: number;
  /** Width/depth (for an etched or trapezoidal section: top width/depth). */
  aspectRatio: number;
  /** The length of the interface from wall to wall (or cover), m: what its meniscus spans at a split. */
  interfaceSpan: number;
  /** Flow per unit pressure gradient, m⁴/(Pa·s). */
  qPerGradient: { a: number; b: number };
  /** dφ/dα and dα/dφ. */
  dFlowFractionDHoldup: number;
  dHoldupDFlowFraction: number;
  /** Pressure gradient per unit total flow, Pa·s/m⁴ (hydraulic resistance per length). */
  resistancePerLength: number;
  /** Pressure gradient, Pa/m, and mean velocity of each phase, m/s, at `totalFlow` (or per unit gradient, m²/(Pa·s)). */
  gradient: number | null;
  meanVelocity: { a: number; b: number };
  velocityPerGradient: boolean;
  /** Null with a curved interface (the velocity field is drawn for the flat interface only). */
  maximum: VelocityMaximum | null;
  curvedInterface?: CurvedSectionSummary;
}

export function analyseSection(query: SectionQuery): SectionSummary {
  const { section, muA, muB } = query;
  const check = (ok: boolean, field: string, message: string) => {
    if (!ok) throw new StratiflowError('bad-option', message, { field });
  };
  // Fields are named as in SectionQuery; a command line maps them to its options.
  check(section.depth > 0, 'depth', 'must be a positive length');
  if (section.shape === 'rect') check(section.width > 0, 'width', 'must be a positive length');
  if (section.shape === 'etched') check(section.maskWidth >= 0, 'maskWidth', 'must be a length of at least 0');
  if (section.shape === 'trapezoid') {
    check(section.bottomWidth >= 0, 'bottomWidth', 'must be a length of at least 0');
    check(section.wallAngle > 0 && section.wallAngle <= Math.PI / 2, 'wallAngle', 'must lie above 0 and at most 90°');
    check(section.bottomWidth > 0 || section.wallAngle < Math.PI / 2, 'bottomWidth', 'must be positive when the walls are vertical');
  }
  check(muA > 0, 'muA', 'must be a positive viscosity');
  check(muB > 0, 'muB', 'must be a positive viscosity');
  check((query.holdup === undefined) !== (query.flowFraction === undefined), 'holdup', 'give exactly one of the holdup and the flow fraction');
  if (query.holdup !== undefined) check(query.holdup > 0 && query.holdup < 1, 'holdup', 'must lie strictly between 0 and 1');
  if (query.flowFraction !== undefined) check(query.flowFraction > 0 && query.flowFraction < 1, 'flowFraction', 'must lie strictly between 0 and 1');
  if (query.totalFlow !== undefined) check(query.totalFlow > 0, 'totalFlow', 'must be a positive flow');
  if (query.delta !== undefined) {
    try {
      return analyseCurvedSection(query);
    } catch (error) {
      // The strips next to the arc cannot be mapped (an etched or trapezoidal wall joint near the
      // chord at a high curvature): a limit of the model, said in one line (exit 6).
      if (!(error instanceof RangeError)) throw error;
      throw new StratiflowError('out-of-model', `the curved interface cannot represent this arc (${error.message}); give a lower --delta or a higher --tension, or leave them out for the flat interface`, { field: 'delta' });
    }
  }

  const state: TwoPhaseState =
    query.holdup !== undefined
      ? flowFractionAt(section, muA, muB, query.holdup)
      : holdupForFlowFraction(section, muA, muB, query.flowFraction!);
  const k = state.kA + state.kB;
  const gradient = query.totalFlow !== undefined ? query.totalFlow / k : null;
  const g = gradient ?? 1;
  const areaA = state.holdup * area(section);
  const areaB = (1 - state.holdup) * area(section);
  const maximum = section.shape === 'rect' ? velocityMaximum(section, state.holdup, muA, muB) : shapedVelocityMaximum(section, state.holdup, muA, muB);
  return {
    holdup: state.holdup,
    flowFraction: query.flowFraction ?? state.flowFraction,
    viscosityRatio: muA / muB,
    aspectRatio: section.shape === 'rect' ? section.width / section.depth : wallProfileOf(section).topWidth / section.depth,
    interfaceSpan: section.shape !== 'rect' ? interfaceSpan(section, state.holdup) : section.orientation === 'side' ? section.depth : section.width,
    qPerGradient: { a: state.kA, b: state.kB },
    dFlowFractionDHoldup: state.dFlowFraction,
    dHoldupDFlowFraction: 1 / state.dFlowFraction,
    resistancePerLength: 1 / k,
    gradient,
    meanVelocity: { a: (g * state.kA) / areaA, b: (g * state.kB) / areaB },
    velocityPerGradient: gradient === null,
    maximum: { ...maximum, u: maximum.u * g },
  };
}

/**
 * The single-cross-section question with a curved interface: the arc of curvature κ = Δ/γ
 * (physics/interfaceArc.ts) at a given holdup or flow fraction, against the flat interface.
 * Exports `analyseCurvedSection` (called by analyseSection once the common fields are checked).
 * Calls the physics; does no I/O.
 */
import { StratiflowError } from '../errors.js';
import { arcChord } from '../physics/interfaceArc.js';
import { depthAt } from '../physics/wallProfile.js';
import { curvedFlowsAtChord, curvedTwoLayerFlow, sectionProfile } from '../physics/curvedSection.js';
import { area, flowFractionAt, holdupForFlowFraction } from '../physics/section.js';
import type { SectionQuery, SectionSummary } from './section.js';

/** Flow fraction to this distance in the inversion at fixed curvature (the flat inversion's accuracy). */
const FLOW_FRACTION_TOLERANCE = 1e-12;

export function analyseCurvedSection(query: SectionQuery): SectionSummary {
  const { section, muA, muB } = query;
  const delta = query.delta!;
  if (query.tension === undefined) throw new StratiflowError('bad-option', 'give the interfacial tension: the arc of a pressure difference Δ has curvature Δ/γ', { field: 'tension' });
  if (!(query.tension > 0)) throw new StratiflowError('bad-option', 'must be a positive tension', { field: 'tension' });
  if (section.shape === 'rect' && section.orientation === 'stacked') throw new StratiflowError('bad-option', 'a curved interface is modelled for side-by-side layers only', { field: 'delta' });
  const tension = query.tension;
  const curvature = delta / tension;
  const profile = sectionProfile(section);
  const dimensionless = (curvature * profile.depth) / 2;
  if (!(Math.abs(dimensionless) < 1)) {
    throw new StratiflowError('bad-option', `the arc of curvature Δ/γ = ${(curvature / 1000).toPrecision(4)} 1/mm cannot span the depth: |Δ|·depth/(2γ) is ${Math.abs(dimensionless).toPrecision(3)} and must stay below 1`, { field: 'delta' });
  }
  const kOf = (alpha: number) => curvedFlowsAtChord(profile, arcChord(profile, alpha, curvature), curvature, muA, muB);
  let holdup: number;
  let flatHoldup: number;
  let flatFlowFraction: number;
  if (query.holdup !== undefined) {
    holdup = query.holdup;
    flatHoldup = holdup;
    flatFlowFraction = flowFractionAt(section, muA, muB, holdup).flowFraction;
  } else {
    // Secant steps on φ(α) at fixed κ from the flat holdup, kept inside (0, 1).
    const target = query.flowFraction!;
    flatHoldup = holdupForFlowFraction(section, muA, muB, target).holdup;
    flatFlowFraction = target;
    const phi = (alpha: number) => {
      const k = kOf(alpha);
      return k.qA / (k.qA + k.qB) - target;
    };
    let a0 = flatHoldup;
    let f0 = phi(a0);
    let a1 = Math.min(1 - 1e-6, Math.max(1e-6, a0 - f0));
    for (let i = 0; i < 30 && Math.abs(f0) > FLOW_FRACTION_TOLERANCE; i++) {
      const f1 = phi(a1);
      const next = f1 === f0 ? a1 : a1 - (f1 * (a1 - a0)) / (f1 - f0);
      a0 = a1;
      f0 = f1;
      a1 = Math.min(1 - 1e-9, Math.max(1e-9, next));
    }
    holdup = a0;
  }
  const flow = curvedTwoLayerFlow(section, holdup, curvature, muA, muB);
  const k = flow.kA + flow.kB;
  const dPhi = (flow.dkA * flow.kB - flow.kA * flow.dkB) / (k * k);
  const gradient = query.totalFlow !== undefined ? query.totalFlow / k : null;
  const g = gradient ?? 1;
  const total = area(section);
  return {
    holdup,
    flowFraction: query.flowFraction ?? flow.kA / k,
    viscosityRatio: muA / muB,
    aspectRatio: profile.topWidth / profile.depth,
    // The chord the arc spans, from the cover to the wall below it.
    interfaceSpan: depthAt(profile, flow.chord),
    qPerGradient: { a: flow.kA, b: flow.kB },
    dFlowFractionDHoldup: dPhi,
    dHoldupDFlowFraction: 1 / dPhi,
    resistancePerLength: 1 / k,
    gradient,
    meanVelocity: { a: (g * flow.kA) / (holdup * total), b: (g * flow.kB) / ((1 - holdup) * total) },
    velocityPerGradient: gradient === null,
    maximum: null,
    curvedInterface: {
      delta,
      tension,
      curvature,
      dimensionless,
      flatHoldup,
      flatFlowFraction,
      given: query.holdup !== undefined ? 'holdup' : 'flowFraction',
      shift: query.holdup !== undefined ? flow.kA / k - flatFlowFraction : holdup - flatHoldup,
      qPerGradientPerDelta: { a: flow.dkADCurvature / tension, b: flow.dkBDCurvature / tension },
    },
  };
}

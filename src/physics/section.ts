/**
 * Cross-sections as the network sees them: geometry, single-phase conductance, and the
 * two-phase holdup ↔ flow-fraction relation with its inversion.
 * Exports the section types, `conductance`, `flowFractionAt`, `holdupForFlowFraction` (robust,
 * bracketed) and `HoldupTable` (the fast path for many inversions on one geometry and fluid pair).
 * Rectangles use the exact series (twoLayer.ts); etched and trapezoidal sections the spectral
 * strip solver (shapedSection.ts), their tables shapedTable.ts. SI units only; no I/O.
 */
import { rectConductance, tubeConductance } from './singlePhase.js';
import { twoLayerFlow } from './twoLayer.js';
import { shapedConductance, shapedTwoLayerFlow, wallProfileOf, type EtchedSection, type ShapedSection, type TrapezoidSection } from './shapedSection.js';
import { StratiflowError } from '../errors.js';
import { hermiteInverse, ShapedTable, type TwoPhaseState } from './shapedTable.js';

export type { TwoPhaseState } from './shapedTable.js';

export type { EtchedSection, ShapedSection, TrapezoidSection } from './shapedSection.js';

export type Orientation = 'side' | 'stacked';

export interface RectSection {
  shape: 'rect';
  width: number;
  depth: number;
  /** `side`: layers side by side across the width; `stacked`: one above the other across the depth. */
  orientation: Orientation;
}

export interface TubeSection {
  shape: 'tube';
  diameter: number;
}

export type Section = RectSection | TubeSection | EtchedSection | TrapezoidSection;

/** A section that two layers can share: a rectangle (either orientation) or a shape with side-by-side layers. */
export type TwoLayerSection = RectSection | ShapedSection;

export function isShaped(section: Section): section is ShapedSection {
  return section.shape === 'etched' || section.shape === 'trapezoid';
}

export function area(section: Section): number {
  if (isShaped(section)) return wallProfileOf(section).area;
  return section.shape === 'rect' ? section.width * section.depth : (Math.PI * section.diameter ** 2) / 4;
}

/** D_h = 4A/P with P the whole wetted perimeter (walls and cover). */
export function hydraulicDiameter(section: Section): number {
  if (isShaped(section)) {
    const p = wallProfileOf(section);
    return (4 * p.area) / p.perimeter;
  }
  return section.shape === 'rect'
    ? (2 * section.width * section.depth) / (section.width + section.depth)
    : section.diameter;
}

/**
 * The size a width or depth tolerance moves: a rectangle's width or depth, a tube's diameter
 * (as its width; a tube has no depth: 0), an etched section's mask width, a trapezoid's bottom
 * width, and the depth of either.
 */
export function nominalSize(section: Section, dimension: 'width' | 'depth'): number {
  switch (section.shape) {
    case 'rect':
      return section[dimension];
    case 'tube':
      return dimension === 'width' ? section.diameter : 0;
    case 'etched':
      return dimension === 'width' ? section.maskWidth : section.depth;
    case 'trapezoid':
      return dimension === 'width' ? section.bottomWidth : section.depth;
  }
}

/** The section with those sizes moved by dWidth and dDepth, and whether every size stays positive (a mask width may be 0). */
export function shiftedSection(section: Section, dWidth: number, dDepth: number): { section: Section; positive: boolean } {
  switch (section.shape) {
    case 'rect': {
      const s = { ...section, width: section.width + dWidth, depth: section.depth + dDepth };
      return { section: s, positive: s.width > 0 && s.depth > 0 };
    }
    case 'tube': {
      const s = { ...section, diameter: section.diameter + dWidth };
      return { section: s, positive: s.diameter > 0 };
    }
    case 'etched': {
      const s = { ...section, maskWidth: section.maskWidth + dWidth, depth: section.depth + dDepth };
      return { section: s, positive: s.maskWidth >= 0 && s.depth > 0 };
    }
    case 'trapezoid': {
      const s = { ...section, bottomWidth: section.bottomWidth + dWidth, depth: section.depth + dDepth };
      return { section: s, positive: s.bottomWidth >= 0 && s.depth > 0 };
    }
  }
}

/** Single-phase conductance k (Q = k·G), m⁴/(Pa·s). */
export function conductance(section: Section, mu: number): number {
  if (isShaped(section)) return shapedConductance(section, mu);
  return section.shape === 'rect' ? rectConductance(section.width, section.depth, mu) : tubeConductance(section.diameter, mu);
}

/** Whether the layers lie one above the other (a rectangle's `stacked`; shaped sections are side by side). */
export function layersStacked(section: TwoLayerSection): boolean {
  return section.shape === 'rect' && section.orientation === 'stacked';
}

/** The dimension the layers lie across and the one the interface spans. */
export function layerAxes(section: RectSection): { across: number; along: number } {
  return section.orientation === 'side'
    ? { across: section.width, along: section.depth }
    : { across: section.depth, along: section.width };
}

/**
 * Flow fraction φ = k_A/(k_A + k_B) at holdup α, with dφ/dα = (k_A' k_B − k_A k_B')/(k_A + k_B)².
 * For a shaped section α is the share of the area that A fills, left of a vertical interface.
 */
export function flowFractionAt(section: TwoLayerSection, muA: number, muB: number, holdup: number): TwoPhaseState {
  const r = section.shape === 'rect' ? twoLayerFlow({ ...layerAxes(section), holdup, muA, muB }) : shapedTwoLayerFlow(section, holdup, muA, muB);
  const k = r.kA + r.kB;
  return {
    holdup,
    flowFraction: r.kA / k,
    dFlowFraction: (r.dkA * r.kB - r.kA * r.dkB) / (k * k),
    kA: r.kA,
    kB: r.kB,
    dkA: r.dkA,
    dkB: r.dkB,
  };
}

/** Settles when a Newton step in α is below this (the flow fraction is then exact to rounding). */
const HOLDUP_STEP_TOLERANCE = 1e-13;
const MAX_POLISH_STEPS = 60;
/**
 * A settled search is accepted only if φ there misses the target by less than this share of
 * min(φ, 1 − φ) (plus rounding of φ itself). On a root the miss is about 1e-13 of that after a
 * small Newton step and at rounding level in a collapsed bracket; a larger one means the root was
 * not inside the bracket (a caller's bracket that misses it, or bisection ending at a bracket end).
 */
const SETTLED_MISS = 1e-9;

/**
 * The holdup that carries flow fraction φ. φ(α) is strictly increasing from 0 to 1, so the root is
 * bracketed by [0, 1]; Newton steps with the exact derivative are taken while they stay inside
 * the bracket, bisection otherwise (the "rtsafe" safeguard of Press et al., Numerical Recipes,
 * 3rd ed., 2007, §9.4). `guess` and `bracket` let a caller start close.
 * Throws StratiflowError('no-convergence') when the root is not found within MAX_POLISH_STEPS
 * (a φ so near 0 or 1 that the holdup lies beyond 60 halvings, or viscosities so far apart that
 * φ(α) is 0 or 1 to rounding) or the search closes in on a point that is not a root.
 */
export function holdupForFlowFraction(
  section: TwoLayerSection,
  muA: number,
  muB: number,
  flowFraction: number,
  guess = 0.5,
  bracket: [number, number] = [0, 1],
): TwoPhaseState {
  if (!(flowFraction > 0 && flowFraction < 1)) throw new RangeError(`flow fraction must lie in (0, 1), got ${flowFraction}`);
  let [lo, hi] = bracket;
  let alpha = Math.min(Math.max(guess, lo + 0.01 * (hi - lo)), hi - 0.01 * (hi - lo));
  let state = flowFractionAt(section, muA, muB, alpha);
  for (let i = 0; i < MAX_POLISH_STEPS; i++) {
    const f = state.flowFraction - flowFraction;
    if (f === 0) return state;
    if (f > 0) hi = alpha;
    else lo = alpha;
    let next = alpha - f / state.dFlowFraction;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    const collapsed = !(next > lo && next < hi) || hi - lo < 4e-16 * Math.min(alpha, 1 - alpha);
    if (collapsed || Math.abs(next - alpha) < HOLDUP_STEP_TOLERANCE * Math.min(alpha, 1 - alpha)) {
      const allowed = SETTLED_MISS * Math.min(flowFraction, 1 - flowFraction) + 8 * Number.EPSILON * flowFraction;
      if (!(Math.abs(f) <= allowed)) throw unreached(flowFraction, state, `the search closed in on holdup ${alpha}, which is not a root`);
      // Correct k to the final α by first order; the error is O(step²).
      return shiftState(state, next > lo && next < hi ? next : alpha);
    }
    alpha = next;
    state = flowFractionAt(section, muA, muB, alpha);
  }
  throw unreached(flowFraction, state, `not settled in ${MAX_POLISH_STEPS} steps, last holdup ${state.holdup}`);
}

function unreached(flowFraction: number, state: TwoPhaseState, how: string): StratiflowError {
  return new StratiflowError('no-convergence', `no holdup found for flow fraction ${flowFraction}: ${how} (flow fraction there ${state.flowFraction})`);
}

function shiftState(state: TwoPhaseState, alpha: number): TwoPhaseState {
  const d = alpha - state.holdup;
  return {
    ...state,
    holdup: alpha,
    flowFraction: state.flowFraction + state.dFlowFraction * d,
    kA: state.kA + state.dkA * d,
    kB: state.kB + state.dkB * d,
  };
}

/** Number of table intervals; nodes cluster toward α = 0 and 1 where φ ∝ α². */
const TABLE_INTERVALS = 400;

/** Largest Newton step, relative to min(α, 1 − α), that one polish may take before it is repeated. */
const ONE_STEP_LIMIT = 1e-7;

/**
 * Fast repeated inversion on one geometry and fluid pair: a monotone table of (α, φ, dφ/dα)
 * built once at Chebyshev–Lobatto nodes, a cubic Hermite guess (monotone because the exact node
 * derivatives are positive), then for a rectangle a Newton polish with one full series
 * evaluation. Where the guess is good (a relative Newton step below 1e-7) one step lands at
 * rounding accuracy; otherwise the safeguarded iteration continues inside the table interval.
 * For a shaped section the table holds k_A, k_B at the nodes of its stretches, built as they are
 * first asked for, and the answer is the interpolant's (shapedTable.ts).
 */
export class HoldupTable {
  readonly section: TwoLayerSection;
  readonly muA: number;
  readonly muB: number;
  private readonly alpha: Float64Array;
  private readonly phi: Float64Array;
  private readonly slope: Float64Array;
  /** Shaped sections only. */
  private readonly shaped?: ShapedTable;

  constructor(section: TwoLayerSection, muA: number, muB: number, intervals = TABLE_INTERVALS) {
    this.section = section;
    this.muA = muA;
    this.muB = muB;
    if (section.shape !== 'rect') {
      this.shaped = new ShapedTable(section, muA, muB);
      this.alpha = this.phi = this.slope = new Float64Array(0);
      return;
    }
    this.alpha = new Float64Array(intervals + 1);
    this.phi = new Float64Array(intervals + 1);
    this.slope = new Float64Array(intervals + 1);
    for (let j = 0; j <= intervals; j++) {
      const a = 0.5 * (1 - Math.cos((Math.PI * j) / intervals));
      this.alpha[j] = a;
      if (j === 0 || j === intervals) {
        this.phi[j] = j === 0 ? 0 : 1;
        this.slope[j] = 0;
      } else {
        const s = flowFractionAt(section, muA, muB, a);
        this.phi[j] = s.flowFraction;
        this.slope[j] = s.dFlowFraction;
      }
    }
  }

  /** Holdup for flow fraction φ in (0, 1), with k_A, k_B and derivatives (exact to rounding for a rectangle). */
  solve(flowFraction: number): TwoPhaseState {
    if (!(flowFraction > 0 && flowFraction < 1)) throw new RangeError(`flow fraction must lie in (0, 1), got ${flowFraction}`);
    if (this.shaped) return this.shaped.solve(flowFraction);
    const j = this.interval(flowFraction);
    const guess = hermiteInverse(this.alpha[j]!, this.alpha[j + 1]!, this.phi[j]!, this.phi[j + 1]!, this.slope[j]!, this.slope[j + 1]!, flowFraction);
    const state = flowFractionAt(this.section, this.muA, this.muB, guess);
    const step = -(state.flowFraction - flowFraction) / state.dFlowFraction;
    if (Math.abs(step) < ONE_STEP_LIMIT * Math.min(guess, 1 - guess) && guess + step > 0 && guess + step < 1) {
      return shiftState(state, guess + step);
    }
    return holdupForFlowFraction(this.section, this.muA, this.muB, flowFraction, guess, [this.alpha[j]!, this.alpha[j + 1]!]);
  }

  /**
   * A shaped section's k_A, k_B and their slopes in α at holdup α ∈ [0, 1], from the table's
   * interpolant (no solve once the stretch that holds α is built): the lane conductances of a
   * contactor (lanes.ts).
   */
  flowsAt(alpha: number): { kA: number; kB: number; dkA: number; dkB: number } {
    if (!this.shaped) throw new RangeError('flowsAt answers for etched and trapezoidal sections only');
    return this.shaped.flowsAt(alpha);
  }

  /** Builds every stretch of a shaped section's table (what building it in one go costs; a rectangle's is built whole). */
  complete(): this {
    this.shaped?.complete();
    return this;
  }

  /** A shaped section's stretches and how many are built; undefined for a rectangle. */
  get stretches(): { count: number; built: number } | undefined {
    return this.shaped?.stretches;
  }

  private interval(phi: number): number {
    let lo = 0;
    let hi = this.phi.length - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (this.phi[mid]! <= phi) lo = mid;
      else hi = mid;
    }
    return lo;
  }
}

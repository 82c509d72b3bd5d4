/**
 * Cross-sections as the network sees them: geometry, single-phase conductance, and the
 * two-phase holdup ↔ flow-fraction relation with its inversion.
 * Exports the section types, `conductance`, `flowFractionAt`, `holdupForFlowFraction` (robust,
 * bracketed), `HoldupTable` (the fast path for many inversions on one geometry and fluid pair)
 * and `stretchMap` (the variable of a table stretch, shared with curvedTable.ts).
 * Rectangles use the exact series (twoLayer.ts); etched and trapezoidal sections the spectral
 * strip solver (shapedSection.ts). SI units only; no I/O.
 */
import { rectConductance, tubeConductance } from './singlePhase.js';
import { twoLayerFlow } from './twoLayer.js';
import { jointHoldups, shapedConductance, shapedFlows, shapedTwoLayerFlow, wallProfileOf, type EtchedSection, type ShapedSection, type TrapezoidSection } from './shapedSection.js';
import { StratiflowError } from '../errors.js';
import { chebyshevGrid } from './chebyshev.js';

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

export interface TwoPhaseState {
  holdup: number;
  flowFraction: number;
  /** dφ/dα. */
  dFlowFraction: number;
  kA: number;
  kB: number;
  dkA: number;
  dkB: number;
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
/**
 * A shaped section's table: each node costs a spectral solve (milliseconds over a flat bottom,
 * tens of milliseconds where the interface meets a curved or sloping wall), so the table is
 * coarse and is itself the answer (no polish by a full solve). φ(α) is smooth between the
 * holdups where the interface passes a joint of the wall, not across them, so each stretch
 * between joints gets its own Chebyshev–Lobatto nodes, SHAPED_TABLE_DEGREE + 1 of them; k_A and
 * k_B are solved there at SHAPED_TABLE_SOLVER_DEGREE (its error about 2e-6 of the slow layer
 * on the wall, 3e-7 over a flat bottom), their slopes are those of each stretch's polynomial
 * interpolant, which answers; the cubic Hermite table of φ only finds the stretch and the first
 * guess (bench/shapedSection.ts measures the error against the direct inversion).
 */
const SHAPED_TABLE_DEGREE = 10;
const SHAPED_TABLE_SOLVER_DEGREE = 16;
/** Interpolated [k_A, k_B, dk_A/dα, dk_B/dα] (HoldupTable.interpolated is not re-entrant). */
const SCRATCH = new Float64Array(4);
/** The barycentric terms w_i/(t − t_i) of one evaluation (evaluateStretch). */
const WEIGHTS = new Float64Array(SHAPED_TABLE_DEGREE + 1);
/**
 * The variable t ∈ [−1, 1] of a table stretch: linear between two joints, and quadratic toward
 * an edge of the holdup range, α = lo + (hi − lo)·((t + 1)/2)² from α = 0 (mirrored toward
 * α = 1), so that the thin layer's power law in α becomes smoother in t and the nodes cluster
 * where it bends.
 */
export function stretchMap(lo: number, hi: number) {
  const w = hi - lo;
  if (lo === 0 && hi < 1) return { alpha: (t: number) => w * ((t + 1) / 2) ** 2, dAlpha: (t: number) => w * ((t + 1) / 2), t: (a: number) => 2 * Math.sqrt(Math.max(0, a) / w) - 1 };
  if (hi === 1 && lo > 0) return { alpha: (t: number) => 1 - w * ((1 - t) / 2) ** 2, dAlpha: (t: number) => w * ((1 - t) / 2), t: (a: number) => 1 - 2 * Math.sqrt(Math.max(0, 1 - a) / w) };
  return { alpha: (t: number) => lo + ((t + 1) / 2) * w, dAlpha: () => w / 2, t: (a: number) => (2 * (a - lo)) / w - 1 };
}

/** The nodes of a shaped section's table (see SHAPED_TABLE_DEGREE). */
function shapedTable(section: ShapedSection, muA: number, muB: number) {
  const ends = [0, ...jointHoldups(section), 1];
  const n = SHAPED_TABLE_DEGREE;
  const grid = chebyshevGrid(n);
  const count = (ends.length - 1) * n + 1;
  const alpha = new Float64Array(count);
  const phi = new Float64Array(count);
  const slope = new Float64Array(count);
  const flows = new Float64Array(2 * count);
  const kFullA = conductance(section, muA);
  const kFullB = conductance(section, muB);
  for (let s = 0; s + 1 < ends.length; s++) {
    const lo = ends[s]!;
    const hi = ends[s + 1]!;
    const kA = new Float64Array(n + 1);
    const kB = new Float64Array(n + 1);
    const map = stretchMap(lo, hi);
    for (let i = 0; i <= n; i++) {
      // A stretch starts at the node where the one before it ends (a wall joint): solved once.
      if (i === 0 && s > 0) {
        kA[0] = flows[2 * s * n]!;
        kB[0] = flows[2 * s * n + 1]!;
        continue;
      }
      const a = map.alpha(grid.nodes[i]!);
      alpha[s * n + i] = a;
      // At the edges one phase fills the section (a layer of share e carries ∝ e², lanes.ts).
      const k = a === 0 ? { kA: 0, kB: kFullB } : a === 1 ? { kA: kFullA, kB: 0 } : shapedFlows(section, a, muA, muB, SHAPED_TABLE_SOLVER_DEGREE);
      kA[i] = k.kA;
      kB[i] = k.kB;
    }
    for (let i = 0; i <= n; i++) {
      let dA = 0;
      let dB = 0;
      for (let j = 0; j <= n; j++) {
        dA += grid.d1[i * (n + 1) + j]! * kA[j]!;
        dB += grid.d1[i * (n + 1) + j]! * kB[j]!;
      }
      // Slopes in the stretch's own variable t; d/dα = (d/dt)/(dα/dt), 0 where dα/dt = 0 (an
      // edge, where the thin layer's flow and slope vanish).
      const at = s * n + i;
      const dAlpha = map.dAlpha(grid.nodes[i]!);
      const kSum = kA[i]! + kB[i]!;
      flows.set([kA[i]!, kB[i]!], 2 * at);
      phi[at] = kA[i]! / kSum;
      slope[at] = dAlpha === 0 ? 0 : (((dA * kB[i]! - kA[i]! * dB) / (kSum * kSum)) / dAlpha);
    }
  }
  return { alpha, phi, slope, flows };
}

/** Largest Newton step, relative to min(α, 1 − α), that one polish may take before it is repeated. */
const ONE_STEP_LIMIT = 1e-7;

/**
 * Fast repeated inversion on one geometry and fluid pair: a monotone table of (α, φ, dφ/dα)
 * built once at Chebyshev–Lobatto nodes, a cubic Hermite guess (monotone because the exact node
 * derivatives are positive), then for a rectangle a Newton polish with one full series
 * evaluation. Where the guess is good (a relative Newton step below 1e-7) one step lands at
 * rounding accuracy; otherwise the safeguarded iteration continues inside the table interval.
 * For a shaped section the table also holds k_A, k_B and their slopes, and the answer is the
 * interpolant's (SHAPED_TABLE_INTERVALS).
 */
export class HoldupTable {
  readonly section: TwoLayerSection;
  readonly muA: number;
  readonly muB: number;
  private readonly alpha: Float64Array;
  private readonly phi: Float64Array;
  private readonly slope: Float64Array;
  /** Shaped sections only: [k_A, k_B] per node (the slopes come from their interpolant). */
  private readonly flows?: Float64Array;

  constructor(section: TwoLayerSection, muA: number, muB: number, intervals = TABLE_INTERVALS) {
    this.section = section;
    this.muA = muA;
    this.muB = muB;
    if (section.shape !== 'rect') {
      const nodes = shapedTable(section, muA, muB);
      this.alpha = nodes.alpha;
      this.phi = nodes.phi;
      this.slope = nodes.slope;
      this.flows = nodes.flows;
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
    const j = this.interval(flowFraction);
    const guess = this.hermiteInverse(j, flowFraction);
    if (this.flows) return this.interpolated(j, guess, flowFraction);
    const state = flowFractionAt(this.section, this.muA, this.muB, guess);
    const step = -(state.flowFraction - flowFraction) / state.dFlowFraction;
    if (Math.abs(step) < ONE_STEP_LIMIT * Math.min(guess, 1 - guess) && guess + step > 0 && guess + step < 1) {
      return shiftState(state, guess + step);
    }
    return holdupForFlowFraction(this.section, this.muA, this.muB, flowFraction, guess, [this.alpha[j]!, this.alpha[j + 1]!]);
  }

  /**
   * A shaped section's answer: Newton steps on φ(α) = k_A/(k_A + k_B), with k_A, k_B and their
   * slopes from the polynomial interpolant of the stretch that holds table interval j
   * (barycentric form, Berrut & Trefethen, 2004, SIAM Rev. 46:501), from the Hermite guess.
   */
  private interpolated(j: number, guess: number, flowFraction: number): TwoPhaseState {
    const n = SHAPED_TABLE_DEGREE;
    const first = Math.min(Math.floor(j / n), (this.alpha.length - 1) / n - 1) * n;
    const lo = this.alpha[first]!;
    const hi = this.alpha[first + n]!;
    const v = SCRATCH;
    const evaluate = (alpha: number) => this.evaluateStretch(first, alpha);
    let alpha = guess;
    for (let step = 0; step < 8; step++) {
      evaluate(alpha);
      const k = v[0]! + v[1]!;
      const miss = v[0]! / k - flowFraction;
      const dPhi = (v[2]! * v[1]! - v[0]! * v[3]!) / (k * k);
      const next = Math.min(hi, Math.max(lo, dPhi > 0 ? alpha - miss / dPhi : alpha));
      const done = Math.abs(next - alpha) <= 1e-14 * Math.max(alpha, 1e-300);
      alpha = next;
      if (done) break;
    }
    evaluate(alpha);
    const [kA, kB, dkA, dkB] = [v[0]!, v[1]!, v[2]!, v[3]!];
    const k = kA + kB;
    return { holdup: alpha, flowFraction, dFlowFraction: (dkA * kB - kA * dkB) / (k * k), kA, kB, dkA, dkB };
  }

  /**
   * A shaped section's k_A, k_B and their slopes in α at holdup α ∈ [0, 1], from the polynomial
   * interpolant of the stretch that holds α (no solve): the lane conductances of a contactor
   * (lanes.ts). At α = 0 and 1 they are the node values (one phase fills the section, the
   * other's flow and slope are 0).
   */
  flowsAt(alpha: number): { kA: number; kB: number; dkA: number; dkB: number } {
    if (!this.flows) throw new RangeError('flowsAt answers for etched and trapezoidal sections only');
    const n = SHAPED_TABLE_DEGREE;
    const last = this.alpha.length - 1 - n;
    let first = 0;
    while (first < last && this.alpha[first + n]! <= alpha) first += n;
    this.evaluateStretch(first, alpha);
    return { kA: SCRATCH[0]!, kB: SCRATCH[1]!, dkA: SCRATCH[2]!, dkB: SCRATCH[3]! };
  }

  /**
   * [k_A, k_B, dk_A/dα, dk_B/dα] on the stretch starting at node `first`, into SCRATCH: the
   * barycentric interpolant of the node values (Berrut & Trefethen, 2004, SIAM Rev. 46:501,
   * eq. 4.2) and its exact derivative, p′(t) = Σ w_i (p − f_i)/(t − t_i)² / Σ w_i/(t − t_i), or
   * at a node t_j the differentiation matrix row Σ D_ji f_i (the same derivative). The slopes
   * are those of the values themselves, so a Newton Jacobian built on them is consistent with
   * its residual to rounding; stretches share their end nodes, and the one-sided slopes there
   * differ, so no slope is stored per node.
   */
  private evaluateStretch(first: number, alpha: number): void {
    const n = SHAPED_TABLE_DEGREE;
    const f = this.flows!;
    const v = SCRATCH;
    const map = stretchMap(this.alpha[first]!, this.alpha[first + n]!);
    const t = map.t(alpha);
    const dAlpha = map.dAlpha(t);
    const grid = chebyshevGrid(n);
    const nodes = grid.nodes;
    const base = 2 * first;
    let near = 0;
    for (let i = 1; i <= n; i++) if (Math.abs(t - nodes[i]!) < Math.abs(t - nodes[near]!)) near = i;
    const fa = f[base + 2 * near]!;
    const fb = f[base + 2 * near + 1]!;
    if (t === nodes[near]) {
      let sa = 0;
      let sb = 0;
      for (let i = 0; i <= n; i++) {
        const d = grid.d1[near * (n + 1) + i]!;
        sa += d * f[base + 2 * i]!;
        sb += d * f[base + 2 * i + 1]!;
      }
      v[0] = fa;
      v[1] = fb;
      v[2] = sa;
      v[3] = sb;
    } else {
      // p − f_j as Σ_{i≠j} r_i (f_i − f_j) / Σ r_i, r_i = w_i/(t − t_i), for the nearest node j:
      // no cancellation when t is close to t_j, where (p − f_j)/(t − t_j)² would otherwise lose
      // every digit.
      const r = WEIGHTS;
      let sum = 0;
      let oa = 0;
      let ob = 0;
      for (let i = 0; i <= n; i++) {
        const w = ((i % 2 === 0 ? 1 : -1) * (i === 0 || i === n ? 0.5 : 1)) / (t - nodes[i]!);
        r[i] = w;
        sum += w;
        oa += w * (f[base + 2 * i]! - fa);
        ob += w * (f[base + 2 * i + 1]! - fb);
      }
      oa /= sum;
      ob /= sum;
      const pa = fa + oa;
      const pb = fb + ob;
      const dj = t - nodes[near]!;
      let sa = (r[near]! * oa) / dj;
      let sb = (r[near]! * ob) / dj;
      for (let i = 0; i <= n; i++) {
        if (i === near) continue;
        const d = t - nodes[i]!;
        sa += (r[i]! * (pa - f[base + 2 * i]!)) / d;
        sb += (r[i]! * (pb - f[base + 2 * i + 1]!)) / d;
      }
      v[0] = pa;
      v[1] = pb;
      v[2] = sa / sum;
      v[3] = sb / sum;
    }
    // d/dα = (d/dt)/(dα/dt); 0 where dα/dt = 0 (an edge, where the thin layer's flow and slope vanish).
    v[2] = dAlpha === 0 ? 0 : v[2]! / dAlpha;
    v[3] = dAlpha === 0 ? 0 : v[3]! / dAlpha;
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

  /** Solves the cubic Hermite p(α) = φ on interval j by safeguarded Newton. */
  private hermiteInverse(j: number, phi: number): number {
    const a0 = this.alpha[j]!;
    const a1 = this.alpha[j + 1]!;
    const h = a1 - a0;
    const p0 = this.phi[j]!;
    const p1 = this.phi[j + 1]!;
    const m0 = this.slope[j]! * h;
    const m1 = this.slope[j + 1]! * h;
    let lo = 0;
    let hi = 1;
    let t = p1 > p0 ? (phi - p0) / (p1 - p0) : 0.5;
    for (let i = 0; i < 40; i++) {
      const t2 = t * t;
      const t3 = t2 * t;
      const value = (2 * t3 - 3 * t2 + 1) * p0 + (t3 - 2 * t2 + t) * m0 + (-2 * t3 + 3 * t2) * p1 + (t3 - t2) * m1 - phi;
      const deriv = (6 * t2 - 6 * t) * p0 + (3 * t2 - 4 * t + 1) * m0 + (-6 * t2 + 6 * t) * p1 + (3 * t2 - 2 * t) * m1;
      if (value > 0) hi = t;
      else lo = t;
      let next = t - value / deriv;
      if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
      if (Math.abs(next - t) < 1e-15) {
        t = next;
        break;
      }
      t = next;
    }
    return Math.min(Math.max(a0 + t * h, a0 + 1e-300), a1);
  }
}

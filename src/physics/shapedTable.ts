/**
 * The holdup table of an etched or trapezoidal section (the shaped path of HoldupTable,
 * section.ts): k_A and k_B at Chebyshev–Lobatto nodes of each stretch of the holdup range
 * between the wall joints, each stretch built when a holdup or flow fraction in it is first
 * asked for, and the interpolant of a stretch with its exact slopes. Exports `ShapedTable`,
 * `stretchMap` (the variable of a stretch, shared with curvedTable.ts), `hermiteInverse` (the
 * cubic Hermite first guess, shared with the rectangle's table) and `TwoPhaseState`. Builds by
 * solving; no I/O.
 *
 * Each node costs a spectral solve (milliseconds over a flat bottom, tens of milliseconds where
 * the interface cuts a curved or sloping wall, since that strip's condensation is new), so the
 * table is coarse and is itself the answer (no polish by a full solve). φ(α) is smooth between
 * the holdups where the interface passes a joint of the wall, not across them, so each stretch
 * gets its own SHAPED_TABLE_DEGREE + 1 nodes; k_A and k_B are solved there at
 * SHAPED_TABLE_SOLVER_DEGREE (its error about 2e-6 of the slow layer on the wall, 3e-7 over a
 * flat bottom). Both shapes are mirror-symmetric, and mirroring the section exchanges the layers:
 * k_A(α; μ_A, μ_B) = k_B(1 − α; μ_B, μ_A). So the nodes of the upper half of the holdup range
 * are solved as the mirror images of those of the lower half, at the lower node's interface with
 * the viscosities exchanged: the same strips, whose condensations (independent of the viscosity,
 * spectralSection.ts) are then made once for both halves. A chip whose contactors all run with
 * the interface over the flat bottom builds only the middle stretch.
 */
import { chebyshevGrid } from './chebyshev.js';
import { jointHoldups, shapedConductance, shapedFlows, type ShapedSection } from './shapedSection.js';

export const SHAPED_TABLE_DEGREE = 10;
export const SHAPED_TABLE_SOLVER_DEGREE = 16;

/** Interpolated [k_A, k_B, dk_A/dα, dk_B/dα] (ShapedTable's answers are not re-entrant). */
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

/**
 * The α in [a0, a1] where the cubic Hermite p with values p0, p1 and slopes s0, s1 (in α) at
 * the ends equals φ, by safeguarded Newton in the interval's own variable (monotone where both
 * slopes are positive).
 */
export function hermiteInverse(a0: number, a1: number, p0: number, p1: number, s0: number, s1: number, phi: number): number {
  const h = a1 - a0;
  const m0 = s0 * h;
  const m1 = s1 * h;
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

/** A holdup and its flow fraction, with k_A, k_B and their slopes in α (section.ts and this table answer it). */
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

export class ShapedTable {
  private readonly section: ShapedSection;
  private readonly muA: number;
  private readonly muB: number;
  /** Holdup of every node, stretches sharing their end nodes (node g = s·n + i). */
  private readonly alpha: Float64Array;
  /** [k_A, k_B] per node: set at the joints from the start, in a stretch once it is built. */
  private readonly flows: Float64Array;
  private readonly phi: Float64Array;
  /** dφ/dα at node i of stretch s at s·(n + 1) + i (the stretches' one-sided slopes differ at a joint). */
  private readonly slopes: Float64Array;
  private readonly built: boolean[];
  private readonly full: { a: number; b: number };

  constructor(section: ShapedSection, muA: number, muB: number) {
    this.section = section;
    this.muA = muA;
    this.muB = muB;
    const ends = [0, ...jointHoldups(section), 1];
    const n = SHAPED_TABLE_DEGREE;
    const nodes = chebyshevGrid(n).nodes;
    const stretches = ends.length - 1;
    const count = stretches * n + 1;
    this.alpha = new Float64Array(count);
    for (let s = 0; s < stretches; s++) {
      const map = stretchMap(ends[s]!, ends[s + 1]!);
      for (let i = s === 0 ? 0 : 1; i <= n; i++) this.alpha[s * n + i] = map.alpha(nodes[i]!);
    }
    this.flows = new Float64Array(2 * count);
    this.phi = new Float64Array(count);
    this.slopes = new Float64Array(stretches * (n + 1));
    this.built = new Array<boolean>(stretches).fill(false);
    this.full = { a: shapedConductance(section, muA), b: shapedConductance(section, muB) };
    for (let s = 0; s <= stretches; s++) this.solveNode(s * n);
  }

  /** The number of stretches and how many of them are built (for the benchmark and the tests). */
  get stretches(): { count: number; built: number } {
    return { count: this.built.length, built: this.built.filter(Boolean).length };
  }

  /** Builds every stretch (what a table built in one go costs; the answers are the same). */
  complete(): this {
    for (let s = 0; s < this.built.length; s++) this.stretch(s);
    return this;
  }

  /**
   * Holdup for flow fraction φ in (0, 1) with k_A, k_B and their slopes: Newton steps on
   * φ(α) = k_A/(k_A + k_B) with k and its slopes from the interpolant of the stretch that holds
   * φ, from the cubic Hermite guess on the table interval that holds it.
   */
  solve(flowFraction: number): TwoPhaseState {
    const n = SHAPED_TABLE_DEGREE;
    let s = 0;
    while (s + 1 < this.built.length && this.phi[(s + 1) * n]! <= flowFraction) s++;
    this.stretch(s);
    let lo = s * n;
    let hi = lo + n;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (this.phi[mid]! <= flowFraction) lo = mid;
      else hi = mid;
    }
    const i = lo - s * n;
    const slope = this.slopes;
    const guess = hermiteInverse(this.alpha[lo]!, this.alpha[lo + 1]!, this.phi[lo]!, this.phi[lo + 1]!, slope[s * (n + 1) + i]!, slope[s * (n + 1) + i + 1]!, flowFraction);
    const first = s * n;
    const a0 = this.alpha[first]!;
    const a1 = this.alpha[first + n]!;
    const v = SCRATCH;
    let alpha = guess;
    for (let step = 0; step < 8; step++) {
      this.evaluateStretch(first, alpha);
      const k = v[0]! + v[1]!;
      const miss = v[0]! / k - flowFraction;
      const dPhi = (v[2]! * v[1]! - v[0]! * v[3]!) / (k * k);
      const next = Math.min(a1, Math.max(a0, dPhi > 0 ? alpha - miss / dPhi : alpha));
      const done = Math.abs(next - alpha) <= 1e-14 * Math.max(alpha, 1e-300);
      alpha = next;
      if (done) break;
    }
    this.evaluateStretch(first, alpha);
    const [kA, kB, dkA, dkB] = [v[0]!, v[1]!, v[2]!, v[3]!];
    const k = kA + kB;
    return { holdup: alpha, flowFraction, dFlowFraction: (dkA * kB - kA * dkB) / (k * k), kA, kB, dkA, dkB };
  }

  /**
   * k_A, k_B and their slopes in α at holdup α ∈ [0, 1], from the interpolant of the stretch
   * that holds α (no solve once it is built). At α = 0 and 1 they are the node values (one phase
   * fills the section, the other's flow and slope are 0).
   */
  flowsAt(alpha: number): { kA: number; kB: number; dkA: number; dkB: number } {
    const n = SHAPED_TABLE_DEGREE;
    const last = this.alpha.length - 1 - n;
    let first = 0;
    while (first < last && this.alpha[first + n]! <= alpha) first += n;
    this.stretch(first / n);
    this.evaluateStretch(first, alpha);
    return { kA: SCRATCH[0]!, kB: SCRATCH[1]!, dkA: SCRATCH[2]!, dkB: SCRATCH[3]! };
  }

  /**
   * Solves node g: in the lower half of the range at its own holdup; in the upper half as the
   * mirror image of node count − 1 − g (its interface, the viscosities exchanged, the layers
   * swapped). At the edges one phase fills the section (a layer of share e carries ∝ e², lanes.ts).
   */
  private solveNode(g: number): void {
    const count = this.alpha.length;
    const mirrored = 2 * g > count - 1;
    const a = this.alpha[mirrored ? count - 1 - g : g]!;
    const [left, right] = mirrored ? [this.muB, this.muA] : [this.muA, this.muB];
    const [kLeft, kFull] = mirrored ? [this.full.b, this.full.a] : [this.full.a, this.full.b];
    const k = a === 0 ? { kA: 0, kB: kFull } : a === 1 ? { kA: kLeft, kB: 0 } : shapedFlows(this.section, a, left, right, SHAPED_TABLE_SOLVER_DEGREE);
    const [kA, kB] = mirrored ? [k.kB, k.kA] : [k.kA, k.kB];
    this.flows[2 * g] = kA;
    this.flows[2 * g + 1] = kB;
    this.phi[g] = kA / (kA + kB);
  }

  /** Builds stretch s if it is not built: its inner nodes, and the slopes dφ/dα at its nodes from its interpolant of k. */
  private stretch(s: number): void {
    if (this.built[s]) return;
    const n = SHAPED_TABLE_DEGREE;
    const grid = chebyshevGrid(n);
    for (let i = 1; i < n; i++) this.solveNode(s * n + i);
    const map = stretchMap(this.alpha[s * n]!, this.alpha[(s + 1) * n]!);
    const f = this.flows;
    const base = 2 * s * n;
    for (let i = 0; i <= n; i++) {
      let dA = 0;
      let dB = 0;
      for (let j = 0; j <= n; j++) {
        dA += grid.d1[i * (n + 1) + j]! * f[base + 2 * j]!;
        dB += grid.d1[i * (n + 1) + j]! * f[base + 2 * j + 1]!;
      }
      // Slopes in the stretch's own variable t; d/dα = (d/dt)/(dα/dt), 0 where dα/dt = 0 (an
      // edge, where the thin layer's flow and slope vanish).
      const kA = f[base + 2 * i]!;
      const kB = f[base + 2 * i + 1]!;
      const kSum = kA + kB;
      const dAlpha = map.dAlpha(grid.nodes[i]!);
      this.slopes[s * (n + 1) + i] = dAlpha === 0 ? 0 : (dA * kB - kA * dB) / (kSum * kSum) / dAlpha;
    }
    this.built[s] = true;
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
    const f = this.flows;
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
}

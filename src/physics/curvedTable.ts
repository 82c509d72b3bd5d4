/**
 * Holdup tables of a section with a curved interface (curvedSection.ts): k_A and k_B per unit
 * gradient on a grid in the chord's flat holdup α_c and the arc's half-angle θ (sin θ = κD/2,
 * D the depth), and their interpolant at any holdup and curvature with the slopes in both.
 * Exports `CurvedTable`, `CURVED_TABLE`. Builds by solving; no I/O. Accuracy (test/solver/
 * curvedInterface.test.ts, measured): k within 4e-6 of the total flow of the direct solve at
 * degree 24 (the same at solver degree 10 as at 12: the interpolation dominates); a θ stretch
 * builds with the construction in 0.34 s (rectangle 100 × 50 µm) to 0.65 s (etched 100 × 40 µm), bench curved-interface.
 *
 * Coordinates: between wall joints (and the taper's breaks, interfaceArc.ts) the flows are
 * smooth in (α_c, θ), because the chord, not the holdup, fixes the strips; so the table's
 * α_c stretches are those of the flat table (shapedTable.ts stretchMap: linear between joints,
 * quadratic toward an edge) and θ runs over THETA_STRETCHES equal stretches of
 * [−asin 0.9, asin 0.9], each built only when a curvature in it is first asked for. A holdup α
 * at curvature κ is turned into α_c by the arc's geometry (arcChord), and
 *   ∂k/∂α|κ = (∂k/∂α_c)/(∂α/∂α_c),  ∂k/∂κ|α = ∂k/∂θ·dθ/dκ − (∂k/∂α_c)(∂α/∂κ|α_c)/(∂α/∂α_c),
 * with the geometric derivatives of α by central differences in the chord (steps 1e-7: error ~1e-9).
 * Beyond |κ|D/2 = CURVATURE_LIMIT the curvature is held at the limit (slopes in κ zero there).
 */
import { CURVATURE_LIMIT, arcChord, holdupOfChord, taperHoldup } from './interfaceArc.js';
import { curvedFlowsAtChord, sectionProfile, type CurvedFlows } from './curvedSection.js';
import { chebyshevGrid, interpolateWithSlope } from './chebyshev.js';
import { spectralTwoLayer } from './spectralSection.js';
import type { TwoLayerSection } from './section.js';
import { stretchMap } from './shapedTable.js';
import { areaLeftOf, interfacePosition, pieceEnd, type WallProfile } from './wallProfile.js';

export type { CurvedFlows } from './curvedSection.js';

/** The grid of the table: degrees in α_c (per stretch) and θ (per stretch), stretches in θ, and the solver's degree. */
// holdupDegree 12: with the taper over 0.9 depths from each side a 2:1 rectangle is tapered but for its
// middle tenth, where degree 8 left 6e-5 of the total flow (measured), degree 12 under 4e-6.
export const CURVED_TABLE = { holdupDegree: 12, angleDegree: 4, angleStretches: 6, solverDegree: 10 } as const;

const THETA_LIMIT = Math.asin(CURVATURE_LIMIT);

export class CurvedTable {
  readonly profile: WallProfile;
  readonly muA: number;
  readonly muB: number;
  /** α_c of every node, stretches sharing their end nodes. */
  private readonly chords: Float64Array;
  private readonly breaks: number[];
  /** Per θ stretch: [k_A, k_B] at (θ node m, α_c node i) at 2·(m·count + i). */
  private readonly built = new Map<number, Float64Array>();
  private readonly full: { a: number; b: number };
  private readonly scratch = new Float64Array(2);

  constructor(section: TwoLayerSection, muA: number, muB: number) {
    this.profile = sectionProfile(section);
    this.muA = muA;
    this.muB = muB;
    const p = this.profile;
    const eb = taperHoldup(p);
    // The taper's breaks (beyond the section when it is narrower than the taper width).
    const raw = [0, 1, ...[eb, 1 - eb].filter((v) => v > 0 && v < 1), ...p.pieces.slice(0, -1).map((piece) => areaLeftOf(p, pieceEnd(piece)) / p.area)].sort((a, b) => a - b);
    this.breaks = raw.filter((v, i) => i === 0 || v - raw[i - 1]! > 1e-9);
    const n = CURVED_TABLE.holdupDegree;
    const nodes = chebyshevGrid(n).nodes;
    const chords: number[] = [];
    for (let s = 0; s + 1 < this.breaks.length; s++) {
      const map = stretchMap(this.breaks[s]!, this.breaks[s + 1]!);
      for (let i = s === 0 ? 0 : 1; i <= n; i++) chords.push(i === n ? this.breaks[s + 1]! : i === 0 ? this.breaks[s]! : map.alpha(nodes[i]!));
    }
    this.chords = Float64Array.from(chords);
    const unit = (mu: number) => {
      const r = spectralTwoLayer(p, 0.5 * p.topWidth, mu, mu, CURVED_TABLE.solverDegree);
      return r.qA + r.qB;
    };
    this.full = { a: unit(muA), b: unit(muB) };
  }

  /** Node values of θ stretch s (built on first use). */
  private stretch(s: number): Float64Array {
    let values = this.built.get(s);
    if (values) return values;
    const m = CURVED_TABLE.angleDegree;
    const count = this.chords.length;
    values = new Float64Array(2 * (m + 1) * count);
    const thetaNodes = chebyshevGrid(m).nodes;
    const p = this.profile;
    for (let j = 0; j <= m; j++) {
      const theta = this.thetaOf(s, thetaNodes[j]!);
      const kappa = (2 * Math.sin(theta)) / p.depth;
      for (let i = 0; i < count; i++) {
        const ac = this.chords[i]!;
        const at = 2 * (j * count + i);
        if (ac === 0 || ac === 1) {
          values[at] = ac === 1 ? this.full.a : 0;
          values[at + 1] = ac === 0 ? this.full.b : 0;
          continue;
        }
        const r = curvedFlowsAtChord(p, interfacePosition(p, ac), kappa, this.muA, this.muB, CURVED_TABLE.solverDegree);
        values[at] = r.qA;
        values[at + 1] = r.qB;
      }
    }
    this.built.set(s, values);
    return values;
  }

  private thetaOf(s: number, u: number): number {
    const w = (2 * THETA_LIMIT) / CURVED_TABLE.angleStretches;
    return -THETA_LIMIT + w * (s + 0.5 * (u + 1));
  }

  /** The number of θ stretches built so far (for the benchmark and the report). */
  get stretchesBuilt(): number {
    return this.built.size;
  }

  /** k_A, k_B and their slopes at holdup α ∈ [0, 1] and curvature κ, 1/m. */
  flowsAt(holdup: number, curvature: number): CurvedFlows {
    const p = this.profile;
    const limit = (2 * CURVATURE_LIMIT) / p.depth;
    const held = Math.abs(curvature) > limit;
    const kappa = held ? Math.sign(curvature) * limit : curvature;
    const theta = Math.asin((kappa * p.depth) / 2);
    const w = (2 * THETA_LIMIT) / CURVED_TABLE.angleStretches;
    const s = Math.min(CURVED_TABLE.angleStretches - 1, Math.max(0, Math.floor((theta + THETA_LIMIT) / w)));
    const u = Math.max(-1, Math.min(1, (2 * (theta + THETA_LIMIT - s * w)) / w - 1));
    const edge = holdup <= 0 || holdup >= 1;
    const xe = edge ? holdup * p.topWidth : arcChord(p, holdup, kappa);
    const ac = edge ? holdup : areaLeftOf(p, xe) / p.area;
    const [kA, kB, dA, dB, tA, tB] = this.interpolate(s, ac, u);
    // Geometry of α(α_c, κ): central differences of holdupOfChord in the chord abscissa (α_c is
    // areaLeftOf(x)/A there; exact functions, steps 1e-7 of the width and of κ: error ~1e-9).
    const h = 1e-7 * p.topWidth;
    const lo = Math.max(0, xe - h);
    const hi = Math.min(p.topWidth, xe + h);
    const alphaAt = (x: number, k: number) => (x <= 0 ? 0 : x >= p.topWidth ? 1 : holdupOfChord(p, x, k));
    const dAlphaDChord = (alphaAt(hi, kappa) - alphaAt(lo, kappa)) / ((areaLeftOf(p, hi) - areaLeftOf(p, lo)) / p.area);
    const dk = (kappa === 0 ? 1 : Math.abs(kappa)) * 1e-6;
    const dAlphaDKappa = edge ? 0 : (alphaAt(xe, kappa + dk) - alphaAt(xe, kappa - dk)) / (2 * dk);
    const dThetaDKappa = (0.5 * p.depth) / Math.cos(theta) / (0.5 * w);
    const curvatureSlope = (t: number, d: number) => (held ? 0 : t * dThetaDKappa - (d * dAlphaDKappa) / dAlphaDChord);
    return { kA, kB, dkA: dA / dAlphaDChord, dkB: dB / dAlphaDChord, dkADCurvature: curvatureSlope(tA, dA), dkBDCurvature: curvatureSlope(tB, dB) };
  }

  /** [k_A, k_B, ∂/∂α_c of each, ∂/∂u of each] at chord holdup α_c and local θ variable u of stretch s. */
  private interpolate(s: number, ac: number, u: number): number[] {
    const values = this.stretch(s);
    const n = CURVED_TABLE.holdupDegree;
    const m = CURVED_TABLE.angleDegree;
    const count = this.chords.length;
    let stretch = 0;
    while (stretch + 2 < this.breaks.length && this.breaks[stretch + 1]! <= ac) stretch++;
    const map = stretchMap(this.breaks[stretch]!, this.breaks[stretch + 1]!);
    const t = Math.max(-1, Math.min(1, map.t(ac)));
    const dAlpha = map.dAlpha(t);
    const first = stretch * n;
    const along = new Float64Array(4 * (m + 1));
    const out = this.scratch;
    for (let j = 0; j <= m; j++) {
      for (let c = 0; c < 2; c++) {
        interpolateWithSlope(n, t, values, out, 2 * (j * count + first) + c, 2);
        along[4 * j + c] = out[0]!;
        along[4 * j + 2 + c] = dAlpha === 0 ? 0 : out[1]! / dAlpha;
      }
    }
    const result = new Array<number>(6);
    for (let c = 0; c < 2; c++) {
      interpolateWithSlope(m, u, along, out, c, 4);
      result[c] = out[0]!;
      result[4 + c] = out[1]!;
      interpolateWithSlope(m, u, along, out, 2 + c, 4);
      result[2 + c] = out[0]!;
    }
    return result;
  }
}

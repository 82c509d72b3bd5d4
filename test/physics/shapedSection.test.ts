/**
 * Tests of the general cross-section solver (src/physics/spectralSection.ts, shapedSection.ts,
 * wallProfile.ts, chebyshev.ts): against the exact two-layer series on rectangles, against
 * handbook Poiseuille numbers and closed forms in one phase, and against its own identities.
 * The independent finite-element reference is in freefemReference.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { chebyshevGrid, DenseLu, partlySeparableDirichlet, separableDirichlet } from '../../src/physics/chebyshev.js';
import { spectralTwoLayer } from '../../src/physics/spectralSection.js';
import { forgetShapedSolves, shapedConductance, shapedFlows, shapedTwoLayerFlow, wallProfileOf, type ShapedSection } from '../../src/physics/shapedSection.js';
import { areaLeftOf, interfacePosition, type WallProfile } from '../../src/physics/wallProfile.js';
import { twoLayerFlow } from '../../src/physics/twoLayer.js';
import { rectConductance } from '../../src/physics/singlePhase.js';
import { flowFractionAt, holdupForFlowFraction, HoldupTable } from '../../src/physics/section.js';

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

const DEPTH = 40e-6;
const MU_B = 1e-3;

/** A rectangle W × D as a wall profile: a flat bottom, the side walls the ends of the chain. */
function rectangleProfile(width: number, depth: number): WallProfile {
  return { topWidth: width, depth, area: width * depth, perimeter: 2 * (width + depth), pieces: [{ kind: 'line', x0: 0, y0: depth, x1: width, y1: depth }] };
}

/** Fanning friction factor × Reynolds number on the hydraulic diameter: fRe = D_h² A / (2 μ k). */
function fanningRe(section: ShapedSection): number {
  const p = wallProfileOf(section);
  const dh = (4 * p.area) / p.perimeter;
  return (dh * dh * p.area) / (2 * MU_B * shapedConductance(section, MU_B));
}

describe('chebyshevGrid', () => {
  it('differentiates and integrates polynomials of its degree exactly', () => {
    // Property of polynomial collocation and of Clenshaw–Curtis quadrature (Trefethen, Spectral
    // Methods in MATLAB, 2000, ch. 6 and 12); tolerance: rounding of a degree-12 operator.
    const n = 12;
    const g = chebyshevGrid(n);
    const f = (t: number) => t ** 7 - 2 * t ** 4 + t;
    const df = (t: number) => 7 * t ** 6 - 8 * t ** 3 + 1;
    let integral = 0;
    for (let i = 0; i <= n; i++) {
      let d = 0;
      for (let j = 0; j <= n; j++) d += g.d1[i * (n + 1) + j]! * f(g.nodes[j]!);
      expect(Math.abs(d - df(g.nodes[i]!))).toBeLessThan(1e-11);
      integral += g.weights[i]! * f(g.nodes[i]!);
    }
    expect(Math.abs(integral - -4 / 5)).toBeLessThan(1e-14); // ∫₋₁¹ (t⁷ − 2t⁴ + t) dt = −4/5
  });
});

describe('the separable strip solvers', () => {
  const [nx, ny] = [9, 7];
  const [mx, my] = [nx - 1, ny - 1];
  const gx = chebyshevGrid(nx);
  const gy = chebyshevGrid(ny);
  /** The collocated a·D²_ξ + p·D²_η + q·D_η on the interior nodes, row (i − 1)(ny − 1) + j − 1, as a dense matrix. */
  function dense(a: number, p: ArrayLike<number>, q: ArrayLike<number>): Float64Array {
    const m = mx * my;
    const A = new Float64Array(m * m);
    for (let i = 1; i < nx; i++) {
      for (let j = 1; j < ny; j++) {
        const row = (i - 1) * my + j - 1;
        for (let k = 1; k < nx; k++) A[row * m + (k - 1) * my + j - 1] += a * gx.d2[i * (nx + 1) + k]!;
        for (let l = 1; l < ny; l++) A[row * m + (i - 1) * my + l - 1] += p[j]! * gy.d2[j * (ny + 1) + l]! + q[j]! * gy.d1[j * (ny + 1) + l]!;
      }
    }
    return A;
  }
  const rhs = (k: number) => Float64Array.from({ length: mx * my * k }, (_, e) => Math.sin(1 + 0.37 * e));

  it('partlySeparableDirichlet solves the same system as dense LU of its collocation', () => {
    // Two ways to one linear system (the partial diagonalisation is exact algebra); tolerance:
    // rounding of a degree-9 collocation, whose condition number is about 1e4.
    const p = Float64Array.from(gy.nodes, (t) => (1 - t) ** 2);
    const q = Float64Array.from(gy.nodes, (t) => -(1 - t));
    const b = rhs(3);
    const want = b.slice();
    new DenseLu(dense(0.8, p, q), mx * my).solveInPlace(want, 3);
    partlySeparableDirichlet(nx, ny, 0.8, p, q).solveInPlace(b, 3);
    b.forEach((v, e) => expect(Math.abs(v - want[e]!)).toBeLessThan(1e-10 * Math.max(1, Math.abs(want[e]!))));
  });

  it('separableDirichlet.solveSide gives the solutions of the right-hand sides g ⊗ e_l that solveInPlace gives one by one', () => {
    // Two evaluations of the same fast diagonalisation; tolerance: rounding.
    const solver = separableDirichlet(nx, ny, 1.3, 0.6);
    const g = Float64Array.from({ length: mx }, (_, i) => Math.cos(0.5 + i));
    const side = new Float64Array(mx * my * (my + 2));
    solver.solveSide(g, side, my + 2, 1);
    const each = new Float64Array(mx * my * my);
    for (let i = 0; i < mx; i++) for (let l = 0; l < my; l++) each[(i * my + l) * my + l] = g[i]!;
    solver.solveInPlace(each, my);
    for (let r = 0; r < mx * my; r++) {
      for (let l = 0; l < my; l++) expect(Math.abs(side[r * (my + 2) + 1 + l]! - each[r * my + l]!)).toBeLessThan(1e-12);
    }
  });
});

describe('spectralTwoLayer on rectangles', () => {
  // The exact Fourier series of the two-layer rectangle (twoLayer.ts; White, 2006, §3-3.3, with
  // the interface conditions of Bird, Stewart & Lightfoot, 2002, problem 2B.7), accurate to 1e-12.
  // Tolerance 1e-8: the collocation error at the default degree, which the r² log r corner
  // singularities make fall as about N⁻⁸; measured at most 4e-9 on these cases.
  const cases: Array<[number, number, number]> = [];
  for (const aspect of [1, 2, 4]) for (const holdup of [0.2, 0.5, 0.7]) for (const ratio of [0.2, 1, 5]) cases.push([aspect, holdup, ratio]);
  it.each(cases)('agree with the exact series to 1e-8 (width/depth %d, holdup %d, μA/μB %d)', (aspect, holdup, ratio) => {
    const width = aspect * DEPTH;
    const r = spectralTwoLayer(rectangleProfile(width, DEPTH), holdup * width, ratio * MU_B, MU_B);
    const exact = twoLayerFlow({ across: width, along: DEPTH, holdup, muA: ratio * MU_B, muB: MU_B });
    expect(relativeError(r.qA, exact.kA)).toBeLessThan(1e-8);
    expect(relativeError(r.qB, exact.kB)).toBeLessThan(1e-8);
  });

  it('agree with the exact series to 1e-8 in a channel twice as deep as wide at degree 32', () => {
    // Tall strips need more nodes across the depth: at the default degree 24 the error there is
    // 2e-8; at 32 it is 2e-9 (measured), inside the 1e-8 asked.
    const width = 0.5 * DEPTH;
    const r = spectralTwoLayer(rectangleProfile(width, DEPTH), 0.3 * width, MU_B, 5 * MU_B, 32);
    const exact = twoLayerFlow({ across: width, along: DEPTH, holdup: 0.3, muA: MU_B, muB: 5 * MU_B });
    expect(relativeError(r.qA, exact.kA)).toBeLessThan(1e-8);
    expect(relativeError(r.qB, exact.kB)).toBeLessThan(1e-8);
  });

  it('gives the rectangular duct with equal viscosities', () => {
    // White, Viscous Fluid Flow, 3rd ed., 2006, eq. 3-48 (rectConductance). Tolerance as above.
    const r = spectralTwoLayer(rectangleProfile(3 * DEPTH, DEPTH), 1.1 * DEPTH, MU_B, MU_B);
    expect(relativeError(r.qA + r.qB, rectConductance(3 * DEPTH, DEPTH, MU_B))).toBeLessThan(1e-8);
  });
});

describe('shaped sections in one phase', () => {
  it('give the Poiseuille number 15.767 of the semicircular duct (etched, no mask opening)', () => {
    // Shah & London, Laminar Flow Forced Convection in Ducts, 1978, semicircular duct: fRe =
    // 15.767 (table value, from memory). Measured 15.76683; tolerance 3e-5: the table's five
    // significant digits (the solver's own error here is below 1e-7).
    expect(relativeError(fanningRe({ shape: 'etched', maskWidth: 0, depth: DEPTH }), 15.767)).toBeLessThan(3e-5);
  });

  it('converge in an etched section and a half-disc: degree 16 within 5e-8 of degree 40 in one phase', () => {
    // Self-convergence of the collocation (the quarter-round walls as polar rectangles, whose
    // corners are right-angled and at the Lobatto clusters): measured 1.8e-8 (100 × 50 µm) and
    // 2.9e-8 (half-disc); the transfinite walls had 6.5e-8 and 3.4e-7.
    for (const section of [{ shape: 'etched', maskWidth: 100e-6, depth: 50e-6 }, { shape: 'etched', maskWidth: 0, depth: 50e-6 }] as ShapedSection[]) {
      expect(relativeError(shapedConductance(section, MU_B, 16), shapedConductance(section, MU_B, 40)), JSON.stringify(section)).toBeLessThan(5e-8);
    }
  });

  it('give fRe = 40/3 for the equilateral triangle (trapezoid with no bottom and 60° walls)', () => {
    // Exact: u = (G/4μh)(y − h)(3x² − y²)-type cubic of Saint-Venant (Shah & London, 1978,
    // equilateral triangular duct, fRe = 40/3). The velocity is a cubic polynomial, which the
    // collocation on the two triangular strips represents exactly: tolerance 1e-12 (rounding).
    expect(relativeError(fanningRe({ shape: 'trapezoid', bottomWidth: 0, depth: DEPTH, wallAngle: Math.PI / 3 }), 40 / 3)).toBeLessThan(1e-12);
  });

  it('give the rectangular duct series for a trapezoid with 90° walls', () => {
    // White, 2006, eq. 3-48 (rectConductance); Shah & London (1978) fRe of the square, 14.227.
    const k = shapedConductance({ shape: 'trapezoid', bottomWidth: DEPTH, depth: DEPTH, wallAngle: Math.PI / 2 }, MU_B);
    expect(relativeError(k, rectConductance(DEPTH, DEPTH, MU_B))).toBeLessThan(1e-8);
    expect(relativeError(fanningRe({ shape: 'trapezoid', bottomWidth: DEPTH, depth: DEPTH, wallAngle: Math.PI / 2 }), 14.227)).toBeLessThan(3e-5);
  });
});

const ETCHED: ShapedSection = { shape: 'etched', maskWidth: 100e-6, depth: DEPTH };
const TRAPEZOID: ShapedSection = { shape: 'trapezoid', bottomWidth: 60e-6, depth: DEPTH, wallAngle: Math.acos(1 / Math.sqrt(3)) };

describe('shapedTwoLayerFlow', () => {
  it.each([
    ['etched', ETCHED],
    ['trapezoid', TRAPEZOID],
  ] as const)('with equal viscosities carries the single-phase flow at any holdup (%s)', (_name, section) => {
    // Consistency identity: with μ_A = μ_B the interface is no boundary at all, so Q_A + Q_B is
    // the duct's flow wherever it stands; the strips differ from holdup to holdup, so this checks
    // the interface matching. Tolerance 1e-7: the solver's error at the default degree (FreeFem++
    // comparison: below 6e-7 on the thinnest layer, 1e-7 elsewhere).
    const k = shapedConductance(section, MU_B);
    for (const holdup of [0.03, 0.15, 0.4, 0.5, 0.85]) {
      const r = shapedTwoLayerFlow(section, holdup, MU_B, MU_B);
      expect(relativeError(r.kA + r.kB, k)).toBeLessThan(1e-7);
    }
  });

  it('gives holdup slopes that match a wider central difference', () => {
    // Independent check of the step: a difference quotient of step 3e-4 in the holdup, whose
    // truncation error (h²/6)|k'''| is about 1e-6 of the slope here; tolerance 1e-5.
    for (const section of [ETCHED, TRAPEZOID]) {
      for (const holdup of [0.1, 0.5]) {
        const r = shapedTwoLayerFlow(section, holdup, 5 * MU_B, MU_B);
        const h = 3e-4;
        const up = shapedTwoLayerFlow(section, holdup + h, 5 * MU_B, MU_B);
        const down = shapedTwoLayerFlow(section, holdup - h, 5 * MU_B, MU_B);
        expect(relativeError(r.dkA, (up.kA - down.kA) / (2 * h))).toBeLessThan(1e-5);
        expect(relativeError(r.dkB, (up.kB - down.kB) / (2 * h))).toBeLessThan(1e-5);
      }
    }
  });

  it('gives viscosity slopes that match a difference quotient in μB', () => {
    // The solver gets μ_B slopes from the scaling identity μ_A ∂k/∂μ_A + μ_B ∂k/∂μ_B = −k;
    // here they are differenced directly. Tolerance 1e-6: truncation of a 1e-4 relative step.
    const r = shapedTwoLayerFlow(ETCHED, 0.4, 0.2 * MU_B, MU_B, true);
    const h = 1e-4 * MU_B;
    const up = shapedTwoLayerFlow(ETCHED, 0.4, 0.2 * MU_B, MU_B + h);
    const down = shapedTwoLayerFlow(ETCHED, 0.4, 0.2 * MU_B, MU_B - h);
    expect(relativeError(r.dkADMuB, (up.kA - down.kA) / (2 * h))).toBeLessThan(1e-6);
    expect(relativeError(r.dkBDMuB, (up.kB - down.kB) / (2 * h))).toBeLessThan(1e-6);
  });
});

describe('wall profiles', () => {
  it('give the etched section the area w·d + πd²/2 and the holdup its area share', () => {
    // Geometry of a rectangle with two quarter discs; the interface position inverts the area.
    const p = wallProfileOf(ETCHED);
    expect(relativeError(p.area, 100e-6 * DEPTH + (Math.PI * DEPTH ** 2) / 2)).toBeLessThan(1e-14);
    expect(relativeError(p.topWidth, 180e-6)).toBeLessThan(1e-14);
    for (const holdup of [0.01, 0.2, 0.5, 0.93]) {
      expect(relativeError(areaLeftOf(p, interfacePosition(p, holdup)), holdup * p.area)).toBeLessThan(1e-12);
    }
  });

  it('give a 54.74° trapezoid the top width b + 2d/tan θ', () => {
    const p = wallProfileOf(TRAPEZOID);
    expect(relativeError(p.topWidth, 60e-6 + (2 * DEPTH) / Math.sqrt(2))).toBeLessThan(1e-14); // tan 54.74° = √2
  });
});

describe('flowFractionAt and holdupForFlowFraction on shaped sections', () => {
  it('invert each other', () => {
    // Round trip through the safeguarded Newton search; tolerance: its settling test.
    for (const holdup of [0.1, 0.5]) {
      const phi = flowFractionAt(ETCHED, 5 * MU_B, MU_B, holdup).flowFraction;
      expect(relativeError(holdupForFlowFraction(ETCHED, 5 * MU_B, MU_B, phi).holdup, holdup)).toBeLessThan(1e-9);
    }
  });
});

describe('kept strip condensations', () => {
  it('give the flows of a solve from none when kept from a section of another size (scale) and the other wall (mirror)', () => {
    // The quarter-round walls of a 30 × 70 µm section, kept, stand in scaled and mirrored for
    // those of the 100 × 40 µm one; the same collocation either way, so they agree to rounding
    // (measured 1.1e-14 of the total flow; bound 1e-12). A wrong scale of the flux rows or of the
    // source, or a side mirrored wrongly, would be off at order one.
    const other: ShapedSection = { shape: 'etched', maskWidth: 30e-6, depth: 70e-6 };
    for (const holdup of [0.1, 0.5, 0.93]) {
      forgetShapedSolves();
      const fresh = shapedFlows(ETCHED, holdup, 3e-3, 1e-3);
      forgetShapedSolves();
      shapedFlows(other, 0.5, 1e-3, 1e-3);
      const kept = shapedFlows(ETCHED, holdup, 3e-3, 1e-3);
      const total = fresh.kA + fresh.kB;
      expect(Math.abs(kept.kA - fresh.kA), `k_A at ${holdup}`).toBeLessThan(1e-12 * total);
      expect(Math.abs(kept.kB - fresh.kB), `k_B at ${holdup}`).toBeLessThan(1e-12 * total);
    }
  });
});

describe('HoldupTable on shaped sections', () => {
  it('builds only the stretches it is asked about, and answers there as the table built whole', () => {
    // Holdups and flow fractions over the flat bottom (joints at 0.19 and 0.81 here) need the
    // middle stretch alone; its nodes are the same solves either way, so the answers are equal
    // to the bit.
    const lazy = new HoldupTable(ETCHED, 6.5e-3, 1.9e-3);
    const whole = new HoldupTable(ETCHED, 6.5e-3, 1.9e-3).complete();
    for (const alpha of [0.3, 0.5, 0.7]) expect(lazy.flowsAt(alpha)).toEqual(whole.flowsAt(alpha));
    expect(lazy.solve(0.5)).toEqual(whole.solve(0.5));
    expect(lazy.stretches).toEqual({ count: 3, built: 1 });
    expect(whole.stretches).toEqual({ count: 3, built: 3 });
  });

  it('holds the mirror image of its lower half in its upper half: k_A(α; μ_A, μ_B) = k_B(1 − α; μ_B, μ_A)', () => {
    // Identity of a symmetric section (mirroring it exchanges the layers). The upper half of a
    // table is solved that way, from the lower half's interfaces with the viscosities exchanged,
    // so it is the lower half of the table of exchanged viscosities but for the node at α = 0.5,
    // which each solves itself (the solver is mirror-symmetric to 3e-9 there, its rounding in the
    // flat strips' eigenbases), and the rounding of the interpolation: measured 6.4e-12 of the
    // total flow and 5.1e-10 of |dk_A| + |dk_B|; bounds 1e-10 and 1e-8. A mirrored node put in
    // the wrong place would be off by the change of k from one node to the next (1e-2 or more).
    for (const section of [ETCHED, TRAPEZOID]) {
      const table = new HoldupTable(section, 0.56e-3, 0.89e-3);
      const exchanged = new HoldupTable(section, 0.89e-3, 0.56e-3);
      for (const alpha of [0.6, 0.8, 0.95, 0.999]) {
        const k = table.flowsAt(alpha);
        const m = exchanged.flowsAt(1 - alpha);
        const total = k.kA + k.kB;
        const slopes = Math.abs(k.dkA) + Math.abs(k.dkB);
        expect(Math.abs(k.kA - m.kB), `${section.shape} k_A at ${alpha}`).toBeLessThan(1e-10 * total);
        expect(Math.abs(k.kB - m.kA), `${section.shape} k_B at ${alpha}`).toBeLessThan(1e-10 * total);
        expect(Math.abs(k.dkA + m.dkB), `${section.shape} dk_A at ${alpha}`).toBeLessThan(1e-8 * slopes);
        expect(Math.abs(k.dkB + m.dkA), `${section.shape} dk_B at ${alpha}`).toBeLessThan(1e-8 * slopes);
      }
    }
  });

  it('inverts flow fractions to within 2e-5 of the direct inversion, with flows to 1e-5', () => {
    // The table is the answer for shaped sections (no polish): its interpolation and its coarser
    // solver degree, measured at most 1e-5 in the holdup (at φ = 0.001) and 3e-6 in k elsewhere.
    const table = new HoldupTable(ETCHED, 6.5e-3, 1.9e-3);
    for (const phi of [0.001, 0.05, 0.3, 0.5, 0.9, 0.99]) {
      const direct = holdupForFlowFraction(ETCHED, 6.5e-3, 1.9e-3, phi);
      const fast = table.solve(phi);
      expect(relativeError(fast.holdup, direct.holdup)).toBeLessThan(2e-5);
      expect(relativeError(fast.kA, direct.kA)).toBeLessThan(1e-5);
      expect(relativeError(fast.kB, direct.kB)).toBeLessThan(1e-5);
    }
  });

  // The slopes are the derivative of the interpolant of k (barycentric form), so they agree with
  // a central difference of the table's own values to rounding (step 1e-7·α: truncation ~1e-14,
  // rounding ~1e-9 of the slope; bound 1e-6), and they follow the direct solve's slopes (central
  // difference at solver degree 24) where the thin layer sits on the round or sloping wall:
  // measured at most 2.3e-3 of |dk_A| + |dk_B| at α ≥ 0.005 (the table's degree-16 node solves
  // and degree-10 stretches); bound 5e-3. Interpolating per-node slopes instead was 10–400 %
  // off here, since the stretches share their end nodes.
  it('gives holdup slopes next to the edges that follow the direct solve and its own values', () => {
    for (const section of [ETCHED, TRAPEZOID]) {
      const table = new HoldupTable(section, 0.56e-3, 0.89e-3);
      for (const alpha of [0.005, 0.01, 0.03, 0.08, 0.15, 0.97, 0.995]) {
        const direct = shapedTwoLayerFlow(section, alpha, 0.56e-3, 0.89e-3, false, 24);
        const k = table.flowsAt(alpha);
        const scale = Math.abs(direct.dkA) + Math.abs(direct.dkB);
        expect(Math.abs(k.dkA - direct.dkA), `${section.shape} dk_A at ${alpha}`).toBeLessThan(5e-3 * scale);
        expect(Math.abs(k.dkB - direct.dkB), `${section.shape} dk_B at ${alpha}`).toBeLessThan(5e-3 * scale);
        const h = 1e-7 * Math.min(alpha, 1 - alpha);
        const fd = (table.flowsAt(alpha + h).kA - table.flowsAt(alpha - h).kA) / (2 * h);
        expect(Math.abs(fd - k.dkA), `${section.shape} consistency at ${alpha}`).toBeLessThan(1e-6 * scale);
      }
    }
  });
});

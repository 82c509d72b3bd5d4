/**
 * Two layers in etched and trapezoidal cross-sections, and with a curved interface also in
 * rectangles, against an independent reference program:
 * the finite-element solver FreeFem++ (Debian packages freefem++ and libfreefem++), P3 elements
 * on a mesh graded toward the corners, with the interface as an internal border
 * (test/support/freefem.ts). Each case is solved on two meshes; the finer one is the reference
 * once the refinement has settled.
 *
 * FreeFem++ must be installed (.ci/run installs it). In CI a missing FreeFem++ fails these
 * tests; on a developer machine without it they are skipped with a note.
 */
import { describe, expect, it } from 'vitest';
import { freefemAvailable, freefemTwoLayer, type ReferenceShape } from '../support/freefem.js';
import { shapedTwoLayerFlow, type ShapedSection } from '../../src/physics/shapedSection.js';
import { holdupForFlowFraction, type TwoLayerSection } from '../../src/physics/section.js';
import { curvedFlowsAtChord, sectionProfile } from '../../src/physics/curvedSection.js';
import { holdupOfChord, usedCurvature } from '../../src/physics/interfaceArc.js';

const runReference = freefemAvailable() || process.env.CI !== undefined;
if (!runReference) {
  console.warn('FreeFem++ not found: skipping the cross-section reference checks on this machine (apt-get install freefem++ libfreefem++); in CI they fail instead.');
}
const referenceIt = runReference ? it : it.skip;

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

/** Agreement asked of the spectral solver in Q_A, Q_B and the inverted holdup. */
const RELATIVE = 1e-6;
/**
 * Boundary points per unit depth of the coarse and the fine mesh. Halving the mesh size cuts
 * the change of Q by 8–10 (measured: corner singularities of r² log r type, and the chord error
 * of the curved walls once its leading term is cancelled), so the fine mesh lies within about
 * 1/8 of the change of its own refinement.
 */
const COARSE = 40;
const FINE = 80;
/** The refinement is taken as settled when the change from COARSE to FINE is below this. */
const SETTLED = 6e-6;

const DEPTH = 40e-6;
const MU_B = 1e-3;

interface Case {
  name: string;
  /** Relative agreement asked in Q_A, Q_B and the inverted holdup. */
  tolerance: number;
  section: ShapedSection;
  reference: ReferenceShape;
  /** Interface abscissa from the left end of the cover, in depths. */
  x: number;
  ratio: number;
}

const ETCHED: ShapedSection = { shape: 'etched', maskWidth: 100e-6, depth: DEPTH };
const ETCHED_REF: ReferenceShape = { kind: 'etched', maskWidth: 100e-6, depth: DEPTH };
const TRAPEZOID: ShapedSection = { shape: 'trapezoid', bottomWidth: 60e-6, depth: DEPTH, wallAngle: Math.acos(1 / Math.sqrt(3)) };
const TRAPEZOID_REF: ReferenceShape = { kind: 'trapezoid', bottomWidth: 60e-6, depth: DEPTH, wallAngle: Math.acos(1 / Math.sqrt(3)) };

/**
 * Where the interface meets a wall that is not at right angles to it, u has the singularity
 * r^λ of a two-material wedge, λ the least root of μ_A cot(λθ_A) + μ_B cot(λθ_B) = 0 (separation
 * of variables in the two wedges; the same equation as for a bimaterial conductivity corner).
 * On the 54.74° wall θ_A = 35.26°, θ_B = 144.74°: λ = 1.18 for μ_A/μ_B = 5, but 0.77 for
 * μ_A/μ_B = 0.2, where both solvers converge slowly (FreeFem's Q as h^1.6). There the agreement
 * measured is 6e-6 and the case asks 1e-5; every other case asks 1e-6.
 */
const SINGULAR_FOOT = 1e-5;

const CASES: Case[] = [
  { name: 'etched 100 × 40 µm, interface on the round wall, μA/μB = 5', tolerance: RELATIVE, section: ETCHED, reference: ETCHED_REF, x: 0.4, ratio: 5 },
  { name: 'etched 100 × 40 µm, interface over the flat bottom, μA/μB = 0.2', tolerance: RELATIVE, section: ETCHED, reference: ETCHED_REF, x: 2, ratio: 0.2 },
  { name: 'trapezoid 60 × 40 µm at 54.74°, interface on the sloping wall, μA/μB = 5', tolerance: RELATIVE, section: TRAPEZOID, reference: TRAPEZOID_REF, x: 0.6, ratio: 5 },
  { name: 'trapezoid 60 × 40 µm at 54.74°, interface over the flat bottom, μA/μB = 5', tolerance: RELATIVE, section: TRAPEZOID, reference: TRAPEZOID_REF, x: 1, ratio: 5 },
  { name: 'trapezoid 60 × 40 µm at 54.74°, interface on the sloping wall, μA/μB = 0.2 (singular foot)', tolerance: SINGULAR_FOOT, section: TRAPEZOID, reference: TRAPEZOID_REF, x: 0.6, ratio: 0.2 },
];

describe('two layers in shaped sections against FreeFem++', () => {
  for (const c of CASES) {
    referenceIt(`agree to ${c.tolerance} in Q_A, Q_B and the inverted holdup: ${c.name}`, () => {
      const muA = c.ratio * MU_B;
      const coarse = freefemTwoLayer(c.reference, c.x * DEPTH, muA, MU_B, COARSE);
      const fine = freefemTwoLayer(c.reference, c.x * DEPTH, muA, MU_B, FINE);
      expect(relativeError(coarse.qA, fine.qA)).toBeLessThan(SETTLED);
      expect(relativeError(coarse.qB, fine.qB)).toBeLessThan(SETTLED);

      const holdup = fine.areaA / (fine.areaA + fine.areaB);
      const ours = shapedTwoLayerFlow(c.section, holdup, muA, MU_B);
      expect(relativeError(ours.kA, fine.qA)).toBeLessThan(c.tolerance);
      expect(relativeError(ours.kB, fine.qB)).toBeLessThan(c.tolerance);

      // The holdup that carries FreeFem's flow fraction, against the exact area share.
      const phi = fine.qA / (fine.qA + fine.qB);
      expect(relativeError(holdupForFlowFraction(c.section, muA, MU_B, phi).holdup, holdup)).toBeLessThan(c.tolerance);
    });
  }
});

interface CurvedCase {
  name: string;
  tolerance: number;
  section: TwoLayerSection;
  reference: ReferenceShape;
  /** Chord abscissa, in depths, and κ·depth/2 (the sine of the arc's half-angle over the full depth). */
  x: number;
  c: number;
  ratio: number;
}

const RECT_DEPTH = 50e-6;
/**
 * Where the arc's chord stands within a quarter depth of a wall joint, the strip between the
 * tilted cut and the arc is thin at the wall: measured 1.0e-6 at the default degree (2.4e-7 at
 * degree 32), so that case asks 2e-6.
 */
const NEAR_JOINT = 2e-6;

const CURVED_CASES: CurvedCase[] = [
  { name: 'rectangle 100 × 50 µm, chord at mid-width, arc into A (κD/2 = 0.5), μA/μB = 5', tolerance: RELATIVE, section: { shape: 'rect', width: 100e-6, depth: RECT_DEPTH, orientation: 'side' }, reference: { kind: 'rect', width: 100e-6, depth: RECT_DEPTH }, x: 1, c: 0.5, ratio: 5 },
  { name: 'rectangle 100 × 50 µm, arc into B (κD/2 = −0.8), μA/μB = 0.2', tolerance: RELATIVE, section: { shape: 'rect', width: 100e-6, depth: RECT_DEPTH, orientation: 'side' }, reference: { kind: 'rect', width: 100e-6, depth: RECT_DEPTH }, x: 0.9, c: -0.8, ratio: 0.2 },
  { name: 'etched 100 × 40 µm, chord over the flat bottom, arc into B (κD/2 = −0.4), μA/μB = 0.2', tolerance: RELATIVE, section: ETCHED, reference: ETCHED_REF, x: 2, c: -0.4, ratio: 0.2 },
  { name: 'etched 100 × 40 µm, chord near the round wall, arc into A across the joint (κD/2 = 0.4), μA/μB = 5', tolerance: NEAR_JOINT, section: ETCHED, reference: ETCHED_REF, x: 1.2, c: 0.4, ratio: 5 },
  { name: 'trapezoid 60 × 40 µm at 54.74°, chord over the flat bottom, arc into A (κD/2 = 0.3), μA/μB = 5', tolerance: RELATIVE, section: TRAPEZOID, reference: TRAPEZOID_REF, x: 1.2, c: 0.3, ratio: 5 },
];

describe('two layers with a curved interface against FreeFem++', () => {
  for (const c of CURVED_CASES) {
    referenceIt(`agree to ${c.tolerance} in Q_A, Q_B and to 1e-12 in the holdup: ${c.name}`, () => {
      const muA = c.ratio * MU_B;
      const depth = c.reference.depth;
      const kappa = (2 * c.c) / depth;
      const coarse = freefemTwoLayer(c.reference, c.x * depth, muA, MU_B, COARSE, kappa);
      const fine = freefemTwoLayer(c.reference, c.x * depth, muA, MU_B, FINE, kappa);
      expect(relativeError(coarse.qA, fine.qA)).toBeLessThan(SETTLED);
      expect(relativeError(coarse.qB, fine.qB)).toBeLessThan(SETTLED);

      const profile = sectionProfile(c.section);
      // The cases sit where no taper applies, so the arc is the one FreeFem++ was given.
      expect(usedCurvature(profile, c.x * depth, kappa)).toBe(kappa);
      const ours = curvedFlowsAtChord(profile, c.x * depth, kappa, muA, MU_B);
      expect(relativeError(ours.qA, fine.qA)).toBeLessThan(c.tolerance);
      expect(relativeError(ours.qB, fine.qB)).toBeLessThan(c.tolerance);
      // Holdup: the support's own closed-form areas (circle segment, section areas). Tolerance: rounding.
      expect(Math.abs(holdupOfChord(profile, c.x * depth, kappa) - fine.areaA / (fine.areaA + fine.areaB))).toBeLessThan(1e-12);
    });
  }
});

/**
 * The two-layer series of src/physics/twoLayer.ts against an independent second method: the
 * finite-volume solver of test/support/finiteDifference.ts (no Fourier series, interface on cell
 * faces, harmonic-mean viscosity, conjugate gradients). Under a second on two cores.
 */
import { describe, expect, it } from 'vitest';
import { twoLayerFlow } from '../../src/physics/twoLayer.js';
import {
  twoLayerFiniteVolume,
  twoLayerFiniteVolumeExtrapolated,
  type FiniteVolumeInput,
} from '../support/finiteDifference.js';

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

/** [width/depth with the layers side by side (across/along), holdup, μA/μB]. */
const CASES: Array<[number, number, number]> = [
  [1, 0.5, 1],
  [0.5, 0.3, 5],
  [4, 0.8, 0.2],
  [1, 0.3, 0.2],
  [4, 0.5, 5],
  [0.5, 0.8, 1],
  [1, 0.8, 5],
  [0.5, 0.5, 0.2],
  [4, 0.3, 1],
];

/** A grid of roughly square cells with `base` cells along the shorter side. */
function grid(aspect: number, holdup: number, ratio: number, base: number): FiniteVolumeInput {
  return {
    across: aspect * 1e-4,
    along: 1e-4,
    holdup,
    muA: ratio * 1e-3,
    muB: 1e-3,
    cellsAcross: Math.round(base * Math.max(aspect, 1)),
    cellsAlong: Math.round(base / Math.min(aspect, 1)),
  };
}

describe('twoLayerFlow against finite volumes', () => {
  it('agrees with the Richardson-extrapolated finite-volume flows of each phase to 0.05%', () => {
    // Second method: test/support/finiteDifference.ts (Patankar 1980, harmonic mean at the interface
    // (from memory); Richardson extrapolation of an h² scheme). Grids of 20 and 40 cells on the short
    // side; measured worst 1.2e-4 (aspect 1, holdup 0.8, μA/μB 5, phase B). What is left after the
    // extrapolation is the second method's own higher-order truncation: from 40 and 80 cells the
    // same differences are 12 to 14 times smaller (worst 9.8e-6), so they are not errors of the
    // series. 5e-4 is four times the worst remainder of the 20/40 extrapolation.
    for (const [aspect, holdup, ratio] of CASES) {
      const fv = twoLayerFiniteVolumeExtrapolated(grid(aspect, holdup, ratio, 20));
      const series = twoLayerFlow({ across: aspect * 1e-4, along: 1e-4, holdup, muA: ratio * 1e-3, muB: 1e-3 });
      const where = `aspect ${aspect}, holdup ${holdup}, μA/μB ${ratio}`;
      expect(relativeError(fv.kA, series.kA), `A: ${where}`).toBeLessThan(5e-4);
      expect(relativeError(fv.kB, series.kB), `B: ${where}`).toBeLessThan(5e-4);
    }
  });

  it('converges to the series at second order: halving the cells cuts the difference by a factor 4 (3.5 to 4.5)', () => {
    // A second-order scheme converging to the same limit as the series (Richardson 1911 (from memory));
    // a factor near 4 on two successive refinements shows the series is that limit, not merely close.
    for (const [aspect, holdup, ratio] of [CASES[1]!, CASES[2]!, CASES[6]!]) {
      const series = twoLayerFlow({ across: aspect * 1e-4, along: 1e-4, holdup, muA: ratio * 1e-3, muB: 1e-3 });
      const errors = [10, 20, 40].map((base) => {
        const fv = twoLayerFiniteVolume(grid(aspect, holdup, ratio, base));
        return [Math.abs(fv.kA - series.kA), Math.abs(fv.kB - series.kB)] as const;
      });
      for (const phase of [0, 1]) {
        const where = `aspect ${aspect}, holdup ${holdup}, μA/μB ${ratio}, phase ${phase === 0 ? 'A' : 'B'}`;
        for (const step of [0, 1]) {
          const factor = errors[step]![phase] / errors[step + 1]![phase];
          expect(factor, where).toBeGreaterThan(3.5);
          expect(factor, where).toBeLessThan(4.5);
        }
      }
    }
  });

  it('solves its linear system to the stated residual (a check of the second method itself)', () => {
    // Conjugate gradients on an SPD system (Hestenes & Stiefel 1952 (from memory)).
    const fv = twoLayerFiniteVolume(grid(4, 0.5, 5, 20));
    expect(fv.residual).toBeLessThanOrEqual(1e-11);
    expect(fv.iterations).toBeGreaterThan(0);
  });

  it('refuses a grid on which the interface would cut through a cell', () => {
    // The method needs the interface on a cell face (see test/support/finiteDifference.ts).
    expect(() => twoLayerFiniteVolume({ ...grid(1, 0.5, 1, 20), holdup: 0.33 })).toThrow(/cell face/);
  });
});

/**
 * Tests of src/physics/transport.ts, the solute transport across two co-flowing layers: against
 * the cosine-series solution of diffusion in one slab (uniform velocity, equal diffusivities,
 * K = 1), against the equilibrium of the mass balance (long contactor), for conservation of
 * solute at every step, for grid convergence and the h² law that the extrapolation rests on,
 * and for the symmetry of exchanging the two phases.
 */
import { describe, expect, it } from 'vitest';
import {
  marchTransport, solveTransport, transferLength, transportGrid, TRANSPORT_DEFAULTS, type TransportInput,
} from '../../src/physics/transport.js';
import { depthAveragedCellMeans, type LayerFaces } from '../../src/physics/profile.js';
import { twoLayerFlow } from '../../src/physics/twoLayer.js';

const TOLERANCE = TRANSPORT_DEFAULTS.tolerance;
const WIDTH = 200e-6;
const U = 5e-3;
const D = 1e-9;

const uniform = (u: number) => (faces: LayerFaces) => ({ A: new Float64Array(faces.A.length - 1).fill(u), B: new Float64Array(faces.B.length - 1).fill(u) });

/**
 * Diffusion in a slab 0 < y < S with impermeable faces from c = c₀ in 0 < y < a, 0 beyond:
 *   c = c₀ [a/S + (2/π) Σ_{n≥1} (1/n) sin(nπa/S) cos(nπy/S) exp(−n²π²Dt/S²)]
 * (Crank, The Mathematics of Diffusion, 2nd ed., 1975, ch. 4, the plane sheet with an initial
 * distribution f(x) and zero flux at both faces (from memory for the section); the series follows
 * by separation of variables). Its mean over 0 < y < a, with t = x/U, is
 *   c̄_A/c₀ = a/S + (2S/(π²a)) Σ (1/n²) sin²(nπa/S) exp(−n²π²Dx/(US²)),
 * and the extraction is 1 − c̄_A/c₀. Terms fall like n⁻² and, once n²π²Dx/(US²) > 50, below
 * e⁻⁵⁰ of the first; summed to there (at most 10⁶ terms) the rest is below 1e-6·S/a.
 */
function slabExtraction(a: number, S: number, x: number): number {
  let sum = 0;
  const rate = (Math.PI * Math.PI * D * x) / (U * S * S);
  const terms = Math.min(1_000_000, Math.ceil(Math.sqrt(50 / rate)));
  for (let n = terms; n >= 1; n--) {
    const s = Math.sin((n * Math.PI * a) / S);
    sum += ((s * s) / (n * n)) * Math.exp(-n * n * rate);
  }
  return 1 - (a / S + ((2 * S) / (Math.PI * Math.PI * a)) * sum);
}

/** The length where the slab extraction reaches `level` of its equilibrium 1 − a/S (bisection). */
function slabLength(a: number, S: number, level: number): number {
  let lo = 0;
  let hi = (100 * U * S * S) / D;
  while (hi - lo > 1e-10 * hi) {
    const mid = 0.5 * (lo + hi);
    if (slabExtraction(a, S, mid) / (1 - a / S) >= level) hi = mid;
    else lo = mid;
  }
  return 0.5 * (lo + hi);
}

function slab(holdup: number, length: number): TransportInput {
  return { widthA: holdup * WIDTH, widthB: (1 - holdup) * WIDTH, diffusivityA: D, diffusivityB: D, partition: 1, feedPhase: 'A', feedConcentration: 1, length, velocity: uniform(U) };
}

/** A contactor 200 µm × 50 µm with the depth-averaged two-layer profile carrying flows Q_A and Q_B. */
function contactor(options: { holdup: number; flowA: number; flowB: number; partition: number; feedPhase: 'A' | 'B'; dA: number; dB: number; length: number }): TransportInput {
  const input = { across: WIDTH, along: 50e-6, holdup: options.holdup, muA: 7.3e-3, muB: 1e-3 };
  const velocity = (faces: LayerFaces) => {
    const cells = depthAveragedCellMeans(input, faces);
    const scale = (c: Float64Array, f: ArrayLike<number>, q: number) => {
      let sum = 0;
      for (let k = 0; k < c.length; k++) sum += c[k]! * (f[k + 1]! - f[k]!);
      return c.map((u) => (u * q) / (sum * input.along));
    };
    return { A: scale(cells.A, faces.A, options.flowA), B: scale(cells.B, faces.B, options.flowB) };
  };
  return {
    widthA: options.holdup * WIDTH,
    widthB: WIDTH - options.holdup * WIDTH,
    diffusivityA: options.dA,
    diffusivityB: options.dB,
    partition: options.partition,
    feedPhase: options.feedPhase,
    feedConcentration: 3,
    length: options.length,
    velocity,
  };
}

/** Flows that the two-layer section carries at this holdup under one pressure gradient, scaled to 5 µL/min. */
function flowsAt(holdup: number): { flowA: number; flowB: number } {
  const k = twoLayerFlow({ across: WIDTH, along: 50e-6, holdup, muA: 7.3e-3, muB: 1e-3 });
  const total = 5e-9 / 60;
  return { flowA: (total * k.kA) / (k.kA + k.kB), flowB: (total * k.kB) / (k.kA + k.kB) };
}

describe('solveTransport with uniform velocity, equal diffusivities and K = 1 (one slab)', () => {
  it.each([0.2, 0.5, 0.8])('agrees with the cosine series of Crank (1975) to 1e-4 along the channel, holdup %s', (holdup) => {
    const slabLengthScale = (U * WIDTH * WIDTH) / D;
    for (const fraction of [0.002, 0.05, 0.3, 1]) {
      const r = solveTransport(slab(holdup, fraction * slabLengthScale));
      expect(r.converged).toBe(true);
      expect(Math.abs(r.extraction - slabExtraction(holdup * WIDTH, WIDTH, fraction * slabLengthScale))).toBeLessThan(TOLERANCE);
      // Along the channel too (the chart's data), within the same tolerance.
      for (let k = 10; k < r.along.x.length; k += 30) {
        expect(Math.abs(r.along.extraction[k]! - slabExtraction(holdup * WIDTH, WIDTH, r.along.x[k]!))).toBeLessThan(TOLERANCE);
      }
    }
  });

  it('finds the lengths to 90 % and 99 % of equilibrium of the series to 1e-3', () => {
    const a = 0.4 * WIDTH;
    const r = solveTransport(slab(0.4, 0.01));
    expect(Math.abs(r.length90! / slabLength(a, WIDTH, 0.9) - 1)).toBeLessThan(1e-3);
    expect(Math.abs(r.length99! / slabLength(a, WIDTH, 0.99) - 1)).toBeLessThan(1e-3);
  });

  it('has the transfer length of the slowest cosine mode, US²/(π²D), to 1e-3', () => {
    // The n = 1 term of the series decays as exp(−π²Dx/(US²)).
    const r = solveTransport(slab(0.3, 0.01));
    expect(Math.abs(r.transferLength / ((U * WIDTH * WIDTH) / (Math.PI * Math.PI * D)) - 1)).toBeLessThan(1e-3);
  });
});

describe('solveTransport in a long contactor', () => {
  const cases = [
    { holdup: 0.5, partition: 4, feedPhase: 'A', dA: 0.6e-9, dB: 1.2e-9 },
    { holdup: 0.8, partition: 0.1, feedPhase: 'A', dA: 1e-9, dB: 2e-9 },
    { holdup: 0.3, partition: 30, feedPhase: 'B', dA: 0.5e-9, dB: 1e-9 },
    { holdup: 0.6, partition: 0.5, feedPhase: 'B', dA: 2e-9, dB: 0.4e-9 },
  ] as const;
  it.each(cases)('reaches the mass-balance equilibrium E/(1 + E) to 1e-4 (holdup $holdup, K $partition, feed in $feedPhase)', (c) => {
    // Common practice (extraction factor): at equilibrium c_B = K c_A throughout, so with the
    // feed in A, Q_A c₀ = Q_A c_A + Q_B K c_A and the share transferred is E/(1 + E), E = K Q_B/Q_A;
    // with the feed in B, E = Q_A/(K Q_B).
    const { flowA, flowB } = flowsAt(c.holdup);
    const probe = solveTransport(contactor({ ...c, flowA, flowB, length: 1e-3 }));
    const r = solveTransport(contactor({ ...c, flowA, flowB, length: 40 * probe.transferLength }));
    const E = c.feedPhase === 'A' ? (c.partition * flowB) / flowA : flowA / (c.partition * flowB);
    expect(r.converged).toBe(true);
    expect(Math.abs(r.extraction - E / (1 + E))).toBeLessThan(TOLERANCE);
    expect(Math.abs(r.approach - 1)).toBeLessThan(TOLERANCE);
    // And the outlet concentrations are those of equilibrium: c_B = K c_A.
    expect(Math.abs(r.outletB - c.partition * r.outletA) / (3 * Math.max(1, c.partition))).toBeLessThan(TOLERANCE);
  });
});

describe('marchTransport', () => {
  it('conserves the solute flow Σ ū_j Δy_j c_j to 1e-8 at every step', () => {
    // Conservation law: with no flux through the walls, the solute carried along is constant.
    const { flowA, flowB } = flowsAt(0.7);
    const input = contactor({ holdup: 0.7, flowA, flowB, partition: 7, feedPhase: 'A', dA: 0.3e-9, dB: 1.5e-9, length: 0.02 });
    for (const cells of [8, 32]) {
      const grid = transportGrid(input, cells);
      const fed = grid.mass.slice(0, grid.cellsA).reduce((s, m) => s + m, 0) * input.feedConcentration;
      let steps = 0;
      let worst = 0;
      marchTransport(input, grid, { steps: 6, transferLength: transferLength(grid, input.partition) }, (_x, c) => {
        let total = 0;
        for (let j = 0; j < c.length; j++) total += grid.mass[j]! * c[j]!;
        worst = Math.max(worst, Math.abs(total - fed) / fed);
        steps++;
      });
      expect(steps).toBeGreaterThan(50);
      expect(worst).toBeLessThan(1e-8);
    }
  });

  it('has errors that fall fourfold each time cells and steps are halved (the h² law the extrapolation assumes)', () => {
    const input = slab(0.4, 0.02);
    const exact = slabExtraction(0.4 * WIDTH, WIDTH, 0.02);
    const ell = transferLength(transportGrid(input, 8), 1);
    const errors = [0, 1, 2, 3].map((level) => marchTransport(input, transportGrid(input, 8 * 2 ** level), { steps: 6 * 2 ** level, transferLength: ell }).extraction - exact);
    for (let k = 1; k < errors.length; k++) {
      const ratio = errors[k - 1]! / errors[k]!;
      expect(ratio).toBeGreaterThan(3.5);
      expect(ratio).toBeLessThan(4.5);
    }
  });
});

describe('solveTransport convergence and symmetry', () => {
  it('changes its answers by less than the tolerance when cells and steps are halved once more', () => {
    const { flowA, flowB } = flowsAt(0.55);
    const input = contactor({ holdup: 0.55, flowA, flowB, partition: 3, feedPhase: 'B', dA: 0.6e-9, dB: 1.2e-9, length: 0.02 });
    const r = solveTransport(input);
    const finer = solveTransport(input, { cells: 2 * TRANSPORT_DEFAULTS.cells, steps: 2 * TRANSPORT_DEFAULTS.steps });
    expect(r.converged).toBe(true);
    expect(Math.abs(finer.extraction - r.extraction)).toBeLessThan(TOLERANCE);
    expect(Math.abs(finer.approach - r.approach)).toBeLessThan(TOLERANCE);
    expect(Math.abs(finer.outletA - r.outletA) / input.feedConcentration).toBeLessThan(TOLERANCE);
    expect(Math.abs(finer.outletB - r.outletB) / input.feedConcentration).toBeLessThan(TOLERANCE);
    // The lengths move by no more than the tolerance in approach allows: Δa / (da/dx) with
    // da/dx = (1 − a)/ℓ near equilibrium.
    expect(Math.abs(finer.length90! - r.length90!)).toBeLessThan((TOLERANCE * r.transferLength) / 0.1);
    expect(Math.abs(finer.length99! - r.length99!)).toBeLessThan((TOLERANCE * r.transferLength) / 0.01);
    expect(r.imbalance).toBeLessThan(1e-8);
  });

  it('gives the same extraction when the two phases exchange roles (widths, diffusivities, flows; K → 1/K)', () => {
    const { flowA, flowB } = flowsAt(0.35);
    const base = { flowA, flowB, length: 0.015 };
    const direct = contactor({ ...base, holdup: 0.35, partition: 2.5, feedPhase: 'A', dA: 0.7e-9, dB: 1.3e-9 });
    const mirrored: TransportInput = {
      ...direct,
      widthA: direct.widthB,
      widthB: direct.widthA,
      diffusivityA: direct.diffusivityB,
      diffusivityB: direct.diffusivityA,
      partition: 1 / direct.partition,
      feedPhase: 'B',
      velocity: (faces) => {
        const v = direct.velocity({ A: faces.B, B: faces.A });
        return { A: v.B, B: v.A };
      },
    };
    const a = solveTransport(direct);
    const b = solveTransport(mirrored);
    expect(Math.abs(a.extraction - b.extraction)).toBeLessThan(1e-9);
    expect(Math.abs(a.outletA - b.outletB)).toBeLessThan(1e-9);
    expect(Math.abs(a.length90! / b.length90! - 1)).toBeLessThan(1e-9);
  });

  it('rejects a non-positive partition coefficient', () => {
    expect(() => solveTransport({ ...slab(0.5, 0.01), partition: 0 })).toThrow(RangeError);
  });
});

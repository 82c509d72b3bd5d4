/**
 * Steady transport of a dissolved solute between two liquid layers flowing side by side along a
 * channel: u_i(y) ∂c/∂x = D_i ∂²c/∂y² in each layer, no flux through the walls, partition
 * equilibrium c_B = K·c_A and continuity of flux D ∂c/∂y at the interface, one phase fed at c₀
 * and the other entering clean. Exports `solveTransport` (the answer to a tolerance),
 * `marchTransport` (one grid), `transportGrid`, `transferLength`, `richardson`, `estimateChange`
 * and the types. Knows nothing about chips or files; SI units.
 *
 * Stated simplifications: the velocity is the depth-averaged profile (the caller supplies cell
 * means of ū(y)) and the concentration is taken uniform over the depth; axial diffusion is
 * neglected against convection (large Péclet number, common practice for microchannel co-flow).
 *
 * Discretisation: conservative finite volumes across the width with the interface on a cell
 * face. Each layer is meshed from its wall to the interface, cells shrinking smoothly toward the
 * interface where the concentration boundary layers start. Over the interface face the flux is
 * F = (c_B − K c_A)/(Δy_B/(2D_B) + K Δy_A/(2D_A)): two half-cell resistances in series with the
 * jump c_B = K c_A between them (the partition condition between two media, as in Crank, The
 * Mathematics of Diffusion, 2nd ed., 1975, on composite media (from memory)). The system
 * M dc/dx = A c has M = diag(ū_j Δy_j) and column sums of A equal to zero, so Σ M c (the solute
 * flow) is conserved by every step. Along the channel: TR-BDF2 with γ = 2 − √2 (Bank et al.,
 * IEEE Trans. CAD 4, 1985; Hosea & Shampine, Appl. Numer. Math. 20, 1996 (from memory)): second
 * order and L-stable, so the step in concentration at the inlet and the stiff cells beside the
 * walls (where ū → 0) are damped instead of ringing as under Crank–Nicolson; both stages share
 * one tridiagonal matrix.
 *
 * Accuracy: cells and steps are doubled level by level; successive levels are combined by
 * Richardson extrapolation (errors fall like h², checked by the tests), and the answer stands
 * when two successive extrapolations differ by less than the tolerance.
 */
import type { LayerCells, LayerFaces } from './profile.js';
import { min as minOf } from 'd3-array';

export type FeedPhase = 'A' | 'B';

export interface TransportInput {
  /** Width of each layer across the channel, m: phase A from its wall to the interface, then B. */
  widthA: number;
  widthB: number;
  /** Diffusivity of the solute in each phase, m²/s. */
  diffusivityA: number;
  diffusivityB: number;
  /** K = c_B/c_A at equilibrium. */
  partition: number;
  feedPhase: FeedPhase;
  /** Concentration of the fed phase at the inlet (the other enters clean), any unit. */
  feedConcentration: number;
  /** Channel length, m. */
  length: number;
  /** Mean velocity over each cell, m/s, for faces measured from each layer's wall (see ./profile.ts). */
  velocity: (faces: LayerFaces) => LayerCells;
}

export interface TransportOptions {
  /** Largest change of the answers on halving cells and steps that counts as converged. */
  tolerance?: number;
  /** Cells per layer on the coarsest grid. */
  cells?: number;
  /** Steps per transfer length on the coarsest grid (see `marchTransport`). */
  steps?: number;
  /** Refinements (each halves cells and steps) tried before giving up. */
  maxLevel?: number;
}

/** Named defaults; `tolerance` is the stated accuracy of every extraction figure. */
export const TRANSPORT_DEFAULTS: Required<TransportOptions> = { tolerance: 1e-4, cells: 8, steps: 6, maxLevel: 5 };

/** Cells shrink toward the interface to (1 − CLUSTER)/(1 + CLUSTER) of their size at the wall. */
const CLUSTER = 0.9;
/** The march starts with steps of START_FRACTION·(transfer length)/steps and lets them grow geometrically. */
const START_FRACTION = 1e-4;
/** Beyond this many transfer lengths the deficit is below e⁻⁶ and steps grow again. */
const SETTLED_LENGTHS = 6;
/** The march stops when both lengths are found and the outlet passed, or at this many transfer lengths. */
const MAX_LENGTHS = 60;
/** Points of the profile along the channel kept for charts. */
const ALONG_POINTS = 101;
/** TR-BDF2 with γ = 2 − √2: both stages solve with M − θhA, θ = γ/2 = 1 − 1/√2. */
const THETA = 1 - Math.SQRT1_2;
const BDF_NEW = 1 / (2 * Math.SQRT2 - 2);
const BDF_OLD = (3 - 2 * Math.SQRT2) / (2 * Math.SQRT2 - 2);

/** A grid across the two layers with its fixed coefficients. Cells run from A's wall to B's wall. */
export interface TransportGrid {
  faces: LayerFaces;
  /** Cells in layer A (the first cellsA) and, as many again, in layer B. */
  cellsA: number;
  /** ū_j Δy_j, m²/s: the flow (per unit depth) carried by each cell. */
  mass: Float64Array;
  /** The tridiagonal operator A: lower[j] couples cell j − 1 into row j, upper[j] cell j + 1. */
  lower: Float64Array;
  diagonal: Float64Array;
  upper: Float64Array;
}

/** Faces 0 … w with spacing proportional to 1 + CLUSTER·cos(πξ): coarse at the wall, fine at the interface. */
function layerFaces(width: number, cells: number): Float64Array {
  const f = new Float64Array(cells + 1);
  for (let k = 0; k <= cells; k++) {
    const xi = k / cells;
    f[k] = width * (xi + (CLUSTER * Math.sin(Math.PI * xi)) / Math.PI);
  }
  f[cells] = width;
  return f;
}

export function transportGrid(input: TransportInput, cellsPerLayer: number): TransportGrid {
  const faces = { A: layerFaces(input.widthA, cellsPerLayer), B: layerFaces(input.widthB, cellsPerLayer) };
  const velocity = input.velocity(faces);
  const nA = cellsPerLayer;
  const n = 2 * nA;
  const width = new Float64Array(n);
  const centre = new Float64Array(n);
  const mass = new Float64Array(n);
  const total = input.widthA + input.widthB;
  for (let k = 0; k < nA; k++) {
    width[k] = faces.A[k + 1]! - faces.A[k]!;
    centre[k] = 0.5 * (faces.A[k + 1]! + faces.A[k]!);
    mass[k] = velocity.A[k]! * width[k]!;
    const j = n - 1 - k;
    width[j] = faces.B[k + 1]! - faces.B[k]!;
    centre[j] = total - 0.5 * (faces.B[k + 1]! + faces.B[k]!);
    mass[j] = velocity.B[k]! * width[j]!;
  }
  for (let j = 0; j < n; j++) {
    if (!(mass[j]! > 0) || !Number.isFinite(mass[j]!)) throw new RangeError(`the velocity must be positive and finite in every cell (cell ${j} of ${n})`);
  }
  const lower = new Float64Array(n);
  const diagonal = new Float64Array(n);
  const upper = new Float64Array(n);
  const K = input.partition;
  for (let j = 0; j + 1 < n; j++) {
    if (j === nA - 1) {
      // Interface face: flux into A is G(c_B − K c_A).
      const gA = (2 * input.diffusivityA) / width[j]!;
      const gB = (2 * input.diffusivityB) / width[j + 1]!;
      const G = (gA * gB) / (gA + K * gB);
      diagonal[j] -= G * K;
      upper[j] += G;
      diagonal[j + 1] -= G;
      lower[j + 1] += G * K;
    } else {
      const D = j < nA ? input.diffusivityA : input.diffusivityB;
      const g = D / (centre[j + 1]! - centre[j]!);
      diagonal[j] -= g;
      upper[j] += g;
      diagonal[j + 1] -= g;
      lower[j + 1] += g;
    }
  }
  return { faces, cellsA: nA, mass, lower, diagonal, upper };
}

/**
 * The transfer length 1/κ₁: the distance over which the remaining approach to equilibrium falls
 * by a factor e once the slowest mode dominates. κ₁ is the smallest non-zero root of
 * det(A + κM) = 0. With W = diag(1 in A, 1/K in B), WA is symmetric, so the pencil is that of the
 * symmetric tridiagonal C = −(WM)^(−1/2) WA (WM)^(−1/2); its eigenvalues below σ are counted by the
 * signs of the LDLᵀ pivots of C − σI (Sturm sequence; Golub & Van Loan, Matrix Computations,
 * 4th ed., 2013, §8.4.1 (from memory)) and κ₁ is found by bisection on a log scale.
 */
export function transferLength(grid: TransportGrid, partition: number): number {
  const n = grid.mass.length;
  const w = (j: number) => (j < grid.cellsA ? 1 : 1 / partition);
  const diag = new Float64Array(n);
  const offSquared = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    diag[j] = -grid.diagonal[j]! / grid.mass[j]!;
    if (j + 1 < n) {
      const symmetric = w(j) * grid.upper[j]!;
      offSquared[j] = (symmetric * symmetric) / (w(j) * grid.mass[j]! * w(j + 1) * grid.mass[j + 1]!);
    }
  }
  const below = (sigma: number): number => {
    let count = 0;
    let q = diag[0]! - sigma;
    if (q < 0) count++;
    for (let j = 1; j < n; j++) {
      q = diag[j]! - sigma - offSquared[j - 1]! / (q !== 0 ? q : 1e-300 * sigma);
      if (q < 0) count++;
    }
    return count;
  };
  // The smallest eigenvalue is 0 (equilibrium); κ₁ is where the count reaches 2.
  let hi = minOf(Array.from(diag).filter((d) => d > 0)) ?? Infinity;
  while (below(hi) < 2) hi *= 4;
  let lo = hi / 4;
  for (let i = 0; i < 200 && below(lo) >= 2; i++) lo /= 4;
  while (hi / lo > 1 + 1e-9) {
    const mid = Math.sqrt(lo * hi);
    if (below(mid) >= 2) hi = mid;
    else lo = mid;
  }
  return 1 / Math.sqrt(lo * hi);
}

/** Extraction and approach along the channel at ascending positions x (0 first), m. */
export interface TransportCurve {
  x: Float64Array;
  extraction: Float64Array;
  approach: Float64Array;
}

/** What one march, or an extrapolation from two, says about the channel. */
export interface TransportEstimate {
  curve: TransportCurve;
  /** Mixing-cup (flow-weighted) mean concentrations of each phase at the outlet. */
  outletA: number;
  outletB: number;
  /** Extraction and approach at the outlet. */
  extraction: number;
  approach: number;
  /** E/(1 + E) for the flows of this grid (exact flows: the same on every grid). */
  equilibriumExtraction: number;
  /** First positions where the approach reaches 0.9 and 0.99 (linear between steps), or null. */
  length90: number | null;
  length99: number | null;
}

/** One march on one grid and step schedule. */
export interface March extends TransportEstimate {
  /** Largest |Σ M c − initial| / initial over all steps. */
  imbalance: number;
  steps: number;
  cells: number;
}

export interface MarchSchedule {
  /** Steps per transfer length (and per e-fold of x while x is below it). */
  steps: number;
  transferLength: number;
}

/**
 * Marches the grid from the inlet past the outlet and on until 99 % of equilibrium is reached
 * (or MAX_LENGTHS transfer lengths). Step sizes follow h(x) = max(min(x + x₀, ℓ), x − 6ℓ)/N with
 * ℓ the transfer length and x₀ = START_FRACTION·ℓ: geometric near the inlet, where the solution
 * grows like √x, constant over the approach, growing again once it has settled. The outlet is
 * always a step position. `observe` sees the concentrations after every step.
 */
export function marchTransport(input: TransportInput, grid: TransportGrid, schedule: MarchSchedule, observe?: (x: number, c: Float64Array) => void): March {
  const { mass, lower, diagonal, upper } = grid;
  const n = mass.length;
  const nA = grid.cellsA;
  const c = new Float64Array(n);
  const feedInA = input.feedPhase === 'A';
  for (let j = 0; j < n; j++) c[j] = (j < nA) === feedInA ? input.feedConcentration : 0;
  let flowA = 0;
  let flowB = 0;
  for (let j = 0; j < n; j++) {
    if (j < nA) flowA += mass[j]!;
    else flowB += mass[j]!;
  }
  const factor = feedInA ? (input.partition * flowB) / flowA : flowA / (input.partition * flowB);
  const equilibriumExtraction = factor / (1 + factor);
  const fed = (feedInA ? flowA : flowB) * input.feedConcentration;

  const ell = schedule.transferLength;
  const N = schedule.steps;
  const x0 = START_FRACTION * ell;
  const stop = Math.max(input.length, MAX_LENGTHS * ell);
  const xs: number[] = [0];
  const ex: number[] = [0];
  const ap: number[] = [0];
  let length90: number | null = null;
  let length99: number | null = null;
  let outlet: { a: number; b: number; extraction: number; approach: number } | null = null;
  let imbalance = 0;

  const cStage = new Float64Array(n);
  const rhs = new Float64Array(n);
  const pivot = new Float64Array(n);
  const upperStar = new Float64Array(n);
  let x = 0;
  let steps = 0;
  // Past the 99 % length by one transfer length, so that a finer march's crossing is bracketed too.
  while (x < stop && (outlet === null || length99 === null || x < length99 + ell)) {
    let h = Math.max(Math.min(x + x0, ell), x - SETTLED_LENGTHS * ell) / N;
    if (x < input.length && x + h >= input.length * (1 - 1e-12)) h = input.length - x;
    const th = THETA * h;
    // Factor M − θhA once (Thomas algorithm; the matrix is diagonally dominant by columns).
    let p = mass[0]! - th * diagonal[0]!;
    pivot[0] = p;
    upperStar[0] = (-th * upper[0]!) / p;
    for (let j = 1; j < n; j++) {
      p = mass[j]! - th * diagonal[j]! + th * lower[j]! * upperStar[j - 1]!;
      pivot[j] = p;
      upperStar[j] = (-th * upper[j]!) / p;
    }
    const solve = (b: Float64Array, out: Float64Array) => {
      out[0] = b[0]! / pivot[0]!;
      for (let j = 1; j < n; j++) out[j] = (b[j]! + th * lower[j]! * out[j - 1]!) / pivot[j]!;
      for (let j = n - 2; j >= 0; j--) out[j] -= upperStar[j]! * out[j + 1]!;
    };
    // Trapezoidal stage to x + γh, then BDF2 to x + h.
    for (let j = 0; j < n; j++) {
      const Ac = diagonal[j]! * c[j]! + (j > 0 ? lower[j]! * c[j - 1]! : 0) + (j + 1 < n ? upper[j]! * c[j + 1]! : 0);
      rhs[j] = mass[j]! * c[j]! + th * Ac;
    }
    solve(rhs, cStage);
    for (let j = 0; j < n; j++) rhs[j] = mass[j]! * (BDF_NEW * cStage[j]! - BDF_OLD * c[j]!);
    solve(rhs, c);
    x = Math.abs(x + h - input.length) < 1e-12 * input.length ? input.length : x + h;
    steps++;

    let inA = 0;
    let inB = 0;
    for (let j = 0; j < n; j++) {
      if (j < nA) inA += mass[j]! * c[j]!;
      else inB += mass[j]! * c[j]!;
    }
    imbalance = Math.max(imbalance, Math.abs(inA + inB - fed) / fed);
    const extraction = (feedInA ? inB : inA) / fed;
    const approach = extraction / equilibriumExtraction;
    const previous = ap[ap.length - 1]!;
    const px = xs[xs.length - 1]!;
    const reach = (level: number) => px + ((x - px) * (level - previous)) / (approach - previous);
    if (length90 === null && approach >= 0.9) length90 = reach(0.9);
    if (length99 === null && approach >= 0.99) length99 = reach(0.99);
    xs.push(x);
    ex.push(extraction);
    ap.push(approach);
    if (x === input.length) outlet = { a: inA / flowA, b: inB / flowB, extraction, approach };
    observe?.(x, c);
  }
  if (outlet === null) throw new RangeError('the march ended before the outlet');
  return {
    curve: { x: Float64Array.from(xs), extraction: Float64Array.from(ex), approach: Float64Array.from(ap) },
    outletA: outlet.a,
    outletB: outlet.b,
    extraction: outlet.extraction,
    approach: outlet.approach,
    equilibriumExtraction,
    length90,
    length99,
    imbalance,
    steps,
    cells: n,
  };
}

/** Linear interpolation of ys over ascending xs at `at` (clamped to the ends). */
function interpolate(xs: Float64Array, ys: Float64Array, at: number): number {
  if (at <= xs[0]!) return ys[0]!;
  const last = xs.length - 1;
  if (at >= xs[last]!) return ys[last]!;
  let lo = 0;
  let hi = last;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid]! <= at) lo = mid;
    else hi = mid;
  }
  const t = (at - xs[lo]!) / (xs[hi]! - xs[lo]!);
  return ys[lo]! + t * (ys[hi]! - ys[lo]!);
}

/** First position where the approach reaches `level`, linear between positions, or null. */
function crossing(curve: TransportCurve, level: number): number | null {
  const { x, approach } = curve;
  for (let k = 1; k < x.length; k++) {
    if (approach[k]! >= level) return x[k - 1]! + ((x[k]! - x[k - 1]!) * (level - approach[k - 1]!)) / (approach[k]! - approach[k - 1]!);
  }
  return null;
}

/**
 * Richardson extrapolation of two estimates whose errors fall like h² (the finer with half the
 * cell sizes and steps): fine + (fine − coarse)/3, for the outlet values and along the finer
 * estimate's positions (Richardson, Phil. Trans. R. Soc. A 210, 1911; the h² law is checked
 * by the tests, which see the error fall fourfold per halving).
 */
export function richardson(coarse: TransportEstimate, fine: TransportEstimate): TransportEstimate {
  const lift = (f: number, c: number) => f + (f - c) / 3;
  const { x } = fine.curve;
  const curve: TransportCurve = {
    x,
    extraction: fine.curve.extraction.map((e, k) => lift(e, interpolate(coarse.curve.x, coarse.curve.extraction, x[k]!))),
    approach: fine.curve.approach.map((a, k) => lift(a, interpolate(coarse.curve.x, coarse.curve.approach, x[k]!))),
  };
  return {
    curve,
    outletA: lift(fine.outletA, coarse.outletA),
    outletB: lift(fine.outletB, coarse.outletB),
    extraction: lift(fine.extraction, coarse.extraction),
    approach: lift(fine.approach, coarse.approach),
    equilibriumExtraction: fine.equilibriumExtraction,
    length90: crossing(curve, 0.9),
    length99: crossing(curve, 0.99),
  };
}

/**
 * How much two estimates disagree: the outlet extraction, the outlet approach, and the approach
 * at the second estimate's 90 % and 99 % lengths (which fixes those lengths to the tolerance
 * divided by the slope of the approach there). All are fractions, so the measure is absolute.
 */
export function estimateChange(before: TransportEstimate, after: TransportEstimate): number {
  let change = Math.max(Math.abs(after.extraction - before.extraction), Math.abs(after.approach - before.approach));
  for (const at of [after.length90, after.length99]) {
    if (at === null) continue;
    change = Math.max(change, Math.abs(interpolate(after.curve.x, after.curve.approach, at) - interpolate(before.curve.x, before.curve.approach, at)));
  }
  return change;
}

export interface TransportResult {
  /** Mixing-cup (flow-weighted) mean concentrations of each phase at the outlet. */
  outletA: number;
  outletB: number;
  /** Fraction of the fed solute that has crossed into the other phase at the outlet. */
  extraction: number;
  /** The extraction at equilibrium, E/(1 + E), with E the extraction factor. */
  equilibriumExtraction: number;
  /** extraction / equilibriumExtraction at the outlet. */
  approach: number;
  /** Channel lengths at which 90 % and 99 % of equilibrium are reached, m (null: not within MAX_LENGTHS transfer lengths). */
  length90: number | null;
  length99: number | null;
  /** Length over which the remaining approach falls by a factor e, m. */
  transferLength: number;
  /** Extraction along the channel, at ALONG_POINTS evenly spaced positions from the inlet to the outlet. */
  along: { x: number[]; extraction: number[] };
  /** Whether the last refinement changed the answers by less than the tolerance. */
  converged: boolean;
  /** That last change, and the tolerance. */
  change: number;
  tolerance: number;
  /** Refinement level of the finest march (0 = coarsest), its cells across and steps along. */
  level: number;
  cells: number;
  steps: number;
  /** Largest relative imbalance of solute over every step of every march. */
  imbalance: number;
}

/**
 * The answer to the tolerance: marches on grids with cells and steps doubled level by level,
 * Richardson-extrapolates each pair of successive levels, and stops when two successive
 * extrapolations differ by less than the tolerance (the reported answer is the later one).
 * The step schedule scales with the transfer length of the coarsest grid, so every level samples
 * the same mapping of step positions and the differences measure discretisation error only.
 */
export function solveTransport(input: TransportInput, options: TransportOptions = {}): TransportResult {
  const { tolerance, cells, steps, maxLevel } = { ...TRANSPORT_DEFAULTS, ...options };
  checkInput(input);
  const coarsest = transportGrid(input, cells);
  const ell = transferLength(coarsest, input.partition);
  const marchAt = (level: number, grid = transportGrid(input, cells * 2 ** level)) => ({ grid, march: marchTransport(input, grid, { steps: steps * 2 ** level, transferLength: ell }) });

  let previous = marchAt(0, coarsest);
  let current = marchAt(1);
  let imbalance = Math.max(previous.march.imbalance, current.march.imbalance);
  let estimate = richardson(previous.march, current.march);
  let change = Infinity;
  let level = 1;
  while (level < maxLevel) {
    level++;
    previous = current;
    current = marchAt(level);
    imbalance = Math.max(imbalance, current.march.imbalance);
    const next = richardson(previous.march, current.march);
    change = estimateChange(estimate, next);
    estimate = next;
    if (change < tolerance) break;
  }
  const along = Array.from({ length: ALONG_POINTS }, (_, k) => (k / (ALONG_POINTS - 1)) * input.length);
  return {
    outletA: estimate.outletA,
    outletB: estimate.outletB,
    extraction: estimate.extraction,
    equilibriumExtraction: estimate.equilibriumExtraction,
    approach: estimate.approach,
    length90: estimate.length90,
    length99: estimate.length99,
    transferLength: transferLength(current.grid, input.partition),
    along: { x: along, extraction: along.map((at) => interpolate(estimate.curve.x, estimate.curve.extraction, at)) },
    converged: change < tolerance,
    change,
    tolerance,
    level,
    cells: current.march.cells,
    steps: current.march.steps,
    imbalance,
  };
}

function checkInput(input: TransportInput): void {
  const positive: Array<[string, number]> = [
    ['widthA', input.widthA],
    ['widthB', input.widthB],
    ['diffusivityA', input.diffusivityA],
    ['diffusivityB', input.diffusivityB],
    ['partition', input.partition],
    ['feedConcentration', input.feedConcentration],
    ['length', input.length],
  ];
  for (const [name, value] of positive) {
    if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`${name} must be positive and finite, got ${value}`);
  }
}

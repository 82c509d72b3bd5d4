/**
 * The whole-chip answer: solve the network and turn the raw solution into what users read —
 * per-node pressures, per-segment phase flows and holdups, split states and purities, the
 * per-contactor table, the spread between contactors and the warnings.
 * Exports `solveChip`, `warmStartFrom`, `summariseSolution`, `summariseContactors` (the part a
 * sweep records of each solve), `spreadOf` and the result types.
 * No I/O. The tables are computed in ./chipRows.ts, the warnings written in ./chipWarnings.ts.
 */
import { assembleNetwork, type Network } from '../network/assemble.js';
import { solveNetwork, SolverWorkspace, type NetworkSolution, type WarmStart } from '../solver/newton.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip, PhaseName } from '../network/model.js';
import { max as maxOf, min as minOf } from 'd3-array';
import { contactorResults, nodeResults, plainSegmentResults, portResults } from './chipRows.js';
import { chipWarnings } from './chipWarnings.js';
import { pressureResolution } from './resolution.js';

export type LeakState = 'pinned' | 'leaking-A-to-B' | 'leaking-B-to-A';

export interface NodeResult {
  id: string;
  kind: string;
  /** Pa; at merges and splits the pressure of phase A's side. */
  pressure: number;
  pressureA?: number;
  pressureB?: number;
  /** Fraction of A leaving the node. */
  compositionA: number;
}

export interface SegmentResult {
  id: string;
  kind: 'single' | 'contactor' | 'mixed';
  /** The phase a single-phase segment carries. */
  phase: PhaseName | null;
  /** m³/s, signed along from → to. */
  flowA: number;
  flowB: number;
  holdupA: number | null;
  /** p_from − p_to, Pa. */
  pressureDrop: number;
  reversed: boolean;
}

export interface SplitResult {
  id: string;
  contactor: string;
  state: LeakState;
  /** p_B − p_A, Pa. */
  pressureDifference: number;
  window: [number, number];
  /** Distance of Δ from the nearer window limit, Pa (negative when at a limit and leaking). */
  margin: number;
  /** m³/s of the phase that crosses into the other outlet. */
  leak: number;
  purityNear: number;
  purityFar: number;
  nearPhase: PhaseName;
}

export interface ContactorResult {
  index: number;
  id: string;
  flowA: number;
  flowB: number;
  /** flowA / flowB. */
  flowRatio: number;
  holdupA: number;
  velocityA: number;
  velocityB: number;
  residenceA: number;
  residenceB: number;
  pressureDrop: number;
  length: number;
  split: string | null;
  state: LeakState | 'open';
  purityA: number | null;
  purityB: number | null;
  reynolds: number;
  capillary: number | null;
  bond: number | null;
}

export interface Spread {
  min: number;
  max: number;
  mean: number;
  /** max/min */
  ratio: number;
  /** Coefficient of variation: population standard deviation over mean. */
  cv: number;
}

export interface ChipSummary {
  throughputA: number;
  throughputB: number;
  spread: { total: Spread; flowA: Spread; flowB: Spread; holdup: Spread };
  inlets: Array<{ id: string; phase: PhaseName; pressure: number; flow: number }>;
  outlets: Array<{ id: string; pressure: number; flowA: number; flowB: number }>;
  maxPressure: number;
  /** The smallest pressure difference the solution resolves, Pa (./resolution.ts): reports print a margin below it as 0. */
  pressureResolution: number;
}

export interface ChipSolution {
  converged: boolean;
  iterations: number;
  residual: number;
  message?: string;
  unsettled: string[];
  nodes: NodeResult[];
  segments: SegmentResult[];
  splits: SplitResult[];
  contactors: ContactorResult[];
  summary: ChipSummary;
  warnings: string[];
}

/** The contactor table, the splits and the spread between contactors: what a sweep records of a solve (a `ChipSolution` is one too). */
export interface ContactorSummary {
  contactors: ContactorResult[];
  splits: SplitResult[];
  summary: Pick<ChipSummary, 'spread'>;
}

export interface SolvedChip {
  chip: Chip;
  network: Network;
  raw: NetworkSolution;
  result: ChipSolution;
  /** The solver workspace of the solve (holdup tables, symbolic factors), for work at its solution. */
  workspace?: SolverWorkspace;
}

/** `workspace` carries holdup tables and sparse factors between the solves of a sweep (solver/newton.ts). */
export function solveChip(chip: Chip, options: SolverOptions = {}, warm?: WarmStart, workspace?: SolverWorkspace): SolvedChip {
  const network = assembleNetwork(chip);
  const space = workspace ?? new SolverWorkspace();
  const raw = solveNetwork(network, options, warm, space);
  return { chip, network, raw, result: summariseSolution(network, raw), workspace: space };
}

export function warmStartFrom(solved: SolvedChip): WarmStart {
  const { raw } = solved;
  return { pressure: raw.pressure, holdup: raw.holdup, leak: raw.leak, splitStates: raw.splitStates, crossover: raw.crossover, feedStates: raw.feedStates, composition: raw.composition };
}

export function spreadOf(values: number[]): Spread {
  if (values.length === 0) return { min: 0, max: 0, mean: 0, ratio: 1, cv: 0 };
  const min = minOf(values)!;
  const max = maxOf(values)!;
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  const variance = values.reduce((a, v) => a + (v - mean) ** 2, 0) / values.length;
  return { min, max, mean, ratio: min !== 0 ? max / min : Infinity, cv: mean !== 0 ? Math.sqrt(variance) / Math.abs(mean) : 0 };
}
/** The raw network solution as users read it: the tables (./chipRows.ts), the summary with its spreads, and the warnings (./chipWarnings.ts). */
export function summariseSolution(network: Network, raw: NetworkSolution): ChipSolution {
  const nodes = nodeResults(network, raw);
  const plainSegments = plainSegmentResults(network, raw);
  const { segments: contactorSegments, rows, splits } = contactorResults(network, raw);
  const ports = portResults(network, raw);
  const maxPressure = maxOf(raw.pressure) ?? -Infinity;
  const warnings = chipWarnings(network, raw, { plainSegments, contactorSegments, rows, splits, inlets: ports.inlets, maxPressure });
  const segmentById = new Map([...plainSegments, ...contactorSegments].map((s) => [s.id, s]));
  return {
    converged: raw.converged,
    iterations: raw.iterations,
    residual: raw.residual,
    message: raw.message,
    unsettled: raw.unsettled,
    nodes,
    segments: network.chip.segments.map((s) => segmentById.get(s.id)!),
    splits,
    contactors: rows,
    summary: {
      throughputA: ports.throughputA,
      throughputB: ports.throughputB,
      spread: contactorSpread(rows),
      inlets: ports.inlets,
      outlets: ports.outlets,
      maxPressure,
      pressureResolution: pressureResolution({ nodes }),
    },
    warnings,
  };
}

/**
 * The contactor rows, splits and spread of `summariseSolution` alone, without the node, segment
 * and port tables and the warnings that a sweep's record does not read: the same numbers.
 */
export function summariseContactors(network: Network, raw: NetworkSolution): ContactorSummary {
  const { rows, splits } = contactorResults(network, raw);
  return { contactors: rows, splits, summary: { spread: contactorSpread(rows) } };
}

function contactorSpread(rows: ContactorResult[]): ChipSummary['spread'] {
  return {
    total: spreadOf(rows.map((r) => r.flowA + r.flowB)),
    flowA: spreadOf(rows.map((r) => r.flowA)),
    flowB: spreadOf(rows.map((r) => r.flowB)),
    holdup: spreadOf(rows.map((r) => r.holdupA)),
  };
}

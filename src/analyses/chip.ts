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
import { solveCurvedInterface, type CurvedInterfaceResult } from '../solver/curvedInterface.js';
import { StratiflowError } from '../errors.js';

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
  /** With a curved interface: the holdup of A the flat interface gives (the same chip solved flat), and the arc's curvature, 1/m (positive: bulging into the near lane). */
  holdupFlatA?: number;
  /** holdupA − holdupFlatA. */
  holdupShiftA?: number;
  interfaceCurvature?: number;
}

/** With a curved interface: how the outer iteration on the curvatures went and how far the holdups moved. */
export interface CurvedInterfaceSummary {
  /** `newton`: Δ coupled into the Newton solve settled it; `fixed-point`: the outer iteration on the curvatures did (rounds of it). */
  method: 'newton' | 'fixed-point';
  rounds: number;
  settled: boolean;
  /** The contactor whose holdup of A moved most against the flat interface, and by how much (holdup − flat holdup). */
  largestShift: { contactor: string; shift: number } | null;
  /** Contactors whose arc is beyond the tables' curvature limit (held at it). */
  held: string[];
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
  curvedInterface?: CurvedInterfaceSummary;
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
  /** With a curved interface: the flat holdups and the curvatures (solver/curvedInterface.ts). */
  curved?: CurvedInterfaceResult;
}

/**
 * `workspace` carries holdup tables and sparse factors between the solves of a sweep
 * (solver/newton.ts). A chip with `interface: curved` is solved by the outer iteration on the
 * contactors' curvatures (solver/curvedInterface.ts), which starts from the flat solve.
 */
export function solveChip(chip: Chip, options: SolverOptions = {}, warm?: WarmStart, workspace?: SolverWorkspace): SolvedChip {
  const network = assembleNetwork(chip);
  const space = workspace ?? new SolverWorkspace();
  if (chip.interface === 'curved') {
    for (const el of network.contactors) {
      if (el.section.shape === 'rect' && el.section.orientation === 'stacked') {
        throw new StratiflowError('bad-layout', 'a curved interface is modelled for side-by-side layers only; this contactor is stacked', { file: chip.source, element: el.segment.id, field: 'orientation' });
      }
    }
    const { raw, curved } = solveCurvedInterface(network, chip.interfacialTension!, options, warm, space);
    return { chip, network, raw, result: summariseSolution(network, raw, curved), workspace: space, curved };
  }
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
export function summariseSolution(network: Network, raw: NetworkSolution, curved?: CurvedInterfaceResult): ChipSolution {
  const nodes = nodeResults(network, raw);
  const plainSegments = plainSegmentResults(network, raw);
  const { segments: contactorSegments, rows, splits } = contactorResults(network, raw);
  const curvedInterface = curved ? curvedRows(network, raw, curved, rows) : undefined;
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
      ...(curvedInterface ? { curvedInterface } : {}),
    },
    warnings: curvedInterface ? [...warnings, ...curvedWarnings(curvedInterface, curved!)] : warnings,
  };
}

/** Adds the flat holdup and the curvature to each contactor row; the summary of the curved interface. */
function curvedRows(network: Network, raw: NetworkSolution, curved: CurvedInterfaceResult, rows: ContactorResult[]): CurvedInterfaceSummary {
  let largest: CurvedInterfaceSummary['largestShift'] = null;
  rows.forEach((row, c) => {
    const nearIsA = raw.laneComposition[2 * c]! >= raw.laneComposition[2 * c + 1]!;
    const flat = curved.flatHoldup[c]!;
    row.holdupFlatA = nearIsA ? flat : 1 - flat;
    row.interfaceCurvature = curved.curvature[c]!;
    const shift = row.holdupA - row.holdupFlatA;
    row.holdupShiftA = shift;
    if (!largest || Math.abs(shift) > Math.abs(largest.shift)) largest = { contactor: row.id, shift };
  });
  return { method: curved.method, rounds: curved.rounds, settled: curved.settled, largestShift: largest, held: curved.held.map((c) => network.contactors[c]!.segment.id) };
}

function curvedWarnings(summary: CurvedInterfaceSummary, curved: CurvedInterfaceResult): string[] {
  const lines: string[] = [];
  if (!summary.settled) lines.push(`curved interface: the coupled solve did not settle, nor did the curvatures in ${summary.rounds} rounds of the fixed point (last change of κ·depth/2: ${curved.lastChange.toPrecision(2)}); the holdups are those of the last round`);
  if (summary.held.length > 0) lines.push(`curved interface: the arc in ${summary.held.join(', ')} is beyond a half-angle of 64° (|κ|·depth/2 > 0.9) and is held there; the interface there may not span the channel`);
  return lines;
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

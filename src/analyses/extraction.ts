/**
 * What a solved chip extracts: the solute transport across the interface of every contactor with
 * its own flows, holdup and depth-averaged velocity profile, and for the whole chip the mixed
 * outlet concentrations, the yield, and the yield lost to the flow spread between contactors
 * (against a perfectly even chip with the same throughputs). Exports `soluteSetup` (the solute
 * from the layout and overrides), `analyseExtraction` and the result types. No I/O.
 */
import { spreadOf, type SolvedChip, type Spread } from './chip.js';
import type { Chip, PhaseName } from '../network/model.js';
import type { ContactorElement } from '../network/assemble.js';
import { holdupForFlowFraction } from '../physics/section.js';
import { depthAveragedCellMeans, type LayerCells, type LayerFaces } from '../physics/profile.js';
import { solveTransport, TRANSPORT_DEFAULTS, type TransportResult } from '../physics/transport.js';
import { StratiflowError, StratiflowErrors } from '../errors.js';
import { max as maxOf } from 'd3-array';

export interface SoluteSetup {
  label: string;
  /** K = c_B/c_A at equilibrium. */
  partition: number;
  feedPhase: PhaseName;
  /** Concentration of the solute in the fed phase, mol/m³ (results scale with it). */
  feedConcentration: number;
  /** Diffusivity of the solute in each phase, m²/s. */
  diffusivityA: number;
  diffusivityB: number;
}

/** Values that replace (or supply) those of the layout; SI units. */
export type SoluteOverrides = Partial<SoluteSetup>;

/** Used when neither the layout nor the overrides give a feed concentration (results are relative). */
export const DEFAULT_FEED_CONCENTRATION = 1;

/**
 * The solute of the chip with the overrides applied. Every missing or invalid value is collected
 * before failing, each named by its place in the layout.
 */
export function soluteSetup(chip: Chip, overrides: SoluteOverrides = {}): SoluteSetup {
  const solute = chip.solute;
  const setup = {
    label: overrides.label ?? solute?.label ?? 'solute',
    partition: overrides.partition ?? solute?.partition,
    feedPhase: overrides.feedPhase ?? solute?.feedPhase ?? 'A',
    feedConcentration: overrides.feedConcentration ?? solute?.feedConcentration ?? DEFAULT_FEED_CONCENTRATION,
    diffusivityA: overrides.diffusivityA ?? chip.phases.A.diffusivity,
    diffusivityB: overrides.diffusivityB ?? chip.phases.B.diffusivity,
  };
  const problems: StratiflowError[] = [];
  const need = (value: number | undefined, element: string, field: string, what: string) => {
    if (value === undefined) problems.push(new StratiflowError('bad-layout', `${what} is not given; extraction needs it`, { file: chip.source, element, field }));
    else if (!(value > 0) || !Number.isFinite(value)) problems.push(new StratiflowError('bad-layout', `${what} must be positive, got ${value}`, { file: chip.source, element, field }));
  };
  need(setup.partition, 'solute', 'partition', 'the partition coefficient K = c_B/c_A');
  need(setup.feedConcentration, 'solute', 'feedConcentration', 'the feed concentration');
  need(setup.diffusivityA, 'phases.A', 'diffusivity', 'the diffusivity of the solute in phase A');
  need(setup.diffusivityB, 'phases.B', 'diffusivity', 'the diffusivity of the solute in phase B');
  if (problems.length > 0) throw new StratiflowErrors(problems);
  return setup as SoluteSetup;
}

export interface ExtractionOptions {
  /** Accuracy of every extraction figure (absolute, as a fraction); default 1e-4. */
  tolerance?: number;
}

export interface ContactorExtraction {
  index: number;
  id: string;
  /** m³/s, as solved (taken positive when both phases run backwards). */
  flowA: number;
  flowB: number;
  holdupA: number;
  /** E = K·Q_B/Q_A for a feed in A, Q_A/(K·Q_B) for a feed in B. */
  extractionFactor: number;
  /** Mixing-cup mean concentrations at the outlet, mol/m³. */
  outletA: number;
  outletB: number;
  /** Fraction of the fed solute that has crossed into the other phase. */
  extraction: number;
  /** E/(1 + E): the extraction at equilibrium for this contactor's flows. */
  equilibriumExtraction: number;
  /** extraction / equilibriumExtraction. */
  approach: number;
  /** Contactor length and the lengths that would give 90 % and 99 % of equilibrium, m. */
  length: number;
  length90: number | null;
  length99: number | null;
  /** Length over which the remaining approach falls by a factor e, m. */
  transferLength: number;
  converged: boolean;
  /** Change of the answers on the last refinement (≤ tolerance when converged). */
  change: number;
  cells: number;
  steps: number;
}

export interface SkippedContactor {
  index: number;
  id: string;
  reason: string;
}

/** Extraction along one contactor, for charts: x from inlet to outlet, m. */
export interface ExtractionProfile {
  role: 'best' | 'median' | 'worst';
  index: number;
  id: string;
  equilibriumExtraction: number;
  x: number[];
  extraction: number[];
}

export interface ExtractionSummary {
  /** Contactors analysed and skipped. */
  contactors: number;
  skipped: number;
  /** Solute fed to all contactors and transferred, mol/s. */
  fed: number;
  transferred: number;
  /** transferred / fed. */
  yield: number;
  /** Mixed outlet concentrations: all of phase A collected together, and all of B, mol/m³ (contactors not analysed pass their feed on unchanged). */
  outletA: number;
  outletB: number;
  /** E/(1 + E) at the chip's total flow ratio: the most any chip with these throughputs can extract in one stage. */
  equilibriumYield: number;
  /** Yield when every contactor gets the same flows: the chip's throughputs shared equally. */
  evenYield: number;
  /** evenYield − yield: the share of the feed that the flow spread costs. */
  spreadCost: number;
  extraction: Spread;
  approach: Spread;
  /** The longest 99 % length among the contactors, m (null if one never gets there). */
  longest99: number | null;
  /** Every contactor converged to the tolerance. */
  converged: boolean;
}

export interface ExtractionResult {
  solute: SoluteSetup;
  tolerance: number;
  contactors: ContactorExtraction[];
  skippedContactors: SkippedContactor[];
  summary: ExtractionSummary;
  /** Best, median and worst contactor by extraction (fewer when fewer were analysed). */
  profiles: ExtractionProfile[];
  warnings: string[];
}

/** Holdups this close to 0 or 1 leave no layer to transfer into. */
const THIN_LAYER = 1e-6;

interface ContactorFlow {
  element: ContactorElement;
  flowA: number;
  flowB: number;
  holdupA: number;
}

/** One contactor's transport problem: its section, flows and holdup with the chip's fluids and solute. */
function contactorTransport(chip: Chip, solute: SoluteSetup, flow: ContactorFlow, tolerance: number): TransportResult {
  const { element, flowA, flowB, holdupA } = flow;
  const { across, along } = element;
  const profileInput = { across, along, holdup: holdupA, muA: chip.phases.A.viscosity, muB: chip.phases.B.viscosity };
  const widthA = holdupA * across;
  const velocity = (faces: LayerFaces): LayerCells => {
    const perGradient = depthAveragedCellMeans(profileInput, faces);
    // Each layer carries exactly its solved flow: Σ ū_j Δy_j · along = Q.
    const scaled = (cells: Float64Array, f: ArrayLike<number>, q: number) => {
      let sum = 0;
      for (let k = 0; k < cells.length; k++) sum += cells[k]! * (f[k + 1]! - f[k]!);
      const factor = q / (along * sum);
      return cells.map((u) => u * factor);
    };
    return { A: scaled(perGradient.A, faces.A, flowA), B: scaled(perGradient.B, faces.B, flowB) };
  };
  return solveTransport(
    {
      widthA,
      widthB: across - widthA,
      diffusivityA: solute.diffusivityA,
      diffusivityB: solute.diffusivityB,
      partition: solute.partition,
      feedPhase: solute.feedPhase,
      feedConcentration: solute.feedConcentration,
      length: element.segment.length,
      velocity,
    },
    { tolerance },
  );
}

export function analyseExtraction(solved: SolvedChip, solute: SoluteSetup, options: ExtractionOptions = {}): ExtractionResult {
  const tolerance = options.tolerance ?? TRANSPORT_DEFAULTS.tolerance;
  const { chip, network, result } = solved;
  const warnings: string[] = [];
  const skippedContactors: SkippedContactor[] = [];
  const active: Array<{ row: (typeof result.contactors)[number]; flow: ContactorFlow }> = [];
  result.contactors.forEach((row, c) => {
    const element = network.contactors[c]!;
    const sameWay = Math.sign(row.flowA) === Math.sign(row.flowB);
    let reason: string | null = null;
    if (row.flowA === 0 || row.flowB === 0 || row.holdupA < THIN_LAYER || row.holdupA > 1 - THIN_LAYER) reason = 'only one phase flows';
    else if (!sameWay) reason = 'the phases flow in opposite directions';
    if (reason !== null) {
      skippedContactors.push({ index: row.index, id: row.id, reason });
      warnings.push(`contactor ${row.id}: not analysed (${reason}); counted as transferring nothing`);
      return;
    }
    if (row.flowA < 0) warnings.push(`contactor ${row.id}: both phases run backwards; extraction is worked out along their actual direction`);
    active.push({ row, flow: { element, flowA: Math.abs(row.flowA), flowB: Math.abs(row.flowB), holdupA: row.holdupA } });
  });

  const feedInA = solute.feedPhase === 'A';
  const K = solute.partition;
  const factorOf = (qA: number, qB: number) => (feedInA ? (K * qB) / qA : qA / (K * qB));
  const contactors: ContactorExtraction[] = [];
  const transports: TransportResult[] = [];
  for (const { row, flow } of active) {
    const t = contactorTransport(chip, solute, flow, tolerance);
    transports.push(t);
    contactors.push({
      index: row.index,
      id: row.id,
      flowA: flow.flowA,
      flowB: flow.flowB,
      holdupA: flow.holdupA,
      extractionFactor: factorOf(flow.flowA, flow.flowB),
      outletA: t.outletA,
      outletB: t.outletB,
      extraction: t.extraction,
      equilibriumExtraction: t.equilibriumExtraction,
      approach: t.approach,
      length: flow.element.segment.length,
      length90: t.length90,
      length99: t.length99,
      transferLength: t.transferLength,
      converged: t.converged,
      change: t.change,
      cells: t.cells,
      steps: t.steps,
    });
    if (!t.converged) warnings.push(`contactor ${row.id}: extraction converged only to ${t.change.toExponential(1)} (asked ${tolerance.toExponential(1)})`);
  }

  // Chip totals over every contactor: one that is not analysed passes its flows on unextracted.
  const c0 = solute.feedConcentration;
  let totalA = 0;
  let totalB = 0;
  let soluteA = 0;
  let soluteB = 0;
  for (const row of result.contactors) {
    totalA += Math.abs(row.flowA);
    totalB += Math.abs(row.flowB);
  }
  for (const r of contactors) {
    soluteA += r.flowA * r.outletA;
    soluteB += r.flowB * r.outletB;
  }
  const fed = (feedInA ? totalA : totalB) * c0;
  const untouched = fed - (soluteA + soluteB);
  if (feedInA) soluteA += untouched;
  else soluteB += untouched;
  const transferred = contactors.reduce((sum, r) => sum + r.extraction * (feedInA ? r.flowA : r.flowB) * c0, 0);
  const chipFactor = totalA > 0 && totalB > 0 ? factorOf(totalA, totalB) : 0;

  // The perfectly even chip: every contactor at the mean flows; identical inputs give identical answers.
  const count = result.contactors.length;
  const meanA = totalA / count;
  const meanB = totalB / count;
  const evenCache = new Map<string, number>();
  let evenTransferred = 0;
  if (meanA > 0 && meanB > 0) {
    for (const element of network.contactors) {
      const key = JSON.stringify([element.section, element.segment.length]);
      let extraction = evenCache.get(key);
      if (extraction === undefined) {
        const holdupA = holdupForFlowFraction(element.section, chip.phases.A.viscosity, chip.phases.B.viscosity, meanA / (meanA + meanB)).holdup;
        extraction = contactorTransport(chip, solute, { element, flowA: meanA, flowB: meanB, holdupA }, tolerance).extraction;
        evenCache.set(key, extraction);
      }
      evenTransferred += extraction * (feedInA ? meanA : meanB) * c0;
    }
  }

  const leaking = result.splits.filter((split) => split.state !== 'pinned').map((split) => split.id);
  if (leaking.length > 0) {
    const named = leaking.length > 6 ? `${leaking.slice(0, 6).join(', ')} and ${leaking.length - 6} more` : leaking.join(', ');
    warnings.push(`${leaking.length} of ${result.splits.length} splits leak (${named}): their outlets collect mixed phases, while the yield assumes each phase leaves by its own outlet`);
  }
  if (!result.converged) warnings.push('the flow solve did not converge; extraction figures rest on unsettled flows');

  const all99 = contactors.map((r) => r.length99);
  return {
    solute,
    tolerance,
    contactors,
    skippedContactors,
    summary: {
      contactors: contactors.length,
      skipped: skippedContactors.length,
      fed,
      transferred,
      yield: fed > 0 ? transferred / fed : 0,
      outletA: totalA > 0 ? soluteA / totalA : 0,
      outletB: totalB > 0 ? soluteB / totalB : 0,
      equilibriumYield: chipFactor / (1 + chipFactor),
      evenYield: fed > 0 ? evenTransferred / fed : 0,
      spreadCost: fed > 0 ? (evenTransferred - transferred) / fed : 0,
      extraction: spreadOf(contactors.map((r) => r.extraction)),
      approach: spreadOf(contactors.map((r) => r.approach)),
      longest99: all99.some((v) => v === null) || all99.length === 0 ? null : (maxOf(all99 as number[]) ?? -Infinity),
      converged: contactors.every((r) => r.converged),
    },
    profiles: featuredProfiles(contactors, transports),
    warnings,
  };
}

/** Best, median and worst by extraction; a contactor appears once even when roles coincide. */
function featuredProfiles(contactors: ContactorExtraction[], transports: TransportResult[]): ExtractionProfile[] {
  if (contactors.length === 0) return [];
  const order = contactors.map((_, i) => i).sort((i, j) => contactors[j]!.extraction - contactors[i]!.extraction || i - j);
  const picks: Array<[ExtractionProfile['role'], number]> = [
    ['best', order[0]!],
    ['median', order[Math.floor((order.length - 1) / 2)]!],
    ['worst', order[order.length - 1]!],
  ];
  const seen = new Set<number>();
  return picks.flatMap(([role, i]) => {
    if (seen.has(i)) return [];
    seen.add(i);
    const r = contactors[i]!;
    const t = transports[i]!;
    return [{ role, index: r.index, id: r.id, equilibriumExtraction: r.equilibriumExtraction, x: t.along.x, extraction: t.along.extraction }];
  });
}

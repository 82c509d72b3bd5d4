/**
 * From the solves of a tolerance study (./tolerance.ts) to what users read: distributions of the
 * spread between contactors, the probability that every split stays pinned, which contactors
 * leak first, which tolerance matters most, and the first-order estimate of each beside the
 * sampled figure with the sampling error that decides whether the two agree.
 *
 * First order: with derivatives g = ∂y/∂z_k of an output y with respect to the standard deviates,
 * Var(y) ≈ Σ_k g_k² Var(z_k) (the linear propagation of independent variances, e.g. Taylor,
 * An Introduction to Error Analysis, 2nd ed., 1997, eq. 3.47), and the first-order model
 * y ≈ y₀ + Σ_k g_k z_k evaluated on the same deviates gives first-order probabilities.
 * Exports `summariseTolerance`, `commonestProblem`, `sampledShareNoise` and the result types. No I/O. The jobs live
 * in files of their own: the first-order model (./toleranceFirstOrder.ts), the pass over the
 * draws (./toleranceDraws.ts), the estimates (./toleranceEstimates.ts) and the ranking of the
 * sources (./toleranceRanking.ts).
 */
import type { ChipSolution } from './chip.js';
import type { ProbabilityEstimate, SampleStatistics } from './sampleStatistics.js';
import { pressureResolution } from './resolution.js';
import type { Chip } from '../network/model.js';
import { observe, type ObservableLayout, type Outcome, type SpreadKey, type ToleranceSource, type TolerancePlan } from './toleranceModel.js';
import { passOverDraws, spreadRecord } from './toleranceDraws.js';
import { contactorEstimates, modelIndices, modelProbability, pinnedSweep, spreadEstimates, type EstimateInput } from './toleranceEstimates.js';
import { FirstOrderModel } from './toleranceFirstOrder.js';
import { rankSources } from './toleranceRanking.js';

export { sampledShareNoise } from './toleranceRanking.js';

// ---------------------------------------------------------------------------------------------
// Result types

export interface SpreadEstimate {
  key: SpreadKey;
  label: string;
  nominal: number;
  /**
   * The spread of the first-order model's contactor values on the same draws. A spread is not a
   * smooth function of the flows where they are nearly equal (a CV near zero), so it is not
   * linearised itself; the flows are.
   */
  firstOrder: { mean: number; sd: number } | null;
  sampled: SampleStatistics | null;
  /** sampled sd / first-order sd. */
  sdRatio: number | null;
  /** |sampled sd − first-order sd| within 1.96 standard errors of the sampled sd. */
  agrees: boolean | null;
}

export interface ContactorEstimate {
  index: number;
  id: string;
  split: string | null;
  nominalState: string;
  /** Pa; null without a split. */
  nominalMargin: number | null;
  /** Solved realisations in which this contactor's split leaks. */
  leaks: number;
  leakProbability: number | null;
  firstOrderLeakProbability: number | null;
  /**
   * Standard deviation of the contactor's total flow over its nominal flow: first order (closed
   * form), sampled, the standard error of the sampled figure, and whether the two agree within
   * 1.96 standard errors.
   */
  flowSd: { firstOrder: number | null; sampled: number | null; sampledError: number | null; agrees: boolean | null };
}

export interface SourceEstimate extends ToleranceSource {
  /** Share of the variance of contactor flows (relative to each nominal flow, averaged over contactors), first order. */
  flowShare: number | null;
  /**
   * The same share measured on the samples: the covariance of each flow with this source's
   * first-order term, over the sum of these covariances for all sources, so that the sampled
   * shares add up to 1 (a share within its sampling noise is 0: see `sampledShareNoise`).
   * What part of the sampled variance the first-order terms follow is `ToleranceResult.followed`.
   */
  flowShareSampled: number | null;
  /** Root-mean-square relative flow sd of a contactor caused by this source alone, first order. */
  flowSd: number | null;
  /** Share of the variance of the position of p_B − p_A in the split windows (−1 at the low limit, +1 at the high). */
  windowShare: number | null;
  windowShareSampled: number | null;
}

export interface SweepPoint {
  scale: number;
  solved: number;
  notSolved: number;
  pinned: ProbabilityEstimate | null;
  firstOrderPinned: number | null;
}

export interface SampleRow {
  index: number;
  solved: boolean;
  problem?: string;
  /** Solved only from a cold start (the warm start from the nominal solution did not settle). */
  cold: boolean;
  allPinned: boolean | null;
  leaking: string[];
  spreads: Record<SpreadKey, number> | null;
  /** Total flow of every contactor, m³/s (empty when not solved). */
  flows: number[];
  viscosityA: number;
  viscosityB: number;
  interfacialTension: number | null;
  contactAngle: { advancing: number; receding: number } | null;
  /** The drawn offset of each offset source (by label): a fraction when relative, else SI. */
  offsets: Record<string, number>;
}

export interface ToleranceResult {
  chip: string;
  samples: number;
  seed: number;
  /** False when realisations were drawn for the first-order model only. */
  sampled: boolean;
  /** `pressureResolution`: the smallest pressure difference the nominal solution resolves, Pa (./resolution.ts). */
  nominal: { allPinned: boolean | null; leaking: string[]; spreads: Record<SpreadKey, number>; pressureResolution: number };
  /**
   * Share of the sampled variance (contactor flows, split positions) that the sum of the
   * first-order terms follows: Σ_k cov(y, l_k) / Var(y), 1 for a linear response; null without samples.
   */
  followed: { flow: number | null; window: number | null };
  /** Ranked: largest first-order share of contactor-flow variance first. */
  sources: SourceEstimate[];
  solved: number;
  notSolved: Array<{ index: number; problem: string }>;
  /** Solves of the first-order estimate; null when it was not asked for. */
  firstOrder: { solves: number; available: boolean; failed: string[]; stateChanges: string[] } | null;
  /** Every split pinned, among solved realisations; null without splits or solved samples. */
  pinned: ProbabilityEstimate | null;
  firstOrderPinned: number | null;
  spreads: SpreadEstimate[];
  contactors: ContactorEstimate[];
  sweep: SweepPoint[];
  /** Probability that every split stays pinned under the first-order model, at tolerance multiples 0 … max. */
  firstOrderCurve: Array<{ scale: number; pinned: number }>;
  rows: SampleRow[];
  notes: string[];
}

export interface SummaryInput {
  chip: Chip;
  plan: TolerancePlan;
  seed: number;
  samples: number;
  nominal: ChipSolution;
  layout: ObservableLayout;
  /**
   * Derivatives with respect to each slot's standard deviate (null where the slot has no
   * tolerance or its solve failed), with the solves made, the failures and the slots across
   * whose difference step a split changed state; null when no first-order estimate was asked for.
   */
  firstOrder: { gradient: Array<Float64Array | null>; solves: number; failed: string[]; stateChanges: string[]; notes: string[] } | null;
  /** Outcomes at each tolerance multiple; null when the draws were not solved (first order only). */
  sampled: Array<{ scale: number; outcomes: Outcome[] | null }>;
}

/** The summary of a study: the estimates (./toleranceEstimates.ts), the ranking of sources (./toleranceRanking.ts) and the notes. */
export function summariseTolerance(input: SummaryInput): ToleranceResult {
  const { chip, plan, seed, samples, nominal, layout } = input;
  const { values: y0 } = observe(nominal, layout);
  const notes = [...plan.notes];
  const M = layout.splits;

  let firstOrder: ToleranceResult['firstOrder'] = null;
  if (input.firstOrder) {
    const { solves, failed, stateChanges } = input.firstOrder;
    firstOrder = { solves, available: failed.length === 0, failed, stateChanges };
    notes.push(...input.firstOrder.notes);
    if (failed.length) notes.push(`no first-order estimate: the difference solve failed for ${listed(failed, 3)}`);
    if (stateChanges.length) notes.push(`a split changes state within a difference step of ${listed(stateChanges, 3)}: the solution has a kink there, so the first-order estimate is not to be trusted`);
  }
  const linear = firstOrder?.available === true;
  const model = new FirstOrderModel(plan, input.firstOrder?.gradient ?? plan.slots.map(() => null), layout, y0);
  const main = input.sampled.find((s) => s.scale === 1)!;
  const draws = passOverDraws(input, model, main, linear, y0);
  const estimates: EstimateInput = { input, y0, model, draws, main, linear };
  const { sources, followed } = rankSources(plan, layout, y0, model, draws, linear);
  const { sweep, firstOrderCurve } = pinnedSweep(estimates);

  const nominalLeaking = nominal.splits.filter((s) => s.state !== 'pinned').map((s) => s.id);
  if (nominalLeaking.length) notes.push(`at nominal conditions ${nominalLeaking.length} of ${M} splits already leak (${listed(nominalLeaking, 5)})`);
  const notSolved = main.outcomes ? main.outcomes.flatMap((o, index) => (o.values ? [] : [{ index, problem: o.problem! }])) : [];
  const cold = main.outcomes ? main.outcomes.filter((o) => o.values && o.cold).length : 0;
  if (cold) notes.push(`${cold} realisations did not settle from the nominal solution and were solved from a cold start`);
  for (const p of sweep) if (p.scale !== 1 && p.notSolved > 0) notes.push(`at ${p.scale}× the tolerances, ${p.notSolved} of ${samples} realisations were not solved`);

  return {
    chip: chip.name,
    samples,
    seed,
    sampled: main.outcomes !== null,
    nominal: { allPinned: M > 0 ? nominalLeaking.length === 0 : null, leaking: nominalLeaking, spreads: spreadRecord(y0), pressureResolution: pressureResolution(nominal) },
    followed,
    sources,
    solved: draws.n,
    notSolved,
    firstOrder,
    pinned: sweep.find((p) => p.scale === 1)!.pinned,
    firstOrderPinned: modelProbability(estimates, 1, modelIndices(samples, main.outcomes)),
    spreads: spreadEstimates(estimates),
    contactors: contactorEstimates(estimates),
    sweep,
    firstOrderCurve,
    rows: draws.rows,
    notes,
  };
}

/** The reason most realisations were not solved, and how many it stopped (ties: the first met). */
export function commonestProblem(notSolved: ReadonlyArray<{ problem: string }>): { problem: string; count: number } | undefined {
  const counts = new Map<string, number>();
  for (const { problem } of notSolved) counts.set(problem, (counts.get(problem) ?? 0) + 1);
  const [problem, count] = [...counts].sort((a, b) => b[1] - a[1])[0] ?? [];
  return problem === undefined ? undefined : { problem, count: count! };
}

function listed(items: string[], count: number): string {
  return `${items.slice(0, count).join(', ')}${items.length > count ? ` and ${items.length - count} more` : ''}`;
}

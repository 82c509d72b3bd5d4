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
 * Exports `summariseTolerance` and the result types. No I/O.
 */
import { max as maxOf } from 'd3-array';
import { spreadOf, type ChipSolution } from './chip.js';
import { describeSample, sdAgrees, wilsonInterval, Z95, type ProbabilityEstimate, type SampleStatistics } from './sampleStatistics.js';
import { pressureResolution } from './resolution.js';
import type { Chip } from '../network/model.js';
import {
  CONTACTOR_BASE, SPREAD_KEYS, STATE_CODES, contactorAt, deviateVariance, observe, realiseChip, splitAt, standardDeviates,
  type ObservableLayout, type Outcome, type SpreadKey, type ToleranceSource, type TolerancePlan,
} from './toleranceModel.js';

// ---------------------------------------------------------------------------------------------
// Result types

export const SPREAD_LABELS: Record<SpreadKey, string> = {
  'total.cv': 'total flow, CV',
  'total.ratio': 'total flow, max/min',
  'flowA.cv': 'flow of A, CV',
  'flowA.ratio': 'flow of A, max/min',
  'flowB.cv': 'flow of B, CV',
  'flowB.ratio': 'flow of B, max/min',
  'holdup.cv': 'holdup of A, CV',
  'holdup.ratio': 'holdup of A, max/min',
};

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

/**
 * A sampled share below Z95²/n is reported as 0. The sample covariance of y with a source's term
 * l has a standard error of about sd(l)·sd(y)/√n, so a share s ≈ Var(l)/Var(y) is known to about
 * √(s/n); below Z95²/n it lies within its own 95 % noise and cannot be told from none.
 */
export function sampledShareNoise(n: number): number {
  return n > 1 ? (Z95 * Z95) / n : Infinity;
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

// ---------------------------------------------------------------------------------------------
// Summary

const CURVE_POINTS = 40;

export function summariseTolerance(input: SummaryInput): ToleranceResult {
  const { chip, plan, seed, samples, nominal, layout } = input;
  const { values: y0 } = observe(nominal, layout);
  const notes = [...plan.notes];
  const N = layout.contactors;
  const M = layout.splits;
  const K = plan.sources.length;
  const splitOfContactor = new Map(nominal.splits.map((s, i) => [s.contactor, i]));

  const gradient = input.firstOrder?.gradient ?? plan.slots.map(() => null);
  let firstOrder: ToleranceResult['firstOrder'] = null;
  if (input.firstOrder) {
    const { solves, failed, stateChanges } = input.firstOrder;
    firstOrder = { solves, available: failed.length === 0, failed, stateChanges };
    notes.push(...input.firstOrder.notes);
    if (failed.length) notes.push(`no first-order estimate: the difference solve failed for ${listed(failed, 3)}`);
    if (stateChanges.length) notes.push(`a split changes state within a difference step of ${listed(stateChanges, 3)}: the solution has a kink there, so the first-order estimate is not to be trusted`);
  }
  const linear = firstOrder?.available === true;
  const variance = plan.slots.map((s) => (s.variation.size > 0 ? deviateVariance(s.variation) : 0));
  const firstOrderVariance = (o: number, source?: number): number => {
    let sum = 0;
    plan.slots.forEach((slot, k) => {
      const g = gradient[k];
      if (g && (source === undefined || slot.source === source)) sum += g[o]! ** 2 * variance[k]!;
    });
    return sum;
  };

  // Window positions p = (Δ − mid)/half: −1 at the low limit, +1 at the high one.
  const windowOf = (values: ArrayLike<number>, s: number) => {
    const at = splitAt(layout, s);
    const [delta, low, high] = [values[at]!, values[at + 1]!, values[at + 2]!];
    return { delta, low, high, half: (high - low) / 2, position: (delta - (low + high) / 2) / ((high - low) / 2) };
  };
  const nominalWindows = Array.from({ length: M }, (_, s) => windowOf(y0, s));
  /** First-order change of a window position from changes e of the recorded values. */
  const positionChange = (e: ArrayLike<number>, s: number) => {
    const w = nominalWindows[s]!;
    const at = splitAt(layout, s);
    if (!(w.half > 0)) return 0;
    return (e[at]! - (e[at + 1]! + e[at + 2]!) / 2) / w.half - (w.position * (e[at + 2]! - e[at + 1]!)) / (2 * w.half);
  };
  const splitPinnedUnderModel = (changes: Float64Array, s: number, scale: number) => {
    const w = nominalWindows[s]!;
    const delta = w.delta + scale * changes[3 * s]!;
    return delta >= w.low + scale * changes[3 * s + 1]! && delta <= w.high + scale * changes[3 * s + 2]!;
  };
  const pinnedUnderModel = (changes: Float64Array, scale: number) => {
    for (let s = 0; s < M; s++) if (!splitPinnedUnderModel(changes, s, scale)) return false;
    return true;
  };

  // One pass over the draws at the given tolerances: first-order terms by source, the
  // first-order model's spreads and split values, covariance sums, and the sample rows.
  const main = input.sampled.find((s) => s.scale === 1)!;
  const solvedAt = (outcomes: Outcome[] | null, index: number) => outcomes === null || outcomes[index]!.values !== undefined;
  const mainSolved = Array.from({ length: samples }, (_, i) => main.outcomes !== null && main.outcomes[i]!.values !== undefined);
  const n = mainSolved.filter(Boolean).length;
  const flowWeight = Array.from({ length: N }, (_, c) => {
    const q = y0[contactorAt(layout, c)]!;
    return q !== 0 ? 1 / (q * q) : 0;
  });
  const targets = N + M; // contactor flows, then window positions
  const sums = { y: new Float64Array(targets), yy: new Float64Array(targets), l: new Float64Array(K * targets), yl: new Float64Array(K * targets) };
  const splitChanges: Float64Array[] = [];
  const modelSpreads: Float64Array[] = [];
  const rows: SampleRow[] = [];
  const offsetSources = plan.sources.flatMap((s, k) => (s.scope === 'offset' ? [k] : []));
  const slotSource = Int32Array.from(plan.slots, (slot) => slot.source);
  for (let index = 0; index < samples; index++) {
    const z = standardDeviates(plan, seed, index);
    const outcome = main.outcomes?.[index];
    if (linear) {
      const { bySource, total } = firstOrderTerms(gradient, slotSource, z, K, layout.size);
      splitChanges.push(total.slice(splitAt(layout, 0)));
      modelSpreads.push(spreadsOfContactors(y0, total, layout));
      if (outcome?.values) {
        for (let t = 0; t < targets; t++) {
          const y = t < N ? outcome.values[contactorAt(layout, t)]! - y0[contactorAt(layout, t)]! : windowOf(outcome.values, t - N).position - nominalWindows[t - N]!.position;
          sums.y[t] += y;
          sums.yy[t] += y * y;
          for (let k = 0; k < K; k++) {
            const e = bySource.subarray(k * layout.size, (k + 1) * layout.size);
            const l = t < N ? e[contactorAt(layout, t)]! : positionChange(e, t - N);
            sums.l[k * targets + t] += l;
            sums.yl[k * targets + t] += y * l;
          }
        }
      }
    }
    if (outcome) rows.push(sampleRow(chip, plan, z, index, outcome, offsetSources, nominal, layout));
  }
  /** Indices of the draws the first-order model is evaluated on: those solved (all when none are solved). */
  const modelIndices = (outcomes: Outcome[] | null) => Array.from({ length: samples }, (_, i) => i).filter((i) => solvedAt(outcomes, i));
  const mainModel = modelIndices(main.outcomes);
  const modelProbability = (scale: number, indices: number[]) => (linear && M > 0 && indices.length > 0 ? indices.filter((i) => pinnedUnderModel(splitChanges[i]!, scale)).length / indices.length : null);
  const solvedValues = (o: number) => mainSolved.flatMap((solved, i) => (solved ? [main.outcomes![i]!.values![o]!] : []));

  const spreads: SpreadEstimate[] = SPREAD_KEYS.map((key, o) => {
    const sampled = describeSample(solvedValues(o));
    const model = linear ? describeSample(mainModel.map((i) => modelSpreads[i]![o]!)) : null;
    const firstOrderSpread = model ? { mean: model.mean, sd: model.sd } : null;
    return {
      key,
      label: SPREAD_LABELS[key],
      nominal: y0[o]!,
      firstOrder: firstOrderSpread,
      sampled,
      sdRatio: sampled && firstOrderSpread && firstOrderSpread.sd > 0 ? sampled.sd / firstOrderSpread.sd : null,
      agrees: firstOrderSpread ? sdAgrees(sampled, firstOrderSpread.sd) : null,
    };
  });

  const contactors: ContactorEstimate[] = nominal.contactors.map((c, i) => {
    const s = splitOfContactor.get(c.id);
    const q0 = Math.abs(y0[contactorAt(layout, i)]!);
    const leaks = s === undefined ? 0 : mainSolved.filter((solved, j) => solved && main.outcomes![j]!.states![s] !== 0).length;
    const modelLeaks = s === undefined || !linear || mainModel.length === 0 ? null : mainModel.filter((j) => !splitPinnedUnderModel(splitChanges[j]!, s, 1)).length / mainModel.length;
    const flows = describeSample(solvedValues(contactorAt(layout, i)));
    const firstOrderSd = linear && q0 !== 0 ? Math.sqrt(firstOrderVariance(contactorAt(layout, i))) / q0 : null;
    return {
      index: c.index,
      id: c.id,
      split: c.split,
      nominalState: c.state,
      nominalMargin: s === undefined ? null : nominal.splits[s]!.margin,
      leaks,
      leakProbability: s === undefined || n === 0 ? null : leaks / n,
      firstOrderLeakProbability: modelLeaks,
      flowSd: {
        firstOrder: firstOrderSd,
        sampled: flows && q0 !== 0 ? flows.sd / q0 : null,
        sampledError: flows && q0 !== 0 ? flows.sdError / q0 : null,
        agrees: firstOrderSd === null || q0 === 0 ? null : sdAgrees(flows, firstOrderSd * q0),
      },
    };
  });

  // Ranking of sources: first-order variance shares, checked by covariances on the samples.
  const covariance = (k: number, t: number) => (n > 1 ? (sums.yl[k * targets + t]! - (sums.y[t]! * sums.l[k * targets + t]!) / n) / (n - 1) : NaN);
  const sampledVariance = (t: number) => (n > 1 ? (sums.yy[t]! - sums.y[t]! ** 2 / n) / (n - 1) : NaN);
  const flowVariance = (source?: number) => mean(Array.from({ length: N }, (_, c) => flowWeight[c]! * firstOrderVariance(contactorAt(layout, c), source)));
  const windowVariance = (source?: number) =>
    mean(Array.from({ length: M }, (_, s) => plan.slots.reduce((sum, slot, k) => (gradient[k] && (source === undefined || slot.source === source) ? sum + positionChange(gradient[k]!, s) ** 2 * variance[k]! : sum), 0)));
  const flowTotal = linear ? flowVariance() : NaN;
  const windowTotal = linear && M > 0 ? windowVariance() : NaN;
  const flowSampledTotal = mean(Array.from({ length: N }, (_, c) => flowWeight[c]! * sampledVariance(c)));
  const windowSampledTotal = mean(Array.from({ length: M }, (_, s) => sampledVariance(N + s)));
  const flowCovariance = plan.sources.map((_, k) => mean(Array.from({ length: N }, (_, c) => flowWeight[c]! * covariance(k, c))));
  const windowCovariance = plan.sources.map((_, k) => mean(Array.from({ length: M }, (_, s) => covariance(k, N + s))));
  const sum = (values: number[]) => values.reduce((a, b) => a + b, 0);
  const noise = sampledShareNoise(n);
  const sampledShare = (part: number, parts: number[]) => {
    const value = share(part, sum(parts));
    return value === null ? null : Math.abs(value) < noise ? 0 : value;
  };
  const followed = {
    flow: linear && n > 1 ? share(sum(flowCovariance), flowSampledTotal) : null,
    window: linear && M > 0 && n > 1 ? share(sum(windowCovariance), windowSampledTotal) : null,
  };
  const sources: SourceEstimate[] = plan.sources.map((source, k) => {
    const flowPart = linear ? flowVariance(k) : NaN;
    return {
      ...source,
      flowShare: share(flowPart, flowTotal),
      flowShareSampled: linear ? sampledShare(flowCovariance[k]!, flowCovariance) : null,
      flowSd: linear ? Math.sqrt(flowPart) : null,
      windowShare: linear && M > 0 ? share(windowVariance(k), windowTotal) : null,
      windowShareSampled: linear && M > 0 ? sampledShare(windowCovariance[k]!, windowCovariance) : null,
    };
  });
  sources.sort((a, b) => (b.flowShare ?? -1) - (a.flowShare ?? -1) || (b.windowShare ?? -1) - (a.windowShare ?? -1));

  // Every split pinned, at each tolerance multiple.
  const sweep: SweepPoint[] = input.sampled.map(({ scale, outcomes }) => {
    const solved = outcomes ? outcomes.filter((o) => o.values) : [];
    const allPinned = solved.filter((o) => o.states!.every((s) => s === 0)).length;
    return {
      scale,
      solved: solved.length,
      notSolved: outcomes ? outcomes.length - solved.length : 0,
      pinned: M > 0 && solved.length > 0 ? wilsonInterval(allPinned, solved.length) : null,
      firstOrderPinned: modelProbability(scale, modelIndices(outcomes)),
    };
  });
  sweep.sort((a, b) => a.scale - b.scale);
  const maxScale = Math.max(2, maxOf(input.sampled, (s) => s.scale) ?? 0);
  const allDraws = modelIndices(null);
  const firstOrderCurve = linear && M > 0 && samples > 0 ? Array.from({ length: CURVE_POINTS + 1 }, (_, j) => ({ scale: (maxScale * j) / CURVE_POINTS, pinned: modelProbability((maxScale * j) / CURVE_POINTS, allDraws)! })) : [];

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
    solved: n,
    notSolved,
    firstOrder,
    pinned: sweep.find((p) => p.scale === 1)!.pinned,
    firstOrderPinned: modelProbability(1, mainModel),
    spreads,
    contactors,
    sweep,
    firstOrderCurve,
    rows,
    notes,
  };
}

/**
 * The first-order changes Σ_k g_k z_k of the recorded values beyond the spreads, for each source
 * (K rows of `size`, flattened) and in total. The hot loop of the summary: slots × values per draw.
 */
function firstOrderTerms(gradient: Array<Float64Array | null>, slotSource: Int32Array, z: Float64Array, K: number, size: number): { bySource: Float64Array; total: Float64Array } {
  const bySource = new Float64Array(K * size);
  const total = new Float64Array(size);
  for (let k = 0; k < gradient.length; k++) {
    const g = gradient[k];
    const zk = z[k]!;
    if (!g || zk === 0) continue;
    const offset = slotSource[k]! * size;
    for (let o = CONTACTOR_BASE; o < size; o++) bySource[offset + o] += g[o]! * zk;
  }
  for (let k = 0; k < K; k++) for (let o = CONTACTOR_BASE; o < size; o++) total[o] += bySource[k * size + o]!;
  return { bySource, total };
}

/** The eight spreads of the contactor values y0 + change (the first-order model of one draw). */
function spreadsOfContactors(y0: Float64Array, change: Float64Array, layout: ObservableLayout): Float64Array {
  const columns = [0, 1, 2, 3].map((j) => Array.from({ length: layout.contactors }, (_, c) => y0[contactorAt(layout, c) + j]! + change[contactorAt(layout, c) + j]!));
  return Float64Array.from(columns.flatMap((values) => {
    const s = spreadOf(values);
    return [s.cv, s.ratio];
  }));
}

function share(part: number, whole: number): number | null {
  return Number.isFinite(part) && Number.isFinite(whole) && whole > 0 ? part / whole : null;
}

function listed(items: string[], count: number): string {
  return `${items.slice(0, count).join(', ')}${items.length > count ? ` and ${items.length - count} more` : ''}`;
}

function mean(values: number[]): number {
  return values.length ? values.reduce((a, b) => a + b, 0) / values.length : NaN;
}

function spreadRecord(values: ArrayLike<number>): Record<SpreadKey, number> {
  return Object.fromEntries(SPREAD_KEYS.map((key, o) => [key, values[o]!])) as Record<SpreadKey, number>;
}

function sampleRow(chip: Chip, plan: TolerancePlan, z: Float64Array, index: number, outcome: Outcome, offsetSources: number[], nominal: ChipSolution, layout: ObservableLayout): SampleRow {
  const realised = realiseChip(chip, plan, z).chip;
  const offsets: Record<string, number> = {};
  for (const k of offsetSources) {
    const slot = plan.slots.findIndex((s) => s.source === k);
    offsets[plan.sources[k]!.label] = plan.sources[k]!.variation.size * z[slot]!;
  }
  const solved = outcome.values !== undefined;
  return {
    index,
    solved,
    ...(outcome.problem !== undefined ? { problem: outcome.problem } : {}),
    cold: solved && outcome.cold,
    allPinned: solved && layout.splits > 0 ? outcome.states.every((s) => s === 0) : null,
    leaking: solved ? nominal.splits.flatMap((s, i) => (outcome.states[i] !== 0 ? [`${s.id} (${STATE_CODES[outcome.states[i]!]})`] : [])) : [],
    spreads: solved ? spreadRecord(outcome.values) : null,
    flows: solved ? Array.from({ length: layout.contactors }, (_, c) => outcome.values[contactorAt(layout, c)]!) : [],
    viscosityA: realised?.phases.A.viscosity ?? NaN,
    viscosityB: realised?.phases.B.viscosity ?? NaN,
    interfacialTension: realised?.interfacialTension ?? null,
    contactAngle: realised?.contactAngle ?? null,
    offsets,
  };
}

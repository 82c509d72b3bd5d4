/**
 * The estimates of a tolerance study, each sampled beside its first-order figure: the
 * distributions of the eight spreads between contactors, each contactor's flow spread and leak
 * probability, and the probability that every split stays pinned at each tolerance multiple
 * (with the first-order curve over 0 … the largest multiple). Exports `spreadEstimates`,
 * `contactorEstimates`, `pinnedSweep` and the `EstimateInput` type. Numbers only.
 */
import { max as maxOf } from 'd3-array';
import { describeSample, sdAgrees, wilsonInterval } from './sampleStatistics.js';
import type { DrawPass } from './toleranceDraws.js';
import type { FirstOrderModel } from './toleranceFirstOrder.js';
import { SPREAD_KEYS, contactorAt, type Outcome, type SpreadKey } from './toleranceModel.js';
import type { ContactorEstimate, SpreadEstimate, SummaryInput, SweepPoint, ToleranceResult } from './toleranceSummary.js';

/** The names of the eight spreads, as the summary shows them. */
const SPREAD_LABELS: Record<SpreadKey, string> = {
  'total.cv': 'total flow, CV',
  'total.ratio': 'total flow, max/min',
  'flowA.cv': 'flow of A, CV',
  'flowA.ratio': 'flow of A, max/min',
  'flowB.cv': 'flow of B, CV',
  'flowB.ratio': 'flow of B, max/min',
  'holdup.cv': 'holdup of A, CV',
  'holdup.ratio': 'holdup of A, max/min',
};

/** Points of the first-order curve of the pinned probability. */
const CURVE_POINTS = 40;

/** What the estimates share: the study, its nominal values, the model, the pass over the draws at the given tolerances. */
export interface EstimateInput {
  input: SummaryInput;
  y0: Float64Array;
  model: FirstOrderModel;
  draws: DrawPass;
  /** The draws at the given tolerances (multiple 1). */
  main: SummaryInput['sampled'][number];
  /** Whether a first-order estimate is available. */
  linear: boolean;
}

/** Indices of the draws the first-order model is evaluated on: those solved (all when none are solved). */
export function modelIndices(samples: number, outcomes: Outcome[] | null): number[] {
  return Array.from({ length: samples }, (_, i) => i).filter((i) => outcomes === null || outcomes[i]!.values !== undefined);
}

/** The share of the draws `indices` with every split pinned under the first-order model, or null without one. */
export function modelProbability(e: EstimateInput, scale: number, indices: number[]): number | null {
  return e.linear && e.input.layout.splits > 0 && indices.length > 0 ? indices.filter((i) => e.model.allPinned(e.draws.splitChanges[i]!, scale)).length / indices.length : null;
}

function solvedValues(e: EstimateInput, o: number): number[] {
  return e.draws.mainSolved.flatMap((solved, i) => (solved ? [e.main.outcomes![i]!.values![o]!] : []));
}

export function spreadEstimates(e: EstimateInput): SpreadEstimate[] {
  const mainModel = modelIndices(e.input.samples, e.main.outcomes);
  return SPREAD_KEYS.map((key, o) => {
    const sampled = describeSample(solvedValues(e, o));
    const model = e.linear ? describeSample(mainModel.map((i) => e.draws.modelSpreads[i]![o]!)) : null;
    const firstOrderSpread = model ? { mean: model.mean, sd: model.sd } : null;
    return {
      key,
      label: SPREAD_LABELS[key],
      nominal: e.y0[o]!,
      firstOrder: firstOrderSpread,
      sampled,
      sdRatio: sampled && firstOrderSpread && firstOrderSpread.sd > 0 ? sampled.sd / firstOrderSpread.sd : null,
      agrees: firstOrderSpread ? sdAgrees(sampled, firstOrderSpread.sd) : null,
    };
  });
}

export function contactorEstimates(e: EstimateInput): ContactorEstimate[] {
  const { nominal, samples } = e.input;
  const { mainSolved, n, splitChanges } = e.draws;
  const { main, linear, y0 } = e;
  const splitOfContactor = new Map(nominal.splits.map((s, i) => [s.contactor, i]));
  const mainModel = modelIndices(samples, main.outcomes);
  return nominal.contactors.map((c, i) => {
    const s = splitOfContactor.get(c.id);
    const q0 = Math.abs(y0[contactorAt(i)]!);
    const leaks = s === undefined ? 0 : mainSolved.filter((solved, j) => solved && main.outcomes![j]!.states![s] !== 0).length;
    const modelLeaks = s === undefined || !linear || mainModel.length === 0 ? null : mainModel.filter((j) => !e.model.splitPinned(splitChanges[j]!, s, 1)).length / mainModel.length;
    const flows = describeSample(solvedValues(e, contactorAt(i)));
    const firstOrderSd = linear && q0 !== 0 ? Math.sqrt(e.model.valueVariance(contactorAt(i))) / q0 : null;
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
}

/** Every split pinned, at each tolerance multiple (sampled with Wilson limits, and under the model), and the model's curve. */
export function pinnedSweep(e: EstimateInput): Pick<ToleranceResult, 'sweep' | 'firstOrderCurve'> {
  const { samples, layout } = e.input;
  const M = layout.splits;
  const sweep: SweepPoint[] = e.input.sampled.map(({ scale, outcomes }) => {
    const solved = outcomes ? outcomes.filter((o) => o.values) : [];
    const allPinned = solved.filter((o) => o.states!.every((s) => s === 0)).length;
    return {
      scale,
      solved: solved.length,
      notSolved: outcomes ? outcomes.length - solved.length : 0,
      pinned: M > 0 && solved.length > 0 ? wilsonInterval(allPinned, solved.length) : null,
      firstOrderPinned: modelProbability(e, scale, modelIndices(samples, outcomes)),
    };
  });
  sweep.sort((a, b) => a.scale - b.scale);
  const maxScale = Math.max(2, maxOf(e.input.sampled, (s) => s.scale) ?? 0);
  const allDraws = modelIndices(samples, null);
  const firstOrderCurve = e.linear && M > 0 && samples > 0 ? Array.from({ length: CURVE_POINTS + 1 }, (_, j) => ({ scale: (maxScale * j) / CURVE_POINTS, pinned: modelProbability(e, (maxScale * j) / CURVE_POINTS, allDraws)! })) : [];
  return { sweep, firstOrderCurve };
}

/**
 * One pass over the draws of a tolerance study at the given tolerances: the first-order terms of
 * each draw by source, the model's spreads and split changes, the sums behind the covariances of
 * the solved values with each source's terms, and the rows of the sample table. Exports
 * `passOverDraws`, `spreadRecord` and the `DrawPass` type. Numbers only.
 */
import type { ChipSolution } from './chip.js';
import type { Chip } from '../network/model.js';
import { firstOrderTerms, spreadsOfContactors, windowOf, type FirstOrderModel } from './toleranceFirstOrder.js';
import {
  SPREAD_KEYS, STATE_CODES, contactorAt, realiseChip, realisedProperties, splitAt, standardDeviates, type ObservableLayout, type Outcome, type SpreadKey, type TolerancePlan,
} from './toleranceModel.js';
import type { SampleRow, SummaryInput } from './toleranceSummary.js';

export interface DrawPass {
  /** Whether each draw at the given tolerances was solved, and how many were. */
  mainSolved: boolean[];
  n: number;
  /** Targets of the covariance sums: the contactor flows, then the split window positions. */
  targets: number;
  /** Σy, Σy² per target, and Σl, Σy·l per source and target (index k·targets + t), over the solved draws. */
  sums: { y: Float64Array; yy: Float64Array; l: Float64Array; yl: Float64Array };
  /** Per draw (first-order model only): the changes of the split values, and the model's eight spreads. */
  splitChanges: Float64Array[];
  modelSpreads: Float64Array[];
  rows: SampleRow[];
}

export function passOverDraws(input: SummaryInput, model: FirstOrderModel, main: SummaryInput['sampled'][number], linear: boolean, y0: Float64Array): DrawPass {
  const { chip, plan, seed, samples, nominal, layout } = input;
  const N = layout.contactors;
  const M = layout.splits;
  const K = plan.sources.length;
  const { gradient } = model;
  const mainSolved = Array.from({ length: samples }, (_, i) => main.outcomes !== null && main.outcomes[i]!.values !== undefined);
  const n = mainSolved.filter(Boolean).length;
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
          const y = t < N ? outcome.values[contactorAt(t)]! - y0[contactorAt(t)]! : windowOf(outcome.values, t - N, layout).position - model.nominalWindows[t - N]!.position;
          sums.y[t] += y;
          sums.yy[t] += y * y;
          for (let k = 0; k < K; k++) {
            const e = bySource.subarray(k * layout.size, (k + 1) * layout.size);
            const l = t < N ? e[contactorAt(t)]! : model.positionChange(e, t - N);
            sums.l[k * targets + t] += l;
            sums.yl[k * targets + t] += y * l;
          }
        }
      }
    }
    if (outcome) rows.push(sampleRow(chip, plan, z, index, outcome, offsetSources, nominal, layout));
  }
  return { mainSolved, n, targets, sums, splitChanges, modelSpreads, rows };
}

export function spreadRecord(values: ArrayLike<number>): Record<SpreadKey, number> {
  return Object.fromEntries(SPREAD_KEYS.map((key, o) => [key, values[o]!])) as Record<SpreadKey, number>;
}

function sampleRow(chip: Chip, plan: TolerancePlan, z: Float64Array, index: number, outcome: Outcome, offsetSources: number[], nominal: ChipSolution, layout: ObservableLayout): SampleRow {
  const solved = outcome.values !== undefined;
  // A solved draw was realised; only an unsolved one may have been unrealisable (its properties NaN).
  const realised = solved || realiseChip(chip, plan, z).chip ? realisedProperties(chip, plan, z) : undefined;
  const offsets: Record<string, number> = {};
  for (const k of offsetSources) {
    const slot = plan.slots.findIndex((s) => s.source === k);
    offsets[plan.sources[k]!.label] = plan.sources[k]!.variation.size * z[slot]!;
  }
  return {
    index,
    solved,
    ...(outcome.problem !== undefined ? { problem: outcome.problem } : {}),
    cold: solved && outcome.cold,
    allPinned: solved && layout.splits > 0 ? outcome.states.every((s) => s === 0) : null,
    leaking: solved ? nominal.splits.flatMap((s, i) => (outcome.states[i] !== 0 ? [`${s.id} (${STATE_CODES[outcome.states[i]!]})`] : [])) : [],
    spreads: solved ? spreadRecord(outcome.values) : null,
    flows: solved ? Array.from({ length: layout.contactors }, (_, c) => outcome.values[contactorAt(c)]!) : [],
    viscosityA: realised?.viscosityA ?? NaN,
    viscosityB: realised?.viscosityB ?? NaN,
    interfacialTension: realised?.interfacialTension ?? null,
    contactAngle: realised?.contactAngle ?? null,
    offsets,
  };
}

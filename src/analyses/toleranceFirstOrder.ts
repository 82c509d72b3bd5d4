/**
 * The first-order model of a tolerance study: with derivatives g_k of the recorded values with
 * respect to the standard deviates z_k, the change of a draw is Σ_k g_k z_k and the variance of a
 * value Σ_k g_k² Var(z_k) (see ./toleranceSummary.ts for the source). Exports `FirstOrderModel`
 * (variances, split window positions and the pinned test under the model), `firstOrderTerms`
 * and `spreadsOfContactors`. Numbers only.
 */
import { spreadOf } from './chip.js';
import { CONTACTOR_BASE, contactorAt, deviateVariance, splitAt, type ObservableLayout, type TolerancePlan } from './toleranceModel.js';

/** A split's p_B − p_A and window, and its position p = (Δ − mid)/half: −1 at the low limit, +1 at the high one. */
export interface SplitWindow {
  delta: number;
  low: number;
  high: number;
  half: number;
  position: number;
}

export function windowOf(values: ArrayLike<number>, s: number, layout: ObservableLayout): SplitWindow {
  const at = splitAt(layout, s);
  const [delta, low, high] = [values[at]!, values[at + 1]!, values[at + 2]!];
  return { delta, low, high, half: (high - low) / 2, position: (delta - (low + high) / 2) / ((high - low) / 2) };
}

export class FirstOrderModel {
  /** Var(z_k) of each slot (0 where the slot has no tolerance). */
  readonly variance: number[];
  /** The splits' windows at nominal conditions. */
  readonly nominalWindows: SplitWindow[];

  constructor(
    private readonly plan: TolerancePlan,
    /** ∂y/∂z_k of each slot, null where it has no tolerance or its solve failed. */
    readonly gradient: ReadonlyArray<Float64Array | null>,
    private readonly layout: ObservableLayout,
    y0: Float64Array,
  ) {
    this.variance = plan.slots.map((s) => (s.variation.size > 0 ? deviateVariance(s.variation) : 0));
    this.nominalWindows = Array.from({ length: layout.splits }, (_, s) => windowOf(y0, s, layout));
  }

  /** First-order variance of recorded value o, from every source or from one. */
  valueVariance(o: number, source?: number): number {
    let sum = 0;
    this.plan.slots.forEach((slot, k) => {
      const g = this.gradient[k];
      if (g && (source === undefined || slot.source === source)) sum += g[o]! ** 2 * this.variance[k]!;
    });
    return sum;
  }

  /** First-order change of a window position from changes e of the recorded values. */
  positionChange(e: ArrayLike<number>, s: number): number {
    const w = this.nominalWindows[s]!;
    const at = splitAt(this.layout, s);
    if (!(w.half > 0)) return 0;
    return (e[at]! - (e[at + 1]! + e[at + 2]!) / 2) / w.half - (w.position * (e[at + 2]! - e[at + 1]!)) / (2 * w.half);
  }

  /** Split s stays pinned under the model, given the split part of a draw's changes at `scale` times the tolerances. */
  splitPinned(changes: Float64Array, s: number, scale: number): boolean {
    const w = this.nominalWindows[s]!;
    const delta = w.delta + scale * changes[3 * s]!;
    return delta >= w.low + scale * changes[3 * s + 1]! && delta <= w.high + scale * changes[3 * s + 2]!;
  }

  allPinned(changes: Float64Array, scale: number): boolean {
    for (let s = 0; s < this.layout.splits; s++) if (!this.splitPinned(changes, s, scale)) return false;
    return true;
  }
}

/**
 * The first-order changes Σ_k g_k z_k of the recorded values beyond the spreads, for each source
 * (K rows of `size`, flattened) and in total. The hot loop of the summary: slots × values per draw.
 */
export function firstOrderTerms(gradient: ReadonlyArray<Float64Array | null>, slotSource: Int32Array, z: Float64Array, K: number, size: number): { bySource: Float64Array; total: Float64Array } {
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
export function spreadsOfContactors(y0: Float64Array, change: Float64Array, layout: ObservableLayout): Float64Array {
  const columns = [0, 1, 2, 3].map((j) => Array.from({ length: layout.contactors }, (_, c) => y0[contactorAt(c) + j]! + change[contactorAt(c) + j]!));
  return Float64Array.from(columns.flatMap((values) => {
    const s = spreadOf(values);
    return [s.cv, s.ratio];
  }));
}

/**
 * Which tolerance matters most: each source's share of the first-order variance of the contactor
 * flows (each weighed by 1/q₀², so that every contactor counts by its relative spread) and of
 * the split window positions, checked on the samples by the covariance of the solved values with
 * each source's first-order terms. Exports `rankSources` and `sampledShareNoise`. Numbers only.
 */
import { Z95 } from './sampleStatistics.js';
import type { DrawPass } from './toleranceDraws.js';
import type { FirstOrderModel } from './toleranceFirstOrder.js';
import { contactorAt, type ObservableLayout, type TolerancePlan } from './toleranceModel.js';
import type { SourceEstimate, ToleranceResult } from './toleranceSummary.js';

/**
 * A sampled share below Z95²/n is reported as 0. The sample covariance of y with a source's term
 * l has a standard error of about sd(l)·sd(y)/√n, so a share s ≈ Var(l)/Var(y) is known to about
 * √(s/n); below Z95²/n it lies within its own 95 % noise and cannot be told from none.
 */
export function sampledShareNoise(n: number): number {
  return n > 1 ? (Z95 * Z95) / n : Infinity;
}

/** The sources, most important first, and the shares of the sampled variance their first-order terms follow. */
export function rankSources(
  plan: TolerancePlan, layout: ObservableLayout, y0: Float64Array, model: FirstOrderModel, draws: DrawPass, linear: boolean,
): { sources: SourceEstimate[]; followed: ToleranceResult['followed'] } {
  const N = layout.contactors;
  const M = layout.splits;
  const { n, sums, targets } = draws;
  const { gradient, variance } = model;
  const flowWeight = Array.from({ length: N }, (_, c) => {
    const q = y0[contactorAt(c)]!;
    return q !== 0 ? 1 / (q * q) : 0;
  });
  const covariance = (k: number, t: number) => (n > 1 ? (sums.yl[k * targets + t]! - (sums.y[t]! * sums.l[k * targets + t]!) / n) / (n - 1) : NaN);
  const sampledVariance = (t: number) => (n > 1 ? (sums.yy[t]! - sums.y[t]! ** 2 / n) / (n - 1) : NaN);
  const flowVariance = (source?: number) => mean(Array.from({ length: N }, (_, c) => flowWeight[c]! * model.valueVariance(contactorAt(c), source)));
  const windowVariance = (source?: number) =>
    mean(Array.from({ length: M }, (_, s) => plan.slots.reduce((sum, slot, k) => (gradient[k] && (source === undefined || slot.source === source) ? sum + model.positionChange(gradient[k]!, s) ** 2 * variance[k]! : sum), 0)));
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
  return { sources, followed };
}

function share(part: number, whole: number): number | null {
  return Number.isFinite(part) && Number.isFinite(whole) && whole > 0 ? part / whole : null;
}

function mean(values: number[]): number {
  return values.length ? values.reduce((a, b) => a + b, 0) / values.length : NaN;
}

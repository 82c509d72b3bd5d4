/**
 * Statistics of sampled figures: the Wilson interval of a proportion, quantiles, moments with
 * the standard error of a sample standard deviation, and whether a sampled standard deviation
 * agrees with an expected one. Exports `wilsonInterval`, `quantile`, `describeSample`,
 * `sdAgrees`, `Z95` and their result types. Pure functions.
 */

/** Two-sided 95 % normal quantile, Φ⁻¹(0.975). */
export const Z95 = 1.959963984540054;

export interface ProbabilityEstimate {
  count: number;
  of: number;
  value: number;
  /** Wilson score interval, 95 %. */
  low: number;
  high: number;
}

/**
 * Wilson score interval for a binomial proportion (Wilson, J. Am. Stat. Assoc. 22, 209–212,
 * 1927): centre (p̂ + z²/2n)/(1 + z²/n), half-width z/(1 + z²/n)·√(p̂(1−p̂)/n + z²/4n²). Unlike
 * p̂ ± z√(p̂(1−p̂)/n) it stays inside [0, 1] and is not empty when p̂ is 0 or 1.
 */
export function wilsonInterval(count: number, of: number, z = Z95): ProbabilityEstimate {
  if (of === 0) return { count, of, value: NaN, low: 0, high: 1 };
  const p = count / of;
  const z2 = z * z;
  const denominator = 1 + z2 / of;
  const centre = (p + z2 / (2 * of)) / denominator;
  const half = (z / denominator) * Math.sqrt((p * (1 - p)) / of + z2 / (4 * of * of));
  // At no count (or every one) a limit is exactly 0 (or 1); computed, it would be rounding noise.
  return { count, of, value: p, low: count === 0 ? 0 : Math.max(0, centre - half), high: count === of ? 1 : Math.min(1, centre + half) };
}

export interface SampleStatistics {
  count: number;
  mean: number;
  /** Sample standard deviation (divisor n − 1). */
  sd: number;
  /** Standard error of `sd`; see `describeSample`. */
  sdError: number;
  min: number;
  p05: number;
  median: number;
  p95: number;
  max: number;
}

/** Quantile by linear interpolation between order statistics (Hyndman & Fan, Am. Stat. 50(4), 1996, definition 7). */
export function quantile(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return NaN;
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo]! + (h - lo) * (sorted[hi]! - sorted[lo]!);
}

/**
 * Moments, quantiles and the standard error of the sample standard deviation s. The variance of
 * the sample variance is Var(s²) = (μ₄ − σ⁴(n−3)/(n−1))/n for any distribution with a fourth
 * moment (e.g. Mood, Graybill & Boes, Introduction to the Theory of Statistics, 3rd ed., 1974,
 * §VI.4, from memory); by the delta method SE(s) = √Var(s²)/(2s), with μ₄ and σ² replaced by
 * their sample values. For normal outputs this is s/√(2(n−1)) to leading order.
 */
export function describeSample(values: readonly number[]): SampleStatistics | null {
  const n = values.length;
  if (n < 2) return null;
  const mean = values.reduce((a, b) => a + b, 0) / n;
  let m2 = 0;
  let m4 = 0;
  for (const v of values) {
    const d = (v - mean) ** 2;
    m2 += d;
    m4 += d * d;
  }
  const variance = m2 / (n - 1);
  const sd = Math.sqrt(variance);
  const varianceOfVariance = Math.max(0, (m4 / n - variance * variance * ((n - 3) / (n - 1))) / n);
  const sorted = [...values].sort((a, b) => a - b);
  return {
    count: n,
    mean,
    sd,
    sdError: sd > 0 ? Math.sqrt(varianceOfVariance) / (2 * sd) : 0,
    min: sorted[0]!,
    p05: quantile(sorted, 0.05),
    median: quantile(sorted, 0.5),
    p95: quantile(sorted, 0.95),
    max: sorted[n - 1]!,
  };
}

/** Whether a sampled sd agrees with an expected σ within z standard errors (at least 10 samples). */
export function sdAgrees(sampled: SampleStatistics | null, expected: number, z = Z95): boolean | null {
  if (!sampled || sampled.count < 10 || !Number.isFinite(expected)) return null;
  return Math.abs(sampled.sd - expected) <= z * sampled.sdError + 1e-12 * Math.max(sampled.sd, expected);
}

/**
 * Tests of src/analyses/sampleStatistics.ts against published intervals and distributions whose
 * moments are known in closed form.
 */
import { describe, expect, it } from 'vitest';
import { describeSample, quantile, sdAgrees, wilsonInterval } from '../../src/analyses/sampleStatistics.js';

describe('sample statistics', () => {
  it('wilsonInterval gives the published interval for 0 of 10 and 81 of 263', () => {
    // Newcombe, Statistics in Medicine 17, 857–872, 1998, table I (method 3, score interval
    // without continuity correction; values from memory): 0/10 → 0 to 0.2775; 81/263 → 0.2553 to 0.3662.
    const a = wilsonInterval(0, 10);
    expect(a.low).toBe(0);
    expect(a.high).toBeCloseTo(0.2775, 4);
    const b = wilsonInterval(81, 263);
    expect(b.low).toBeCloseTo(0.2553, 4);
    expect(b.high).toBeCloseTo(0.3662, 4);
  });

  it('describeSample gives the sd error s/√(2(n−1)) to leading order for normal-like data', () => {
    // Symmetric three-point data with kurtosis 3 (values ±√3 with probability 1/6 each, 0 with 2/3)
    // have μ₄ = 3σ⁴, the normal value, so Var(s²) → 2σ⁴/(n−1) and SE(s) → σ/√(2(n−1)).
    const values = Array.from({ length: 600 }, (_, i) => (i % 6 === 0 ? Math.sqrt(3) : i % 6 === 3 ? -Math.sqrt(3) : 0));
    const d = describeSample(values)!;
    expect(d.sd).toBeCloseTo(1, 2);
    expect(d.sdError / (d.sd / Math.sqrt(2 * 599))).toBeCloseTo(1, 2);
  });
});

describe('quantile', () => {
  it('interpolates linearly between order statistics (Hyndman & Fan definition 7)', () => {
    // For 1, 2, 3, 4: h = 3p, so p = 0.5 → 2.5 and p = 0.05 → 1 + 0.15 = 1.15.
    expect(quantile([1, 2, 3, 4], 0.5)).toBe(2.5);
    expect(quantile([1, 2, 3, 4], 0.05)).toBeCloseTo(1.15, 14);
    expect(quantile([7], 0.95)).toBe(7);
  });
});

describe('sdAgrees', () => {
  it('judges nothing with fewer than 10 samples and accepts a difference within 1.96 standard errors', () => {
    const d = describeSample(Array.from({ length: 600 }, (_, i) => (i % 2 === 0 ? 1 : -1)))!;
    expect(sdAgrees(describeSample([1, 2, 3]), 1)).toBeNull();
    expect(sdAgrees(d, d.sd + 1.9 * d.sdError)).toBe(true);
    expect(sdAgrees(d, d.sd + 2.1 * d.sdError + 1e-9)).toBe(false);
  });
});

describe('wilsonInterval at the ends', () => {
  it('puts the lower limit at exactly 0 for no count and the upper at exactly 1 for every one', () => {
    // Computed, 0 of 7 gave 2.8e-17 and 13 of 13 gave 1 − 1.1e-16: rounding printed as a result.
    for (const n of [7, 9, 13, 25, 1000]) {
      expect(wilsonInterval(0, n).low, `0 of ${n}`).toBe(0);
      expect(wilsonInterval(n, n).high, `${n} of ${n}`).toBe(1);
    }
  });
});

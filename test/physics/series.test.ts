/**
 * Tests of src/physics/series.ts: tails of Σ n^-s over odd n, and the 16-point Gauss–Legendre rule.
 * References are brute-force sums computed here and closed forms from the literature.
 */
import { describe, expect, it } from 'vitest';
import { gaussLegendre16, oddPowerTail } from '../../src/physics/series.js';

/**
 * Σ_{odd n ≥ N} n^-s summed term by term from the far end (small terms first) with compensated
 * (Kahan) summation over 10⁶ terms, plus the midpoint-rule estimate of what lies beyond,
 * (1/2)∫_{M−1}^∞ x^-s dx with M the first odd index left out; that estimate's own error is below
 * 1e-20 of the sum for s ≥ 4.
 */
function bruteOddPowerTail(s: number, N: number): number {
  const terms = 1_000_000;
  const last = N + 2 * (terms - 1);
  let sum = (last + 1) ** (1 - s) / (2 * (s - 1));
  let carry = 0;
  for (let n = last; n >= N; n -= 2) {
    const y = n ** -s - carry;
    const t = sum + y;
    carry = t - sum - y;
    sum = t;
  }
  return sum;
}

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

// λ(s) = Σ_{k≥0} (2k+1)^-s = (1 − 2^-s) ζ(s) (Abramowitz & Stegun, 1964, eq. 23.2.20 (from memory)),
// with ζ(2) = π²/6 and ζ(4) = π⁴/90 (Euler; A&S 1964, §23.2 (from memory)); ζ(5) = 1.036927755143370
// (A&S 1964, table 23.3 (from memory)).
const LAMBDA_2 = Math.PI ** 2 / 8;
const LAMBDA_4 = Math.PI ** 4 / 96;
const LAMBDA_5 = (31 / 32) * 1.03692775514337;

describe('oddPowerTail', () => {
  it('sums the whole series over odd n to the closed forms λ(2) = π²/8, λ(4) = π⁴/96 and λ(5) = (31/32)ζ(5)', () => {
    // A&S 1964, eq. 23.2.20 with Euler's ζ(2), ζ(4) (from memory).
    expect(relativeError(oddPowerTail(2, 1), LAMBDA_2)).toBeLessThan(1e-14);
    expect(relativeError(oddPowerTail(4, 1), LAMBDA_4)).toBeLessThan(1e-14);
    expect(relativeError(oddPowerTail(5, 1), LAMBDA_5)).toBeLessThan(1e-14);
  });

  it('is accurate to 1e-15 relative once the first index is in the thousands, where the cross-section engine uses it', () => {
    // Reference: bruteOddPowerTail. twoLayerFlow and rectConductance start their tails where every tanh has saturated.
    // Measured: at most 1.6e-16. From N ≥ 1001 the first omitted Euler–Maclaurin term is below
    // 1e-34 of the sum, so rounding alone remains: 1e-15 is about 5 ulps.
    for (const s of [4, 5]) {
      for (const N of [1001, 3001, 100001]) {
        expect(relativeError(oddPowerTail(s, N), bruteOddPowerTail(s, N)), `s = ${s}, N = ${N}`).toBeLessThan(1e-15);
      }
    }
  });

  describe('regressions of fixed defects', () => {
    it('agrees with brute-force summation to 1e-14 relative for s = 4, 5, 6 and every start index from 1 to 1001', () => {
      // Reference: bruteOddPowerTail (10⁶ terms). Measured: at most 8.8e-16 (s = 5, N = 1). With
      // Euler–Maclaurin through B12 from X = N + 32 (A&S 1964, eq. 23.1.30) the first omitted term,
      // (B14 h¹³/14!) g⁽¹³⁾(X), is below 1e-18 of the tail for s ≤ 6 (largest at N = 9), so what remains is rounding in
      // the 16 direct terms, the correction and the compensated reference: a few ulps. 1e-14 (about
      // 45 ulps) allows for that. The defect fixed: eight direct terms and the series through B6 from
      // X = N + 16 left 1.8e-12 at N = 1 and 8.3e-11 at N = 9 (s = 4), measured on that version.
      for (const s of [4, 5, 6]) {
        for (const N of [1, 3, 5, 9, 17, 33, 101, 1001]) {
          expect(relativeError(oddPowerTail(s, N), bruteOddPowerTail(s, N)), `s = ${s}, N = ${N}`).toBeLessThan(1e-14);
        }
      }
    });
  });
});

describe('gaussLegendre16', () => {
  const integrate = (f: (x: number) => number, lo: number, hi: number): number => {
    const out = new Float64Array(1);
    gaussLegendre16((x, into) => (into[0] = f(x)), lo, hi, 1, out, new Float64Array(1));
    return out[0]!;
  };

  it('integrates every polynomial of degree up to 31 exactly (to rounding)', () => {
    // An n-point Gauss–Legendre rule is exact for degree 2n − 1 (A&S 1964, §25.4 (from memory)).
    for (let degree = 0; degree <= 31; degree++) {
      const exact = (3 ** (degree + 1) - (-1) ** (degree + 1)) / (degree + 1);
      expect(relativeError(integrate((x) => x ** degree, -1, 3), exact), `degree ${degree}`).toBeLessThan(1e-14);
    }
  });

  it('is not exact for degree 32, so it really is a 16-point rule', () => {
    // The error of the n-point rule is ∝ f^(2n) (A&S 1964, §25.4 (from memory)); nonzero for x^32.
    expect(relativeError(integrate((x) => x ** 32, -1, 1), 2 / 33)).toBeGreaterThan(1e-8);
  });

  it('fills each component of a vector-valued integrand', () => {
    // ∫₀^π sin = 2, ∫₀^π cos = 0, ∫₀^π 1 = π (calculus).
    const out = new Float64Array(3);
    gaussLegendre16(
      (x, into) => {
        into[0] = Math.sin(x);
        into[1] = Math.cos(x);
        into[2] = 1;
      },
      0,
      Math.PI,
      3,
      out,
      new Float64Array(3),
    );
    expect(out[0]).toBeCloseTo(2, 13);
    expect(out[1]).toBeCloseTo(0, 13);
    expect(out[2]).toBeCloseTo(Math.PI, 14);
  });
});

/**
 * Summation helpers for the Fourier series of the cross-section engine.
 * Exports `oddPowerTail` (tails of Σ n^-s over odd n, in closed form by Euler–Maclaurin) and
 * `gaussLegendre16` (fixed nodes and weights). Knows nothing about channels or fluids.
 */

/** Bernoulli numbers B2 … B12 (Abramowitz & Stegun, 1964, table 23.2). */
const BERNOULLI = [1 / 6, -1 / 30, 1 / 42, -1 / 30, 5 / 66, -691 / 2730];

/**
 * Σ_{k≥0} (N + 2k)^(-s) for odd N ≥ 1 and s ≥ 2: the tail of a series over odd integers.
 * Sixteen terms are summed directly, the rest by the Euler–Maclaurin formula with step h = 2
 * (Abramowitz & Stegun, 1964, eq. 23.1.30) through the B12 term; at X = N + 32 ≥ 33 the first
 * omitted term is below 1e-16 of the result for s ≤ 6.
 */
export function oddPowerTail(s: number, N: number): number {
  const key = s * 1e9 + N;
  let value = tailCache.get(key);
  if (value === undefined) {
    value = computeOddPowerTail(s, N);
    if (tailCache.size > 4096) tailCache.clear();
    tailCache.set(key, value);
  }
  return value;
}

/** The series evaluator asks for the same few tails again and again. */
const tailCache = new Map<number, number>();

function computeOddPowerTail(s: number, N: number): number {
  let direct = 0;
  let n = N;
  for (let k = 0; k < 16; k++, n += 2) direct += n ** -s;
  const X = n;
  const h = 2;
  // g(x) = x^-s, g^(m)(X) = (−1)^m s(s+1)…(s+m−1) X^-(s+m).
  let correction = X ** (1 - s) / ((s - 1) * h) + X ** -s / 2;
  let rising = s; // s(s+1)…(s+m−1) for m = 1
  let factorial = 2; // (2j)!
  let hPower = h; // h^(2j−1)
  for (let j = 1; j <= BERNOULLI.length; j++) {
    const m = 2 * j - 1;
    const derivative = -rising * X ** -(s + m); // odd m: sign (−1)^m = −1
    correction -= ((BERNOULLI[j - 1]! * hPower) / factorial) * derivative;
    rising *= (s + m) * (s + m + 1);
    factorial *= (2 * j + 1) * (2 * j + 2);
    hPower *= h * h;
  }
  return direct + correction;
}

/** 16-point Gauss–Legendre nodes on [-1, 1] (Abramowitz & Stegun, 1964, table 25.4), as ± pairs. */
const GL16_X = [
  0.0950125098376374, 0.2816035507792589, 0.4580167776572274, 0.6178762444026438,
  0.755404408355003, 0.8656312023878318, 0.9445750230732326, 0.9894009349916499,
];
const GL16_W = [
  0.1894506104550685, 0.1826034150449236, 0.1691565193950025, 0.1495959888165767,
  0.1246289712555339, 0.0951585116824928, 0.0622535239386479, 0.0271524594117541,
];

/** ∫ f over [lo, hi] by 16-point Gauss–Legendre, for a vector-valued f written into `out`. */
export function gaussLegendre16(
  f: (x: number, into: Float64Array) => void,
  lo: number,
  hi: number,
  width: number,
  out: Float64Array,
  scratch: Float64Array,
): void {
  const mid = 0.5 * (lo + hi);
  const half = 0.5 * (hi - lo);
  for (let i = 0; i < width; i++) out[i] = 0;
  for (let k = 0; k < 8; k++) {
    for (const sign of [-1, 1]) {
      f(mid + sign * half * GL16_X[k]!, scratch);
      for (let i = 0; i < width; i++) out[i] += GL16_W[k]! * half * scratch[i]!;
    }
  }
}

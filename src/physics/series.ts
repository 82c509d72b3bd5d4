/**
 * Summation helpers for the Fourier series of the cross-section engine.
 * Exports `oddPowerTail` (tails of Σ n^-s over odd n, in closed form by Euler–Maclaurin) and
 * `gaussLegendre16` (fixed nodes and weights). Knows nothing about channels or fluids.
 */

/**
 * Σ_{k≥0} (N + 2k)^(-s) for odd N ≥ 1 and s ≥ 2: the tail of a series over odd integers.
 * Eight terms are summed directly, the rest by the Euler–Maclaurin formula with step h = 2
 * (Abramowitz & Stegun, 1964, eq. 23.1.30) through the B6 term; the next term is below
 * 1e-15 of the result for X ≥ 17.
 */
export function oddPowerTail(s: number, N: number): number {
  let sum = 0;
  let n = N;
  for (let k = 0; k < 8; k++, n += 2) sum += n ** -s;
  const X = n;
  const h = 2;
  // g(x) = x^-s; g'(x) = -s x^-(s+1); g'''(x) = -s(s+1)(s+2) x^-(s+3); g^(5) likewise.
  const g1 = -s * X ** -(s + 1);
  const g3 = -s * (s + 1) * (s + 2) * X ** -(s + 3);
  const g5 = -s * (s + 1) * (s + 2) * (s + 3) * (s + 4) * X ** -(s + 5);
  const integral = X ** (1 - s) / (s - 1);
  const B2 = 1 / 6;
  const B4 = -1 / 30;
  const B6 = 1 / 42;
  sum +=
    integral / h +
    X ** -s / 2 -
    ((B2 * h) / 2) * g1 -
    ((B4 * h ** 3) / 24) * g3 -
    ((B6 * h ** 5) / 720) * g5;
  return sum;
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

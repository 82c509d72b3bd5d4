/**
 * Fully developed laminar flow of two immiscible liquids side by side in a rectangular channel,
 * with a flat interface: the exact Fourier-series solution of the Stokes equation.
 * Exports `twoLayerFlow` (per-phase flow per unit pressure gradient and its holdup derivative)
 * and `twoLayerPlates` (the closed form between infinitely deep plates). SI units only; no I/O.
 *
 * Geometry: the layers lie across the `across` dimension s ∈ [0, S] (phase A in 0 < s < αS),
 * the interface spans the `along` dimension t ∈ [0, L]. For layers side by side in a channel of
 * width W and depth D, S = W and L = D; for layers one above the other, S = D and L = W.
 */
import { SATURATED_HALF_ARGUMENT } from './constants.js';
import { gaussLegendre16, oddPowerTail } from './series.js';
import { min as minOf } from 'd3-array';

export interface TwoLayerInput {
  /** Dimension across which the two layers lie, m. */
  across: number;
  /** Dimension that the interface spans, m. */
  along: number;
  /** Holdup α of phase A: the fraction of `across` that phase A fills, in (0, 1). */
  holdup: number;
  /** Dynamic viscosities, Pa·s. */
  muA: number;
  muB: number;
}

export interface TwoLayerFlow {
  /** Flow of each phase per unit pressure gradient G = −dp/dx, m⁴/(Pa·s): Q_i = G·k_i. */
  kA: number;
  kB: number;
  /** Derivatives with respect to the holdup α, m⁴/(Pa·s). */
  dkA: number;
  dkB: number;
  /** How many series terms were summed directly, and how many were integrated. */
  terms: number;
  integrated: number;
}

/** Scratch vectors reused by every call (the evaluator is not re-entrant). */
const SUM = new Float64Array(4);
const TERM = new Float64Array(4);

/** Below this series index everything is summed term by term. */
const DIRECT_TERMS = 201;
/** Length scale (in terms of n) above which a smooth summand may be integrated instead of summed. */
const SMOOTH_SCALE = 300;

/** 1 − tanh(x)/x, accurate for small x (series through x⁸, then direct). */
function oneMinusTanhOverX(x: number, tanhX: number): number {
  if (x < 0.02) {
    const x2 = x * x;
    return x2 * (1 / 3 - x2 * (2 / 15 - x2 * (17 / 315 - x2 * (62 / 2835))));
  }
  return 1 - tanhX / x;
}

/** Constants of mode n (odd), shared by the flows here, the point values of ./field.ts and the depth averages of ./profile.ts. */
export interface ModeConstants {
  /** λ = nπ/L, 1/m. */
  lambda: number;
  /** m = 4/(nπλ²). */
  m: number;
  /** 2/(nπ): the depth average of sin(nπt/L). */
  weight: number;
  /** exp(−λa), exp(−λb). */
  ea: number;
  eb: number;
  /** tanh(λa/2), tanh(λb/2), tanh(λa), tanh(λb), from decaying exponentials only. */
  ta: number;
  tb: number;
  Ta: number;
  Tb: number;
  /** The interface value f_I = m (t_a + t_b) T_a T_b / (μ_A T_b + μ_B T_a). */
  fI: number;
}

/** The constants of mode n for layers a (phase A) and b (phase B) across, interface span L (see `mode`). */
export function modeConstants(n: number, a: number, b: number, L: number, muA: number, muB: number): ModeConstants {
  const lambda = (n * Math.PI) / L;
  const m = 4 / (n * Math.PI * lambda * lambda);
  const ea = Math.exp(-lambda * a);
  const eb = Math.exp(-lambda * b);
  const ta = -Math.expm1(-lambda * a) / (1 + ea);
  const tb = -Math.expm1(-lambda * b) / (1 + eb);
  const Ta = -Math.expm1(-2 * lambda * a) / (1 + ea * ea);
  const Tb = -Math.expm1(-2 * lambda * b) / (1 + eb * eb);
  return { lambda, m, weight: 2 / (n * Math.PI), ea, eb, ta, tb, Ta, Tb, fI: (m * (ta + tb) * Ta * Tb) / (muA * Tb + muB * Ta) };
}

/**
 * One Fourier mode n (odd) of the two-layer problem, per unit pressure gradient.
 *
 * The velocity is u(s,t) = Σ_n f_n(s) sin(nπt/L). With λ = nπ/L and m = 4/(nπλ²), each mode
 * solves μ_i (f'' − λ² f) = −4/(nπ) in its layer, f = 0 at both walls, f and μ f' continuous at
 * the interface s = a. Written with f_I the interface value,
 *   f_A(s) = (m/μ_A)(1 − cosh(λ(s − a/2))/cosh(λa/2)) + f_I sinh(λs)/sinh(λa),
 *   f_I = m (t_a + t_b) T_a T_b / (μ_A T_b + μ_B T_a),  t_x = tanh(λx/2), T_x = tanh(λx),
 * and its flow per layer is q_A = (2L/(nπ)) [ (m/μ_A) a (1 − t_a/(λa/2)) + f_I t_a/λ ].
 * Every term is positive, so nothing cancels for thin layers or extreme aspect ratios, and only
 * decaying exponentials appear (tanh via exp(−λx)). Derivation: separation of variables for
 * Poisson's equation in a rectangle (White, Viscous Fluid Flow, 3rd ed., 2006, §3-3.3) applied
 * layer by layer with the interface conditions of two immiscible liquids (Bird, Stewart &
 * Lightfoot, Transport Phenomena, 2nd ed., 2002, problem 2B.7).
 *
 * Writes [q_A, q_B, dq_A/da, dq_B/da] into `out`.
 */
function mode(n: number, a: number, b: number, L: number, muA: number, muB: number, out: Float64Array): void {
  const { lambda, m, ea, eb, ta, tb, Ta, Tb, fI } = modeConstants(n, a, b, L, muA, muB);
  const K = (2 * L) / (n * Math.PI);
  const sa = (4 * ea) / ((1 + ea) * (1 + ea)); // sech²(λa/2)
  const sb = (4 * eb) / ((1 + eb) * (1 + eb));
  const Ea = ea * ea;
  const Eb = eb * eb;
  const Sa = (4 * Ea) / ((1 + Ea) * (1 + Ea)); // sech²(λa)
  const Sb = (4 * Eb) / ((1 + Eb) * (1 + Eb));

  const N = ta + tb;
  const P = Ta * Tb;
  const Dn = muA * Tb + muB * Ta;

  const xa = 0.5 * lambda * a;
  const xb = 0.5 * lambda * b;
  out[0] = K * ((m / muA) * a * oneMinusTanhOverX(xa, ta) + (fI * ta) / lambda);
  out[1] = K * ((m / muB) * b * oneMinusTanhOverX(xb, tb) + (fI * tb) / lambda);

  const dN = 0.5 * lambda * (sa - sb);
  const dP = lambda * (Sa * Tb - Ta * Sb);
  const dDn = lambda * (muB * Sa - muA * Sb);
  const dfI = (m * (dN * P * Dn + N * dP * Dn - N * P * dDn)) / (Dn * Dn);
  out[2] = K * ((m / muA) * ta * ta + (dfI * ta) / lambda + 0.5 * fI * sa);
  out[3] = K * (-(m / muB) * tb * tb + (dfI * tb) / lambda - 0.5 * fI * sb);
}

/**
 * Coefficients of the large-n form of a mode, where every tanh has saturated to 1:
 * q_A = c4A n⁻⁴ + c5A n⁻⁵ with c4A = 8L³a/(π⁴μ_A), c5A = (16L⁴/π⁵)(1/(μ_A+μ_B) − 1/μ_A),
 * and likewise for B; the derivatives with respect to a keep only the n⁻⁴ terms.
 */
function asymptoticCoefficients(a: number, b: number, L: number, muA: number, muB: number) {
  const c4 = (8 * L ** 3) / Math.PI ** 4;
  const c5 = (16 * L ** 4) / Math.PI ** 5;
  return {
    c4: [(c4 * a) / muA, (c4 * b) / muB, c4 / muA, -c4 / muB],
    c5: [c5 * (1 / (muA + muB) - 1 / muA), c5 * (1 / (muA + muB) - 1 / muB), 0, 0],
  };
}

/**
 * Per-phase flow per unit pressure gradient in a rectangular channel with two layers, and its
 * derivative with respect to holdup.
 *
 * Summation: modes are summed directly until every tanh has saturated (then the rest of the
 * series is the n⁻⁴, n⁻⁵ form, summed in closed form by `oddPowerTail`). Where saturation would
 * need more than ~200 terms (a layer thin compared with `along`), the summand is by then a
 * smooth function of n and the rest up to saturation is integrated by Gauss–Legendre panels with
 * the Euler–Maclaurin midpoint corrections through h⁴ (Abramowitz & Stegun, 1964, eq. 23.1.32). The result is
 * accurate to about 1e-12 relative for any aspect ratio and holdup in (0, 1), at a cost bounded
 * independently of both.
 */
export function twoLayerFlow(input: TwoLayerInput): TwoLayerFlow {
  const { across: S, along: L, holdup, muA, muB } = input;
  const a = holdup * S;
  const b = (1 - holdup) * S;
  if (!(holdup > 0 && holdup < 1) || !(S > 0) || !(L > 0) || !(muA > 0) || !(muB > 0)) {
    throw new RangeError(`twoLayerFlow needs 0 < holdup < 1 and positive sizes and viscosities (holdup ${holdup})`);
  }
  const thin = Math.min(a, b);
  const sum = SUM.fill(0);
  const term = TERM;

  // Odd index from which every tanh is saturated.
  const nSaturated = oddAtLeast((2 * SATURATED_HALF_ARGUMENT * L) / (Math.PI * thin));
  const smoothScale = (len: number) => L / (Math.PI * len);
  const saturatedAt = (n: number, len: number) => (n * Math.PI * len) / (2 * L) >= SATURATED_HALF_ARGUMENT;

  let n = 1;
  let terms = 0;
  for (; n < nSaturated; n += 2) {
    if (n >= DIRECT_TERMS) {
      const smoothEnough = (saturatedAt(n, a) || smoothScale(a) >= SMOOTH_SCALE) && (saturatedAt(n, b) || smoothScale(b) >= SMOOTH_SCALE);
      if (smoothEnough) break;
    }
    mode(n, a, b, L, muA, muB, term);
    for (let i = 0; i < 4; i++) sum[i] += term[i]!;
    terms++;
  }

  const { c4, c5 } = asymptoticCoefficients(a, b, L, muA, muB);
  let integrated = 0;
  if (n < nSaturated) {
    // Σ_{odd k in [n, nSaturated)} f(k) by the midpoint Euler–Maclaurin formula with step 2:
    // (1/2)[∫_{n−1}^{nSaturated−1} f + (1/6)(f'(n−1) − f'(nSaturated−1))]; the summand itself is
    // integrated (all its flow terms are positive), never its difference from the large-n form,
    // which would cancel catastrophically where that form is far from valid.
    const summand = (x: number, into: Float64Array) => {
      mode(x, a, b, L, muA, muB, into);
      integrated++;
    };
    const panel = new Float64Array(4);
    const scratch = new Float64Array(4);
    const start = n - 1;
    const end = nSaturated - 1;
    let lo = start;
    while (lo < end) {
      const active = [a, b].filter((len) => !saturatedAt(lo, len)).map(smoothScale);
      const scale = minOf(active) ?? Infinity;
      const hi = Math.min(end, lo + Math.min(lo, 2 * scale));
      gaussLegendre16(summand, lo, hi, 4, panel, scratch);
      for (let i = 0; i < 4; i++) sum[i] += 0.5 * panel[i]!;
      lo = hi;
    }
    // Endpoint corrections of the midpoint rule through the h⁴ term, with f' and f''' from
    // central differences of unit step (the summand varies on scales of hundreds).
    const f2m = new Float64Array(4);
    const f1m = new Float64Array(4);
    const f1p = new Float64Array(4);
    const f2p = new Float64Array(4);
    for (const [x, sign] of [[start, 1], [end, -1]] as const) {
      summand(x - 2, f2m);
      summand(x - 1, f1m);
      summand(x + 1, f1p);
      summand(x + 2, f2p);
      for (let i = 0; i < 4; i++) {
        const d1 = 0.5 * (f1p[i]! - f1m[i]!);
        const d3 = 0.5 * (f2p[i]! - 2 * f1p[i]! + 2 * f1m[i]! - f2m[i]!);
        sum[i] += sign * 0.5 * (d1 / 6 - (7 / 360) * d3);
      }
    }
    n = nSaturated;
  }
  const tail4 = oddPowerTail(4, n);
  const tail5 = oddPowerTail(5, n);
  for (let i = 0; i < 4; i++) sum[i] += c4[i]! * tail4 + c5[i]! * tail5;

  return { kA: sum[0]!, kB: sum[1]!, dkA: sum[2]! * S, dkB: sum[3]! * S, terms, integrated };
}

function oddAtLeast(x: number): number {
  if (!Number.isFinite(x) || x > 1e15) return 1e15 + 1;
  const n = Math.max(1, Math.ceil(x));
  return n % 2 === 1 ? n : n + 1;
}

export interface PlateFlow {
  /** Flow of each phase per unit pressure gradient and per unit length of interface, m³/(Pa·s). */
  kA: number;
  kB: number;
}

/**
 * Two immiscible layers between infinitely deep parallel walls a distance S apart (the `along`
 * dimension tends to infinity). Closed form of Bird, Stewart & Lightfoot, Transport Phenomena,
 * 2nd ed., 2002, problem 2B.7, with the interface at s = a = αS:
 *   u_A = s(C_A − s/(2μ_A)),  u_B = (S−s)(C_B − (S−s)/(2μ_B))   (G = 1),
 *   μ_A C_A + μ_B C_B = S,  a C_A − b C_B = a²/(2μ_A) − b²/(2μ_B),
 *   q_A = C_A a²/2 − a³/(6μ_A),  q_B = C_B b²/2 − b³/(6μ_B).
 */
export function twoLayerPlates(across: number, holdup: number, muA: number, muB: number): PlateFlow {
  const S = across;
  const a = holdup * S;
  const b = S - a;
  const CA = (S * b + (muB * a * a) / (2 * muA) - (b * b) / 2) / (muA * b + muB * a);
  const CB = (S - muA * CA) / muB;
  return { kA: (CA * a * a) / 2 - a ** 3 / (6 * muA), kB: (CB * b * b) / 2 - b ** 3 / (6 * muB) };
}

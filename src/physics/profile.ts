/**
 * The velocity of the two layers averaged over the dimension their interface spans (the depth of
 * a side-by-side channel): the profile across the layers that the solute transport of
 * ../physics/transport.ts is convected by. Exports `depthAveragedVelocity` (point values) and
 * `depthAveragedCellMeans` (exact means over cells, the form a finite-volume scheme needs), both
 * per unit pressure gradient. Same mode solution as ./twoLayer.ts and ./field.ts; SI units, no I/O.
 *
 * With u(s,t) = Σ_{n odd} f_n(s) sin(nπt/L) (see ./twoLayer.ts for f_n), averaging over t ∈ [0, L]
 * gives ū(s) = (1/L)∫₀ᴸ u dt = Σ_{n odd} (2/(nπ)) f_n(s). Integrated over a layer and multiplied by
 * L this is the layer's flow k_A or k_B of ./twoLayer.ts, term by term.
 */
import { SATURATED_HALF_ARGUMENT } from './constants.js';
import { oddPowerTail } from './series.js';
import { modeConstants, type TwoLayerInput } from './twoLayer.js';

/**
 * Fewest series terms summed directly. Beyond the last one, the interior of each layer is given
 * its saturated closed form, and the part left out (boundary layers of the high modes near an
 * interior cell face) is below 0.2·(L/w)·N⁻⁴ of the layer's flow: ~2e-9·L/w here.
 */
const MIN_DIRECT_INDEX = 101;
/** Cap on the direct terms for layers far thinner than the interface span. */
const MAX_DIRECT_INDEX = 200_001;

/** Cell faces of the two layers, each measured from that layer's own wall, m. */
export interface LayerFaces {
  /** Ascending from 0 (wall of A) to the width of layer A (the interface). */
  A: ArrayLike<number>;
  /** Ascending from 0 (wall of B) to the width of layer B (the interface). */
  B: ArrayLike<number>;
}

/** Cell means ordered from each layer's wall toward the interface, one per pair of faces. */
export interface LayerCells {
  A: Float64Array;
  B: Float64Array;
}

/** Largest odd index summed directly: every tanh of the layers has saturated beyond it. */
function directIndex(a: number, b: number, L: number): number {
  const saturated = (2 * SATURATED_HALF_ARGUMENT * L) / (Math.PI * Math.min(a, b));
  const n = Math.min(MAX_DIRECT_INDEX, Math.max(MIN_DIRECT_INDEX, Math.ceil(saturated)));
  return n % 2 === 1 ? n : n + 1;
}

/**
 * ū(s)/G at a point, s across the layers from the wall of phase A (0 ≤ s ≤ across), m²/(Pa·s).
 * Each mode as in ./field.ts (x the distance from the layer's own wall, w its width, e(d) = exp(−λd)):
 *   f(x) = (m/μ)(1 − e(x))(1 − e(w − x))/(1 + e(w)) + f_I e(w − x)(1 − e(2x))/(1 − e(2w)).
 * Terms beyond the direct ones take their saturated interior value (2/(nπ))·m/μ, summed in closed
 * form; at the walls the result is exactly 0. Near a wall or the interface the omitted boundary
 * layers of the high modes leave an error below (8L²/(π⁴μ))·N⁻³/6 with N = `directIndex`
 * (~1e-7 of the mean velocity); use `depthAveragedCellMeans` for fluxes.
 */
export function depthAveragedVelocity(input: TwoLayerInput, s: number): number {
  const { across: S, along: L, holdup, muA, muB } = input;
  const a = holdup * S;
  const b = S - a;
  if (s <= 0 || s >= S) return 0;
  const inA = s <= a;
  const w = inA ? a : b;
  const x = inA ? s : S - s;
  const mu = inA ? muA : muB;
  const N = directIndex(a, b, L);
  let sum = 0;
  for (let n = 1; n <= N; n += 2) {
    const { lambda, weight, m, fI } = modeConstants(n, a, b, L, muA, muB);
    const e = (d: number) => Math.exp(-lambda * d);
    const bulk = ((m / mu) * -Math.expm1(-lambda * x) * -Math.expm1(-lambda * (w - x))) / (1 + e(w));
    const wallSide = (fI * e(w - x) * -Math.expm1(-2 * lambda * x)) / -Math.expm1(-2 * lambda * w);
    sum += weight * (bulk + wallSide);
  }
  const tail4 = oddPowerTail(4, N + 2);
  // Saturated modes: interior (2/(nπ))m/μ = 8L²/(π⁴μn⁴); at the interface (2/(nπ))·2m/(μ_A + μ_B).
  if (x === w) return sum + ((16 * L * L) / (Math.PI ** 4 * (muA + muB))) * tail4;
  return sum + ((8 * L * L) / (Math.PI ** 4 * mu)) * tail4;
}

/**
 * Exact means of ū/G over cells, m²/(Pa·s): (1/Δx)∫ ū dx between neighbouring faces of each layer.
 * The integral of a mode from the layer's wall to x (same notation as `depthAveragedVelocity`) is
 *   P(x) = (m/μ)[x − (1 − e(w) + e(w − x) − e(x))/(λ(1 + e(w)))] + f_I e(w − x)(1 − e(x))²/(λ(1 − e(2w))),
 * and (2/(nπ))·P(w) is the mode's layer flow in ./twoLayer.ts divided by L, so the cells of each
 * layer add up to k_A/L and k_B/L. Beyond the direct terms P takes its saturated form:
 *   wall face 0; interior face (m/μ)(x − 1/λ); interface face (m/μ)(w − 2/λ) + (2m/(μ_A + μ_B))/λ,
 * summed in closed form (n⁻⁴ and n⁻⁵ tails, as in ./twoLayer.ts), so the layer totals keep the
 * accuracy of twoLayerFlow. Faces must start at 0 and end at the layer's width (relative 1e-12).
 */
export function depthAveragedCellMeans(input: TwoLayerInput, faces: LayerFaces): LayerCells {
  const { across: S, along: L, holdup, muA, muB } = input;
  const a = holdup * S;
  const b = S - a;
  const layers = [
    { faces: faces.A, w: a, mu: muA, name: 'A' },
    { faces: faces.B, w: b, mu: muB, name: 'B' },
  ];
  for (const { faces: f, w, name } of layers) {
    const last = f[f.length - 1]!;
    if (f.length < 2 || f[0] !== 0 || Math.abs(last - w) > 1e-12 * w) {
      throw new RangeError(`faces of layer ${name} must run from 0 to the layer width ${w}`);
    }
  }
  const N = directIndex(a, b, L);
  const tail4 = oddPowerTail(4, N + 2);
  const tail5 = oddPowerTail(5, N + 2);
  const c4 = (8 * L * L) / Math.PI ** 4;
  const c5 = (8 * L ** 3) / Math.PI ** 5;

  const [cellsA, cellsB] = layers.map(({ faces: f, w, mu }) => {
    const count = f.length;
    const primitive = new Float64Array(count);
    const interfaceFace = count - 1;
    for (let n = 1; n <= N; n += 2) {
      const { lambda, weight, m, fI } = modeConstants(n, a, b, L, muA, muB);
      const ew = Math.exp(-lambda * w);
      const bulk = m / mu;
      const side = fI / (lambda * -Math.expm1(-2 * lambda * w));
      for (let k = 1; k < count; k++) {
        const x = k === interfaceFace ? w : f[k]!;
        const ex = Math.exp(-lambda * x);
        const ewx = Math.exp(-lambda * (w - x));
        const oneMinusEx = -Math.expm1(-lambda * x);
        primitive[k] += weight * (bulk * (x - (1 - ew + ewx - ex) / (lambda * (1 + ew))) + side * ewx * oneMinusEx * oneMinusEx);
      }
    }
    for (let k = 1; k < count; k++) {
      const x = k === interfaceFace ? w : f[k]!;
      primitive[k] += k === interfaceFace ? (c4 * w * tail4) / mu - (2 * c5 * tail5) / mu + (2 * c5 * tail5) / (muA + muB) : (c4 * x * tail4) / mu - (c5 * tail5) / mu;
    }
    const cells = new Float64Array(count - 1);
    for (let k = 0; k < count - 1; k++) {
      const lo = f[k]!;
      const hi = k + 1 === interfaceFace ? w : f[k + 1]!;
      cells[k] = (primitive[k + 1]! - primitive[k]!) / (hi - lo);
    }
    return cells;
  });
  return { A: cellsA!, B: cellsB! };
}

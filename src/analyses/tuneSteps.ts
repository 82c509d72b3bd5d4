/**
 * The linear algebra of tune's steps, on the sensitivities of the targets (J) and of the splits'
 * p_B − p_A (G) to the settings: the minimum-norm Newton step, the directions that move the splits
 * without moving the targets, and the smallest margin of the splits in their windows. Exports
 * `norm`, `minimumNormStep`, `movingDirections`, `smallestMargin` and `Linearisation`.
 */
import { Matrix, SingularValueDecomposition, pseudoInverse } from 'ml-matrix';
import { max as maxOf } from 'd3-array';

/** A direction moves the splits when its largest effect is above this share of the strongest one. */
const FLAT = 1e-7;

export interface Linearisation {
  /** ∂r/∂(u/scale), targets × settings. */
  J: Matrix;
  /** ∂Δ/∂(u/scale), splits × settings. */
  G: Matrix;
  P: Matrix;
  F: Matrix;
}

/** Euclidean length. */
export function norm(v: readonly number[]): number {
  return Math.sqrt(v.reduce((s, x) => s + x * x, 0));
}

/** The least-squares step of smallest norm for J·du = −r using only the free columns. */
export function minimumNormStep(J: Matrix, r: number[], free: boolean[]): number[] {
  const columns = free.flatMap((f, l) => (f ? [l] : []));
  const du = new Array<number>(free.length).fill(0);
  if (columns.length === 0) return du;
  const sub = new Matrix(J.to2DArray().map((row) => columns.map((l) => row[l]!)));
  const step = pseudoInverse(sub, 1e-12).mmul(Matrix.columnVector(r.map((x) => -x)));
  columns.forEach((l, k) => (du[l] = step.get(k, 0)));
  return du;
}

/**
 * An orthonormal basis (settings × k, scaled units) of the directions that leave the targets
 * unchanged to first order but move some split: the null space of J, less the directions in
 * it that move no split (such as raising every pressure of the chip together).
 */
export function movingDirections(lin: Linearisation): Matrix {
  const { J, G } = lin;
  const n = J.columns;
  const square = new Matrix(n, n);
  J.to2DArray().forEach((row, k) => row.forEach((v, l) => square.set(k, l, v)));
  const svd = new SingularValueDecomposition(square, { autoTranspose: false });
  const largest = Math.max(maxOf(svd.diagonal) ?? 0, 1e-300);
  const nullColumns = svd.diagonal.flatMap((s, l) => (s <= 1e-10 * largest ? [l] : []));
  if (nullColumns.length === 0 || G.rows === 0) return new Matrix(n, 0);
  const N = new Matrix(svd.rightSingularVectors.to2DArray().map((row) => nullColumns.map((l) => row[l]!)));
  const effect = G.mmul(N);
  const inner = new SingularValueDecomposition(effect.rows >= effect.columns ? effect : effect.transpose(), { autoTranspose: false });
  const sigma = inner.diagonal;
  const strongest = maxOf(sigma) ?? 0;
  if (strongest === 0) return new Matrix(n, 0);
  const V = effect.rows >= effect.columns ? inner.rightSingularVectors : inner.leftSingularVectors;
  const keep = sigma.flatMap((s, q) => (s > FLAT * strongest ? [q] : []));
  return N.mmul(new Matrix(V.to2DArray().map((row) => keep.map((q) => row[q]!))));
}

export function smallestMargin(delta: readonly number[], windows: ReadonlyArray<readonly [number, number]>): number {
  let smallest = Infinity;
  delta.forEach((d, i) => (smallest = Math.min(smallest, d - windows[i]![0], windows[i]![1] - d)));
  return smallest;
}

/**
 * The subproblem of an SQP step: a convex quadratic model in d under linearised rows made
 * elastic by one shared violation t ≥ 0 priced μ, within hard bounds (the fabrication rules):
 *   minimise ½ dᵀHd + gᵀd + μ·t   subject to  aᵢᵀd + t ≥ bᵢ (an equality: |aᵢᵀd − bᵢ| ≤ t),
 *   t ≥ 0,  lower ≤ d ≤ upper.
 * At the solution t is the largest violation of the linearised rows, so the model is that of
 * the ℓ∞ exact penalty function ½‖r‖² + μ·max violation; always feasible, so a step exists
 * even where the linearised rows contradict each other or the bounds. This is the Sℓ∞QP
 * subproblem (Fletcher, Practical Methods of Optimization, 2nd ed., 1987, §12.3–12.4; Yuan,
 * 1995, Math. Programming 69:49, from memory). One shared violation rather than one slack per
 * row keeps the problem at n + 1 unknowns. Solved by the Goldfarb–Idnani dual method (quadprog
 * package: Goldfarb & Idnani, 1983, Math. Programming 27:1), the bounds by a working set: a
 * bound joins the problem only once a solution passes it, since the dual method pays for every
 * constraint it is given at each of its iterations (257 variables with every bound given: 6–11 s
 * a step, measured). Exports `elasticStep` and its types. Plain numbers, no units.
 */
import { solveQP } from 'quadprog';

/** aᵀd ≥ b, or aᵀd = b when `equality`. */
export interface LinearRow {
  a: ArrayLike<number>;
  b: number;
  equality?: boolean;
}

export interface ElasticProblem {
  /** Hessian of the model (symmetric positive semidefinite, with any regularisation added), n×n. */
  hessian: number[][];
  gradient: ArrayLike<number>;
  rows: LinearRow[];
  /** Hard bounds on d (±Infinity where none). */
  lower: ArrayLike<number>;
  upper: ArrayLike<number>;
  /** Price of a unit of the largest violation. */
  penalty: number;
}

export interface ElasticStep {
  /** The step, within the bounds. */
  d: number[];
  /** The largest violation of the linearised rows at d. */
  violation: number;
}

/**
 * Curvature put on a singular Hessian and on t, relative to the Hessian's scale: quadprog needs
 * a strictly convex problem, and its dual method works with the inverse Cholesky factor, so t's
 * curvature must not be far below the rest (at 1e-10 the steps came out worse than d = 0,
 * measured); ½·1e-6·t² beside μ·t leaves the price as it is.
 */
const RIDGE = 1e-10;
const SLACK_CURVATURE = 1e-6;
/** How far past a bound a solution may be before that bound joins the working set (rounding of the dual method). */
const BOUND_SLACK = 1e-12;

export function elasticStep(p: ElasticProblem): ElasticStep {
  const n = p.gradient.length;
  const working: Array<{ j: number; side: 'lower' | 'upper' }> = [];
  for (let pass = 0; pass <= 2 * n; pass++) {
    const step = solveWith(p, working);
    let added = false;
    step.d.forEach((v, j) => {
      const scale = Math.max(1, Math.abs(v));
      if (v < p.lower[j]! - BOUND_SLACK * scale && !working.some((w) => w.j === j && w.side === 'lower')) {
        working.push({ j, side: 'lower' });
        added = true;
      }
      if (v > p.upper[j]! + BOUND_SLACK * scale && !working.some((w) => w.j === j && w.side === 'upper')) {
        working.push({ j, side: 'upper' });
        added = true;
      }
    });
    if (!added) return { d: step.d.map((v, j) => Math.min(p.upper[j]!, Math.max(p.lower[j]!, v))), violation: step.t };
  }
  throw new RangeError('design step: the bounds did not settle');
}

function solveWith(p: ElasticProblem, bounds: Array<{ j: number; side: 'lower' | 'upper' }>): { d: number[]; t: number } {
  const n = p.gradient.length;
  const m = n + 1;
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(p.hessian[i]![i]!));
  scale = Math.max(scale, 1);
  const D: number[][] = [[]];
  const dvec: number[] = [0];
  for (let i = 1; i <= m; i++) {
    D[i] = new Array<number>(m + 1).fill(0);
    dvec[i] = i <= n ? -p.gradient[i - 1]! : -p.penalty;
  }
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) D[i + 1]![j + 1] = p.hessian[i]![j]!;
  for (let i = 1; i <= n; i++) D[i]![i] += RIDGE * scale;
  D[m]![m] += SLACK_CURVATURE * scale;

  // Columns of A (constraint k: Σᵢ A[i][k]·x_i ≥ b_k): t ≥ 0, the rows, the bounds in the working set.
  const columns: Array<{ entries: Array<[number, number]>; b: number }> = [{ entries: [[n, 1]], b: 0 }];
  for (const row of p.rows) {
    const entries: Array<[number, number]> = [];
    for (let j = 0; j < n; j++) if (row.a[j] !== 0) entries.push([j, row.a[j]!]);
    columns.push({ entries: [...entries, [n, 1]], b: row.b });
    if (row.equality) columns.push({ entries: [...entries.map(([j, v]): [number, number] => [j, -v]), [n, 1]], b: -row.b });
  }
  for (const { j, side } of bounds) columns.push(side === 'lower' ? { entries: [[j, 1]], b: p.lower[j]! } : { entries: [[j, -1]], b: -p.upper[j]! });
  const A: number[][] = [[]];
  for (let i = 1; i <= m; i++) A[i] = new Array<number>(columns.length + 1).fill(0);
  const bvec: number[] = [0];
  columns.forEach((col, c) => {
    for (const [i, v] of col.entries) A[i + 1]![c + 1] = v;
    bvec[c + 1] = col.b;
  });
  const result = solveQP(D, dvec, A, bvec, 0);
  if (!result.solution || result.message !== '') throw new RangeError(`design step: ${result.message || 'no solution'}`);
  const x = result.solution.slice(1);
  return { d: x.slice(0, n), t: Math.max(0, x[n]!) };
}

/**
 * The subproblem of a trust-region SQP step: a convex quadratic model in d under linearised
 * constraints, each made elastic (a slack s ≥ 0 priced μ per unit), inside a box of hard bounds
 * (the fabrication rules intersected with the trust region). Always feasible, so a step exists
 * even where the linearised constraints contradict each other or the box; the slacks then say
 * which constraints could not be met. This is the Sℓ1QP subproblem (Fletcher, Practical Methods
 * of Optimization, 2nd ed., 1987, §12.4; Nocedal & Wright, Numerical Optimization, 2nd ed.,
 * 2006, §18.5, eq. 18.51, from memory). Solved by the Goldfarb–Idnani dual method (quadprog
 * package: Goldfarb & Idnani, 1983, Math. Programming 27:1). Exports `elasticStep` and its
 * types. Plain numbers, no units.
 */
import { solveQP } from 'quadprog';

/** aᵀd ≥ b, or aᵀd = b when `equality`. */
export interface LinearRow {
  a: ArrayLike<number>;
  b: number;
  equality?: boolean;
}

export interface ElasticProblem {
  /** Hessian of the model (symmetric positive semidefinite), n×n. */
  hessian: number[][];
  gradient: ArrayLike<number>;
  rows: LinearRow[];
  /** Hard bounds on d. */
  lower: ArrayLike<number>;
  upper: ArrayLike<number>;
  /** Price of a unit of violation of any row. */
  penalty: number;
}

export interface ElasticStep {
  d: number[];
  /** Violation of each row at d (0 where met). */
  violation: number[];
  /** Multiplier of each row (≥ 0 for inequalities; its size for equalities). */
  multiplier: number[];
}

/**
 * Curvature put on a singular Hessian and on the slacks, relative to the Hessian's scale:
 * quadprog needs a strictly convex problem, and its dual method works with the inverse
 * Cholesky factor, so the slacks' curvature must not be much below the rest (at 1e-10 the
 * steps came out worse than d = 0, measured); ½·1e-6·s² beside μ·s leaves the ℓ1 price as it is.
 */
const RIDGE = 1e-10;
const SLACK_CURVATURE = 1e-6;

export function elasticStep(p: ElasticProblem): ElasticStep {
  const n = p.gradient.length;
  const soft = p.rows.length;
  // Unknowns: d (n), then one slack per inequality and two (s⁺, s⁻) per equality.
  const slackAt: number[] = [];
  let m = n;
  for (const row of p.rows) {
    slackAt.push(m);
    m += row.equality ? 2 : 1;
  }
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(p.hessian[i]![i]!));
  const ridge = RIDGE * Math.max(scale, 1);
  const D: number[][] = [[]];
  const dvec: number[] = [0];
  for (let i = 1; i <= m; i++) {
    D[i] = new Array<number>(m + 1).fill(0);
    dvec[i] = i <= n ? -p.gradient[i - 1]! : -p.penalty;
  }
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) D[i + 1]![j + 1] = p.hessian[i]![j]!;
  for (let i = 1; i <= m; i++) D[i]![i] += i <= n ? ridge : SLACK_CURVATURE * Math.max(scale, 1);

  // Columns of A: equalities first (quadprog's meq), then the inequalities.
  const columns: Array<{ entries: Array<[number, number]>; b: number }> = [];
  const equalities: typeof columns = [];
  const columnOf: number[] = [];
  p.rows.forEach((row, k) => {
    const entries: Array<[number, number]> = [];
    for (let j = 0; j < n; j++) if (row.a[j] !== 0) entries.push([j, row.a[j]!]);
    columnOf.push(row.equality ? equalities.length : columns.length);
    if (row.equality) {
      equalities.push({ entries: [...entries, [slackAt[k]!, 1], [slackAt[k]! + 1, -1]], b: row.b });
      columns.push({ entries: [[slackAt[k]!, 1]], b: 0 }, { entries: [[slackAt[k]! + 1, 1]], b: 0 });
    } else {
      columns.push({ entries: [...entries, [slackAt[k]!, 1]], b: row.b }, { entries: [[slackAt[k]!, 1]], b: 0 });
    }
  });
  for (let j = 0; j < n; j++) {
    if (Number.isFinite(p.lower[j]!)) columns.push({ entries: [[j, 1]], b: p.lower[j]! });
    if (Number.isFinite(p.upper[j]!)) columns.push({ entries: [[j, -1]], b: -p.upper[j]! });
  }
  const all = [...equalities, ...columns];
  const A: number[][] = [[]];
  for (let i = 1; i <= m; i++) A[i] = new Array<number>(all.length + 1).fill(0);
  const bvec: number[] = [0];
  all.forEach((col, c) => {
    for (const [i, v] of col.entries) A[i + 1]![c + 1] = v;
    bvec[c + 1] = col.b;
  });
  const result = solveQP(D, dvec, A, bvec, equalities.length);
  if (!result.solution || result.message !== '') throw new RangeError(`design step: ${result.message || 'no solution'}`);
  const x = result.solution.slice(1);
  const d = x.slice(0, n);
  const violation = p.rows.map((row, k) => (row.equality ? x[slackAt[k]!]! + x[slackAt[k]! + 1]! : x[slackAt[k]!]!));
  // Multipliers of the rows: the equalities' come first, then each inequality's own column.
  const lagrange = result.Lagrangian!.slice(1);
  const multiplier = p.rows.map((row, k) => Math.abs(lagrange[row.equality ? columnOf[k]! : equalities.length + columnOf[k]!]!));
  return { d, violation, multiplier };
}

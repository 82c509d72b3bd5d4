import { describe, expect, it } from 'vitest';
import {
  SingularMatrixError,
  SparseLuSymbolic,
  TripletBuilder,
  approximateMinimumDegree,
  factorize,
  factorizeDense,
  factorizeSparse,
  type LinearFactor,
  type SparseMatrix,
} from '../../src/solver/linear.js';
import { normalEquationsPattern } from '../../src/solver/ordering.js';

// Tolerances (infinity norms): both factorisations are backward stable and the test matrices are
// well enough conditioned that their solutions agree, and residuals vanish, to this accuracy.
const AGREEMENT = 1e-12;
const RESIDUAL = 1e-12;

/**
 * The minimal standard generator (Park & Miller, 1988, CACM 31(10):1192–1201) with the multiplier
 * 48271 of Park, Miller & Stockmeyer (1993), seeded, for repeatable cases.
 */
function minimalStandard(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
}

/** 0..n−1 in random order (Fisher–Yates shuffle, Knuth, TAOCP vol. 2, alg. 3.4.2P). */
function shuffled(n: number, random: () => number): number[] {
  const order = Array.from({ length: n }, (_, i) => i);
  for (let i = n - 1; i > 0; i--) {
    const j = Math.floor(random() * (i + 1));
    [order[i], order[j]] = [order[j], order[i]];
  }
  return order;
}

function fromDense(rows: number[][]): SparseMatrix {
  const builder = new TripletBuilder(rows.length);
  rows.forEach((row, i) => row.forEach((value, j) => value !== 0 && builder.add(i, j, value)));
  return builder.toCsc();
}

function multiply(a: SparseMatrix, x: Float64Array): Float64Array {
  const y = new Float64Array(a.n);
  for (let j = 0; j < a.n; j++) {
    for (let p = a.colPtr[j]; p < a.colPtr[j + 1]; p++) y[a.rowIdx[p]] += a.values[p] * x[j];
  }
  return y;
}

function maxAbs(v: Float64Array): number {
  return v.reduce((m, x) => Math.max(m, Math.abs(x)), 0);
}

function relativeDifference(x: Float64Array, y: Float64Array): number {
  return maxAbs(x.map((xi, i) => xi - y[i])) / maxAbs(y);
}

/** ‖A·x − b‖∞ / ‖b‖∞. */
function relativeResidual(a: SparseMatrix, x: Float64Array, b: Float64Array): number {
  return relativeDifference(multiply(a, x), b);
}

function rightHandSide(n: number, seed: number): Float64Array {
  const random = minimalStandard(seed);
  return Float64Array.from({ length: n }, () => 2 * random() - 1);
}

/** Adds the conductance g between nodes i and j to a graph Laplacian. */
function addConductance(builder: TripletBuilder, i: number, j: number, g: number): void {
  builder.add(i, i, g);
  builder.add(j, j, g);
  builder.add(i, j, -g);
  builder.add(j, i, -g);
}

/** Random pattern, about `perColumn` off-diagonal entries a column, diagonal larger than the column's sum. */
function randomDiagonallyDominant(n: number, perColumn: number, seed: number): SparseMatrix {
  const random = minimalStandard(seed);
  const builder = new TripletBuilder(n);
  for (let j = 0; j < n; j++) {
    let sum = 0;
    for (let t = 0; t < perColumn; t++) {
      const value = 2 * random() - 1;
      builder.add(Math.floor(random() * n), j, value);
      sum += Math.abs(value);
    }
    builder.add(j, j, (1 + random()) * (sum + 1));
  }
  return builder.toCsc();
}

/** The 5-point Laplacian of an m×m grid with unit conductances, node 0 held by a Dirichlet row. */
function gridLaplacian(m: number): SparseMatrix {
  const builder = new TripletBuilder(m * m);
  for (let r = 0; r < m; r++) {
    for (let c = 0; c < m; c++) {
      const node = r * m + c;
      if (c + 1 < m) addConductance(builder, node, node + 1, 1);
      if (r + 1 < m) addConductance(builder, node, node + m, 1);
    }
  }
  const a = builder.toCsc();
  // Row 0 becomes x_0 = b_0: zero its entries, then put 1 on the diagonal.
  for (let j = 0; j < a.n; j++) {
    for (let p = a.colPtr[j]; p < a.colPtr[j + 1]; p++) if (a.rowIdx[p] === 0) a.values[p] = j === 0 ? 1 : 0;
  }
  return a;
}

/**
 * [[L, B], [Bᵀ, 0]] as in modified nodal analysis: L the Laplacian of a random connected network
 * of `nodes` nodes (a spanning path in random order plus random extra links, conductances 0.5–1.5),
 * B fixing the pressure of each node in `fixed` (one constraint row and column per fixed node).
 */
function saddle(nodes: number, extraLinks: number, fixed: number[], seed: number): SparseMatrix {
  const random = minimalStandard(seed);
  const builder = new TripletBuilder(nodes + fixed.length);
  const visit = shuffled(nodes, random);
  for (let k = 1; k < nodes; k++) addConductance(builder, visit[k - 1], visit[k], 0.5 + random());
  for (let t = 0; t < extraLinks; t++) {
    const i = Math.floor(random() * nodes);
    const j = Math.floor(random() * nodes);
    if (i !== j) addConductance(builder, i, j, 0.5 + random());
  }
  fixed.forEach((node, c) => {
    builder.add(node, nodes + c, 1);
    builder.add(nodes + c, node, 1);
  });
  return builder.toCsc();
}

/**
 * A random unsymmetric matrix whose large entries (1–2 in magnitude) sit on a random permutation,
 * so most diagonal entries are zero, plus `perColumn` small entries (below 0.1) a column.
 */
function randomUnsymmetric(n: number, perColumn: number, seed: number): SparseMatrix {
  const random = minimalStandard(seed);
  const builder = new TripletBuilder(n);
  const permutation = shuffled(n, random);
  for (let j = 0; j < n; j++) {
    builder.add(permutation[j], j, (random() < 0.5 ? -1 : 1) * (1 + random()));
    for (let t = 0; t < perColumn; t++) builder.add(Math.floor(random() * n), j, 0.1 * (2 * random() - 1));
  }
  return builder.toCsc();
}

function expectSparseAndDenseToAgree(a: SparseMatrix, seed: number): void {
  const b = rightHandSide(a.n, seed);
  const sparse = factorizeSparse(a).solve(b);
  const dense = factorizeDense(a).solve(b);
  expect(relativeDifference(sparse, dense)).toBeLessThanOrEqual(AGREEMENT);
  expect(relativeResidual(a, sparse, b)).toBeLessThanOrEqual(RESIDUAL);
  expect(relativeResidual(a, dense, b)).toBeLessThanOrEqual(RESIDUAL);
}

function singularIndex(factorizeMatrix: () => LinearFactor): number {
  try {
    factorizeMatrix();
  } catch (error) {
    if (error instanceof SingularMatrixError) return error.index;
    throw error;
  }
  throw new Error('expected a SingularMatrixError');
}

function sortedCopy(order: Int32Array): number[] {
  return Array.from(order).sort((x, y) => x - y);
}

describe('TripletBuilder', () => {
  it('toCsc sums duplicate entries and sorts the rows of each column', () => {
    const builder = new TripletBuilder(3);
    builder.add(2, 0, 1);
    builder.add(0, 0, 4);
    builder.add(2, 0, 2);
    builder.add(1, 2, -1);
    builder.add(0, 2, 5);
    const a = builder.toCsc();
    expect(Array.from(a.colPtr)).toEqual([0, 2, 2, 4]);
    expect(Array.from(a.rowIdx)).toEqual([0, 2, 0, 1]);
    expect(Array.from(a.values)).toEqual([4, 3, 5, -1]);
  });

  it('toCsc keeps an entry added with value zero in the pattern', () => {
    const builder = new TripletBuilder(2);
    builder.add(0, 0, 1);
    builder.add(1, 0, 0);
    builder.add(1, 1, 1);
    expect(builder.toCsc().rowIdx.length).toBe(3);
  });

  it('clear() forgets the entries and the builder can be filled again', () => {
    const builder = new TripletBuilder(2);
    builder.add(0, 1, 7);
    builder.clear();
    builder.add(1, 1, 2);
    const a = builder.toCsc();
    expect(builder.size).toBe(1);
    expect(Array.from(a.colPtr)).toEqual([0, 0, 1]);
    expect(Array.from(a.values)).toEqual([2]);
  });

  it('toCsc of the same positions again gives what a fresh builder gives, bit for bit, and of other positions too', () => {
    const fill = (builder: TripletBuilder, values: number[], extra = false) => {
      builder.clear();
      builder.add(2, 0, values[0]!);
      builder.add(0, 0, values[1]!);
      builder.add(2, 0, values[2]!);
      builder.add(1, 2, values[3]!);
      if (extra) builder.add(1, 1, 9);
      builder.add(0, 2, values[4]!);
      return builder.toCsc();
    };
    const reused = new TripletBuilder(3);
    fill(reused, [1, 4, 2, -1, 5]);
    // 0.1 + 0.2 ≠ 0.3 in binary: the sum must be formed in the order the entries were added;
    // −0 alone must stay −0, as a fresh compression keeps a lone first value.
    for (const [values, extra] of [[[0.1, -0, 0.2, 3, 7], false], [[0.2, 1, 0.1, -2, 0], true], [[0.3, 2, -0.1, 1, 1], false]] as const) {
      const again = fill(reused, [...values], extra);
      const fresh = fill(new TripletBuilder(3), [...values], extra);
      expect(Array.from(again.colPtr)).toEqual(Array.from(fresh.colPtr));
      expect(Array.from(again.rowIdx)).toEqual(Array.from(fresh.rowIdx));
      expect(Array.from(again.values).map((v) => (Object.is(v, -0) ? '-0' : v))).toEqual(Array.from(fresh.values).map((v) => (Object.is(v, -0) ? '-0' : v)));
    }
  });

  it('add rejects an entry outside the matrix', () => {
    const builder = new TripletBuilder(2);
    expect(() => builder.add(2, 0, 1)).toThrow(RangeError);
    expect(() => builder.add(0, -1, 1)).toThrow(RangeError);
  });
});

describe('approximateMinimumDegree', () => {
  it('returns a permutation of the columns', () => {
    for (const a of [gridLaplacian(12), randomUnsymmetric(300, 3, 5), saddle(200, 60, [0, 7, 99], 3)]) {
      expect(sortedCopy(approximateMinimumDegree(a))).toEqual(Array.from({ length: a.n }, (_, i) => i));
    }
  });

  it('causes no fill at all in an arrowhead matrix whose hub is numbered first', () => {
    // A star network: node 0 linked to every other node. Eliminating the hub first would fill
    // the whole matrix; eliminating it last fills nothing.
    const n = 300;
    const builder = new TripletBuilder(n);
    for (let i = 1; i < n; i++) addConductance(builder, 0, i, 1);
    builder.add(0, 0, 1);
    const a = builder.toCsc();
    const order = approximateMinimumDegree(a);
    expect(order[n - 1]).toBe(0);
    const factor = factorizeSparse(a);
    expect(factor.nnzL + factor.nnzU).toBe(a.colPtr[n]);
  });

  it('leaves a 2-D grid with less than half the fill of the natural order', () => {
    const a = gridLaplacian(30);
    const natural = factorizeSparse(a, { ordering: Int32Array.from({ length: a.n }, (_, i) => i) });
    const amd = factorizeSparse(a);
    expect(amd.nnzL + amd.nnzU).toBeLessThan(0.5 * (natural.nnzL + natural.nnzU));
  });
});

describe('factorizeSparse', () => {
  it('solves a 4×4 system that needs row interchanges (constructed by hand)', () => {
    // Constructed by hand; the elimination is written out so the exact solution can be checked:
    //   r2: x1 + x2 = 5        → x2 = 5 − x1
    //   r1: x0 + 3·x2 = 10     → x0 = 3·x1 − 5
    //   r3: 2·x0 + x3 = 6      → x3 = 16 − 6·x1
    //   r0: 2·x1 + x3 = 8      → 16 − 4·x1 = 8, so x1 = 2 and x = (1, 2, 3, 4); det A = 4.
    // a_00 = 0, so the first column cannot keep its diagonal pivot.
    const a = fromDense([
      [0, 2, 0, 1],
      [1, 0, 3, 0],
      [0, 1, 1, 0],
      [2, 0, 0, 1],
    ]);
    const b = Float64Array.from([8, 10, 5, 6]);
    for (const factor of [factorizeSparse(a), factorizeDense(a)]) {
      const x = factor.solve(b);
      Array.from(x).forEach((xi, i) => expect(xi).toBeCloseTo(i + 1, 14));
    }
  });

  it('agrees with the dense LU on random sparse diagonally dominant matrices', () => {
    for (const seed of [1, 2, 3, 4, 5]) expectSparseAndDenseToAgree(randomDiagonallyDominant(150, 4, seed), seed);
  });

  it('agrees with the dense LU on a 2-D grid Laplacian with one Dirichlet row', () => {
    expectSparseAndDenseToAgree(gridLaplacian(20), 11);
  });

  it('agrees with the dense LU on a saddle-point matrix [[L, B], [Bᵀ, 0]] with zero diagonal constraint rows', () => {
    expectSparseAndDenseToAgree(saddle(300, 150, [0, 17, 123, 299], 7), 12);
    expectSparseAndDenseToAgree(saddle(40, 0, [5], 8), 13);
  });

  it('agrees with the dense LU on random unsymmetric sparse matrices with mostly zero diagonals', () => {
    for (const seed of [21, 22, 23]) expectSparseAndDenseToAgree(randomUnsymmetric(200, 3, seed), seed);
  });

  it('gives the same solution with plain partial pivoting and with the natural column order', () => {
    const a = saddle(100, 40, [3, 50], 9);
    const b = rightHandSide(a.n, 14);
    const reference = factorizeSparse(a).solve(b);
    const partial = factorizeSparse(a, { pivotThreshold: 1 }).solve(b);
    const natural = factorizeSparse(a, { ordering: Int32Array.from({ length: a.n }, (_, i) => i) }).solve(b);
    expect(relativeDifference(partial, reference)).toBeLessThanOrEqual(AGREEMENT);
    expect(relativeDifference(natural, reference)).toBeLessThanOrEqual(AGREEMENT);
  });

  it('solves the empty system', () => {
    const empty = new TripletBuilder(0).toCsc();
    expect(factorizeSparse(empty).solve(new Float64Array(0))).toEqual(new Float64Array(0));
    expect(factorizeDense(empty).solve(new Float64Array(0))).toEqual(new Float64Array(0));
  });

  it('leaves the right-hand side untouched and rejects one of the wrong length', () => {
    const a = gridLaplacian(4);
    const b = rightHandSide(a.n, 3);
    const copy = b.slice();
    factorizeSparse(a).solve(b);
    expect(b).toEqual(copy);
    expect(() => factorizeSparse(a).solve(new Float64Array(3))).toThrow(RangeError);
  });

  it('rejects an ordering that is not a permutation and a pivot threshold outside (0, 1]', () => {
    const a = gridLaplacian(3);
    expect(() => factorizeSparse(a, { ordering: new Int32Array(a.n) })).toThrow(RangeError);
    expect(() => factorizeSparse(a, { pivotThreshold: 0 })).toThrow(RangeError);
  });
});

describe('singular matrices', () => {
  it('a zero column is reported as the equation of that column, by both factorisations', () => {
    const rows = [
      [4, 1, 0, 0, 1],
      [1, 4, 0, 1, 0],
      [0, 1, 0, 1, 0],
      [0, 1, 0, 4, 1],
      [1, 0, 0, 1, 4],
    ];
    const a = fromDense(rows);
    expect(singularIndex(() => factorizeSparse(a))).toBe(2);
    expect(singularIndex(() => factorizeDense(a))).toBe(2);
  });

  it('two identical rows are reported as one of the two equations, by both factorisations', () => {
    const a = fromDense([
      [4, 1, 0, 0, 1],
      [1, 4, 1, 1, 0],
      [0, 1, 4, 1, 0],
      [1, 4, 1, 1, 0],
      [1, 0, 0, 1, 4],
    ]);
    expect([1, 3]).toContain(singularIndex(() => factorizeSparse(a)));
    expect([1, 3]).toContain(singularIndex(() => factorizeDense(a)));
  });

  it('a floating sub-network (no fixed pressure) is reported as one of its nodes despite round-off', () => {
    // Nodes 0..199 are held by a constraint on node 0; nodes 200..299 form a second component
    // with no pressure reference, so its Laplacian block is singular but pivots only to round-off.
    const random = minimalStandard(31);
    const builder = new TripletBuilder(301);
    for (let i = 1; i < 200; i++) addConductance(builder, i - 1, i, 0.5 + random());
    for (let i = 201; i < 300; i++) addConductance(builder, i - 1, i, 0.5 + random());
    for (let t = 0; t < 60; t++) addConductance(builder, 200 + Math.floor(random() * 100), 200 + Math.floor(random() * 100), 0.5 + random());
    builder.add(0, 300, 1);
    builder.add(300, 0, 1);
    const a = builder.toCsc();
    const inFloatingPart = (index: number) => index >= 200 && index < 300;
    expect(inFloatingPart(singularIndex(() => factorizeSparse(a)))).toBe(true);
    expect(inFloatingPart(singularIndex(() => factorizeDense(a)))).toBe(true);
  });
});

/**
 * A pressure–flow system of a random connected network: unknowns are the node pressures, then
 * the segment flows; rows are the segment laws p_from − p_to − R·q = 0, then a mass balance per
 * node, except at nodes 0 and 1 whose balance is replaced by a fixed-pressure row. Each flow
 * column holds −R next to ±1, so in SI units one column mixes entries 1e13 apart.
 */
function pressureFlowSystem(nodes: number, segments: number, resistanceScale: number, seed: number): SparseMatrix {
  const random = minimalStandard(seed);
  const builder = new TripletBuilder(nodes + segments);
  const visit = shuffled(nodes, random);
  for (let s = 0; s < segments; s++) {
    const from = s < nodes - 1 ? visit[s] : Math.floor(random() * nodes);
    let to = s < nodes - 1 ? visit[s + 1] : Math.floor(random() * nodes);
    if (to === from) to = (from + 1) % nodes;
    const law = s;
    const flow = nodes + s;
    builder.add(law, from, 1);
    builder.add(law, to, -1);
    builder.add(law, flow, -resistanceScale * (0.5 + random()));
    if (from > 1) builder.add(segments + from, flow, -1);
    if (to > 1) builder.add(segments + to, flow, 1);
  }
  builder.add(segments, 0, 1);
  builder.add(segments + 1, 1, 1);
  return builder.toCsc();
}

describe('scaling', () => {
  it('a pressure–flow system in SI units (resistances near 1e13 Pa·s/m³ next to unit coefficients) is not mistaken for singular', () => {
    // With resistances of order 1 the same network has the same pressures and flows 1e13 times
    // larger; the pivot test must not take a unit-sized pivot next to a 1e13 entry for round-off.
    const nodes = 200;
    const segments = 320;
    const si = pressureFlowSystem(nodes, segments, 1e13, 71);
    const unit = pressureFlowSystem(nodes, segments, 1, 71);
    const b = new Float64Array(nodes + segments);
    b[segments] = 2e5;
    const reference = factorizeDense(unit).solve(b);
    for (const x of [factorizeSparse(si).solve(b), factorizeDense(si).solve(b)]) {
      expect(relativeResidual(si, x, b)).toBeLessThanOrEqual(RESIDUAL);
      expect(relativeDifference(x.subarray(0, nodes), reference.subarray(0, nodes))).toBeLessThanOrEqual(AGREEMENT);
      expect(relativeDifference(x.subarray(nodes).map((q) => q * 1e13), reference.subarray(nodes))).toBeLessThanOrEqual(AGREEMENT);
    }
  });
});

describe('SparseLuSymbolic', () => {
  it('refactors a matrix with the same pattern and new values, even when the pivots must change', () => {
    const a = saddle(150, 50, [0, 75], 41);
    const symbolic = new SparseLuSymbolic(a);
    const order = symbolic.columnOrder;
    const b = rightHandSide(a.n, 42);
    for (let round = 0; round < 3; round++) {
      const random = minimalStandard(100 + round);
      const next: SparseMatrix = { ...a, values: a.values.map((v) => v * (0.5 + random())) };
      // In the last round node 10 loses its diagonal value (the entry stays in the pattern).
      if (round === 2) {
        for (let p = next.colPtr[10]; p < next.colPtr[11]; p++) if (next.rowIdx[p] === 10) next.values[p] = 0;
      }
      const x = symbolic.factor(next).solve(b);
      expect(relativeResidual(next, x, b)).toBeLessThanOrEqual(RESIDUAL);
      expect(relativeDifference(x, factorizeDense(next).solve(b))).toBeLessThanOrEqual(AGREEMENT);
    }
    expect(symbolic.columnOrder).toBe(order);
  });

  it('a refactorisation (pivots kept from the last factorisation) solves as accurately as a factorisation with pivot search, as values drift and pivots change', () => {
    // Kept pivots pass the search's threshold test, so the factors are threshold-pivoted LU
    // factors of the new matrix like the search's, with the same bound on growth: residual and
    // agreement with the dense LU are held to the bounds of a fresh factorisation.
    for (const [a, seed] of [[randomUnsymmetric(300, 3, 7), 8], [saddle(200, 80, [0, 120], 5), 6], [gridLaplacian(12), 4]] as const) {
      const symbolic = new SparseLuSymbolic(a);
      const b = rightHandSide(a.n, seed);
      const random = minimalStandard(seed + 100);
      for (let round = 0; round < 6; round++) {
        // Small drifts keep every pivot; the large ones (rounds 3 and 5) change some.
        const spread = round === 3 || round === 5 ? 1.5 : 0.01;
        const next: SparseMatrix = { ...a, values: a.values.map((v) => v * (1 + spread * (random() - 0.5))) };
        const kept = symbolic.factor(next).solve(b);
        const searched = new SparseLuSymbolic(next).factor(next).solve(b);
        const dense = factorizeDense(next).solve(b);
        // Within RESIDUAL and AGREEMENT, or within 10 times the search's own figure where the
        // drift made the matrix badly conditioned (the saddle's last round: 2.8e-12 for both).
        expect(relativeResidual(next, kept, b)).toBeLessThanOrEqual(Math.max(RESIDUAL, 10 * relativeResidual(next, searched, b)));
        expect(relativeDifference(kept, dense)).toBeLessThanOrEqual(Math.max(AGREEMENT, 10 * relativeDifference(searched, dense)));
      }
    }
  });

  it('chooses the pivots afresh when a kept pivot has become small against its column (no growth from a stale pivot)', () => {
    // Natural order, so the first factorisation pivots on a_00 = 1 (diagonal, large enough).
    // Then a_00 becomes 1e-14: keeping that pivot would multiply row 0 into row 1 by 1e14 and
    // lose every digit of the solution; the threshold test must send it back to the search.
    const natural = Int32Array.from([0, 1]);
    const symbolic = new SparseLuSymbolic(fromDense([[1, 1], [1, 2]]), { ordering: natural });
    const b = Float64Array.from([1, 3]);
    const first = fromDense([[1, 1], [1, 2]]);
    expect(Array.from(symbolic.factor(first).solve(b))).toEqual([-1, 2]);
    const tiny = fromDense([[1e-14, 1], [1, 2]]);
    const x = symbolic.factor(tiny).solve(b);
    expect(relativeResidual(tiny, x, b)).toBeLessThanOrEqual(RESIDUAL);
    expect(relativeDifference(x, factorizeDense(tiny).solve(b))).toBeLessThanOrEqual(AGREEMENT);
  });

  it('refuses a matrix whose pattern differs from the analysed one', () => {
    const symbolic = new SparseLuSymbolic(gridLaplacian(5));
    expect(() => symbolic.factor(gridLaplacian(6))).toThrow(/pattern/);
    const other = randomDiagonallyDominant(25, 3, 1);
    expect(() => symbolic.factor(other)).toThrow(/pattern/);
  });
});

describe('factorize', () => {
  it('factors by the chosen method, and both methods give the same solution', () => {
    const a = saddle(60, 20, [1], 51);
    const b = rightHandSide(a.n, 52);
    expect(relativeDifference(factorize(a, 'sparse').solve(b), factorize(a, 'dense').solve(b))).toBeLessThanOrEqual(AGREEMENT);
  });
});

describe('normalEquationsPattern', () => {
  it('is the pattern of AᵀA (columns joined where a row holds both), and orders a factorisation as accurate as the default', () => {
    const a = randomUnsymmetric(60, 3, 17);
    const p = normalEquationsPattern(a);
    const n = a.n;
    // AᵀA's pattern by brute force: columns i and j share a row.
    const rows = Array.from({ length: n }, (_, j) => new Set(Array.from(a.rowIdx.subarray(a.colPtr[j], a.colPtr[j + 1]))));
    for (let j = 0; j < n; j++) {
      const expected = [...Array(n).keys()].filter((i) => [...rows[i]!].some((r) => rows[j]!.has(r)));
      expect(Array.from(p.rowIdx.subarray(p.colPtr[j], p.colPtr[j + 1])).sort((x, y) => x - y)).toEqual(expected);
    }
    const b = rightHandSide(n, 18);
    const x = factorizeSparse(a, { ordering: approximateMinimumDegree(p) }).solve(b);
    expect(relativeResidual(a, x, b)).toBeLessThanOrEqual(RESIDUAL);
    expect(relativeDifference(x, factorizeDense(a).solve(b))).toBeLessThanOrEqual(AGREEMENT);
  });
});

/**
 * Timing of the linear-algebra layer on a ladder-shaped network matrix: two rails joined by a rung
 * at every position, with the pressure at one end of each rail fixed by a constraint row (zero
 * diagonal, as for a voltage source in modified nodal analysis), nodes numbered in a scrambled
 * order. Exports `ladderMatrix` and `benchSparseLu`, which times ordering, factorisation,
 * refactorisation and solve of the sparse LU for n = 10,000 against the dense LU for n = 1,000.
 */

import { SparseLuSymbolic, TripletBuilder, approximateMinimumDegree, factorizeDense, type SparseMatrix } from '../src/solver/linear.js';
import type { Row } from './report.js';

/**
 * The minimal standard generator (Park & Miller, 1988) with the multiplier 48271 of Park, Miller &
 * Stockmeyer (1993), so every run sees the same matrix.
 */
function minimalStandard(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
}

/** A ladder network matrix of size n (even, ≥ 6): n − 2 rail nodes and two constraint rows. */
export function ladderMatrix(n: number, seed = 1): SparseMatrix {
  const random = minimalStandard(seed);
  const nodes = n - 2;
  const rungs = nodes / 2;
  const label = Int32Array.from({ length: nodes }, (_, i) => i);
  for (let i = nodes - 1; i > 0; i--) {
    const j = Math.floor(random() * (i + 1));
    [label[i], label[j]] = [label[j], label[i]];
  }
  const builder = new TripletBuilder(n);
  const conductance = (from: number, to: number) => {
    const g = 0.5 + random();
    builder.add(from, from, g);
    builder.add(to, to, g);
    builder.add(from, to, -g);
    builder.add(to, from, -g);
  };
  for (let k = 0; k < rungs; k++) {
    const top = label[k];
    const bottom = label[rungs + k];
    conductance(top, bottom);
    if (k + 1 < rungs) {
      conductance(top, label[k + 1]);
      conductance(bottom, label[rungs + k + 1]);
    }
  }
  const fixPressure = (node: number, row: number) => {
    builder.add(row, node, 1);
    builder.add(node, row, 1);
  };
  fixPressure(label[0], nodes);
  fixPressure(label[nodes - 1], nodes + 1);
  return builder.toCsc();
}

/** Shortest wall-clock time of `runs` runs, after one untimed run to let the JIT compile. */
function fastest(runs: number, task: () => void): number {
  task();
  let best = Infinity;
  for (let r = 0; r < runs; r++) {
    const start = performance.now();
    task();
    best = Math.min(best, performance.now() - start);
  }
  return best;
}

export function benchSparseLu(): Row[] {
  const sparseSize = 10_000;
  const denseSize = 1_000;
  const a = ladderMatrix(sparseSize);
  const b = new Float64Array(sparseSize).fill(1);
  const runs = 15;

  const ordering = fastest(runs, () => approximateMinimumDegree(a));
  const symbolic = new SparseLuSymbolic(a);
  let fill = 0;
  const refactor = fastest(runs, () => {
    fill = symbolic.factor(a).nnzL;
  });
  const factor = symbolic.factor(a);
  fill += factor.nnzU;
  const solve = fastest(runs, () => factor.solve(b));
  const total = fastest(runs, () => new SparseLuSymbolic(a).factor(a).solve(b));

  const small = ladderMatrix(denseSize);
  const smallB = new Float64Array(denseSize).fill(1);
  const dense = fastest(2, () => factorizeDense(small).solve(smallB));
  const sparseSmall = fastest(runs, () => new SparseLuSymbolic(small).factor(small).solve(smallB));

  return [
    { name: `sparse LU, ladder n=${sparseSize}: ordering (AMD)`, value: ordering, unit: 'ms' },
    { name: `sparse LU, ladder n=${sparseSize}: factorisation, ordering reused`, value: refactor, unit: 'ms' },
    { name: `sparse LU, ladder n=${sparseSize}: solve`, value: solve, unit: 'ms' },
    { name: `sparse LU, ladder n=${sparseSize}: ordering + factorisation + solve`, value: total, unit: 'ms' },
    { name: `sparse LU, ladder n=${sparseSize}: nonzeros in L+U per nonzero of A`, value: fill / a.colPtr[sparseSize], unit: '' },
    { name: `sparse LU, ladder n=${denseSize}: ordering + factorisation + solve`, value: sparseSmall, unit: 'ms' },
    { name: `dense LU (ml-matrix), ladder n=${denseSize}: factorisation + solve`, value: dense, unit: 'ms' },
  ];
}

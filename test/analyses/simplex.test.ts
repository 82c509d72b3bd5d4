/**
 * The small simplex of tune's margin steps (src/analyses/simplex.ts) against a textbook example.
 */
import { describe, expect, it } from 'vitest';
import { simplexMaximise } from '../../src/analyses/simplex.js';

describe('simplexMaximise', () => {
  it('solves the first example of Chvátal, Linear Programming (1983), ch. 2: z = 13 at (2, 0, 1) (from memory)', () => {
    const x = simplexMaximise([5, 4, 3], [[2, 3, 1], [4, 1, 2], [3, 4, 2]], [5, 11, 8])!;
    expect(x[0]).toBeCloseTo(2, 12);
    expect(x[1]).toBeCloseTo(0, 12);
    expect(x[2]).toBeCloseTo(1, 12);
  });

  it('reports an unbounded objective as null', () => {
    expect(simplexMaximise([1, 1], [[1, -1]], [1])).toBeNull();
  });
});

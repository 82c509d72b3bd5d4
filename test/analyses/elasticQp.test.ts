/**
 * The SQP subproblem of the design (src/analyses/elasticQp.ts) against closed-form minimisers of
 * small problems worked by hand: ½hd² + gd + μ·max violation, with bounds.
 */
import { describe, expect, it } from 'vitest';
import { elasticStep } from '../../src/analyses/elasticQp.js';

/** Agreement asked: the dual method is exact but for rounding and the 1e-6 relative curvature put on the violation (its effect is μ-scaled: t·1e-6·h/μ). */
const CLOSE = 1e-6;

describe('elasticStep', () => {
  it('takes the unconstrained minimiser −g/h where no row or bound binds', () => {
    const s = elasticStep({ hessian: [[2]], gradient: [-1], rows: [{ a: [1], b: -10 }], lower: [-5], upper: [5], penalty: 10 });
    expect(s.d[0]).toBeCloseTo(0.5, 9);
    expect(s.violation).toBeLessThan(CLOSE);
  });

  it('stops on a row whose price μ exceeds the pull of the model there (d = b/a), and passes it once μ is lower', () => {
    // ½·2d² − 4d, row d ≤ 1 written −d ≥ −1: the model's slope at d = 1 is 2·1 − 4 = −2.
    const held = elasticStep({ hessian: [[2]], gradient: [-4], rows: [{ a: [-1], b: -1 }], lower: [-5], upper: [5], penalty: 3 });
    expect(held.d[0]).toBeCloseTo(1, 6);
    // With μ = 1 < 2 the minimiser of ½·2d² − 4d + (d − 1) is d = 1.5, a violation of 0.5.
    const passed = elasticStep({ hessian: [[2]], gradient: [-4], rows: [{ a: [-1], b: -1 }], lower: [-5], upper: [5], penalty: 1 });
    expect(passed.d[0]).toBeCloseTo(1.5, 5);
    expect(passed.violation).toBeCloseTo(0.5, 5);
  });

  it('splits the difference of two rows that contradict each other (d ≥ 1 and d ≤ −1) at the smallest largest violation', () => {
    const s = elasticStep({ hessian: [[1e-3]], gradient: [0], rows: [{ a: [1], b: 1 }, { a: [-1], b: 1 }], lower: [-5], upper: [5], penalty: 100 });
    expect(s.d[0]).toBeCloseTo(0, 5);
    expect(s.violation).toBeCloseTo(1, 5);
  });

  it('holds an equality row and keeps to the bounds, which join only when a step reaches them', () => {
    // min ½(d1² + d2²) − 10·d1 with d1 + d2 = 1 and d1 ≤ 2: d1 = 2 at its bound, d2 = −1.
    const s = elasticStep({ hessian: [[1, 0], [0, 1]], gradient: [-10, 0], rows: [{ a: [1, 1], b: 1, equality: true }], lower: [-Infinity, -Infinity], upper: [2, Infinity], penalty: 1e3 });
    expect(s.d[0]).toBeCloseTo(2, 6);
    expect(s.d[1]).toBeCloseTo(-1, 6);
  });
});

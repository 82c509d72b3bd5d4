/**
 * The filled window map (src/analyses/windowFill.ts, through src/analyses/window.ts): a coarse
 * grid with quadtree refinement gives the class of a full solve at every grid point, fills only
 * cells of one class that no traced boundary crosses, marks what it filled, and its filled
 * figures on the hand-worked chip (test/support/handWindow.ts) lie within its estimated error
 * of the full solve.
 */
import { describe, expect, it } from 'vitest';
import { layoutToChip } from '../../src/layout/load.js';
import { ladderLayout } from '../../src/layout/generate.js';
import { windowMap, type WindowPoint } from '../../src/analyses/window.js';
import { coarseIndices, MapRefinement, segmentMeetsBox } from '../../src/analyses/windowFill.js';
import { parseSetting } from '../../src/analyses/settings.js';
import { singleContactor } from '../support/handWindow.js';

describe('coarse grid', () => {
  it('takes every fourth value and always the last', () => {
    expect(coarseIndices(41)).toEqual([0, 4, 8, 12, 16, 20, 24, 28, 32, 36, 40]);
    expect(coarseIndices(7)).toEqual([0, 4, 6]);
    expect(coarseIndices(2)).toEqual([0, 1]);
    expect(coarseIndices(5, 1)).toEqual([0, 1, 2, 3, 4]);
  });
});

describe('segmentMeetsBox', () => {
  const box = { x: [0, 1] as [number, number], y: [0, 1] as [number, number] };
  it('finds a segment crossing the box, one inside it and one touching an edge', () => {
    expect(segmentMeetsBox([-1, 0.5], [2, 0.5], box)).toBe(true);
    expect(segmentMeetsBox([0.2, 0.2], [0.3, 0.4], box)).toBe(true);
    expect(segmentMeetsBox([1, -1], [1, 2], box)).toBe(true);
  });
  it('misses a segment beside the box and one whose line, not itself, would cross it', () => {
    expect(segmentMeetsBox([1.1, -1], [1.1, 2], box)).toBe(false);
    expect(segmentMeetsBox([-2, 0.5], [-1, 0.5], box)).toBe(false);
    expect(segmentMeetsBox([-1, 1.5], [0.4, 1.1], box)).toBe(false);
  });
});

/** A solved point of class pinned whose flows are affine in (i, j): bilinear interpolation is exact for them, and for the ratio of the interpolated flows. */
function affinePoint(i: number, j: number): WindowPoint {
  return {
    i, j, x: i, y: j, class: 'pinned', solved: true, attempts: 1, iterations: 2, pinned: 1, leakingAtoB: 0, leakingBtoA: 0, backflow: [],
    maxPressure: 1000 + i, throughputA: 1 + i, throughputB: 1 + j, throughput: 2 + i + j, flowRatio: (1 + i) / (1 + j), spreadCv: 0, spreadMaxMin: 1, minMargin: 10,
  };
}

describe('MapRefinement', () => {
  const values = Array.from({ length: 9 }, (_, k) => k);
  const solveAll = (refinement: MapRefinement) => {
    const asked: string[] = [];
    for (let batch = refinement.nextBatch(); batch; batch = refinement.nextBatch()) {
      for (const { i, j } of batch) {
        asked.push(`${i},${j}`);
        refinement.record(affinePoint(i, j), undefined);
      }
    }
    return asked;
  };
  const coarse = (refinement: MapRefinement) => {
    const { x, y } = refinement.coarse();
    for (const j of y) for (const i of x) refinement.record(affinePoint(i, j), undefined);
  };

  it('fills cells of one class with affine figures after one solve at each centre, exactly', () => {
    const refinement = new MapRefinement(values, values);
    coarse(refinement);
    // Coarse cells of 4 steps: their centres are solved to measure the interpolation's error.
    expect(solveAll(refinement)).toEqual(['2,2', '6,2', '2,6', '6,6']);
    const { points, fill } = refinement.finish();
    expect([fill.solved, fill.filled]).toEqual([13, 68]);
    // Second differences of affine figures vanish up to rounding of values near 1 (1e-15).
    expect(fill.throughputError).toBeLessThan(1e-15);
    expect(fill.flowRatioError).toBeLessThan(1e-15);
    const p = points[3]![6]!;
    expect(p.solved).toBe(false);
    expect(p.class).toBe('pinned');
    // Affine flows: bilinear interpolation reproduces them, and their ratio, to rounding.
    expect(p.throughput).toBeCloseTo(2 + 6 + 3, 12);
    expect(p.flowRatio).toBeCloseTo(7 / 4, 12);
    expect(p.pinned).toBe(1);
  });

  /** Whether every grid cell of one step that the test `meets` has its four corners solved. */
  const cellsSolved = (points: WindowPoint[][], meets: (i: number, j: number) => boolean) => {
    const unsolved: string[] = [];
    for (let j = 0; j < 8; j++) {
      for (let i = 0; i < 8; i++) {
        if (!meets(i, j)) continue;
        for (const [a, b] of [[i, j], [i + 1, j], [i, j + 1], [i + 1, j + 1]] as const) if (!points[b]![a]!.solved) unsolved.push(`${a},${b}`);
      }
    }
    return unsolved;
  };

  it('solves the corners of every grid step that a traced boundary crosses, and fills cells away from it', () => {
    // A short boundary inside the coarse cell (0…4) × (0…4) only.
    const line: Array<[number, number]> = [[1.5, 1.5], [2.5, 2.2]];
    const refinement = new MapRefinement(values, values, [line]);
    coarse(refinement);
    const asked = solveAll(refinement);
    const { points, fill } = refinement.finish();
    expect(cellsSolved(points, (i, j) => segmentMeetsBox(line[0], line[1], { x: [i, i + 1], y: [j, j + 1] }))).toEqual([]);
    expect(points[7]![5]!.solved).toBe(false);
    expect(fill.solved).toBe(9 + asked.length);
    expect(new Set(asked).size).toBe(asked.length);
  });

  it('refines where classes meet until every point has its true class, and leaves cells of one class filled', () => {
    // The truth: leaking above the line i + j = 14.5, which passes through the corner cell (4…8) × (4…8) only.
    const truth = (i: number, j: number) => (i + j > 14 ? 'leaking-A-to-B' : 'pinned');
    const refinement = new MapRefinement(values, values);
    const { x, y } = refinement.coarse();
    for (const j of y) for (const i of x) refinement.record({ ...affinePoint(i, j), class: truth(i, j) }, undefined);
    for (let batch = refinement.nextBatch(); batch; batch = refinement.nextBatch()) {
      for (const { i, j } of batch) refinement.record({ ...affinePoint(i, j), class: truth(i, j) }, undefined);
    }
    const { points } = refinement.finish();
    for (const row of points) for (const p of row) expect(p.class, `${p.i},${p.j}`).toBe(truth(p.i, p.j));
    expect(points[3]![1]!.solved).toBe(false);
    expect(points[7]![7]!.solved).toBe(true);
  });
});

describe('filled map against the full solve', () => {
  it('gives the class of the full solve at every grid point of a three-contactor ladder, solving fewer points', async () => {
    // The range spans backflow, both leaks and a pinned band two grid steps wide (measured).
    const chip = layoutToChip(ladderLayout({ contactors: 3 }), 'ladder');
    const spec = {
      x: { setting: parseSetting('inA.pressure', chip), from: 2e3, to: 6e3, steps: 17 },
      y: { setting: parseSetting('inB.pressure', chip), from: 1e3, to: 5e3, steps: 17 },
    };
    const full = await windowMap(chip, spec, { workers: 1, fill: false });
    const filled = await windowMap(chip, spec, { workers: 1 });
    expect(full.fill.filled).toBe(0);
    expect(filled.fill.filled).toBeGreaterThan(0);
    expect(filled.points.map((row) => row.map((p) => p.class))).toEqual(full.points.map((row) => row.map((p) => p.class)));
    expect(filled.counts).toEqual(full.counts);
    expect(new Set(full.points.flat().map((p) => p.class))).toEqual(new Set(['pinned', 'leaking-A-to-B', 'leaking-B-to-A', 'backflow']));
  });

  it('fills the hand-worked chip with figures within the estimated error of the full solve', async () => {
    const chip = layoutToChip(singleContactor(), 'hand example');
    const spec = {
      x: { setting: parseSetting('inA.pressure', chip), from: 6e3, to: 9e3, steps: 25 },
      y: { setting: parseSetting('inB.pressure', chip), from: 6e3, to: 9.5e3, steps: 25 },
    };
    const full = await windowMap(chip, spec, { workers: 1, fill: false });
    const map = await windowMap(chip, spec, { workers: 1 });
    expect(map.points.map((row) => row.map((p) => p.class))).toEqual(full.points.map((row) => row.map((p) => p.class)));
    // Backflow cells are filled by class alone (their figures are not drawn).
    const drawn = map.points.flat().filter((p) => !p.solved && p.class !== 'backflow');
    expect(drawn.length).toBeGreaterThan(0);
    for (const p of drawn) {
      const q = full.points[p.j]![p.i]!;
      // Both maps balance mass to 1e-5 of the throughput (SWEEP_SOLVER): that much again on top of the estimate.
      expect(Math.abs(p.throughput - q.throughput), `${p.i},${p.j}`).toBeLessThanOrEqual(map.fill.throughputError + 2e-5 * q.throughput);
      expect(Math.abs(p.flowRatio - q.flowRatio), `${p.i},${p.j}`).toBeLessThanOrEqual(map.fill.flowRatioError + 2e-5 * q.flowRatio);
    }
  });
});

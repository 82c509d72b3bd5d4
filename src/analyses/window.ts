/**
 * Pressure window maps: sweep two driving quantities of a chip over a grid, solve the whole chip
 * at every point and classify it — every split pinned, some splits leaking (how many, which
 * way), backflow into an inlet line, over the pressure rating, or solve failed — with the
 * throughput, phase flow ratio and spread between contactors at each point. What counts as
 * backflow or over the rating is decided by ./verdict.ts.
 *
 * The two axes are settings (./settings.ts), or their mean and difference (./windowRegion.ts).
 *
 * Exports `axisValues`,
 * `describePoint`, `predictedStart`, `sweepLine`, `solveGridPoints`, `windowMap`, `SWEEP_SOLVER`, `POINT_CLASSES`,
 * `mapTarget`, `targetCrossings` and the types. Continuation: each point starts from the solutions of its neighbours. The
 * seed column of a coarse grid is swept up and down from the seed point, then each row right and
 * left from its seed-column point; then the cells where classes meet, a traced boundary passes or
 * the figures curve are refined and the rest filled (./windowFill.ts). Lines and refinement
 * batches are independent jobs, so the map is the same whatever the number of worker threads
 * (./sweepWorker.ts) that share them.
 * No file I/O; no drawing.
 */
import type { Worker } from 'node:worker_threads';
import { runPool, startWorkerBeside } from './workers.js';
import { solveChip, warmStartFrom, type SolvedChip } from './chip.js';
import { SolverWorkspace, type WarmStart } from '../solver/newton.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip } from '../network/model.js';
import { settingName, withSettings, type Setting } from './settings.js';
import { StratiflowError } from '../errors.js';
import { operatingVerdict } from './verdict.js';
import { min as minOf } from 'd3-array';
import { settingsAt, type WindowCoordinates } from './windowRegion.js';
import { COARSE_STRIDE, MapRefinement, type MapFill, type PointToSolve } from './windowFill.js';

// ---------------------------------------------------------------------------------------------
// Grid and classes

export interface SweepAxis {
  setting: Setting;
  from: number;
  to: number;
  /** Number of grid values, at least 2; evenly spaced from `from` to `to`. */
  steps: number;
}

export interface WindowSpec {
  x: SweepAxis;
  y: SweepAxis;
  /** What the axes' values are: the two settings (default), or their mean and difference (./windowRegion.ts). */
  coordinates?: WindowCoordinates;
  /** Passed to every chip solve. */
  solver?: SolverOptions;
}

/** Classes in order of precedence: a point takes the first that applies, reading from the end. */
export const POINT_CLASSES = ['pinned', 'leaking-A-to-B', 'leaking-B-to-A', 'leaking-both', 'backflow', 'over-rating', 'failed'] as const;
export type PointClass = (typeof POINT_CLASSES)[number];

export interface WindowPoint {
  i: number;
  j: number;
  x: number;
  y: number;
  class: PointClass;
  /**
   * Whether the chip was solved here; a point not solved was filled from the solved corners of
   * its cell (./windowFill.ts): their class, their figures interpolated, counts that the corners
   * do not share NaN.
   */
  solved: boolean;
  /** Starts the solver made (1 when the warm start settled; see solver/newton.ts `attemptPlan`). */
  attempts: number;
  iterations: number;
  /** Why the solve failed, for class 'failed'. */
  message?: string;
  pinned: number;
  leakingAtoB: number;
  leakingBtoA: number;
  /** Inlets that take liquid back, feed lines that carry the other phase backwards, contactors running backwards or starved of a phase (./verdict.ts). */
  backflow: string[];
  /** Highest pressure anywhere in the chip, Pa. */
  maxPressure: number;
  /** Delivered by the inlets, m³/s. */
  throughputA: number;
  throughputB: number;
  throughput: number;
  /** throughputA / throughputB. */
  flowRatio: number;
  /** Coefficient of variation and max/min of the total flow per contactor. */
  spreadCv: number;
  spreadMaxMin: number;
  /** Smallest distance of a split's p_B − p_A from its window limits, Pa (0 at a leaking split). */
  minMargin: number;
}

export interface WindowMap {
  spec: WindowSpec;
  xValues: number[];
  yValues: number[];
  /** points[j][i]: row j at y = yValues[j], column i at x = xValues[i]. */
  points: WindowPoint[][];
  counts: Record<PointClass, number>;
  splits: number;
  maxPressure?: number;
  /** How many points were solved and filled, and the estimated error of the filled figures (./windowFill.ts). */
  fill: MapFill;
}

export function axisValues(axis: SweepAxis): number[] {
  return Array.from({ length: axis.steps }, (_, k) => (k === axis.steps - 1 ? axis.to : axis.from + ((axis.to - axis.from) * k) / (axis.steps - 1)));
}

function checkAxis(axis: SweepAxis, name: string, plain: boolean): void {
  if (!Number.isInteger(axis.steps) || axis.steps < 2) throw new StratiflowError('bad-option', `${name}: the number of steps must be a whole number of at least 2`);
  if (!(Number.isFinite(axis.from) && Number.isFinite(axis.to)) || axis.from === axis.to) throw new StratiflowError('bad-option', `${name}: the range needs two different finite ends`);
  if (plain && axis.setting.quantity === 'flow' && Math.min(axis.from, axis.to) < 0) throw new StratiflowError('bad-option', `${name}: an inlet flow cannot be negative`);
}

/**
 * Solver settings of a sweep, over the solver's own defaults: a map needs the class of each
 * point and its totals to four or five digits, so mass balances to 1e-5 of the throughput do
 * (on the 64-contactor ladder the classes came out the same as at 1e-6, and the totals to 7
 * digits). Every point has every attempt of the solver (warm, cold, smoothing, Picard): caps
 * on all steps or attempts failed a point that a cold or smoothing start settles, and one failure
 * then failed its line (25 of 441 points of the dye chip's map). Only the warm start is cut
 * short, at 60 steps: from a neighbour's solution a point settles in a few, and one that has not
 * in 60 settles sooner from a cold start.
 */
export const SWEEP_SOLVER: SolverOptions = { relativeTolerance: 1e-5, maxWarmIterations: 60 };

/** Where a point lies on the grid and in setting values. */
export interface GridPlace {
  i: number;
  j: number;
  x: number;
  y: number;
}

/** The class and figures of one solved chip (`chip` is the solved variant, for its rating). */
export function describePoint(chip: Chip, solved: SolvedChip, place: GridPlace, attempts = 1): WindowPoint {
  const { result } = solved;
  const base = { ...place, solved: true, attempts, iterations: result.iterations };
  if (!result.converged) {
    return {
      ...base, class: 'failed', message: result.message ?? 'no convergence', pinned: 0, leakingAtoB: 0, leakingBtoA: 0, backflow: [],
      maxPressure: NaN, throughputA: NaN, throughputB: NaN, throughput: NaN, flowRatio: NaN, spreadCv: NaN, spreadMaxMin: NaN, minMargin: NaN,
    };
  }
  const { summary } = result;
  const pinned = result.splits.filter((s) => s.state === 'pinned').length;
  const leakingAtoB = result.splits.filter((s) => s.state === 'leaking-A-to-B').length;
  const leakingBtoA = result.splits.filter((s) => s.state === 'leaking-B-to-A').length;
  const throughput = summary.throughputA + summary.throughputB;
  const problems = operatingVerdict({ ...solved, chip });
  const backflow = problems.filter((p) => p.kind === 'backflow' || p.kind === 'starved').map((p) => p.id);
  const over = problems.some((p) => p.kind === 'over-rating');
  const leaking = leakingAtoB > 0 && leakingBtoA > 0 ? 'leaking-both' : leakingAtoB > 0 ? 'leaking-A-to-B' : leakingBtoA > 0 ? 'leaking-B-to-A' : 'pinned';
  return {
    ...base,
    class: over ? 'over-rating' : backflow.length > 0 ? 'backflow' : leaking,
    pinned,
    leakingAtoB,
    leakingBtoA,
    backflow,
    maxPressure: summary.maxPressure,
    throughputA: summary.throughputA,
    throughputB: summary.throughputB,
    throughput,
    flowRatio: summary.throughputB > 0 ? summary.throughputA / summary.throughputB : Infinity,
    spreadCv: summary.spread.total.cv,
    spreadMaxMin: summary.spread.total.ratio,
    minMargin: result.splits.length ? minOf(result.splits.map((s) => s.margin))! : NaN,
  };
}

// ---------------------------------------------------------------------------------------------
// Sweeping

/** One grid point to solve along a line of the sweep. */
export interface LinePoint {
  i: number;
  j: number;
}

export interface LineResult {
  points: WindowPoint[];
  /** Warm start left by each point: its own solution, or the last converged one before it. */
  warm: Array<WarmStart | undefined>;
}

/**
 * The starting guess for the next point of a line from the last two solutions (a secant
 * predictor, as in predictor–corrector continuation: Allgower & Georg, Introduction to
 * Numerical Continuation Methods, 2003, ch. 2, from memory): pressures, holdups and leaks are
 * extrapolated linearly when both solutions had the same split states, holdups are kept inside
 * (0, 1); compositions and split states are taken from the last solution. Feeds start open:
 * given a starved feed, the solver keeps it starved even where the open feed is the solution
 * (a neighbour's starved state would spread into the open region), while from an open feed it
 * finds a starved one in a few steps.
 */
export function predictedStart(last: WarmStart, before: WarmStart | undefined): WarmStart {
  const open = { ...last, feedStates: last.feedStates.map(() => 'open' as const), crossover: new Float64Array(last.crossover.length) };
  if (!before || before.splitStates.some((state, s) => state !== last.splitStates[s])) return open;
  const extrapolate = (a: Float64Array, b: Float64Array) => a.map((v, k) => 2 * v - b[k]!);
  const holdup = extrapolate(last.holdup, before.holdup).map((h, c) => (h > 0 && h < 1 ? h : last.holdup[c]!));
  return { ...open, pressure: extrapolate(last.pressure, before.pressure), holdup, leak: extrapolate(last.leak, before.leak) };
}

/**
 * Solves the points in order. Each starts from the prediction of the last two converged
 * solutions of the line (`seed` stands before the first); a point whose warm start fails is
 * tried by the solver's other attempts (cold, smoothing, Picard). The points of a line share
 * one solver workspace (symbolic analyses, factors, holdup tables), which a worker keeps for
 * all its lines (see `solveGridPoints`).
 */
export function sweepLine(
  chip: Chip,
  spec: WindowSpec,
  line: readonly LinePoint[],
  seed: WarmStart | undefined,
  onPoint?: (point: WindowPoint, warm: WarmStart | undefined) => void,
  workspace = new SolverWorkspace(),
): LineResult {
  const xs = axisValues(spec.x);
  const ys = axisValues(spec.y);
  const solver = { ...SWEEP_SOLVER, ...spec.solver };
  const points: WindowPoint[] = [];
  const warm: Array<WarmStart | undefined> = [];
  let last = seed;
  // The solution before `last`, while both are this line's and neighbours (for the secant).
  let before: WarmStart | undefined;
  let previousFailed = false;
  for (const { i, j } of line) {
    const { point, solved } = solveGridPoint(chip, spec, solver, workspace, { i, j, x: xs[i]!, y: ys[j]! }, last && predictedStart(last, before));
    if (solved.result.converged) {
      before = previousFailed || last === seed ? undefined : last;
      last = warmStartFrom(solved);
    } else {
      before = undefined;
    }
    previousFailed = !solved.result.converged;
    points.push(point);
    warm.push(last);
    onPoint?.(point, last);
  }
  return { points, warm };
}

/** The chip solved at one grid point from `start`, and the point's class and figures. */
function solveGridPoint(chip: Chip, spec: WindowSpec, solver: SolverOptions, workspace: SolverWorkspace, place: GridPlace, start: WarmStart | undefined): { point: WindowPoint; solved: SolvedChip } {
  const [tx, ty] = settingsAt(spec.coordinates ?? 'settings', [place.x, place.y]);
  const variant = withSettings(chip, [[spec.x.setting, tx], [spec.y.setting, ty]]);
  const solved = solveChip(variant, solver, start, workspace);
  return { point: describePoint(variant, solved, place, solved.raw.starts), solved };
}

/**
 * Solves grid points each on its own, from its first seed with every start of the solver; a
 * point tried again (`retry`) from each of its seeds in turn, warm only, until one settles.
 * The points share `workspace`: a worker keeps one for all its batches, so that the holdup
 * tables of etched or trapezoidal contactors are built once per thread, not once per batch
 * (each solve forgets the factors' pivots, so the answers do not depend on what it solved before).
 */
export function solveGridPoints(
  chip: Chip,
  spec: WindowSpec,
  points: readonly PointToSolve[],
  onPoint: (point: WindowPoint, warm: WarmStart | undefined) => void,
  workspace = new SolverWorkspace(),
): void {
  const xs = axisValues(spec.x);
  const ys = axisValues(spec.y);
  const solver = { ...SWEEP_SOLVER, ...spec.solver };
  for (const { i, j, seeds, retry } of points) {
    const place = { i, j, x: xs[i]!, y: ys[j]! };
    let found: { point: WindowPoint; solved: SolvedChip } | undefined;
    for (const seed of retry ? seeds : [seeds[0]]) {
      found = solveGridPoint(chip, spec, retry ? { ...solver, maxAttempts: 1 } : solver, workspace, place, seed);
      if (found.solved.result.converged) break;
    }
    if (!found) continue;
    onPoint(found.point, found.solved.result.converged ? warmStartFrom(found.solved) : undefined);
  }
}

export interface WindowOptions {
  /** Worker threads; 1 sweeps in this thread. Default 1. */
  workers?: number;
  /** Warm start for the first grid point (e.g. the chip's solution as given). */
  seed?: WarmStart;
  /**
   * The grid point the sweep starts from (default 0, 0; with `fill`, the nearest coarse one): a
   * point where the chip works, near the seed's settings, lets continuation go outward from
   * working states into failing ones, which the solver follows better than the reverse.
   */
  seedColumn?: number;
  seedRow?: number;
  /**
   * Solve a coarse grid and refine only where classes meet, a traced boundary passes or the
   * figures curve, filling the rest (./windowFill.ts); default true. False solves every point.
   */
  fill?: boolean;
  /** Traced boundaries (./windowRegion.ts) in the map's coordinates: every cell they cross is solved down to single steps. */
  boundaries?: ReadonlyArray<ReadonlyArray<readonly [number, number]>>;
  /** Called after each solved or filled point with the number done and the total. */
  onProgress?: (done: number, total: number) => void;
}

/** What a worker is told once, at start. */
export interface SweepWorkerData {
  chip: Chip;
  spec: WindowSpec;
}

/** Messages to a worker: a line to sweep by continuation, or points to solve each from its own seeds. */
export type SweepJob =
  | {
      kind: 'line';
      id: number;
      line: LinePoint[];
      seed?: WarmStart;
      /** Send each point's warm start back as it is solved (the first column seeds the rows; a filled map seeds its refinement). */
      stream: boolean;
    }
  | { kind: 'points'; id: number; points: PointToSolve[] };

/** Messages from a worker. */
export type SweepMessage =
  | { kind: 'point'; id: number; point: WindowPoint; warm?: WarmStart }
  | { kind: 'done'; id: number }
  | { kind: 'error'; message: string };

/**
 * Points per job of a refinement batch: fixed, so that which points share a solver workspace
 * does not depend on the number of workers; small, so that two workers share a short batch.
 */
const POINTS_PER_JOB = 4;

export async function windowMap(chip: Chip, spec: WindowSpec, options: WindowOptions = {}): Promise<WindowMap> {
  const plain = (spec.coordinates ?? 'settings') === 'settings';
  checkAxis(spec.x, settingName(spec.x.setting), true);
  checkAxis(spec.y, settingName(spec.y.setting), plain);
  if (settingName(spec.x.setting) === settingName(spec.y.setting)) throw new StratiflowError('bad-option', 'the two swept settings must differ');
  if (spec.x.setting.node === spec.y.setting.node) throw new StratiflowError('bad-option', `both swept settings act on node "${spec.x.setting.node}"; choose settings of two different nodes`);
  const nx = spec.x.steps;
  const ny = spec.y.steps;
  const xValues = axisValues(spec.x);
  const yValues = axisValues(spec.y);
  const total = nx * ny;
  const refinement = new MapRefinement(xValues, yValues, options.boundaries ?? [], options.fill === false ? 1 : COARSE_STRIDE);
  const { x: columns, y: rowValues } = refinement.coarse();
  const seen = new Set<number>();
  const record = (p: WindowPoint, warm: WarmStart | undefined) => {
    refinement.record(p, warm);
    const key = p.j * nx + p.i;
    if (seen.has(key)) return;
    seen.add(key);
    options.onProgress?.(seen.size, total);
  };
  // The seed column is swept from the seed row up and then down; each row from the seed column
  // right and left, over the coarse grid's values.
  const nearest = (values: number[], k: number | undefined) => {
    const want = Math.min(values.at(-1)!, Math.max(0, k ?? 0));
    return values.reduce((best, v, n) => (Math.abs(v - want) < Math.abs(values[best]! - want) ? n : best), 0);
  };
  const c = nearest(columns, options.seedColumn);
  const r = nearest(rowValues, options.seedRow);
  const up: LinePoint[] = rowValues.slice(r).map((j) => ({ i: columns[c]!, j }));
  const down: LinePoint[] = rowValues.slice(0, r).reverse().map((j) => ({ i: columns[c]!, j }));
  const rows = (j: number): LinePoint[][] =>
    [columns.slice(c + 1).map((i) => ({ i, j })), columns.slice(0, c).reverse().map((i) => ({ i, j }))].filter((line) => line.length > 0);
  const workers = Math.max(1, Math.min(options.workers ?? 1, ny));
  const stream = options.fill !== false;

  if (workers === 1) {
    const workspace = new SolverWorkspace();
    const upward = sweepLine(chip, spec, up, options.seed, record, workspace);
    const downward = sweepLine(chip, spec, down, upward.warm[0], record, workspace);
    const columnWarm = (k: number) => (k >= r ? upward.warm[k - r] : downward.warm[r - 1 - k]);
    rowValues.forEach((j, k) => {
      for (const line of rows(j)) sweepLine(chip, spec, line, columnWarm(k), record, workspace);
    });
    for (let batch = refinement.nextBatch(); batch; batch = refinement.nextBatch()) solveGridPoints(chip, spec, batch, record, workspace);
  } else {
    await sweepInWorkers(chip, spec, workers, { up, down, rows }, options.seed, record, stream, () => refinement.nextBatch());
  }

  const { points: grid, fill } = refinement.finish();
  let done = seen.size;
  for (let k = done; k < total; k++) options.onProgress?.(++done, total);
  const counts = Object.fromEntries(POINT_CLASSES.map((c) => [c, 0])) as Record<PointClass, number>;
  for (const p of grid.flat()) counts[p.class]++;
  const splits = chip.nodes.filter((n) => n.kind === 'split').length;
  return { spec, xValues, yValues, points: grid, counts, splits, maxPressure: chip.maxPressure, fill };
}

function startWorker(data: SweepWorkerData): Worker {
  return startWorkerBeside(import.meta.url, 'sweepWorker', data);
}

/**
 * The seed column is swept up from the seed row (streaming each point's warm start back), and
 * down from it once the seed point is known; every row's lines are queued as soon as its
 * column point is known and taken by the next idle worker. Once every line is done, the
 * refinement's batches (`next`) follow, each in jobs of POINTS_PER_JOB points, until it has none.
 */
function sweepInWorkers(
  chip: Chip,
  spec: WindowSpec,
  count: number,
  lines: { up: LinePoint[]; down: LinePoint[]; rows: (j: number) => LinePoint[][] },
  seed: WarmStart | undefined,
  record: (p: WindowPoint, warm: WarmStart | undefined) => void,
  stream: boolean,
  next: () => PointToSolve[] | undefined,
): Promise<void> {
  const UP = -1;
  const DOWN = -2;
  let pending = 0;
  let id = 0;
  return runPool<SweepJob, SweepMessage>(
    Array.from({ length: count }, () => startWorker({ chip, spec })),
    (pool) => {
      pending++;
      pool.submit({ kind: 'line', id: UP, line: lines.up, seed, stream: true });
    },
    (message, pool) => {
      if (message.kind === 'error') {
        pool.finish(new Error(message.message));
        return false;
      }
      if (message.kind === 'point') {
        record(message.point, message.warm);
        if (message.id !== UP && message.id !== DOWN) return false;
        // A column point: its row can start, and the first one also starts the way down.
        if (message.id === UP && message.point.j === lines.up[0]!.j && lines.down.length > 0) {
          pending++;
          pool.submit({ kind: 'line', id: DOWN, line: lines.down, seed: message.warm, stream: true });
        }
        for (const line of lines.rows(message.point.j)) {
          pending++;
          pool.submit({ kind: 'line', id: id++, line, seed: message.warm, stream });
        }
        return false;
      }
      if (--pending === 0) {
        const batch = next();
        if (!batch) {
          pool.finish();
          return true;
        }
        for (let k = 0; k < batch.length; k += POINTS_PER_JOB) {
          pending++;
          pool.submit({ kind: 'points', id: id++, points: batch.slice(k, k + POINTS_PER_JOB) });
        }
      }
      return true;
    },
  );
}

/** A place in the space of the two settings, in their SI values. */
type Point = readonly [number, number];

/** The flow target to mark, as throughput and ratio A/B (either may be missing). */
export interface MapTarget {
  throughput?: number;
  ratio?: number;
}

/**
 * Where the fields cross both target levels, in setting values: each grid cell is cut into two
 * triangles on which the fields are linear, and the 2×2 system is solved on each.
 */
export function targetCrossings(map: WindowMap, target: MapTarget): Point[] {
  if (target.throughput === undefined || target.ratio === undefined) return [];
  const f = (p: WindowPoint) => [p.throughput - target.throughput!, p.flowRatio - target.ratio!] as const;
  const found: Point[] = [];
  const { points, xValues, yValues } = map;
  for (let j = 0; j + 1 < yValues.length; j++) {
    for (let i = 0; i + 1 < xValues.length; i++) {
      const corners = [points[j]![i]!, points[j]![i + 1]!, points[j + 1]![i]!, points[j + 1]![i + 1]!];
      if (corners.some((p) => !Number.isFinite(p.throughput) || !Number.isFinite(p.flowRatio))) continue;
      for (const [a, b, c] of [[0, 1, 3], [0, 3, 2]] as const) {
        const [pa, pb, pc] = [corners[a]!, corners[b]!, corners[c]!];
        const [fa, fb, fc] = [f(pa), f(pb), f(pc)];
        // f(s, t) = fa + s (fb − fa) + t (fc − fa) = 0 on the triangle s, t ≥ 0, s + t ≤ 1.
        const m11 = fb[0] - fa[0];
        const m12 = fc[0] - fa[0];
        const m21 = fb[1] - fa[1];
        const m22 = fc[1] - fa[1];
        const det = m11 * m22 - m12 * m21;
        if (det === 0) continue;
        const s = (-fa[0] * m22 + fa[1] * m12) / det;
        const t = (-fa[1] * m11 + fa[0] * m21) / det;
        if (s < 0 || t < 0 || s + t > 1) continue;
        found.push([pa.x + s * (pb.x - pa.x) + t * (pc.x - pa.x), pa.y + s * (pb.y - pa.y) + t * (pc.y - pa.y)]);
      }
    }
  }
  // A crossing on a shared edge is found from both sides.
  return found.filter((p, k) => found.findIndex((q) => Math.abs(q[0] - p[0]) + Math.abs(q[1] - p[1]) < 1e-9 * (Math.abs(p[0]) + Math.abs(p[1]) + 1e-30)) === k);
}

/**
 * A target given as any two of flow A, flow B, throughput and ratio, as throughput and ratio;
 * the caller checks that at most two are given (and names its own options when not).
 */
export function mapTarget(t: { flowA?: number; flowB?: number; throughput?: number; ratio?: number }): MapTarget | undefined {
  const given = [t.flowA, t.flowB, t.throughput, t.ratio].filter((v) => v !== undefined).length;
  if (given === 0) return undefined;
  if (given > 2) throw new RangeError('at most two of flow A, flow B, throughput and ratio');
  let { throughput, ratio } = t;
  const { flowA, flowB } = t;
  if (flowA !== undefined && flowB !== undefined) return { throughput: flowA + flowB, ratio: flowA / flowB };
  if (flowA !== undefined && throughput !== undefined) ratio = flowA / (throughput - flowA);
  else if (flowB !== undefined && throughput !== undefined) ratio = (throughput - flowB) / flowB;
  else if (flowA !== undefined && ratio !== undefined) throughput = flowA * (1 + 1 / ratio);
  else if (flowB !== undefined && ratio !== undefined) throughput = flowB * (1 + ratio);
  else if (flowA !== undefined || flowB !== undefined) return undefined;
  return { throughput, ratio };
}

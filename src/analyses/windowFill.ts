/**
 * Which points of a window map to solve and which to fill: a coarse grid first (every
 * COARSE_STRIDE-th value along each axis, and the last), then a quadtree refinement. A cell
 * whose solved points all share one class, that no traced boundary crosses and whose figures the
 * coarse grid shows to be nearly linear is filled without solving; any other cell is split in
 * four (its edge midpoints and centre are solved) down to single grid steps. Exports
 * `MapRefinement`, `coarseIndices`, `segmentMeetsBox`, `COARSE_STRIDE`, `FILL_TOLERANCE` and the
 * types. No solving, no I/O: the caller (./window.ts) solves the points this asks for.
 *
 * Filled points are marked (`solved: false`): their class is the one their cell's corners share,
 * their figures the bilinear interpolation of the corners' (the flow ratio from the interpolated
 * phase flows), and the map carries an estimate of the interpolation error of the contoured
 * figures (throughput, flow ratio). The phase flows' errors come from second differences on the
 * coarse grid — for a C² function, bilinear interpolation on a cell of steps hx, hy errs by at
 * most (hx²·max|f_xx| + hy²·max|f_yy|)/8, and a second difference over the same steps is h²·f''
 * at some point between (de Boor, A Practical Guide to Splines, 2001, ch. II and XVII, from
 * memory) — and, on coarse cells, from a solve at the centre against the interpolation there.
 * The estimate is no bound where a flow has a kink inside a cell of one class (a split starting
 * to leak inside a leaking cell) that neither sees.
 */
import { max as maxOf } from 'd3-array';
import type { WarmStart } from '../solver/newton.js';
import type { PointClass, WindowPoint } from './window.js';

/** Every this many grid values a coarse one (the first and last always): 41 values → 11. */
export const COARSE_STRIDE = 4;
/**
 * A cell is filled only when the estimated interpolation error of throughput and of flow ratio
 * is below this many grid steps' change of the figure there (its gradient from the cell's
 * corners): a contour drawn through filled values then lies within a quarter of a grid step of
 * where it would lie through solved ones (contours are interpolated linearly between grid values
 * in any case), and a figure read at a filled point errs by less than a quarter of its change
 * from one grid value to the next.
 */
export const FILL_TOLERANCE = 0.25;

/** The coarse grid values of an axis of `n` values: 0, stride, 2·stride, …, and n − 1. */
export function coarseIndices(n: number, stride = COARSE_STRIDE): number[] {
  const out: number[] = [];
  for (let k = 0; k < n - 1; k += stride) out.push(k);
  out.push(n - 1);
  return out;
}

/**
 * Whether the segment a → b meets the closed box (x0, x1) × (y0, y1) (Liang & Barsky, 1984,
 * ACM TOG 3:1, parametric clipping).
 */
export function segmentMeetsBox(a: readonly [number, number], b: readonly [number, number], box: { x: [number, number]; y: [number, number] }): boolean {
  let t0 = 0;
  let t1 = 1;
  const d = [b[0] - a[0], b[1] - a[1]];
  const clip = (p: number, q: number) => {
    if (p === 0) return q >= 0;
    const r = q / p;
    if (p < 0) {
      if (r > t1) return false;
      if (r > t0) t0 = r;
    } else {
      if (r < t0) return false;
      if (r < t1) t1 = r;
    }
    return true;
  };
  return (
    clip(-d[0]!, a[0] - box.x[0]) && clip(d[0]!, box.x[1] - a[0]) && clip(-d[1]!, a[1] - box.y[0]) && clip(d[1]!, box.y[1] - a[1]) && t0 <= t1
  );
}

/** A cell of the quadtree, in grid indices (i0 < i1 or j0 < j1), and its estimated interpolation errors (absolute). */
interface Cell {
  i0: number;
  i1: number;
  j0: number;
  j1: number;
  /** Estimated interpolation errors of the two phase throughputs, m³/s. */
  error: { A: number; B: number };
  /** Whether the error was measured at the cell's centre (a solve there against the interpolation). */
  checked?: boolean;
}

/**
 * Cells of this many steps on a side or more have their centre solved before they are filled,
 * and the interpolation's error measured there joins the estimate; smaller ones (the children of
 * a split cell) take a quarter of their parent's.
 */
const CHECKED_SIDE = 4;

/**
 * A grid point to solve and the converged solutions it may start from: the first with every
 * start the solver has, or, for a failed point tried again (`retry`), each in turn from itself
 * alone until one settles.
 */
export interface PointToSolve {
  i: number;
  j: number;
  seeds: WarmStart[];
  retry?: boolean;
}

/** What the map says about its filled points. */
export interface MapFill {
  /** Grid points solved, and filled from the corners of their cell. */
  solved: number;
  filled: number;
  /** Largest estimated interpolation error over the filled points outside backflow (whose figures are not drawn): throughput (m³/s) and flow ratio. */
  throughputError: number;
  flowRatioError: number;
}

/** How far (grid steps) and from how many converged points a failed point is tried again: its coarse neighbours, diagonals included. */
const RETRY_REACH = 1.5 * COARSE_STRIDE;
const RETRY_SEEDS = 8;

const INTERPOLATED = ['maxPressure', 'throughputA', 'throughputB', 'spreadCv', 'spreadMaxMin', 'minMargin'] as const;
const COUNTED = ['pinned', 'leakingAtoB', 'leakingBtoA'] as const;

/**
 * The refinement, driven by its caller: `coarse()` gives the coarse grid, `record` takes each
 * solved point (and its solution as a warm start, when it converged), `nextBatch()` the points to
 * solve once every point asked for is recorded (undefined when the map is complete), and
 * `finish(place)` fills the rest. Which points are asked for depends only on the solved ones, not
 * on the order they come in.
 */
export class MapRefinement {
  private readonly grid: Array<Array<WindowPoint | undefined>>;
  private readonly warm: Array<Array<WarmStart | undefined>>;
  private leaves: Cell[] | undefined;
  private readonly xCoarse: number[];
  private readonly yCoarse: number[];
  /** Failed points already tried again, by index. */
  private readonly retried = new Set<number>();

  constructor(
    private readonly xs: readonly number[],
    private readonly ys: readonly number[],
    /** Traced boundaries, as polylines in the map's coordinates. */
    private readonly boundaries: ReadonlyArray<ReadonlyArray<readonly [number, number]>> = [],
    stride = COARSE_STRIDE,
  ) {
    this.grid = ys.map(() => xs.map(() => undefined));
    this.warm = ys.map(() => xs.map(() => undefined));
    this.xCoarse = coarseIndices(xs.length, stride);
    this.yCoarse = coarseIndices(ys.length, stride);
  }

  /** The coarse grid values along each axis (grid indices). */
  coarse(): { x: number[]; y: number[] } {
    return { x: this.xCoarse, y: this.yCoarse };
  }

  record(point: WindowPoint, warm: WarmStart | undefined): void {
    const old = this.grid[point.j]![point.i];
    // A failed point tried again keeps its failure unless the new try settles.
    if (old && old.class !== 'failed') return;
    if (old && point.class === 'failed') return;
    this.grid[point.j]![point.i] = point;
    if (point.class !== 'failed') this.warm[point.j]![point.i] = warm;
  }

  /** The points to solve next, or undefined when no cell needs refining. */
  nextBatch(): PointToSolve[] | undefined {
    // A failure is tried again before its cells are refined around it (points near a failure
    // are often the hard ones too).
    const again = this.retries();
    if (again) return again;
    if (!this.leaves) this.leaves = this.coarseCells();
    const wanted = new Map<number, { i: number; j: number }>();
    const ask = (i: number, j: number) => {
      if (!this.grid[j]![i]) wanted.set(j * this.xs.length + i, { i, j });
    };
    const next: Cell[] = [];
    for (const cell of this.leaves) {
      const verdict = this.settled(cell);
      if (verdict === 'check') ask(Math.floor((cell.i0 + cell.i1) / 2), Math.floor((cell.j0 + cell.j1) / 2));
      if (verdict !== 'split') {
        next.push(cell);
        continue;
      }
      const children = split(cell);
      for (const child of children) {
        for (const [i, j] of corners(child)) ask(i, j);
        next.push(child);
      }
    }
    this.leaves = next;
    if (wanted.size === 0) return undefined;
    return [...wanted.values()].map(({ i, j }) => ({ i, j, seeds: this.nearestWarm(i, j).slice(0, 1) }));
  }

  /**
   * Failed points once more, from each converged solution within RETRY_REACH grid steps
   * (nearest first, RETRY_SEEDS at most): the point first started from one solution only, and a
   * failure that the warm start from another neighbour settles is not left on the map.
   */
  private retries(): PointToSolve[] | undefined {
    const out: PointToSolve[] = [];
    this.grid.forEach((row, j) =>
      row.forEach((p, i) => {
        const key = j * this.xs.length + i;
        if (p?.class !== 'failed' || this.retried.has(key)) return;
        this.retried.add(key);
        const seeds = this.nearestWarm(i, j, RETRY_REACH).slice(0, RETRY_SEEDS);
        if (seeds.length > 0) out.push({ i, j, seeds, retry: true });
      }),
    );
    return out.length > 0 ? out : undefined;
  }

  /** The grid with every point that was not solved filled from its cell, and what was filled. */
  finish(): { points: WindowPoint[][]; fill: MapFill } {
    const points: WindowPoint[][] = this.ys.map(() => new Array<WindowPoint>(this.xs.length));
    let filled = 0;
    let throughputError = 0;
    let flowRatioError = 0;
    this.grid.forEach((row, j) => row.forEach((p, i) => p && (points[j]![i] = p)));
    for (const cell of this.leaves ?? []) {
      for (let j = cell.j0; j <= cell.j1; j++) {
        for (let i = cell.i0; i <= cell.i1; i++) {
          if (points[j]![i]) continue;
          points[j]![i] = this.filledPoint(cell, i, j);
          filled++;
          // Backflow cells are filled by class alone: their figures are not drawn (see `settled`).
          if (points[j]![i]!.class === 'backflow') continue;
          const p = points[j]![i]!;
          throughputError = Math.max(throughputError, cell.error.A + cell.error.B);
          flowRatioError = Math.max(flowRatioError, ratioErrorAt(p.throughputA, p.throughputB, cell.error));
        }
      }
    }
    const total = this.xs.length * this.ys.length;
    return { points, fill: { solved: total - filled, filled, throughputError, flowRatioError } };
  }

  /** The coarse cells, with their interpolation errors estimated from the coarse grid's second differences. */
  private coarseCells(): Cell[] {
    const cells: Cell[] = [];
    for (let b = 0; b + 1 < this.yCoarse.length; b++) {
      for (let a = 0; a + 1 < this.xCoarse.length; a++) {
        const error = { A: this.secondDifferences(a, b, (p) => p.throughputA), B: this.secondDifferences(a, b, (p) => p.throughputB) };
        cells.push({ i0: this.xCoarse[a]!, i1: this.xCoarse[a + 1]!, j0: this.yCoarse[b]!, j1: this.yCoarse[b + 1]!, error });
      }
    }
    return cells;
  }

  /**
   * (max |Δ²ₓf| + max |Δ²ᵧf|)/8 over the corners of coarse cell (a, b), each second difference
   * over three coarse values of the corner's class; Infinity where a direction has none (a coarse
   * axis of two values, or a class boundary all round): such cells are refined.
   */
  private secondDifferences(a: number, b: number, f: (p: WindowPoint) => number): number {
    let dx = -Infinity;
    let dy = -Infinity;
    const at = (ca: number, cb: number) => this.grid[this.yCoarse[cb]!]![this.xCoarse[ca]!];
    // Three coarse values in a row of one class, centred on the corner (at an end of the axis, on its neighbour).
    const centre = (k: number, n: number) => (n < 3 ? undefined : Math.min(n - 2, Math.max(1, k)));
    const second = (lo: WindowPoint | undefined, mid: WindowPoint | undefined, hi: WindowPoint | undefined) =>
      lo && mid && hi && lo.class === mid.class && hi.class === mid.class ? Math.abs(f(lo) - 2 * f(mid) + f(hi)) : undefined;
    for (const [ca, cb] of [[a, b], [a + 1, b], [a, b + 1], [a + 1, b + 1]] as const) {
      const own = at(ca, cb)?.class;
      const mx = centre(ca, this.xCoarse.length);
      const my = centre(cb, this.yCoarse.length);
      const sx = mx === undefined || at(mx, cb)?.class !== own ? undefined : second(at(mx - 1, cb), at(mx, cb), at(mx + 1, cb));
      const sy = my === undefined || at(ca, my)?.class !== own ? undefined : second(at(ca, my - 1), at(ca, my), at(ca, my + 1));
      if (sx !== undefined) dx = Math.max(dx, sx);
      if (sy !== undefined) dy = Math.max(dy, sy);
    }
    if (dx === -Infinity || dy === -Infinity) return Infinity;
    return (dx + dy) / 8;
  }

  /**
   * Whether a cell needs no more solves (`keep`: one grid step, or one class throughout, no
   * boundary through it and nearly linear figures), needs its centre solved to tell (`check`:
   * a cell of CHECKED_SIDE steps or more, once), or is split (`split`).
   */
  private settled(cell: Cell): 'keep' | 'check' | 'split' {
    if (cell.i1 - cell.i0 <= 1 && cell.j1 - cell.j0 <= 1) return 'keep';
    let cls: PointClass | undefined;
    // Every point solved on the cell (a refined neighbour solves some of its edge, a check its centre) must agree with the corners.
    for (let j = cell.j0; j <= cell.j1; j++) {
      for (let i = cell.i0; i <= cell.i1; i++) {
        const p = this.grid[j]![i];
        if (!p) continue;
        if (p.class === 'failed' || (cls !== undefined && p.class !== cls)) return 'split';
        cls = p.class;
      }
    }
    const box = { x: [this.xs[cell.i0]!, this.xs[cell.i1]!] as [number, number], y: [this.ys[cell.j0]!, this.ys[cell.j1]!] as [number, number] };
    box.x.sort((p, q) => p - q);
    box.y.sort((p, q) => p - q);
    for (const line of this.boundaries) for (let k = 0; k + 1 < line.length; k++) if (segmentMeetsBox(line[k]!, line[k + 1]!, box)) return 'split';
    // Where liquid flows back the inlet totals are not drawn; only the class counts there.
    if (cls === 'backflow') return 'keep';
    const [a, b, c, d] = corners(cell).map(([i, j]) => this.grid[j]![i]!) as [WindowPoint, WindowPoint, WindowPoint, WindowPoint];
    if (!cell.checked && Math.max(cell.i1 - cell.i0, cell.j1 - cell.j0) >= CHECKED_SIDE) {
      const centre = this.grid[Math.floor((cell.j0 + cell.j1) / 2)]![Math.floor((cell.i0 + cell.i1) / 2)];
      if (!centre) return 'check';
      // The interpolation's error where it is largest for a quadratic figure, measured.
      const s = (centre.i - cell.i0) / (cell.i1 - cell.i0);
      const t = (centre.j - cell.j0) / (cell.j1 - cell.j0);
      const missed = (f: (p: WindowPoint) => number) => Math.abs(f(centre) - ((1 - s) * (1 - t) * f(a) + s * (1 - t) * f(b) + (1 - s) * t * f(c) + s * t * f(d)));
      cell.error = { A: Math.max(cell.error.A, missed((p) => p.throughputA)), B: Math.max(cell.error.B, missed((p) => p.throughputB)) };
      cell.checked = true;
    }
    const steps = [Math.max(1, cell.i1 - cell.i0), Math.max(1, cell.j1 - cell.j0)];
    // The change of a figure per grid step: its gradient from the corners (mean of opposite edges).
    const perStep = (f: (p: WindowPoint) => number) => Math.hypot((f(b) - f(a) + f(d) - f(c)) / (2 * steps[0]!), (f(c) - f(a) + f(d) - f(b)) / (2 * steps[1]!));
    const ratioError = maxOf([a, b, c, d], (p) => ratioErrorAt(p.throughputA, p.throughputB, cell.error))!;
    return cell.error.A + cell.error.B <= FILL_TOLERANCE * perStep((p) => p.throughput) && ratioError <= FILL_TOLERANCE * perStep((p) => p.flowRatio) ? 'keep' : 'split';
  }

  /** The converged solutions nearest (i, j) first, within `reach` grid steps; equals in row order. */
  private nearestWarm(i: number, j: number, reach = Infinity): WarmStart[] {
    const found: Array<{ w: WarmStart; d: number; k: number }> = [];
    this.warm.forEach((row, jj) =>
      row.forEach((w, ii) => {
        const d = Math.hypot(ii - i, jj - j);
        if (w && d > 0 && d <= reach) found.push({ w, d, k: found.length });
      }),
    );
    return found.sort((p, q) => p.d - q.d || p.k - q.k).map((f) => f.w);
  }

  /** A point not solved: its cell's class, and its figures interpolated bilinearly from the corners. */
  private filledPoint(cell: Cell, i: number, j: number): WindowPoint {
    const [a, b, c, d] = corners(cell).map(([ci, cj]) => this.grid[cj]![ci]!) as [WindowPoint, WindowPoint, WindowPoint, WindowPoint];
    const s = cell.i1 > cell.i0 ? (i - cell.i0) / (cell.i1 - cell.i0) : 0;
    const t = cell.j1 > cell.j0 ? (j - cell.j0) / (cell.j1 - cell.j0) : 0;
    // Corners in the order of `corners`: (i0, j0), (i1, j0), (i0, j1), (i1, j1).
    const blend = (f: (p: WindowPoint) => number) => (1 - s) * (1 - t) * f(a) + s * (1 - t) * f(b) + (1 - s) * t * f(c) + s * t * f(d);
    const point: WindowPoint = {
      ...a,
      i,
      j,
      x: this.xs[i]!,
      y: this.ys[j]!,
      solved: false,
      attempts: 0,
      iterations: 0,
      message: undefined,
      backflow: [...new Set([a, b, c, d].flatMap((p) => p.backflow))].sort(),
    };
    for (const key of INTERPOLATED) point[key] = blend((p) => p[key]);
    // The ratio from the interpolated flows, not interpolated itself: the flows are nearly linear
    // in the settings (exactly, in a linear network), their ratio is not (it grows without bound
    // as B's flow falls toward backflow).
    point.throughput = point.throughputA + point.throughputB;
    point.flowRatio = point.throughputB > 0 ? point.throughputA / point.throughputB : Infinity;
    // Counts are whole numbers: kept where the corners agree, unknown (NaN) where they do not.
    for (const key of COUNTED) point[key] = [b, c, d].every((p) => p[key] === a[key]) ? a[key] : NaN;
    return point;
  }
}

/** First-order error of A/B from errors eA, eB of the flows A, B: (A/B)·(eA/|A| + eB/|B|). */
function ratioErrorAt(a: number, b: number, error: { A: number; B: number }): number {
  const ratio = Math.abs(a / b);
  return ratio * ((a !== 0 ? error.A / Math.abs(a) : 0) + error.B / Math.abs(b));
}

/** The corners of a cell: (i0, j0), (i1, j0), (i0, j1), (i1, j1). */
function corners(cell: Cell): Array<[number, number]> {
  return [[cell.i0, cell.j0], [cell.i1, cell.j0], [cell.i0, cell.j1], [cell.i1, cell.j1]];
}

/** A cell cut at its middle grid values (in one direction where the other is one step), each child with a quarter of its errors per halved side. */
function split(cell: Cell): Cell[] {
  const mi = cell.i1 - cell.i0 > 1 ? Math.floor((cell.i0 + cell.i1) / 2) : undefined;
  const mj = cell.j1 - cell.j0 > 1 ? Math.floor((cell.j0 + cell.j1) / 2) : undefined;
  const xs: Array<[number, number]> = mi === undefined ? [[cell.i0, cell.i1]] : [[cell.i0, mi], [mi, cell.i1]];
  const ys: Array<[number, number]> = mj === undefined ? [[cell.j0, cell.j1]] : [[cell.j0, mj], [mj, cell.j1]];
  // Second differences scale with the square of the step: both halved, a quarter; one halved, the other's share stays (kept whole).
  const shrink = mi !== undefined && mj !== undefined ? 0.25 : 1;
  const error = { A: cell.error.A * shrink, B: cell.error.B * shrink };
  return ys.flatMap(([j0, j1]) => xs.map(([i0, i1]) => ({ i0, i1, j0, j1, error, checked: true })));
}

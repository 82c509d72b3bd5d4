/**
 * Sparse LU with partial pivoting for general square matrices: P·A·Q = L·U. Columns are taken in a
 * fill-reducing order Q (approximate minimum degree on A+Aᵀ, `ordering.ts`); each column is
 * computed left-looking by a sparse triangular solve whose nonzero pattern is found by a
 * depth-first search in the graph of L, so the work is proportional to the arithmetic
 * (Gilbert & Peierls, 1988, SIAM J. Sci. Stat. Comput. 9(5):862–874). Rows are chosen by
 * threshold partial pivoting that keeps the diagonal when it is large enough (Davis, 2006,
 * "Direct Methods for Sparse Linear Systems", SIAM, ch. 6).
 *
 * Exports `factorizeSparse`, `SparseLuSymbolic` (the ordering kept for a fixed pattern, so a
 * Newton loop orders once and refactors each iteration) and the `SparseLuFactor` type.
 * Leaves the input matrix unchanged and keeps no reference to it.
 */

import { LINEAR_DEFAULTS, SingularMatrixError, type LinearFactor } from './linear.js';
import { approximateMinimumDegree } from './ordering.js';
import type { SparseMatrix } from './sparseMatrix.js';

export interface SparseLuOptions {
  /** See `LINEAR_DEFAULTS.pivotThreshold`; in (0, 1]. */
  pivotThreshold?: number;
  /** Column order to use instead of the approximate minimum degree order (a permutation of 0..n−1). */
  ordering?: Int32Array;
  /** See `LINEAR_DEFAULTS.singularTolerance`. */
  singularTolerance?: number;
}

/** The factors of P·A·Q = L·U. L is unit lower triangular and stored without its diagonal. */
export interface SparseLuFactor extends LinearFactor {
  readonly n: number;
  /** Nonzeros stored in L (below the diagonal) and U (diagonal included): the fill. */
  readonly nnzL: number;
  readonly nnzU: number;
}

export function factorizeSparse(a: SparseMatrix, options: SparseLuOptions = {}): SparseLuFactor {
  return new SparseLuSymbolic(a, options).factor(a);
}

/**
 * What depends only on the nonzero pattern: the column order, and the pivot sequence of the last
 * factorisation. `factor` accepts any matrix with exactly the pattern given to the constructor.
 * After a first factorisation it refactors: the same row pivots, so L and U have the patterns
 * they had and no search is needed, as long as every kept pivot passes the threshold test;
 * otherwise the pivots are chosen afresh. The factors therefore depend on the last
 * factorisation (in rounding only); `forgetPivots` makes the next factorisation search, and
 * `restartPivots` returns to pivots kept once (`keepPivotsForRestart`), which a sequence of
 * solves uses so that each solve's result is independent of the solves before it.
 */
export class SparseLuSymbolic {
  readonly n: number;
  readonly columnOrder: Int32Array;
  /** The analysed pattern, copied so that later changes to the caller's arrays cannot fool `factor`. */
  private readonly pattern: Pick<SparseMatrix, 'n' | 'colPtr' | 'rowIdx'>;
  private readonly pivotThreshold: number;
  private readonly singularTolerance: number;
  /** Storage size for L and U, learnt from the previous factorisation. */
  private capacity: number;
  private scratch: Scratch | undefined;
  /** The last factorisation whose pivots a refactorisation keeps. */
  private pivots: TriangularFactors | undefined;
  /** The pivots `restartPivots` returns to (`keepPivotsForRestart`). */
  private startPivots: TriangularFactors | undefined;

  constructor(pattern: SparseMatrix, options: SparseLuOptions = {}) {
    const { n } = pattern;
    this.n = n;
    this.pattern = { n, colPtr: pattern.colPtr.slice(), rowIdx: pattern.rowIdx.slice() };
    this.pivotThreshold = options.pivotThreshold ?? LINEAR_DEFAULTS.pivotThreshold;
    this.singularTolerance = options.singularTolerance ?? LINEAR_DEFAULTS.singularTolerance;
    if (!(this.pivotThreshold > 0 && this.pivotThreshold <= 1)) {
      throw new RangeError(`pivot threshold must lie in (0, 1], got ${this.pivotThreshold}`);
    }
    if (options.ordering !== undefined) checkPermutation(options.ordering, n);
    this.columnOrder = options.ordering?.slice() ?? approximateMinimumDegree(pattern);
    this.capacity = 4 * pattern.colPtr[n] + n;
  }

  factor(a: SparseMatrix): SparseLuFactor {
    if (!samePattern(a, this.pattern)) throw new Error('matrix pattern differs from the analysed pattern');
    const scratch = (this.scratch ??= scratchOf(a.n));
    let resume: Resume | undefined;
    if (this.pivots) {
      const refactored = refactor(a, this.pivots, this.pivotThreshold, this.singularTolerance, scratch);
      if (refactored instanceof TriangularFactors) return refactored;
      resume = { previous: this.pivots, partial: refactored };
    }
    const factor = leftLookingLu(a, this.columnOrder, this.pivotThreshold, this.singularTolerance, this.capacity, scratch, resume);
    this.capacity = Math.max(factor.nnzL, factor.nnzU) + a.n;
    this.pivots = factor;
    return factor;
  }

  forgetPivots(): void {
    this.pivots = undefined;
  }

  /** The pivots of the last factorisation become those that `restartPivots` returns to. */
  keepPivotsForRestart(): void {
    this.startPivots = this.pivots;
  }

  /** The next factorisation refactors from the pivots kept by `keepPivotsForRestart` (searches when none were kept). */
  restartPivots(): void {
    this.pivots = this.startPivots;
  }

  /** Whether `keepPivotsForRestart` has kept pivots. */
  get hasRestartPivots(): boolean {
    return this.startPivots !== undefined;
  }
}

/** Growable pair of index and value arrays: the columns of L or of U, stored one after another. */
class ColumnStore {
  index: Int32Array;
  value: Float64Array;
  readonly start: Int32Array;
  size = 0;

  constructor(columns: number, capacity: number) {
    this.start = new Int32Array(columns + 1);
    this.index = new Int32Array(capacity);
    this.value = new Float64Array(capacity);
  }

  /** A store with this one's pattern (shared, never written again) and values of its own. */
  withValues(): ColumnStore {
    const copy = Object.create(ColumnStore.prototype) as ColumnStore;
    Object.assign(copy, { index: this.index, start: this.start, size: this.size, value: new Float64Array(this.size) });
    return copy;
  }

  /** Makes room for `more` entries. */
  reserve(more: number): void {
    if (this.size + more <= this.index.length) return;
    const capacity = 2 * this.index.length + more;
    const index = new Int32Array(capacity);
    const value = new Float64Array(capacity);
    index.set(this.index.subarray(0, this.size));
    value.set(this.value.subarray(0, this.size));
    this.index = index;
    this.value = value;
  }
}

/** The columns a refactorisation completed before a kept pivot failed its test (L's rows as pivot steps). */
interface PartialFactors {
  columns: number;
  L: ColumnStore;
  U: ColumnStore;
  uDiag: Float64Array;
}

/** Where a pivot search takes over from a refactorisation: the factorisation it refactored, and the columns it completed. */
interface Resume {
  previous: TriangularFactors;
  partial: PartialFactors;
}

/**
 * P·A·Q = L·U by pivot search, from the first column, or from the column where a
 * refactorisation stopped (`resume`): the columns before it keep the refactorisation's pivots,
 * which passed their tests, so their work is not done again.
 */
function leftLookingLu(
  a: SparseMatrix,
  q: Int32Array,
  pivotThreshold: number,
  singularTolerance: number,
  capacity: number,
  scratch: Scratch,
  resume?: Resume,
): TriangularFactors {
  const work = new LeftLookingColumns(a, q, capacity, scratch);
  if (resume) work.preset(resume.previous, resume.partial);
  const failedColumn = work.factorColumns(pivotThreshold, singularTolerance, resume?.partial.columns ?? 0);
  // A column without a usable pivot does not stop the factorisation: the rows still unpivoted
  // at the end tell which equation is redundant.
  if (failedColumn >= 0) throw SingularMatrixError.blame(a, failedColumn, work.pinv.indexOf(-1));
  return new TriangularFactors(a.n, q, work.pinv, work.L, work.U, work.uDiag, work.pivotAt);
}

/**
 * A kept pivot off its column's diagonal must be at least this share of the column's largest
 * candidate: the search took it as the largest, so its multipliers were at most 1; kept at half
 * the largest they stay at most 2, the growth of partial pivoting within a factor 2 per step
 * (Higham, 2002, §9.3). At pivotThreshold instead (multipliers up to 10) a window trace of the
 * enzyme chip lost a boundary point that did not settle (measured).
 */
const OFF_DIAGONAL_KEPT = 0.5;

/**
 * P·A·Q = L·U with the row pivots and the L and U patterns of `previous` (a factorisation of a
 * matrix with A's pattern), or the columns completed before a kept pivot failed its test: the column's
 * diagonal at least `pivotThreshold` of the largest candidate (the search's own rule), another
 * row at least OFF_DIAGONAL_KEPT of it, and above its own cancellation noise. Each column is the same left-looking triangular solve as in the search,
 * in the topological order that the search stored in U, without the depth-first search, as
 * KLU's refactorisation does (Davis & Palamadai Natarajan, 2010, ACM TOMS 37(3):36), with the
 * threshold test added so that a stale pivot cannot grow the factors. A kept pivot need not be
 * the one the search would choose now (a near tie may fall the other way), so the factors may
 * differ from the search's in rounding; both are threshold-pivoted LU factors of A, equally
 * stable. Hand-written: no maintained JavaScript library offers a sparse LU.
 */
function refactor(a: SparseMatrix, previous: TriangularFactors, pivotThreshold: number, singularTolerance: number, scratch: Scratch): TriangularFactors | PartialFactors {
  const { n, colPtr: Ap, rowIdx: Ai, values: Ax } = a;
  const { q, pinv } = previous;
  const { start: Lp, index: Li } = previous.L;
  const { start: Up, index: Ui } = previous.U;
  const L = previous.L.withValues();
  const U = previous.U.withValues();
  const Lx = L.value;
  const Ux = U.value;
  const uDiag = new Float64Array(n);
  // x and magnitude by pivot step; every entry a column touches is cleared after it.
  const { x, magnitude } = scratch;
  x.fill(0);
  magnitude.fill(0);
  for (let k = 0; k < n; k++) {
    const col = q[k];
    for (let s = Ap[col]; s < Ap[col + 1]; s++) {
      const i = pinv[Ai[s]];
      x[i] += Ax[s];
      magnitude[i] += Math.abs(Ax[s]);
    }
    for (let p = Up[k], end = Up[k + 1]; p < end; p++) {
      const j = Ui[p];
      const xj = x[j];
      Ux[p] = xj;
      x[j] = 0;
      magnitude[j] = 0;
      if (xj === 0) continue;
      for (let r = Lp[j], stop = Lp[j + 1]; r < stop; r++) {
        const update = Lx[r] * xj;
        x[Li[r]] -= update;
        magnitude[Li[r]] += Math.abs(update);
      }
    }
    // The kept pivot (row k in pivot-step numbering) stays while it passes the test: the
    // column's diagonal as the search keeps it (pivotThreshold of the largest candidate), any
    // other row within OFF_DIAGONAL_KEPT of the largest.
    let largest = 0;
    for (let p = Lp[k], end = Lp[k + 1]; p < end; p++) {
      const i = Li[p];
      if (Math.abs(x[i]) > largest && isCandidate(x, magnitude, i, singularTolerance)) largest = Math.abs(x[i]);
    }
    const kept = isCandidate(x, magnitude, k, singularTolerance) && Math.abs(x[k]) >= (pinv[col] === k ? pivotThreshold : OFF_DIAGONAL_KEPT) * largest;
    const pivot = x[k];
    x[k] = 0;
    magnitude[k] = 0;
    for (let p = Lp[k], end = Lp[k + 1]; p < end; p++) {
      const i = Li[p];
      Lx[p] = x[i] / pivot;
      x[i] = 0;
      magnitude[i] = 0;
    }
    if (!kept) return { columns: k, L, U, uDiag };
    uDiag[k] = pivot;
  }
  return new TriangularFactors(n, q, pinv, L, U, uDiag, previous.pivotAt, true);
}

/** Work arrays of one column at a time, kept by the symbolic analysis from one factorisation to the next. */
interface Scratch {
  x: Float64Array;
  magnitude: Float64Array;
  reach: Int32Array;
  stack: Int32Array;
  resume: Int32Array;
  visited: Int32Array;
}

function scratchOf(n: number): Scratch {
  return { x: new Float64Array(n), magnitude: new Float64Array(n), reach: new Int32Array(n), stack: new Int32Array(n), resume: new Int32Array(n), visited: new Int32Array(n) };
}

/**
 * Candidates within this relative distance of the largest count as tied in the search, and the
 * first in reach order wins: two entries of one size (a leak's ±1 into the balances at both ends
 * of a split) then get the same pivot whichever the last bits of the elimination favour, so the
 * search's choice does not flicker from one Newton matrix to the next.
 */
const NEAR_TIE = 1e-6;

/** Row i may pivot: its value is above the cancellation noise of what was summed into it. */
function isCandidate(x: Float64Array, magnitude: Float64Array, i: number, singularTolerance: number): boolean {
  return Math.abs(x[i]) > singularTolerance * magnitude[i];
}

/** Row i is a candidate within NEAR_TIE of `largest`. */
function isNearLargest(x: Float64Array, magnitude: Float64Array, i: number, largest: number, singularTolerance: number): boolean {
  return Math.abs(x[i]) >= (1 - NEAR_TIE) * largest && isCandidate(x, magnitude, i, singularTolerance);
}

/** The first unpivoted row in reach order that is a candidate within NEAR_TIE of `largest`. */
function firstNearLargest(reach: Int32Array, top: number, n: number, x: Float64Array, magnitude: Float64Array, pinv: Int32Array, largest: number, singularTolerance: number): number {
  for (let t = top; t < n; t++) {
    const i = reach[t];
    if (pinv[i] < 0 && isNearLargest(x, magnitude, i, largest, singularTolerance)) return i;
  }
  return -1;
}

/** The state of a left-looking LU between columns. */
class LeftLookingColumns {
  /** Below-diagonal part of L, by columns; row numbers are original rows until `TriangularFactors` renumbers them. */
  readonly L: ColumnStore;
  /** Above-diagonal part of U, by columns, with pivot steps as row numbers; its diagonal apart. */
  readonly U: ColumnStore;
  readonly uDiag: Float64Array;
  /** Where the pivot row stood among the L entries of its column in reach order: the position in L's store of the entry after it (a refactorisation replays the search's order). */
  readonly pivotAt: Int32Array;
  /** pinv[row] = the step at which the row became pivotal, −1 before. */
  readonly pinv: Int32Array;
  private readonly x: Float64Array;
  /** magnitude[i] = |a_i,col| + Σ_j |l_ij·x_j|: the size of what was summed into x_i. */
  private readonly magnitude: Float64Array;
  /** reach[top..n) is the pattern of the current column in topological order. */
  private readonly reach: Int32Array;
  private readonly stack: Int32Array;
  private readonly resume: Int32Array;
  private readonly visited: Int32Array;

  constructor(
    private readonly a: SparseMatrix,
    private readonly q: Int32Array,
    capacity: number,
    scratch: Scratch,
  ) {
    const { n } = a;
    this.L = new ColumnStore(n, capacity);
    this.U = new ColumnStore(n, capacity);
    this.uDiag = new Float64Array(n);
    this.pivotAt = new Int32Array(n);
    this.pinv = new Int32Array(n).fill(-1);
    // Every entry of x and magnitude that a column reads is set first (reach), and stack and
    // resume are written before they are read; visited must start unmarked.
    ({ x: this.x, magnitude: this.magnitude, reach: this.reach, stack: this.stack, resume: this.resume, visited: this.visited } = scratch);
    this.visited.fill(-1);
  }

  /**
   * Takes the first `partial.columns` columns from a refactorisation of `previous`'s pivots:
   * their pivot rows, L with its rows back in the original numbering, U and the diagonal.
   */
  preset(previous: TriangularFactors, partial: PartialFactors): void {
    const k = partial.columns;
    const rowAt = new Int32Array(this.a.n);
    previous.pinv.forEach((step, row) => (rowAt[step] = row));
    for (let j = 0; j < k; j++) this.pinv[rowAt[j]] = j;
    const lEnd = partial.L.start[k];
    const uEnd = partial.U.start[k];
    this.L.reserve(lEnd);
    this.U.reserve(uEnd);
    for (let p = 0; p < lEnd; p++) this.L.index[p] = rowAt[partial.L.index[p]];
    this.L.value.set(partial.L.value.subarray(0, lEnd));
    this.L.start.set(partial.L.start.subarray(0, k + 1));
    this.L.size = lEnd;
    this.U.index.set(partial.U.index.subarray(0, uEnd));
    this.U.value.set(partial.U.value.subarray(0, uEnd));
    this.U.start.set(partial.U.start.subarray(0, k + 1));
    this.U.size = uEnd;
    this.uDiag.set(partial.uDiag.subarray(0, k));
    this.pivotAt.set(previous.pivotAt.subarray(0, k));
  }

  /** Computes the columns from `first` on; returns the first column without a usable pivot, or −1. */
  factorColumns(pivotThreshold: number, singularTolerance: number, first = 0): number {
    let failedColumn = -1;
    for (let k = first; k < this.a.n; k++) {
      if (!this.factorColumn(k, pivotThreshold, singularTolerance) && failedColumn < 0) failedColumn = this.q[k];
    }
    return failedColumn;
  }

  /** Computes column k of L and U; false when the column has no usable pivot. */
  private factorColumn(k: number, pivotThreshold: number, singularTolerance: number): boolean {
    const { a, L, U, pinv, x, magnitude, reach } = this;
    const { n, colPtr: Ap, rowIdx: Ai, values: Ax } = a;
    const col = this.q[k];
    L.reserve(n - k);
    U.reserve(k);
    const { start: Lp, index: Li, value: Lx } = L;

    const top = this.reachOf(col, k);
    for (let t = top; t < n; t++) {
      x[reach[t]] = 0;
      magnitude[reach[t]] = 0;
    }
    for (let s = Ap[col]; s < Ap[col + 1]; s++) {
      x[Ai[s]] += Ax[s];
      magnitude[Ai[s]] += Math.abs(Ax[s]);
    }
    // Topological order: a row's value is final before it updates the rows below it.
    for (let t = top; t < n; t++) {
      const j = pinv[reach[t]];
      if (j < 0) continue;
      const xi = x[reach[t]];
      if (xi === 0) continue;
      for (let p = Lp[j], end = Lp[j + 1]; p < end; p++) {
        const update = Lx[p] * xi;
        x[Li[p]] -= update;
        magnitude[Li[p]] += Math.abs(update);
      }
    }

    // Rows already pivotal go to U. Any other row is a pivot candidate unless its value is
    // cancellation noise; the diagonal wins if it is large enough, else the largest candidate
    // (the first in reach order of those within NEAR_TIE of it).
    let pivotRow = -1;
    let largest = 0;
    for (let t = top; t < n; t++) {
      const i = reach[t];
      if (pinv[i] >= 0) {
        U.index[U.size] = pinv[i];
        U.value[U.size++] = x[i];
      } else if (Math.abs(x[i]) > largest && isCandidate(x, magnitude, i, singularTolerance)) {
        largest = Math.abs(x[i]);
        pivotRow = i;
      }
    }
    U.start[k + 1] = U.size;
    if (pivotRow < 0) {
      L.start[k + 1] = L.size;
      return false;
    }
    const diagonal = Math.abs(x[col]);
    if (pinv[col] < 0 && this.visited[col] === k && diagonal >= pivotThreshold * largest && isCandidate(x, magnitude, col, singularTolerance)) {
      pivotRow = col;
    } else {
      pivotRow = firstNearLargest(reach, top, n, x, magnitude, pinv, largest, singularTolerance);
    }

    const pivot = x[pivotRow];
    pinv[pivotRow] = k;
    this.uDiag[k] = pivot;
    for (let t = top; t < n; t++) {
      const i = reach[t];
      if (i === pivotRow) this.pivotAt[k] = L.size;
      if (pinv[i] >= 0) continue;
      Li[L.size] = i;
      Lx[L.size++] = x[i] / pivot;
    }
    L.start[k + 1] = L.size;
    return true;
  }

  /**
   * The pattern of x = L \ A(:,col): every row reachable from the column's rows in the graph of
   * L (Gilbert & Peierls, 1988, thm. 1), by an iterative depth-first search. Returns `top`.
   */
  private reachOf(col: number, k: number): number {
    const { a, pinv, reach, stack, resume, visited } = this;
    const { start: Lp, index: Li } = this.L;
    let top = a.n;
    for (let s = a.colPtr[col]; s < a.colPtr[col + 1]; s++) {
      const origin = a.rowIdx[s];
      if (visited[origin] === k) continue;
      let depth = 0;
      stack[0] = origin;
      visited[origin] = k;
      resume[0] = pinv[origin] < 0 ? 0 : Lp[pinv[origin]];
      while (depth >= 0) {
        const i = stack[depth];
        const j = pinv[i];
        let descended = false;
        if (j >= 0) {
          for (let p = resume[depth], end = Lp[j + 1]; p < end; p++) {
            const child = Li[p];
            if (visited[child] === k) continue;
            resume[depth] = p + 1;
            visited[child] = k;
            stack[++depth] = child;
            resume[depth] = pinv[child] < 0 ? 0 : Lp[pinv[child]];
            descended = true;
            break;
          }
        }
        if (!descended) {
          reach[--top] = i;
          depth--;
        }
      }
    }
    return top;
  }
}

class TriangularFactors implements SparseLuFactor {
  readonly n: number;
  readonly nnzL: number;
  readonly nnzU: number;

  constructor(
    n: number,
    readonly q: Int32Array,
    readonly pinv: Int32Array,
    readonly L: ColumnStore,
    readonly U: ColumnStore,
    private readonly uDiag: Float64Array,
    readonly pivotAt: Int32Array,
    /** L's rows are pivot steps already (a refactorisation shares the pattern of its original). */
    renumbered = false,
  ) {
    // Not trimmed to size: the copy cost more than the spare room, which the factor holds only
    // until the next factorisation replaces it.
    if (!renumbered) renumberRows(L, pinv);
    this.n = n;
    this.nnzL = L.size;
    this.nnzU = U.size + n;
  }

  solve(b: Float64Array): Float64Array {
    const { n, q, pinv, uDiag } = this;
    if (b.length !== n) throw new RangeError(`right-hand side has length ${b.length}, expected ${n}`);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) y[pinv[i]] = b[i];

    const { start: Lp, index: Li, value: Lx } = this.L;
    for (let j = 0; j < n; j++) {
      const yj = y[j];
      if (yj === 0) continue;
      for (let p = Lp[j], end = Lp[j + 1]; p < end; p++) y[Li[p]] -= Lx[p] * yj;
    }

    const { start: Up, index: Ui, value: Ux } = this.U;
    for (let j = n - 1; j >= 0; j--) {
      const yj = (y[j] /= uDiag[j]);
      if (yj === 0) continue;
      for (let p = Up[j], end = Up[j + 1]; p < end; p++) y[Ui[p]] -= Ux[p] * yj;
    }

    const solution = new Float64Array(n);
    for (let k = 0; k < n; k++) solution[q[k]] = y[k];
    return solution;
  }
}

/** Replaces the original row numbers in `store` by their pivot steps. */
function renumberRows(store: ColumnStore, pinv: Int32Array): void {
  const { index, size } = store;
  for (let p = 0; p < size; p++) index[p] = pinv[index[p]];
}

function samePattern(a: SparseMatrix, b: Pick<SparseMatrix, 'n' | 'colPtr' | 'rowIdx'>): boolean {
  if (a.n !== b.n || a.colPtr.length !== b.colPtr.length || a.rowIdx.length !== b.rowIdx.length) return false;
  for (let j = 0; j <= a.n; j++) if (a.colPtr[j] !== b.colPtr[j]) return false;
  for (let p = 0; p < a.colPtr[a.n]; p++) if (a.rowIdx[p] !== b.rowIdx[p]) return false;
  return true;
}

function checkPermutation(order: Int32Array, n: number): void {
  const seen = new Uint8Array(n);
  let valid = order.length === n;
  for (let k = 0; valid && k < n; k++) {
    const j = order[k];
    valid = j >= 0 && j < n && seen[j] === 0;
    if (valid) seen[j] = 1;
  }
  if (!valid) throw new RangeError(`ordering must be a permutation of 0..${n - 1}`);
}

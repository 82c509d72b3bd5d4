/**
 * Square sparse matrices in compressed sparse column (CSC) form, and `TripletBuilder`, which
 * collects (row, column, value) entries in any order and compresses them. Exports `SparseMatrix`,
 * `TripletBuilder` and `columnMaxAbs`. Knows nothing about networks or factorisations.
 */

/** An n×n matrix in CSC form: the entries of column j are `rowIdx/values[colPtr[j] .. colPtr[j+1])`. */
export interface SparseMatrix {
  n: number;
  colPtr: Int32Array;
  rowIdx: Int32Array;
  values: Float64Array;
}

const INITIAL_CAPACITY = 64;

/**
 * The compression of one sequence of (row, column) positions: where each triplet lands in the
 * values of the compressed matrix, and the compressed pattern itself.
 */
interface Compression {
  rows: Int32Array;
  cols: Int32Array;
  slot: Int32Array;
  colPtr: Int32Array;
  rowIdx: Int32Array;
}

/**
 * Collects matrix entries one at a time. `toCsc` sums duplicates and sorts the rows of each
 * column, so the result depends only on the set of entries, not on the order they were added.
 * An entry added with value 0 stays in the pattern: an assembler that adds the same entries at
 * every Newton iteration gets the same pattern every time, whatever the values.
 *
 * `toCsc` remembers the last few sequences of positions it compressed (a solve alternates
 * between a few: with and without compositions, with holdups frozen or not). When the next one
 * is one of them (a Newton loop stamps the same entries in the same order), it only adds each
 * value into its remembered slot, in the order added, which sums the duplicates exactly as a
 * fresh compression does; the matrices then share their `colPtr` and `rowIdx` arrays, which no
 * one may change.
 */
export class TripletBuilder {
  readonly n: number;
  private rows: Int32Array;
  private cols: Int32Array;
  private vals: Float64Array;
  private count = 0;
  /** The compressions remembered, the last used first. */
  private readonly compressions: Compression[] = [];
  private static readonly REMEMBERED = 4;

  constructor(n: number) {
    if (!Number.isInteger(n) || n < 0) throw new RangeError(`matrix size must be a whole number ≥ 0, got ${n}`);
    this.n = n;
    this.rows = new Int32Array(INITIAL_CAPACITY);
    this.cols = new Int32Array(INITIAL_CAPACITY);
    this.vals = new Float64Array(INITIAL_CAPACITY);
  }

  /** Number of entries added since construction or the last `clear()`, duplicates included. */
  get size(): number {
    return this.count;
  }

  add(row: number, col: number, value: number): void {
    if (!(row >= 0 && row < this.n && col >= 0 && col < this.n) || !Number.isInteger(row) || !Number.isInteger(col)) {
      throw new RangeError(`entry (${row}, ${col}) is outside the ${this.n}×${this.n} matrix`);
    }
    if (this.count === this.rows.length) this.grow();
    this.rows[this.count] = row;
    this.cols[this.count] = col;
    this.vals[this.count] = value;
    this.count++;
  }

  /**
   * Row operations on what has been added: for every entry (r, c, v) with target[r] ≥ 0, adds
   * (target[r], c, factor[r]·v). Entries added afterwards are not affected.
   */
  addScaledRows(target: Int32Array, factor: Float64Array): void {
    const count = this.count;
    for (let k = 0; k < count; k++) {
      const t = this.rows[k]! < target.length ? target[this.rows[k]!]! : -1;
      if (t >= 0) this.add(t, this.cols[k]!, factor[this.rows[k]!]! * this.vals[k]!);
    }
  }

  /** Forgets all entries and keeps the storage, for the next assembly of the same system. */
  clear(): void {
    this.count = 0;
  }

  toCsc(): SparseMatrix {
    const { n, count, vals, compressions } = this;
    const at = compressions.findIndex((c) => this.samePositions(c));
    if (at < 0) return this.compress();
    const known = compressions[at]!;
    compressions.splice(at, 1);
    compressions.unshift(known);
    // −0 is the identity of addition (−0 + v = v for every v, 0 and −0 included), so the sums
    // equal the fresh compression's, which starts each entry from its first value.
    const values = new Float64Array(known.rowIdx.length).fill(-0);
    const { slot } = known;
    for (let t = 0; t < count; t++) values[slot[t]] += vals[t];
    return { n, colPtr: known.colPtr, rowIdx: known.rowIdx, values };
  }

  private samePositions(last: Compression): boolean {
    const { count, rows, cols } = this;
    if (last.rows.length !== count) return false;
    for (let t = 0; t < count; t++) if (rows[t] !== last.rows[t] || cols[t] !== last.cols[t]) return false;
    return true;
  }

  private compress(): SparseMatrix {
    const { n, count, rows, cols, vals } = this;
    // Bucket the entries by row first; walking rows in order then fills each column with its
    // rows ascending, and the duplicates of an entry arrive one after another.
    const rowPtr = new Int32Array(n + 1);
    for (let t = 0; t < count; t++) rowPtr[rows[t] + 1]++;
    for (let i = 0; i < n; i++) rowPtr[i + 1] += rowPtr[i];
    const next = rowPtr.slice(0, n);
    const byRow = new Int32Array(count);
    for (let t = 0; t < count; t++) byRow[next[rows[t]]++] = t;

    const lastRow = new Int32Array(n).fill(-1);
    const colPtr = new Int32Array(n + 1);
    for (let i = 0; i < n; i++) {
      for (let s = rowPtr[i]; s < rowPtr[i + 1]; s++) {
        const j = cols[byRow[s]];
        if (lastRow[j] !== i) {
          lastRow[j] = i;
          colPtr[j + 1]++;
        }
      }
    }
    for (let j = 0; j < n; j++) colPtr[j + 1] += colPtr[j];

    const nnz = colPtr[n];
    const rowIdx = new Int32Array(nnz);
    const values = new Float64Array(nnz);
    const fill = colPtr.slice(0, n);
    const slot = new Int32Array(count);
    lastRow.fill(-1);
    for (let i = 0; i < n; i++) {
      for (let s = rowPtr[i]; s < rowPtr[i + 1]; s++) {
        const t = byRow[s];
        const j = cols[t];
        if (lastRow[j] === i) {
          values[fill[j] - 1] += vals[t];
        } else {
          lastRow[j] = i;
          rowIdx[fill[j]] = i;
          values[fill[j]] = vals[t];
          fill[j]++;
        }
        slot[t] = fill[j] - 1;
      }
    }
    this.compressions.unshift({ rows: rows.slice(0, count), cols: cols.slice(0, count), slot, colPtr, rowIdx });
    if (this.compressions.length > TripletBuilder.REMEMBERED) this.compressions.pop();
    return { n, colPtr, rowIdx, values };
  }

  private grow(): void {
    const capacity = 2 * this.rows.length;
    const rows = new Int32Array(capacity);
    const cols = new Int32Array(capacity);
    const vals = new Float64Array(capacity);
    rows.set(this.rows);
    cols.set(this.cols);
    vals.set(this.vals);
    this.rows = rows;
    this.cols = cols;
    this.vals = vals;
  }
}

/** Largest |a_ij| in column j (0 for an empty column); the scale against which pivots are judged. */
export function columnMaxAbs(a: SparseMatrix, j: number): number {
  let max = 0;
  for (let p = a.colPtr[j]; p < a.colPtr[j + 1]; p++) max = Math.max(max, Math.abs(a.values[p]));
  return max;
}

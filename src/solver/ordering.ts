/**
 * Fill-reducing ordering: approximate minimum degree (AMD) on the pattern of A+Aᵀ
 * (Amestoy, Davis & Duff, 1996, "An approximate minimum degree ordering algorithm",
 * SIAM J. Matrix Anal. Appl. 17(4):886–905; also Davis, 2006, "Direct Methods for Sparse Linear
 * Systems", SIAM, ch. 7). Elimination runs on a quotient graph: an eliminated variable becomes
 * an element standing for the clique it created, elements inside a new element are absorbed,
 * variables with identical adjacency merge into supervariables, and each variable's external
 * degree is replaced by the cheap upper bound of the paper.
 *
 * Exports `approximateMinimumDegree` and `normalEquationsPattern` (the pattern of AᵀA, for
 * ordering the columns of unsymmetric matrices). Looks at the pattern only, never at values.
 */

import type { SparseMatrix } from './sparseMatrix.js';

const VARIABLE = 0;
const ELEMENT = 1;
/** An element inside a newer one, or a variable merged into its supervariable. */
const ABSORBED = 2;
const DENSE = 3;

/**
 * Rows denser than this are ordered last without taking part in the elimination: a hub joined
 * to most of the network would otherwise make every element large. The bound 10√n is AMD's
 * default (Amestoy, Davis & Duff, 2004, ACM TOMS 30(3):381–388), with a floor of 16 for small n
 * as in Davis (2006, ch. 7).
 */
function denseDegree(n: number): number {
  return Math.max(16, Math.floor(10 * Math.sqrt(n)));
}

/** order[k] = the column eliminated at step k. */
export function approximateMinimumDegree(a: SparseMatrix): Int32Array {
  const { n } = a;
  const order = new Int32Array(n);
  const status = new Uint8Array(n);
  // Each variable keeps its adjacent elements, then its adjacent variables, in its own slot of
  // `lists`. An elimination never makes the two together longer: the new element p joins the
  // list of v ∈ L_p only while p itself (as a variable) or an element absorbed by p leaves it.
  const { start, variableCount, lists } = symmetricAdjacency(a);
  const elementCount = new Int32Array(n);

  const dense = denseDegree(n);
  const denseVariables: number[] = [];
  for (let i = 0; i < n; i++) {
    if (variableCount[i] > dense) {
      status[i] = DENSE;
      denseVariables.push(i);
    }
  }
  if (denseVariables.length > 0) {
    for (let i = 0; i < n; i++) {
      let kept = start[i];
      for (let s = start[i], end = start[i] + variableCount[i]; s < end; s++) {
        if (status[lists[s]] !== DENSE) lists[kept++] = lists[s];
      }
      variableCount[i] = kept - start[i];
    }
  }

  /** The variables of each element, stored one element after another. */
  const members = new GrowableList(Math.max(16, 2 * n));
  const memberStart = new Int32Array(n);
  const memberCount = new Int32Array(n);
  /** Number of original variables in a supervariable; for an element, the total of its members. */
  const weight = new Int32Array(n).fill(1);
  const elementSize = new Int32Array(n);
  const degree = new Int32Array(n);
  /** Variables merged into a supervariable, as a chain from the representative. */
  const chainNext = new Int32Array(n).fill(-1);
  const chainLast = new Int32Array(n);
  for (let i = 0; i < n; i++) chainLast[i] = i;

  const buckets = new DegreeBuckets(n);
  let live = 0;
  for (let i = 0; i < n; i++) {
    if (status[i] !== VARIABLE) continue;
    degree[i] = variableCount[i];
    buckets.insert(i, degree[i]);
    live++;
  }

  // Stage-stamped scratch: inElement[v] === stage marks v ∈ L_p; outside[e] holds |L_e \ L_p|.
  const inElement = new Int32Array(n).fill(-1);
  const outsideStage = new Int32Array(n).fill(-1);
  const outside = new Int32Array(n);
  const seen = new Int32Array(n).fill(-1);
  const hashOf = new Int32Array(n);
  const hashHead = new Int32Array(n);
  const hashStage = new Int32Array(n).fill(-1);
  const hashNext = new Int32Array(n);
  let seenStamp = 0;
  let position = 0;

  for (let stage = 0; live > 0; stage++) {
    const p = buckets.popMinimum();
    for (let v = p; v >= 0; v = chainNext[v]) order[position++] = v;
    live -= weight[p];

    // The new element L_p: the variables of the elements around p plus p's own neighbours.
    members.reserve(live);
    const pool = members.data;
    const first = members.size;
    let last = first;
    let size = 0;
    inElement[p] = stage;
    for (let s = start[p], end = start[p] + elementCount[p]; s < end; s++) {
      const e = lists[s];
      if (status[e] !== ELEMENT) continue;
      for (let m = memberStart[e], mEnd = memberStart[e] + memberCount[e]; m < mEnd; m++) {
        const v = pool[m];
        if (status[v] !== VARIABLE || inElement[v] === stage) continue;
        inElement[v] = stage;
        pool[last++] = v;
        size += weight[v];
      }
      status[e] = ABSORBED;
    }
    for (let s = start[p] + elementCount[p], end = s + variableCount[p]; s < end; s++) {
      const v = lists[s];
      if (status[v] !== VARIABLE || inElement[v] === stage) continue;
      inElement[v] = stage;
      pool[last++] = v;
      size += weight[v];
    }
    members.size = last;
    status[p] = ELEMENT;
    memberStart[p] = first;
    elementSize[p] = size;
    elementCount[p] = 0;
    variableCount[p] = 0;

    // |L_e \ L_p| for every element e next to L_p (Amestoy, Davis & Duff, 1996, alg. 2).
    for (let m = first; m < last; m++) {
      const v = pool[m];
      buckets.remove(v);
      for (let s = start[v], end = start[v] + elementCount[v]; s < end; s++) {
        const e = lists[s];
        if (status[e] !== ELEMENT) continue;
        if (outsideStage[e] !== stage) {
          outsideStage[e] = stage;
          outside[e] = elementSize[e];
        }
        outside[e] -= weight[v];
      }
    }

    for (let m = first; m < last; m++) {
      const v = pool[m];
      let hash = p;
      // Neighbours now inside L_p are reached through element p and leave the variable list.
      const variablesFrom = start[v] + elementCount[v];
      let kept = variablesFrom;
      let adjacentWeight = 0;
      for (let s = variablesFrom, end = variablesFrom + variableCount[v]; s < end; s++) {
        const u = lists[s];
        if (status[u] !== VARIABLE || inElement[u] === stage) continue;
        lists[kept++] = u;
        adjacentWeight += weight[u];
        hash += u;
      }
      const adjacentCount = kept - variablesFrom;

      // Elements wholly inside L_p are absorbed into it (aggressive absorption); p joins the list.
      kept = start[v];
      let external = 0;
      for (let s = start[v]; s < variablesFrom; s++) {
        const e = lists[s];
        if (status[e] !== ELEMENT) continue;
        if (outside[e] === 0) {
          status[e] = ABSORBED;
          continue;
        }
        lists[kept++] = e;
        external += outside[e];
        hash += e;
      }
      // Move the variables to just after p; the move is rightward by one at most (nothing left
      // the element list), so copy from the back.
      for (let s = adjacentCount - 1; s >= 0; s--) lists[kept + 1 + s] = lists[variablesFrom + s];
      lists[kept] = p;
      elementCount[v] = kept + 1 - start[v];
      variableCount[v] = adjacentCount;

      // Approximate external degree (Amestoy, Davis & Duff, 1996, eq. 4): the smallest of three
      // upper bounds on the true one.
      const rest = size - weight[v];
      degree[v] = Math.min(live - weight[v], degree[v] + rest, adjacentWeight + rest + external);
      hashOf[v] = hash % n;
    }

    // Supervariables: variables of L_p with identical element and variable lists are
    // indistinguishable and merge (found by hashing the lists, then comparing them).
    for (let m = first; m < last; m++) {
      const v = pool[m];
      const h = hashOf[v];
      if (hashStage[h] !== stage) {
        hashStage[h] = stage;
        hashHead[h] = -1;
      }
      hashNext[v] = hashHead[h];
      hashHead[h] = v;
    }
    for (let m = first; m < last; m++) {
      const h = hashOf[pool[m]];
      let i = hashHead[h];
      hashHead[h] = -1;
      for (; i >= 0; i = hashNext[i]) {
        if (hashNext[i] < 0) break;
        seenStamp++;
        const iEnd = start[i] + elementCount[i] + variableCount[i];
        for (let s = start[i]; s < iEnd; s++) seen[lists[s]] = seenStamp;
        let previous = i;
        for (let j = hashNext[i]; j >= 0; j = hashNext[j]) {
          if (elementCount[i] === elementCount[j] && variableCount[i] === variableCount[j] && allSeen(lists, start[j], elementCount[j] + variableCount[j], seen, seenStamp)) {
            weight[i] += weight[j];
            degree[i] -= weight[j];
            status[j] = ABSORBED;
            chainNext[chainLast[i]] = j;
            chainLast[i] = chainLast[j];
            hashNext[previous] = hashNext[j];
          } else {
            previous = j;
          }
        }
      }
    }

    let kept = first;
    for (let m = first; m < last; m++) {
      const v = pool[m];
      if (status[v] !== VARIABLE) continue;
      pool[kept++] = v;
      buckets.insert(v, Math.max(0, degree[v]));
    }
    memberCount[p] = kept - first;
    members.size = kept;
  }

  for (const v of denseVariables) order[position++] = v;
  return order;
}

function allSeen(lists: Int32Array, from: number, count: number, seen: Int32Array, stamp: number): boolean {
  for (let s = from; s < from + count; s++) if (seen[lists[s]] !== stamp) return false;
  return true;
}

/**
 * The pattern of A+Aᵀ without the diagonal: the neighbours of i are
 * lists[start[i] .. start[i] + variableCount[i]), each once. A slot is as long as the number of
 * off-diagonal entries in row and column i, so it may have room to spare.
 */
function symmetricAdjacency(a: SparseMatrix): { start: Int32Array; variableCount: Int32Array; lists: Int32Array } {
  const { n, colPtr, rowIdx } = a;
  const start = new Int32Array(n + 1);
  for (let j = 0; j < n; j++) {
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const i = rowIdx[p];
      if (i === j) continue;
      start[i + 1]++;
      start[j + 1]++;
    }
  }
  for (let i = 0; i < n; i++) start[i + 1] += start[i];
  const lists = new Int32Array(start[n]);
  const variableCount = new Int32Array(n);
  for (let j = 0; j < n; j++) {
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const i = rowIdx[p];
      if (i === j) continue;
      lists[start[i] + variableCount[i]++] = j;
      lists[start[j] + variableCount[j]++] = i;
    }
  }
  const mark = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) {
    let kept = start[i];
    for (let s = start[i], end = start[i] + variableCount[i]; s < end; s++) {
      const j = lists[s];
      if (mark[j] === i) continue;
      mark[j] = i;
      lists[kept++] = j;
    }
    variableCount[i] = kept - start[i];
  }
  return { start, variableCount, lists };
}

/** An Int32Array that grows by doubling; `size` entries are in use. */
class GrowableList {
  data: Int32Array;
  size = 0;

  constructor(capacity: number) {
    this.data = new Int32Array(capacity);
  }

  reserve(more: number): void {
    if (this.size + more <= this.data.length) return;
    const data = new Int32Array(2 * this.data.length + more);
    data.set(this.data.subarray(0, this.size));
    this.data = data;
  }
}

/** Variables bucketed by degree in doubly linked lists, for O(1) insert, remove and minimum. */
class DegreeBuckets {
  private readonly head: Int32Array;
  private readonly next: Int32Array;
  private readonly previous: Int32Array;
  private readonly bucketOf: Int32Array;
  private minimum = 0;

  constructor(n: number) {
    this.head = new Int32Array(n + 1).fill(-1);
    this.next = new Int32Array(n).fill(-1);
    this.previous = new Int32Array(n).fill(-1);
    this.bucketOf = new Int32Array(n).fill(-1);
  }

  insert(v: number, degree: number): void {
    const { head, next, previous } = this;
    next[v] = head[degree];
    previous[v] = -1;
    if (head[degree] >= 0) previous[head[degree]] = v;
    head[degree] = v;
    this.bucketOf[v] = degree;
    if (degree < this.minimum) this.minimum = degree;
  }

  remove(v: number): void {
    const degree = this.bucketOf[v];
    if (degree < 0) return;
    const { head, next, previous } = this;
    if (previous[v] >= 0) next[previous[v]] = next[v];
    else head[degree] = next[v];
    if (next[v] >= 0) previous[next[v]] = previous[v];
    this.bucketOf[v] = -1;
  }

  /** Removes and returns a variable of least degree; there must be one. */
  popMinimum(): number {
    while (this.head[this.minimum] < 0) this.minimum++;
    const v = this.head[this.minimum];
    this.remove(v);
    return v;
  }
}

/**
 * The pattern of AᵀA: columns i and j joined where some row of A holds both, rows with more than
 * denseDegree(n) entries left out. The Cholesky factor of AᵀA holds the fill of LU with any row
 * pivoting (George & Ng, 1987, SIAM J. Sci. Stat. Comput. 8(6):877, from memory), so minimum
 * degree on it orders the columns of an unsymmetric matrix, as COLAMD does without forming it
 * (Davis, Gilbert, Larimore & Ng, 2004, ACM TOMS 30(3):353, from memory). Formed here: on the
 * composition Jacobian of a 64-contactor chip it brings the fill from 1.40 to 1.15 times
 * SuperLU's with COLAMD (measured), at twice the ordering time.
 */
export function normalEquationsPattern(a: SparseMatrix): SparseMatrix {
  const { n, colPtr, rowIdx } = a;
  const rowPtr = new Int32Array(n + 1);
  for (let p = 0; p < colPtr[n]; p++) rowPtr[rowIdx[p] + 1]++;
  for (let i = 0; i < n; i++) rowPtr[i + 1] += rowPtr[i];
  const fill = rowPtr.slice(0, n);
  const columns = new Int32Array(colPtr[n]);
  for (let j = 0; j < n; j++) for (let p = colPtr[j]; p < colPtr[j + 1]; p++) columns[fill[rowIdx[p]]++] = j;
  const dense = denseDegree(n);
  const mark = new Int32Array(n);
  // Two passes: the count of each column's neighbours, then the neighbours.
  const start = new Int32Array(n + 1);
  let entries: Int32Array | undefined;
  for (let pass = 0; pass < 2; pass++) {
    mark.fill(-1);
    let size = 0;
    for (let j = 0; j < n; j++) {
      for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
        const r = rowIdx[p];
        if (rowPtr[r + 1] - rowPtr[r] > dense) continue;
        for (let q = rowPtr[r]; q < rowPtr[r + 1]; q++) {
          const k = columns[q];
          if (mark[k] === j) continue;
          mark[k] = j;
          if (entries) entries[size] = k;
          size++;
        }
      }
      if (!entries) start[j + 1] = size;
    }
    if (!entries) entries = new Int32Array(size);
  }
  return { n, colPtr: start, rowIdx: entries!, values: new Float64Array(entries!.length) };
}

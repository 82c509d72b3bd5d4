/**
 * Chebyshev–Lobatto building blocks of the spectral cross-section solver: nodes, the first
 * derivative matrix and the Clenshaw–Curtis weights on [−1, 1], and a small dense LU for the
 * per-strip systems, and the separable solver of a rectangle and the partly separable one of a
 * quarter disc in polar coordinates. Exports `chebyshevGrid`, `DenseLu`, `separableDirichlet`,
 * `partlySeparableDirichlet`, `interpolateWithSlope`. Knows nothing about channels.
 */
import { EigenvalueDecomposition, inverse, Matrix } from 'ml-matrix';

export interface ChebyshevGrid {
  /** Nodes t_j = −cos(πj/n), j = 0 … n (increasing). */
  nodes: Float64Array;
  /** D[i·(n+1) + j] = ℓ_j′(t_i): the collocation first derivative. */
  d1: Float64Array;
  /** D² = D·D. */
  d2: Float64Array;
  /** Clenshaw–Curtis weights: Σ w_j f(t_j) = ∫₋₁¹ f exactly for polynomials of degree ≤ n. */
  weights: Float64Array;
}

const grids = new Map<number, ChebyshevGrid>();

/**
 * The grid of degree n (cached). D is Trefethen's (Spectral Methods in MATLAB, 2000, program
 * cheb.m) with the diagonal as minus the off-diagonal row sum (exact for constants, which keeps
 * rounding low); the weights are those of Waldvogel (2006, BIT 46:195, eq. 2.2), by direct sum.
 */
export function chebyshevGrid(n: number): ChebyshevGrid {
  let grid = grids.get(n);
  if (grid) return grid;
  const m = n + 1;
  const nodes = new Float64Array(m);
  for (let j = 0; j <= n; j++) nodes[j] = -Math.cos((Math.PI * j) / n);
  const c = (j: number) => (j === 0 || j === n ? 2 : 1) * (j % 2 === 0 ? 1 : -1);
  const d1 = new Float64Array(m * m);
  for (let i = 0; i <= n; i++) {
    let row = 0;
    for (let j = 0; j <= n; j++) {
      if (i === j) continue;
      // D_ij = (c_i/c_j)/(t_i − t_j) holds for the nodes in either order: reversing them
      // changes every barycentric weight by the same sign, which cancels in c_i/c_j.
      const v = c(i) / c(j) / (nodes[i]! - nodes[j]!);
      d1[i * m + j] = v;
      row += v;
    }
    d1[i * m + i] = -row;
  }
  const d2 = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    for (let k = 0; k < m; k++) {
      const a = d1[i * m + k]!;
      if (a === 0) continue;
      for (let j = 0; j < m; j++) d2[i * m + j] += a * d1[k * m + j]!;
    }
  }
  const weights = new Float64Array(m);
  for (let j = 0; j <= n; j++) {
    const theta = (Math.PI * j) / n;
    let s = 1;
    for (let k = 1; k <= Math.floor(n / 2); k++) {
      const b = 2 * k === n ? 1 : 2;
      s -= (b * Math.cos(2 * k * theta)) / (4 * k * k - 1);
    }
    weights[j] = ((j === 0 || j === n ? 1 : 2) * s) / n;
  }
  grid = { nodes, d1, d2, weights };
  grids.set(n, grid);
  return grid;
}

/**
 * LU factors of a dense square matrix (row-major, factored in place) with partial pivoting
 * (Golub & Van Loan, Matrix Computations, 4th ed., 2013, algorithm 3.4.1). `solveInPlace`
 * overwrites k right-hand sides stored as the columns of a row-major n×k block.
 * Written by hand rather than taken from ml-matrix (used for the network's dense LU): on the
 * collocation matrices of the curved strips ml-matrix's LuDecomposition took 1.2–1.4× as long
 * as the row-by-row form of this one (n = 300: 38.6 against 33.0 ms; n = 625: 247 against
 * 172 ms, this machine, loaded), and eliminating four rows at a time is 1.7× faster again
 * (n = 529: 93 → 53 ms of CPU time, factors equal to the bit): the holdup tables of etched and
 * trapezoidal sections are built from these factorisations.
 */
export class DenseLu {
  readonly n: number;
  private readonly a: Float64Array;
  private readonly pivot: Int32Array;

  constructor(a: Float64Array, n: number) {
    this.n = n;
    this.a = a;
    this.pivot = new Int32Array(n);
    for (let k = 0; k < n; k++) {
      let p = k;
      let best = Math.abs(a[k * n + k]!);
      for (let i = k + 1; i < n; i++) {
        const v = Math.abs(a[i * n + k]!);
        if (v > best) {
          best = v;
          p = i;
        }
      }
      if (best === 0) throw new RangeError(`singular collocation matrix at column ${k}`);
      this.pivot[k] = p;
      if (p !== k) {
        for (let j = 0; j < n; j++) {
          const t = a[k * n + j]!;
          a[k * n + j] = a[p * n + j]!;
          a[p * n + j] = t;
        }
      }
      const inv = 1 / a[k * n + k]!;
      const rk = k * n;
      // Four rows at a time, so that each element of the pivot row is read once for all four
      // (each element sees the same operations in the same order as row by row).
      let i = k + 1;
      for (; i + 3 < n; i += 4) {
        const r0 = i * n;
        const r1 = r0 + n;
        const r2 = r1 + n;
        const r3 = r2 + n;
        const f0 = (a[r0 + k]! *= inv);
        const f1 = (a[r1 + k]! *= inv);
        const f2 = (a[r2 + k]! *= inv);
        const f3 = (a[r3 + k]! *= inv);
        for (let j = k + 1; j < n; j++) {
          const v = a[rk + j]!;
          a[r0 + j]! -= f0 * v;
          a[r1 + j]! -= f1 * v;
          a[r2 + j]! -= f2 * v;
          a[r3 + j]! -= f3 * v;
        }
      }
      for (; i < n; i++) {
        const ri = i * n;
        const f = (a[ri + k]! *= inv);
        if (f === 0) continue;
        for (let j = k + 1; j < n; j++) a[ri + j]! -= f * a[rk + j]!;
      }
    }
  }

  solveInPlace(b: Float64Array, k: number): void {
    const { n, a, pivot } = this;
    for (let i = 0; i < n; i++) {
      const p = pivot[i]!;
      if (p !== i) {
        for (let c = 0; c < k; c++) {
          const t = b[i * k + c]!;
          b[i * k + c] = b[p * k + c]!;
          b[p * k + c] = t;
        }
      }
    }
    for (let i = 1; i < n; i++) subtractRows(a, i * n, b, k, i, 0, i);
    for (let i = n - 1; i >= 0; i--) {
      subtractRows(a, i * n, b, k, i, i + 1, n);
      const inv = 1 / a[i * n + i]!;
      for (let c = 0; c < k; c++) b[i * k + c]! *= inv;
    }
  }
}

/**
 * Row i of the k columns of b minus Σ_j a[row + j]·(row j of b) for j from `from` to `to` − 1,
 * in that order, two rows j at a time (each sum is the same as one row at a time, to the bit).
 */
function subtractRows(a: Float64Array, row: number, b: Float64Array, k: number, i: number, from: number, to: number): void {
  const bi = i * k;
  let j = from;
  for (; j + 1 < to; j += 2) {
    const f0 = a[row + j]!;
    const f1 = a[row + j + 1]!;
    if (f0 === 0 && f1 === 0) continue;
    const b0 = j * k;
    const b1 = b0 + k;
    for (let c = 0; c < k; c++) b[bi + c] = b[bi + c]! - f0 * b[b0 + c]! - f1 * b[b1 + c]!;
  }
  if (j < to) {
    const f = a[row + j]!;
    if (f !== 0) for (let c = 0; c < k; c++) b[bi + c]! -= f * b[j * k + c]!;
  }
}

interface Eigenbasis {
  values: Float64Array;
  vectors: Float64Array;
  inverse: Float64Array;
}

const eigenbases = new Map<number, Eigenbasis>();

/**
 * Eigenvalues and eigenvectors of the interior block of D² (the second derivative with u = 0 at
 * both ends), cached by degree. They are real and negative (Gottlieb & Lustman, 1983, SIAM J.
 * Numer. Anal. 20:909); the decomposition checks it.
 */
function dirichletEigenbasis(n: number): Eigenbasis {
  let basis = eigenbases.get(n);
  if (basis) return basis;
  const { d2 } = chebyshevGrid(n);
  const m = n + 1;
  const rows: number[][] = [];
  for (let i = 1; i < n; i++) {
    const row: number[] = [];
    for (let j = 1; j < n; j++) row.push(d2[i * m + j]!);
    rows.push(row);
  }
  const eig = new EigenvalueDecomposition(new Matrix(rows));
  let largest = 0;
  for (const v of eig.realEigenvalues) largest = Math.max(largest, Math.abs(v));
  if (eig.imaginaryEigenvalues.some((v) => Math.abs(v) > 1e-9 * largest) || eig.realEigenvalues.some((v) => !(v < 0))) {
    throw new RangeError(`interior D² of degree ${n} has eigenvalues off the negative axis`);
  }
  const V = eig.eigenvectorMatrix;
  basis = { values: Float64Array.from(eig.realEigenvalues), vectors: Float64Array.from(V.to1DArray()), inverse: Float64Array.from(inverse(V).to1DArray()) };
  eigenbases.set(n, basis);
  return basis;
}

/**
 * Solver of a·∂²u/∂ξ² + c·∂²u/∂η² = f at the interior Chebyshev nodes of an nx × ny grid with
 * u = 0 on the edges, unknown (i, j) at row (i − 1)(ny − 1) + (j − 1): with D²_x = V Λ V⁻¹ and
 * D²_y = W M W⁻¹, U = V [(V⁻¹ F W⁻ᵀ) ./ (aλ_i + cμ_j)] Wᵀ (fast diagonalisation; Lynch, Rice &
 * Thomas, 1964, Numer. Math. 6:185). Cost O(nx·ny·(nx + ny)) per right-hand side.
 * `solveSide` solves the ny − 1 right-hand sides g ⊗ e_l (g over i, e_l the l-th unit vector
 * over j) of one side of a strip together: U_l(i, j) = Σ_q W_jq W⁻¹_ql Z_iq with
 * Z_iq = Σ_p V_ip (V⁻¹g)_p/(aλ_p + cμ_q), O(nx·ny³) for all of them instead of O(nx·ny²·(nx + ny)).
 */
export function separableDirichlet(nx: number, ny: number, a: number, c: number): SeparableSolver {
  const X = dirichletEigenbasis(nx);
  const Y = dirichletEigenbasis(ny);
  const mx = nx - 1;
  const my = ny - 1;
  const F = new Float64Array(mx * my);
  const T = new Float64Array(mx * my);
  return {
    solveInPlace(b, k) {
      for (let col = 0; col < k; col++) {
        for (let r = 0; r < mx * my; r++) F[r] = b[r * k + col]!;
        leftProduct(X.inverse, F, T, mx, my);
        rightProductTransposed(T, Y.inverse, F, mx, my);
        for (let i = 0; i < mx; i++) for (let j = 0; j < my; j++) F[i * my + j]! /= a * X.values[i]! + c * Y.values[j]!;
        leftProduct(X.vectors, F, T, mx, my);
        rightProductTransposed(T, Y.vectors, F, mx, my);
        for (let r = 0; r < mx * my; r++) b[r * k + col] = F[r]!;
      }
    },
    solveSide(g, b, k, first) {
      const gHat = new Float64Array(mx);
      for (let p = 0; p < mx; p++) {
        let sum = 0;
        for (let i = 0; i < mx; i++) sum += X.inverse[p * mx + i]! * g[i]!;
        gHat[p] = sum;
      }
      // Z into T (row i, column q).
      const scaled = new Float64Array(mx);
      for (let q = 0; q < my; q++) {
        for (let p = 0; p < mx; p++) scaled[p] = gHat[p]! / (a * X.values[p]! + c * Y.values[q]!);
        for (let i = 0; i < mx; i++) {
          let sum = 0;
          for (let p = 0; p < mx; p++) sum += X.vectors[i * mx + p]! * scaled[p]!;
          T[i * my + q] = sum;
        }
      }
      const row = new Float64Array(my);
      for (let i = 0; i < mx; i++) {
        for (let j = 0; j < my; j++) {
          row.fill(0);
          for (let q = 0; q < my; q++) {
            const v = Y.vectors[j * my + q]! * T[i * my + q]!;
            for (let l = 0; l < my; l++) row[l]! += v * Y.inverse[q * my + l]!;
          }
          const at = (i * my + j) * k + first;
          for (let l = 0; l < my; l++) b[at + l] = row[l]!;
        }
      }
    },
  };
}

export interface SeparableSolver {
  /** Overwrites the k right-hand sides stored as the columns of b (row-major, interior node (i, j) at row (i − 1)(ny − 1) + j − 1) with their solutions. */
  solveInPlace(b: Float64Array, k: number): void;
  /** Writes into columns first … first + ny − 2 of b (k columns) the solutions for the right-hand sides g ⊗ e_l, l = 0 … ny − 2. */
  solveSide(g: Float64Array, b: Float64Array, k: number, first: number): void;
}

/**
 * Solver of a·∂²u/∂ξ² + p(η)·∂²u/∂η² + q(η)·∂u/∂η = f at the interior Chebyshev nodes of an
 * nx × ny grid with u = 0 on the edges (p, q given at the ny + 1 nodes in η; numbering as
 * separableDirichlet): diagonalised in ξ only (D²_ξ = V Λ V⁻¹), then one dense system
 * aλ_i + p D²_η + q D_η in η per eigenvalue (partial diagonalisation; Haidvogel & Zang, 1979,
 * J. Comput. Phys. 30:167). Cost O(nx·ny·(nx + k)) per column block of k right-hand sides
 * after O(nx·ny³) to factor.
 */
export function partlySeparableDirichlet(nx: number, ny: number, a: number, p: Float64Array, q: Float64Array): { solveInPlace(b: Float64Array, k: number): void } {
  const X = dirichletEigenbasis(nx);
  const { d1, d2 } = chebyshevGrid(ny);
  const mx = nx - 1;
  const my = ny - 1;
  const h = ny + 1;
  const modes: DenseLu[] = [];
  for (let i = 0; i < mx; i++) {
    const L = new Float64Array(my * my);
    for (let j = 0; j < my; j++) {
      for (let l = 0; l < my; l++) L[j * my + l] = p[j + 1]! * d2[(j + 1) * h + l + 1]! + q[j + 1]! * d1[(j + 1) * h + l + 1]!;
      L[j * my + j]! += a * X.values[i]!;
    }
    modes.push(new DenseLu(L, my));
  }
  // into[(i, j), c] = Σ_r M[i, r]·from[(r, j), c] for the k columns at once.
  const alongXi = (M: Float64Array, from: Float64Array, into: Float64Array, k: number) => {
    into.fill(0);
    const block = my * k;
    for (let i = 0; i < mx; i++) {
      for (let r = 0; r < mx; r++) {
        const v = M[i * mx + r]!;
        for (let e = 0; e < block; e++) into[i * block + e]! += v * from[r * block + e]!;
      }
    }
  };
  return {
    solveInPlace(b, k) {
      const modal = new Float64Array(mx * my * k);
      alongXi(X.inverse, b, modal, k);
      for (let i = 0; i < mx; i++) modes[i]!.solveInPlace(modal.subarray(i * my * k, (i + 1) * my * k), k);
      alongXi(X.vectors, modal, b, k);
    },
  };
}

/** into = M·F for M (mx × mx) and F (mx × my), row-major. */
function leftProduct(M: Float64Array, F: Float64Array, into: Float64Array, mx: number, my: number): void {
  into.fill(0);
  for (let i = 0; i < mx; i++) {
    for (let p = 0; p < mx; p++) {
      const v = M[i * mx + p]!;
      for (let j = 0; j < my; j++) into[i * my + j]! += v * F[p * my + j]!;
    }
  }
}

/** into = T·Mᵀ for T (mx × my) and M (my × my), row-major. */
function rightProductTransposed(T: Float64Array, M: Float64Array, into: Float64Array, mx: number, my: number): void {
  for (let i = 0; i < mx; i++) {
    for (let j = 0; j < my; j++) {
      let sum = 0;
      for (let q = 0; q < my; q++) sum += T[i * my + q]! * M[j * my + q]!;
      into[i * my + j] = sum;
    }
  }
}

/**
 * Value and derivative at t ∈ [−1, 1] of the polynomial through f_i at the nodes of degree n
 * (f read as f[offset + stride·i]), into out[0], out[1]: the barycentric form (Berrut &
 * Trefethen, 2004, SIAM Rev. 46:501, eq. 4.2) and its exact derivative
 * p′(t) = Σ r_i (p − f_i)/(t − t_i) / Σ r_i, r_i = w_i/(t − t_i), with p − f_j for the nearest
 * node j written as Σ r_i (f_i − f_j)/Σ r_i (no cancellation as t → t_j); at a node, the row of D.
 */
export function interpolateWithSlope(n: number, t: number, f: ArrayLike<number>, out: Float64Array, offset = 0, stride = 1): void {
  const grid = chebyshevGrid(n);
  const nodes = grid.nodes;
  let near = 0;
  for (let i = 1; i <= n; i++) if (Math.abs(t - nodes[i]!) < Math.abs(t - nodes[near]!)) near = i;
  const fj = f[offset + stride * near]!;
  if (t === nodes[near]) {
    let slope = 0;
    for (let i = 0; i <= n; i++) slope += grid.d1[near * (n + 1) + i]! * f[offset + stride * i]!;
    out[0] = fj;
    out[1] = slope;
    return;
  }
  let sum = 0;
  let o = 0;
  for (let i = 0; i <= n; i++) {
    const r = ((i % 2 === 0 ? 1 : -1) * (i === 0 || i === n ? 0.5 : 1)) / (t - nodes[i]!);
    sum += r;
    o += r * (f[offset + stride * i]! - fj);
  }
  o /= sum;
  const p = fj + o;
  let slope = 0;
  for (let i = 0; i <= n; i++) {
    const d = t - nodes[i]!;
    const r = ((i % 2 === 0 ? 1 : -1) * (i === 0 || i === n ? 0.5 : 1)) / d;
    slope += i === near ? (r * o) / d : (r * (p - f[offset + stride * i]!)) / d;
  }
  out[0] = p;
  out[1] = slope / sum;
}

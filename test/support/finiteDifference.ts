/**
 * An independent second method for the two-layer cross-section, used only by tests: a
 * cell-centred finite-volume solution of ∇·(μ∇u) = −1 (unit pressure gradient) on the rectangle
 * s ∈ [0, S] × t ∈ [0, L] with no slip on all four walls and phase A in s < αS.
 * Exports `twoLayerFiniteVolume` (one grid) and `twoLayerFiniteVolumeExtrapolated` (two grids and
 * Richardson extrapolation). Shares no code or formula with src/physics: no Fourier series.
 *
 * The grid is aligned so that the interface lies on cell faces; the flux through an interface
 * face uses the harmonic mean of the two viscosities, which makes the discrete flux continuous
 * exactly as μ ∂u/∂s is across a flat interface (Patankar, Numerical Heat Transfer and Fluid
 * Flow, 1980, §4.2-3 (from memory)). Walls sit half a cell from the nearest centre. The scheme
 * is second order, so flows converge like h² and one Richardson step removes that term.
 * The linear system is symmetric positive definite and is solved by conjugate gradients with a
 * Jacobi (diagonal) preconditioner (Hestenes & Stiefel, 1952; Saad, Iterative Methods for
 * Sparse Linear Systems, 2nd ed., 2003, algorithm 9.1 (from memory)).
 */

export interface FiniteVolumeInput {
  /** Dimension across which the layers lie, m. */
  across: number;
  /** Dimension the interface spans, m. */
  along: number;
  /** Fraction of `across` filled by phase A; holdup × cellsAcross must be a whole number. */
  holdup: number;
  muA: number;
  muB: number;
  cellsAcross: number;
  cellsAlong: number;
}

export interface FiniteVolumeFlow {
  /** Flow of each phase per unit pressure gradient, m⁴/(Pa·s). */
  kA: number;
  kB: number;
  iterations: number;
  /** Final preconditioned-CG residual, relative to the right-hand side. */
  residual: number;
}

/** CG stops when ‖r‖ ≤ this × ‖b‖; far below the discretisation error of any grid used here. */
const RELATIVE_RESIDUAL = 1e-11;

export function twoLayerFiniteVolume(input: FiniteVolumeInput): FiniteVolumeFlow {
  const { across: S, along: L, holdup, muA, muB, cellsAcross: ns, cellsAlong: nt } = input;
  const interfaceCells = Math.round(holdup * ns);
  if (Math.abs(interfaceCells - holdup * ns) > 1e-9 * ns || interfaceCells < 1 || interfaceCells >= ns) {
    throw new Error(`holdup ${holdup} does not put the interface on a cell face of a ${ns}-cell grid`);
  }
  const ds = S / ns;
  const dt = L / nt;
  const mu = new Float64Array(ns);
  for (let i = 0; i < ns; i++) mu[i] = i < interfaceCells ? muA : muB;

  // Transmissibilities of the faces between neighbouring cells (and the walls), per cell column i.
  const faceS = new Float64Array(ns + 1); // face i sits between cells i-1 and i
  faceS[0] = (2 * mu[0]! * dt) / ds;
  faceS[ns] = (2 * mu[ns - 1]! * dt) / ds;
  for (let i = 1; i < ns; i++) faceS[i] = ((2 * mu[i - 1]! * mu[i]!) / (mu[i - 1]! + mu[i]!)) * (dt / ds);
  const faceT = new Float64Array(ns); // interior faces along t in column i
  const wallT = new Float64Array(ns);
  for (let i = 0; i < ns; i++) {
    faceT[i] = (mu[i]! * ds) / dt;
    wallT[i] = (2 * mu[i]! * ds) / dt;
  }

  const n = ns * nt;
  const index = (i: number, j: number) => i * nt + j;
  const diagonal = new Float64Array(n);
  for (let i = 0; i < ns; i++) {
    for (let j = 0; j < nt; j++) {
      const south = j === 0 ? wallT[i]! : faceT[i]!;
      const north = j === nt - 1 ? wallT[i]! : faceT[i]!;
      diagonal[index(i, j)] = faceS[i]! + faceS[i + 1]! + south + north;
    }
  }

  const apply = (x: Float64Array, into: Float64Array) => {
    for (let i = 0; i < ns; i++) {
      for (let j = 0; j < nt; j++) {
        const p = index(i, j);
        let v = diagonal[p]! * x[p]!;
        if (i > 0) v -= faceS[i]! * x[p - nt]!;
        if (i < ns - 1) v -= faceS[i + 1]! * x[p + nt]!;
        if (j > 0) v -= faceT[i]! * x[p - 1]!;
        if (j < nt - 1) v -= faceT[i]! * x[p + 1]!;
        into[p] = v;
      }
    }
  };

  const source = ds * dt;
  const u = new Float64Array(n);
  const r = new Float64Array(n).fill(source);
  const z = new Float64Array(n);
  const p = new Float64Array(n);
  const q = new Float64Array(n);
  for (let k = 0; k < n; k++) z[k] = r[k]! / diagonal[k]!;
  p.set(z);
  let rz = dot(r, z);
  const bNorm = Math.sqrt(n) * source;
  let residual = 1;
  let iterations = 0;
  for (; iterations < 20 * n; iterations++) {
    residual = Math.sqrt(dot(r, r)) / bNorm;
    if (residual <= RELATIVE_RESIDUAL) break;
    apply(p, q);
    const step = rz / dot(p, q);
    for (let k = 0; k < n; k++) {
      u[k] += step * p[k]!;
      r[k] -= step * q[k]!;
      z[k] = r[k]! / diagonal[k]!;
    }
    const rzNext = dot(r, z);
    const beta = rzNext / rz;
    rz = rzNext;
    for (let k = 0; k < n; k++) p[k] = z[k]! + beta * p[k]!;
  }

  let kA = 0;
  let kB = 0;
  for (let i = 0; i < ns; i++) {
    let column = 0;
    for (let j = 0; j < nt; j++) column += u[index(i, j)]!;
    if (i < interfaceCells) kA += column * source;
    else kB += column * source;
  }
  return { kA, kB, iterations, residual };
}

/**
 * Flows on a grid and on the grid refined twice in each direction, combined as
 * k ≈ (4 k_fine − k_coarse)/3 (Richardson extrapolation for an h² leading error).
 */
export function twoLayerFiniteVolumeExtrapolated(input: FiniteVolumeInput): FiniteVolumeFlow {
  const coarse = twoLayerFiniteVolume(input);
  const fine = twoLayerFiniteVolume({ ...input, cellsAcross: 2 * input.cellsAcross, cellsAlong: 2 * input.cellsAlong });
  return {
    kA: (4 * fine.kA - coarse.kA) / 3,
    kB: (4 * fine.kB - coarse.kB) / 3,
    iterations: coarse.iterations + fine.iterations,
    residual: Math.max(coarse.residual, fine.residual),
  };
}

function dot(x: Float64Array, y: Float64Array): number {
  let s = 0;
  for (let k = 0; k < x.length; k++) s += x[k]! * y[k]!;
  return s;
}

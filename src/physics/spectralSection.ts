/**
 * Two immiscible liquids side by side in a channel of any wall profile flat at the cover
 * (wallProfile.ts): fully developed Stokes flow by Chebyshev collocation on vertical strips.
 * Exports `spectralTwoLayer` (flow of each phase per unit pressure gradient at one interface
 * position), `SpectralField` (the nodal velocities, for drawings), `solveStrips`, `wallStrip`
 * and `stripGeometry` (for curvedSection.ts) and `forgetCondensedStrips`. SI units; no I/O.
 *
 * Equations (G = −dp/dz = 1): μ_i ∇²u = −1 in layer i, u = 0 on the walls and the cover, and
 * at the interface x = x_I: u continuous and μ_A ∂u/∂x = μ_B ∂u/∂x (Bird, Stewart & Lightfoot,
 * Transport Phenomena, 2nd ed., 2002, §2.5 and problem 2B.7). Q_i = ∬ u over layer i.
 *
 * Method: the section is cut by vertical lines at every joint of the wall chain and at the
 * interface, so that each strip lies under one analytic wall piece (line or arc); a strip is
 * the transfinite (linear-blend) image of the square, x = b_x(ξ), y = ½(1 − η)·b_y(ξ), with
 * b(ξ) the wall piece parametrised by abscissa or angle (a strip that closes at a wall joint
 * on the cover is a triangle with one collapsed side, all of whose nodes lie on the wall).
 * In each strip ∇²u is collocated in the mapped form
 *   ∇²u = |∇ξ|² u_ξξ + 2∇ξ·∇η u_ξη + |∇η|² u_ηη + (∇²ξ) u_ξ + (∇²η) u_η
 * (Thompson, Warsi & Mastin, Numerical Grid Generation, 1985, ch. 3) at the interior
 * Chebyshev–Lobatto nodes; the strips meet with one shared value per node of each cut and the
 * balance of μ∂u/∂x there (a continuous flux for a joint, the stress condition at the
 * interface). Each strip's interior is eliminated (static condensation), leaving a small dense
 * system on the cuts. Q is the Clenshaw–Curtis quadrature of u·|J|. A whole quarter-round wall
 * (from the cover down to the vertical through its centre, as both walls of an etched section)
 * is instead the rectangle of polar coordinates about its centre, ρ ∈ [0, r] by φ over the
 * quarter: ρ²∇²u = ρ²u_ρρ + ρu_ρ + u_φφ, separable, solved by diagonalising in φ (its nodes on
 * the vertical side are ρ = y, those of the neighbouring strip); drawings keep the transfinite
 * strips, whose nodes they interpolate.
 *
 * Convergence: spectral where the solution is smooth; near the corners of the section u is
 * singular (r² log r at a right-angled wall corner and where the interface meets a wall at right
 * angles, r^λ with λ = π/θ at a wall corner of angle θ, and r^λ with λ from
 * μ_A cot(λθ_A) + μ_B cot(λθ_B) = 0 where the interface meets an inclined wall), and the error of
 * Q falls algebraically: as about N⁻⁸ on rectangles (the Lobatto nodes cluster as N⁻² at every
 * corner), N⁻⁴ in the etched and trapezoidal sections of the tests (with the polar walls, one
 * phase in an etched 100 × 50 µm section is within 1.8e-8 of degree 40 at degree 16 and 6e-10
 * at 24, a half-disc within 2.9e-8 and 9e-10; 6.5e-8 and 6.6e-9, 3.4e-7 and 2.8e-8 with the
 * transfinite walls). At the default degree Q
 * agrees with the exact rectangle series to better than 1e-8 (width ≥ depth) and with FreeFem++
 * to better than 1e-6, except for a less viscous layer meeting a 54.74° wall, where λ = 0.77
 * and the agreement is 6e-6 (test/physics/shapedSection.test.ts, freefemReference.test.ts).
 */
import { chebyshevGrid, DenseLu, partlySeparableDirichlet, separableDirichlet } from './chebyshev.js';
import { pieceCurve, pieceEnd, pieceStart, type Curve, type WallPiece, type WallProfile } from './wallProfile.js';

/** Polynomial degree across the depth of every strip (the cuts share these nodes). */
export const SPECTRAL_DEGREE = 24;

export interface StripField {
  /** Abscissa and depth of node (i, j) at index i·(ny + 1) + j; the velocity there per unit G. */
  x: Float64Array;
  y: Float64Array;
  u: Float64Array;
  nx: number;
  ny: number;
  phase: 'A' | 'B';
  xa: number;
  xb: number;
  /** The strip's wall, parametrised by ξ as in its map. */
  wall: Curve;
}

export interface SpectralField {
  strips: StripField[];
}

export interface SpectralFlow {
  /** Flow per unit pressure gradient of each phase, m⁴/(Pa·s). */
  qA: number;
  qB: number;
  field?: SpectralField;
}

export interface Strip {
  xa: number;
  xb: number;
  mu: number;
  phase: 'A' | 'B';
  nx: number;
  piece: WallPiece;
  /** Map and metric at every node (i·(ny+1) + j). */
  geometry: Float64Array[];
  /** A whole quarter-round wall whose geometry is that of polarGeometry (polar coordinates about the arc's centre). */
  polar?: boolean;
  /**
   * Set for a strip with a side that is not the vertical line of its wall ends (curvedSection.ts):
   * its geometry is a general transfinite map, solved by dense LU, cached under this key.
   */
  mappedKey?: string;
}

/** Joints closer than this share of the top width to the interface are taken as the interface. */
const MERGE_CUT = 1e-9;

function strips(profile: WallProfile, xI: number, muA: number, muB: number, degree: number, polar: boolean): Strip[] {
  const joints = profile.pieces.slice(0, -1).map(pieceEnd);
  const cuts = [...joints];
  if (xI > 0 && xI < profile.topWidth) cuts.push(xI);
  cuts.sort((a, b) => a - b);
  const ends = [0];
  for (const c of cuts) if (c - ends[ends.length - 1]! > MERGE_CUT * profile.topWidth) ends.push(c);
  if (profile.topWidth - ends[ends.length - 1]! <= MERGE_CUT * profile.topWidth) ends.pop();
  ends.push(profile.topWidth);
  // The interface is the cut nearest x_I (joints within MERGE_CUT of it were merged into it).
  const out: Strip[] = [];
  for (let s = 0; s + 1 < ends.length; s++) {
    const xa = ends[s]!;
    const xb = ends[s + 1]!;
    const mid = 0.5 * (xa + xb);
    const piece = profile.pieces.find((p) => mid >= pieceStart(p) && mid <= pieceEnd(p))!;
    const phase = mid < xI ? 'A' : 'B';
    const width = xb - xa;
    const nx = Math.min(2 * degree, Math.max(degree, Math.ceil((degree * width) / profile.depth)));
    out.push({ xa, xb, mu: phase === 'A' ? muA : muB, phase, nx, piece, ...wallStrip(piece, xa, xb, nx, degree, polar) });
  }
  return out;
}

/**
 * The geometry of the strip under wall piece p from xa to xb: in polar coordinates about the
 * arc's centre for a whole quarter-round wall from the cover down to the vertical through its
 * centre (where `polar` allows: polar nodes are not the transfinite ones a drawing reads), else
 * the transfinite map.
 */
export function wallStrip(p: WallPiece, xa: number, xb: number, nx: number, ny: number, polar: boolean): { geometry: Float64Array[]; polar?: boolean } {
  const quarter = p.kind === 'arc' && xa <= pieceStart(p) && xb >= pieceEnd(p) && ((p.phi0 === Math.PI && p.phi1 === Math.PI / 2) || (p.phi0 === Math.PI / 2 && p.phi1 === 0));
  if (polar && quarter) return { geometry: polarGeometry(p, nx, ny), polar: true };
  return { geometry: stripGeometry(pieceCurve(p, xa, xb), nx, ny) };
}

/**
 * A quarter disc of radius r about (c, 0) on the cover as the rectangle φ = φ0 + (ξ + 1)(φ1 − φ0)/2,
 * ρ = r(1 − η)/2 (the wall at η = −1, the centre at η = 1, the vertical through the centre at the
 * side where φ = π/2, whose nodes ρ = y are those of the neighbouring strip's side). Per node
 * as stripGeometry: x, y, |J| = ρ·r·(φ0 − φ1)/4 and the flux coefficients of
 * ∂u/∂x = cos φ u_ρ − (sin φ/ρ) u_φ; the operator itself is in condense.
 */
function polarGeometry(p: Extract<WallPiece, { kind: 'arc' }>, nx: number, ny: number): Float64Array[] {
  const gx = chebyshevGrid(nx).nodes;
  const gy = chebyshevGrid(ny).nodes;
  const span = p.phi0 - p.phi1;
  const out: Float64Array[] = [];
  for (let i = 0; i <= nx; i++) {
    const phi = p.phi0 - 0.5 * (gx[i]! + 1) * span;
    for (let j = 0; j <= ny; j++) {
      const rho = 0.5 * p.radius * (1 - gy[j]!);
      const g = new Float64Array(10);
      g[0] = p.cx + rho * Math.cos(phi);
      g[1] = rho * Math.sin(phi);
      g[2] = (rho * p.radius * span) / 4;
      if (rho > 0) {
        g[8] = (2 * Math.sin(phi)) / (span * rho);
        g[9] = (-2 * Math.cos(phi)) / p.radius;
      }
      out.push(g);
    }
  }
  return out;
}

/** Per node: [x, y, |J|, c_ξξ, c_ξη, c_ηη, c_ξ, c_η, flux_ξ, flux_η] (see the module comment). */
export function stripGeometry(curve: ReturnType<typeof pieceCurve>, nx: number, ny: number): Float64Array[] {
  const gx = chebyshevGrid(nx).nodes;
  const gy = chebyshevGrid(ny).nodes;
  const b = new Float64Array(6);
  const out: Float64Array[] = [];
  for (let i = 0; i <= nx; i++) {
    curve.at(gx[i]!, b);
    const [bx, by, bx1, by1, bx2, by2] = b as unknown as number[];
    for (let j = 0; j <= ny; j++) {
      const e = 0.5 * (1 - gy[j]!);
      const xXi = bx1!;
      const yXi = e * by1!;
      const yEta = -0.5 * by!;
      const xXiXi = bx2!;
      const yXiXi = e * by2!;
      const yXiEta = -0.5 * by1!;
      const J = xXi * yEta;
      const g = new Float64Array(10);
      g[0] = bx!;
      g[1] = e * by!;
      g[2] = Math.abs(J);
      if (J !== 0) {
        const J2 = J * J;
        const alpha = (yEta * yEta) / J2;
        const beta = (yXi * yEta) / J2;
        const gamma = (xXi * xXi + yXi * yXi) / J2;
        const P = -alpha * xXiXi;
        const Q = -(alpha * yXiXi - 2 * beta * yXiEta);
        g[3] = alpha;
        g[4] = -2 * beta;
        g[5] = gamma;
        g[6] = (yEta * P) / J;
        g[7] = (-yXi * P + xXi * Q) / J;
        g[8] = 1 / xXi;
        g[9] = -yXi / J;
      }
      out.push(g);
    }
  }
  return out;
}

/**
 * Flow of each phase per unit gradient with the interface at abscissa x_I (0 < x_I < topWidth),
 * at polynomial degree `degree` across the depth. `withField` also returns the nodal velocities.
 */
export function spectralTwoLayer(profile: WallProfile, xI: number, muA: number, muB: number, degree = SPECTRAL_DEGREE, withField = false): SpectralFlow {
  return solveStrips(strips(profile, xI, muA, muB, degree, !withField), degree, withField);
}

/**
 * The flows of strips that cover the section from left to right, each meeting the next on one
 * cut with `degree` + 1 nodes from the wall (η = −1) to the cover (η = 1).
 */
export function solveStrips(list: Strip[], degree: number, withField = false): SpectralFlow {
  const ny = degree;
  const my = ny - 1;
  const cy = chebyshevGrid(ny);
  const nCuts = list.length - 1;
  const size = nCuts * my;
  const K = new Float64Array(size * size);
  const rhs = new Float64Array(size);
  const condensed = list.map((strip, s) => condensedStrip(strip, ny, s > 0, s < nCuts));

  // Flux balance on cut c: μ_left ∂u/∂x (left strip's right side) − μ_right ∂u/∂x (right strip's left side) = 0.
  list.forEach((strip, s) => {
    const c = condensed[s]!;
    for (const side of ['left', 'right'] as const) {
      const rows = side === 'left' ? c.fluxLeft : c.fluxRight;
      if (!rows) continue;
      const cut = side === 'left' ? s - 1 : s;
      const sign = side === 'left' ? -strip.mu : strip.mu;
      for (let j = 0; j < my; j++) {
        const row = cut * my + j;
        const r = rows[j]!;
        rhs[row] -= (sign * r.constant) / strip.mu;
        if (c.left) for (let l = 0; l < my; l++) K[row * size + (s - 1) * my + l] += sign * r.left![l]!;
        if (c.right) for (let l = 0; l < my; l++) K[row * size + s * my + l] += sign * r.right![l]!;
      }
    }
  });
  if (size > 0) new DenseLu(K, size).solveInPlace(rhs, 1);

  let qA = 0;
  let qB = 0;
  const fields: StripField[] = [];
  list.forEach((strip, s) => {
    const c = condensed[s]!;
    const left = s > 0 ? rhs.subarray((s - 1) * my, s * my) : undefined;
    const right = s < nCuts ? rhs.subarray(s * my, (s + 1) * my) : undefined;
    const u = c.nodal(1 / strip.mu, left, right);
    const wx = chebyshevGrid(strip.nx).weights;
    let q = 0;
    for (let i = 0; i <= strip.nx; i++) {
      for (let j = 0; j <= ny; j++) q += wx[i]! * cy.weights[j]! * strip.geometry[i * (ny + 1) + j]![2]! * u[i * (ny + 1) + j]!;
    }
    if (strip.phase === 'A') qA += q;
    else qB += q;
    if (withField) {
      const x = new Float64Array(u.length);
      const y = new Float64Array(u.length);
      strip.geometry.forEach((g, k) => {
        x[k] = g[0]!;
        y[k] = g[1]!;
      });
      fields.push({ x, y, u, nx: strip.nx, ny, phase: strip.phase, xa: strip.xa, xb: strip.xb, wall: pieceCurve(strip.piece, strip.xa, strip.xb) });
    }
  });
  return withField ? { qA, qB, field: { strips: fields } } : { qA, qB };
}

interface FluxRow {
  constant: number;
  left?: Float64Array;
  right?: Float64Array;
}

interface Condensed {
  left: boolean;
  right: boolean;
  fluxLeft?: FluxRow[];
  fluxRight?: FluxRow[];
  /** Every nodal value from the cut values, for a layer of fluidity `fluidity` = 1/μ. */
  nodal(fluidity: number, left?: Float64Array, right?: Float64Array): Float64Array;
}

/**
 * Condensed strips by geometry: a strip that the interface does not bound is the same for every
 * holdup, and the condensation does not depend on the viscosity (the source column is −1 for
 * μ = 1 and scales as 1/μ), so it is made once per shape, degree and sides. An arc strip's
 * collocation depends only on its two end angles and its radius (not on where its centre lies),
 * so it is kept by the angles, for the radius of the first one made, and read for any other
 * radius r by the scale s = r/r₀ (∇² scales as 1/s²: the source column as s², the flux rows'
 * constants as s and their cut coefficients as 1/s) and for the mirror image (angles π − φ: the
 * same strip read right to left, ∂u/∂x of opposite sign): the two quarter-round walls of an
 * etched section, and those of every etched section on a chip, share one condensation.
 */
const CONDENSED = new Map<string, { condensed: Condensed; radius: number }>();
const CONDENSED_LIMIT = 256;

/** Drops every kept condensation (what a fresh process starts from; for the benchmarks). */
export function forgetCondensedStrips(): void {
  CONDENSED.clear();
}

function condensedStrip(strip: Strip, ny: number, hasLeft: boolean, hasRight: boolean): Condensed {
  const sides = (left: boolean, right: boolean) => `${strip.nx}|${ny}|${left}|${right}`;
  const p = strip.piece;
  let key: string;
  let radius = 1;
  let mirrored = false;
  if (strip.mappedKey === undefined && p.kind === 'arc') {
    const [fa, fb] = arcAngles(p, strip.xa, strip.xb);
    // The orientation with the larger leading angle is the one kept (a strip that is its own mirror image keeps its own).
    mirrored = Math.PI - fb > fa || (Math.PI - fb === fa && Math.PI - fa > fb);
    const kind = strip.polar ? 'polar' : 'arc';
    key = mirrored ? `${kind}|${Math.PI - fb}|${Math.PI - fa}|${sides(hasRight, hasLeft)}` : `${kind}|${fa}|${fb}|${sides(hasLeft, hasRight)}`;
    radius = p.radius;
  } else {
    key = `${strip.mappedKey ?? ''}|${JSON.stringify(p)}|${strip.xa}|${strip.xb}|${sides(hasLeft, hasRight)}`;
  }
  let kept = CONDENSED.get(key);
  if (!kept) {
    // Made in the kept orientation: the mirror image of a mirrored strip is condensed.
    const made = mirrored ? condense(mirroredStrip(strip, ny), ny, hasRight, hasLeft) : condense(strip, ny, hasLeft, hasRight);
    kept = { condensed: made, radius };
    if (CONDENSED.size >= CONDENSED_LIMIT) CONDENSED.clear();
    CONDENSED.set(key, kept);
  }
  const scale = radius / kept.radius;
  return scale === 1 && !mirrored ? kept.condensed : transformed(kept.condensed, scale, mirrored, strip.nx, ny);
}

/** The end angles of an arc strip between abscissae xa < xb, as pieceCurve parametrises it. */
function arcAngles(p: Extract<WallPiece, { kind: 'arc' }>, xa: number, xb: number): [number, number] {
  const angle = (x: number) => Math.acos(Math.max(-1, Math.min(1, (x - p.cx) / p.radius)));
  return [xa <= pieceStart(p) ? p.phi0 : angle(xa), xb >= pieceEnd(p) ? p.phi1 : angle(xb)];
}

/** The mirror image of an arc strip about the vertical through its centre (angles π − φ). */
function mirroredStrip(strip: Strip, ny: number): Strip {
  const p = strip.piece as Extract<WallPiece, { kind: 'arc' }>;
  const [fa, fb] = arcAngles(p, strip.xa, strip.xb);
  const piece: WallPiece = { kind: 'arc', cx: p.cx, radius: p.radius, phi0: Math.PI - fb, phi1: Math.PI - fa };
  const xa = pieceStart(piece);
  const xb = pieceEnd(piece);
  return { ...strip, piece, xa, xb, ...wallStrip(piece, xa, xb, strip.nx, ny, strip.polar === true) };
}

/** A kept condensation read for a strip `scale` times as large, and mirrored (left and right sides exchanged) if asked. */
function transformed(kept: Condensed, scale: number, mirrored: boolean, nx: number, ny: number): Condensed {
  const sign = mirrored ? -1 : 1;
  const row = (r: FluxRow): FluxRow => {
    const [left, right] = mirrored ? [r.right, r.left] : [r.left, r.right];
    const cut = (v?: Float64Array) => (v ? v.map((c) => (sign * c) / scale) : undefined);
    return { constant: sign * scale * r.constant, left: cut(left), right: cut(right) };
  };
  const [fluxLeft, fluxRight] = mirrored ? [kept.fluxRight, kept.fluxLeft] : [kept.fluxLeft, kept.fluxRight];
  const h = ny + 1;
  return {
    left: mirrored ? kept.right : kept.left,
    right: mirrored ? kept.left : kept.right,
    fluxLeft: fluxLeft?.map(row),
    fluxRight: fluxRight?.map(row),
    nodal(fluidity, left, right) {
      const u = mirrored ? kept.nodal(fluidity * scale * scale, right, left) : kept.nodal(fluidity * scale * scale, left, right);
      if (!mirrored) return u;
      const out = new Float64Array(u.length);
      for (let k = 0; k <= nx; k++) out.set(u.subarray((nx - k) * h, (nx - k + 1) * h), k * h);
      return out;
    },
  };
}

/**
 * Eliminates a strip's interior: A_II u_I = f_I − A_IL u_L − A_IR u_R, so u_I = g + S_L u_L + S_R u_R
 * (for μ = 1), and writes ∂u/∂x on each cut side as an affine function of the cut values.
 * A flat-bottomed strip is a rectangle, where ∇² is separable and A_II is inverted by the
 * eigenvectors of the two one-dimensional operators (fast diagonalisation, Lynch, Rice & Thomas,
 * 1964, Numer. Math. 6:185); any other strip by dense LU.
 */
function condense(strip: Strip, ny: number, hasLeft: boolean, hasRight: boolean): Condensed {
  const nx = strip.nx;
  const gx = chebyshevGrid(nx);
  const gy = chebyshevGrid(ny);
  const mx = nx - 1;
  const my = ny - 1;
  const m = mx * my;
  const cols = 1 + (hasLeft ? my : 0) + (hasRight ? my : 0);
  const leftCol = 1;
  const rightCol = 1 + (hasLeft ? my : 0);
  const flat = strip.mappedKey === undefined && strip.piece.kind === 'line' && strip.piece.y0 === strip.piece.y1;
  const A = flat || strip.polar ? undefined : new Float64Array(m * m);
  const B = new Float64Array(m * cols);
  const Dx = gx.d1;
  const Dy = gy.d1;
  const D2x = gx.d2;
  const D2y = gy.d2;
  const w = nx + 1;
  const h = ny + 1;
  // Adds coefficient v of node (k, l) to row `row` of the interior system.
  const put = (row: number, k: number, l: number, v: number) => {
    if (l === 0 || l === ny) return;
    if (k === 0) {
      if (hasLeft) B[row * cols + leftCol + l - 1] -= v;
    } else if (k === nx) {
      if (hasRight) B[row * cols + rightCol + l - 1] -= v;
    } else if (A) A[row * m + (k - 1) * my + (l - 1)] += v;
  };
  if (strip.polar) {
    // ρ²∇²u = ρ²u_ρρ + ρu_ρ + u_φφ = −ρ² (Poisson in polar coordinates, multiplied by ρ²):
    // a u_ξξ + p(η) u_ηη + q(η) u_η with a = (2/(φ0 − φ1))², p = (2ρ/r)², q = −2ρ/r.
    const piece = strip.piece as Extract<WallPiece, { kind: 'arc' }>;
    const a = (2 / (piece.phi0 - piece.phi1)) ** 2;
    const rho = Float64Array.from(gy.nodes, (eta) => 0.5 * piece.radius * (1 - eta));
    const solver = partlySeparableDirichlet(nx, ny, a, rho.map((r) => (2 * r / piece.radius) ** 2), rho.map((r) => (-2 * r) / piece.radius));
    for (let i = 1; i < nx; i++) {
      for (let j = 1; j < ny; j++) {
        const row = (i - 1) * my + (j - 1);
        B[row * cols] = -rho[j]! * rho[j]!;
        if (hasLeft) B[row * cols + leftCol + j - 1] = -a * D2x[i * w]!;
        if (hasRight) B[row * cols + rightCol + j - 1] = -a * D2x[i * w + nx]!;
      }
    }
    solver.solveInPlace(B, cols);
  } else if (flat) {
    // ∇²u = a u_ξξ + c u_ηη with constant a, c: the source column by one separable solve, and a
    // side's cut values (right-hand sides −a·D²_ξ(i, side)·e_l, one per cut node l) all at once.
    const a = strip.geometry[h + 1]![3]!;
    const separable = separableDirichlet(nx, ny, a, strip.geometry[h + 1]![5]!);
    const source = new Float64Array(m).fill(-1);
    separable.solveInPlace(source, 1);
    for (let r = 0; r < m; r++) B[r * cols] = source[r]!;
    const side = (k: number) => Float64Array.from({ length: mx }, (_, i) => -a * D2x[(i + 1) * w + k]!);
    if (hasLeft) separable.solveSide(side(0), B, cols, leftCol);
    if (hasRight) separable.solveSide(side(nx), B, cols, rightCol);
  } else {
    for (let i = 1; i < nx; i++) {
      for (let j = 1; j < ny; j++) {
        const row = (i - 1) * my + (j - 1);
        const g = strip.geometry[i * h + j]!;
        const [cxx, cxy, cyy, cx, cyc] = [g[3]!, g[4]!, g[5]!, g[6]!, g[7]!];
        for (let k = 0; k <= nx; k++) put(row, k, j, cxx * D2x[i * w + k]! + cx * Dx[i * w + k]!);
        for (let l = 0; l <= ny; l++) put(row, i, l, cyy * D2y[j * h + l]! + cyc * Dy[j * h + l]!);
        if (cxy !== 0) {
          for (let k = 0; k <= nx; k++) {
            const a = cxy * Dx[i * w + k]!;
            if (a === 0) continue;
            for (let l = 0; l <= ny; l++) put(row, k, l, a * Dy[j * h + l]!);
          }
        }
        B[row * cols] = -1;
      }
    }
    new DenseLu(A!, m).solveInPlace(B, cols);
  }

  // u at node (k, l) as constant + left·u_L + right·u_R.
  const interior = (k: number, l: number) => ((k - 1) * my + (l - 1)) * cols;
  const fluxRows = (is: number): FluxRow[] => {
    const rows: FluxRow[] = [];
    for (let j = 1; j < ny; j++) {
      const g = strip.geometry[is * h + j]!;
      const fXi = g[8]!;
      const fEta = g[9]!;
      const row: FluxRow = { constant: 0, left: hasLeft ? new Float64Array(my) : undefined, right: hasRight ? new Float64Array(my) : undefined };
      const addNode = (k: number, l: number, v: number) => {
        if (l === 0 || l === ny || v === 0) return;
        if (k === 0) {
          if (row.left) row.left[l - 1] += v;
        } else if (k === nx) {
          if (row.right) row.right[l - 1] += v;
        } else {
          const base = interior(k, l);
          row.constant += v * B[base]!;
          for (let c = 0; c < my; c++) {
            if (row.left) row.left[c] += v * B[base + leftCol + c]!;
            if (row.right) row.right[c] += v * B[base + rightCol + c]!;
          }
        }
      };
      for (let k = 0; k <= nx; k++) addNode(k, j, fXi * Dx[is * w + k]!);
      for (let l = 0; l <= ny; l++) addNode(is, l, fEta * Dy[j * h + l]!);
      rows.push(row);
    }
    return rows;
  };
  return {
    left: hasLeft,
    right: hasRight,
    fluxLeft: hasLeft ? fluxRows(0) : undefined,
    fluxRight: hasRight ? fluxRows(nx) : undefined,
    nodal(fluidity, left, right) {
      const u = new Float64Array(w * h);
      for (let l = 1; l < ny; l++) {
        if (left) u[l] = left[l - 1]!;
        if (right) u[nx * h + l] = right[l - 1]!;
      }
      for (let k = 1; k < nx; k++) {
        for (let l = 1; l < ny; l++) {
          const base = interior(k, l);
          let v = fluidity * B[base]!;
          for (let c = 0; c < my; c++) {
            if (left) v += B[base + leftCol + c]! * left[c]!;
            if (right) v += B[base + rightCol + c]! * right[c]!;
          }
          u[k * h + l] = v;
        }
      }
      return u;
    },
  };
}


/**
 * The nonlinear network solve: Newton's method with a consistent Jacobian on port pressures,
 * contactor holdups and split leak flows, with backtracking line search, an outer loop that
 * settles phase compositions (carried along the actual flow direction) and split states
 * (pinned or leaking at a window limit). Exports `solveNetwork` and the solution types.
 *
 * Equations (SI):
 *   plain segment   Q = (p_from − p_to) / (r0·μ(x)), μ(x) = x μ_A + (1 − x) μ_B: the homogeneous
 *                   (flow-weighted, by volume) viscosity after Cicchitti et al. (1960), which for a
 *                   single phase is Hagen–Poiseuille / the rectangular-duct series;
 *   contactor lane  Q_near = d_near k_near(α)/L, Q_far = d_far k_far(α)/L, with the constraint
 *                   d_near = d_far (both layers feel one pressure gradient), k from twoLayerFlow;
 *   split           pinned: leak ℓ = 0 (any Δ inside the window);
 *                   leaking: Δ = p_B − p_A held at the window limit, ℓ free (continuous model);
 *   every free port conserves volume: Σ inflow − Σ outflow + injection = 0.
 * Per-phase conservation follows because compositions are carried with the flow.
 */
import { twoLayerFlow, type TwoLayerFlow } from '../physics/twoLayer.js';
import { HoldupTable } from '../physics/section.js';
import { TripletBuilder, factorize, SingularMatrixError, SparseLuSymbolic, type LinearFactor, type SparseMatrix } from './linear.js';
import { SOLVER_DEFAULTS, type SolverOptions } from './defaults.js';
import type { ContactorElement, Network, SplitElement } from '../network/assemble.js';

export type SplitState = 'pinned' | 'high' | 'low';
/**
 * A contactor is `open` while both phases enter it. When the network starves one feed, that
 * phase's layer thins to nothing: the other phase fills the channel (`nearFills` or `farFills`)
 * and pushes back into the starved feed line at the merge.
 */
export type FeedState = 'open' | 'nearFills' | 'farFills';

/** Line searches in a row that reach the shortest step before feeds are examined for starvation. */
const STALLS_BEFORE_STATE_CHANGE = 3;
/** A stalled iteration is accepted when every row is within this multiple of the tolerance. */
const STALLED_ACCEPTANCE = 100;
/** A row counts as settled within this multiple of its rounding floor. */
const ROUNDING_FLOOR_FACTOR = 16;
/** Holdup at which a starved contactor is held (a layer of 1e-6 of the width remains). */
const STARVED_EDGE = 1e-6;
/** Holdup within this of 0 or 1 after a stalled Newton iteration marks a starved feed. */
const STARVING = 1e-3;

export interface NetworkSolution {
  converged: boolean;
  iterations: number;
  rounds: number;
  /** Largest port mass residual relative to the smaller phase throughput. */
  residual: number;
  /** Pressure of every port, Pa. */
  pressure: Float64Array;
  /** Near-lane holdup of every contactor (index as network.contactors). */
  holdup: Float64Array;
  /** Leak flow of every split, far → near port, m³/s. */
  leak: Float64Array;
  splitStates: SplitState[];
  /** Flow from the near to the far feed at every merge (non-zero only when a feed is starved), m³/s. */
  crossover: Float64Array;
  feedStates: FeedState[];
  /** Fraction of A in what leaves each port. */
  composition: Float64Array;
  /** Flow of every plain element (from → to) and both lanes of every contactor, m³/s. */
  plainFlow: Float64Array;
  plainComposition: Float64Array;
  laneFlow: Float64Array; // [near0, far0, near1, far1, ...]
  laneComposition: Float64Array;
  /** Not settled: node ids with the largest residuals, split ids that kept switching. */
  unsettled: string[];
  message?: string;
}

/** What a new solve of a chip with the same topology starts from. */
export type WarmStart = Pick<NetworkSolution, 'pressure' | 'holdup' | 'leak' | 'splitStates' | 'crossover' | 'feedStates' | 'composition'>;

const tableCache = new Map<string, HoldupTable>();

function tableFor(c: ContactorElement, muNear: number, muFar: number): HoldupTable {
  const key = `${c.section.width}|${c.section.depth}|${c.section.orientation}|${muNear}|${muFar}`;
  let table = tableCache.get(key);
  if (!table) {
    table = new HoldupTable(c.section, muNear, muFar);
    if (tableCache.size > 256) tableCache.clear();
    tableCache.set(key, table);
  }
  return table;
}

export function solveNetwork(net: Network, options: SolverOptions = {}, warm?: WarmStart): NetworkSolution {
  const opt = { ...SOLVER_DEFAULTS, ...options };
  const { ports, plains, contactors, splits } = net;
  const { A, B } = net.chip.phases;
  const muA = A.viscosity;
  const muB = B.viscosity;
  const mix = (x: number) => x * muA + (1 - x) * muB;

  // Unknowns: free port pressures | contactor holdups | split leaks | free port compositions.
  const unknownOf = new Int32Array(ports.length).fill(-1);
  let freePorts = 0;
  for (const [i, p] of ports.entries()) if (p.fixed === undefined) unknownOf[i] = freePorts++;
  const alphaAt = freePorts;
  const leakAt = alphaAt + contactors.length;
  const crossAt = leakAt + splits.length;
  const compAt = crossAt + contactors.length;
  const n = compAt + freePorts;

  const x = new Float64Array(n);
  const states: SplitState[] = splits.map(() => 'pinned');
  const feedStates: FeedState[] = contactors.map(() => 'open');
  const fixedMean = mean(ports.filter((p) => p.fixed !== undefined).map((p) => p.fixed!));
  const composition = new Float64Array(ports.length);
  if (warm) {
    for (const [i, u] of unknownOf.entries()) if (u >= 0) x[u] = warm.pressure[i]!;
    x.set(warm.holdup, alphaAt);
    x.set(warm.leak, leakAt);
    warm.splitStates.forEach((st, i) => (states[i] = st));
    x.set(warm.crossover, crossAt);
    warm.feedStates.forEach((st, i) => (feedStates[i] = st));
    composition.set(warm.composition);
  } else {
    for (const [i, u] of unknownOf.entries()) if (u >= 0) x[u] = fixedMean;
    for (let c = 0; c < contactors.length; c++) x[alphaAt + c] = 0.5;
    for (const [i, p] of ports.entries()) composition[i] = p.nominal;
  }
  for (const [i, u] of unknownOf.entries()) if (u >= 0) x[compAt + u] = composition[i]!;
  // Compositions are unknowns of their own only once some port is not pure or a split leaks;
  // until then they stay at their nominal values and their rows are identities.
  let withComposition = warm !== undefined && (!allPure(composition) || states.some((st) => st !== 'pinned') || feedStates.some((st) => st !== 'open'));

  const pressureOf = (v: Float64Array, port: number) => {
    const u = unknownOf[port]!;
    return u >= 0 ? v[u]! : ports[port]!.fixed!;
  };
  const compositionOf = (v: Float64Array, port: number) => {
    const u = unknownOf[port]!;
    return u >= 0 ? v[compAt + u]! : ports[port]!.supplies ?? ports[port]!.nominal;
  };

  // The last cross-section evaluation of each contactor (and of its viscosity difference
  // quotient): a starved contactor, or a line search that leaves a holdup alone, asks again for
  // the same one, and thin layers are the dear end of the series.
  const laneMemo: Array<{ alpha: number; muN: number; muF: number; result: TwoLayerFlow } | undefined> = new Array(2 * contactors.length);
  const laneFlows = (slot: number, el: ContactorElement, alpha: number, muN: number, muF: number): TwoLayerFlow => {
    const memo = laneMemo[slot];
    if (memo && memo.alpha === alpha && memo.muN === muN && memo.muF === muF) return memo.result;
    const result = twoLayerFlow({ across: el.across, along: el.along, holdup: alpha, muA: muN, muB: muF });
    laneMemo[slot] = { alpha, muN, muF, result };
    return result;
  };

  const plainFlow = new Float64Array(plains.length);
  const plainComposition = new Float64Array(plains.length);
  const laneFlow = new Float64Array(2 * contactors.length);
  const laneComposition = new Float64Array(2 * contactors.length);
  const F = new Float64Array(n);
  /** Rounding floor of each mass row, m³/s: the residual double precision can reach there. */
  const noise = new Float64Array(n);
  /** Largest |J_ij| of each row at the last Jacobian (1 before the first). */
  const rowScale = new Float64Array(n).fill(1);
  const anchor = new Float64Array(n);
  const builder = new TripletBuilder(n);
  let regularisation = 0;
  const fixedPressures = ports.filter((p) => p.fixed !== undefined).map((p) => p.fixed!);
  /** The largest applied pressure difference, Pa (at least 1 Pa). */
  const pressureScale = Math.max(1, Math.max(...fixedPressures) - Math.min(...fixedPressures));
  /** Pa per unit holdup. */
  const holdupRegularisation = 1e-12 * pressureScale;

  /**
   * Residuals, and the Jacobian when `jacobian` is set. `freezeHoldup` replaces each lane
   * constraint by α = const (used for the first, linear, step).
   */
  const evaluate = (v: Float64Array, jacobian: boolean, freezeHoldup: boolean) => {
    F.fill(0);
    noise.fill(0);
    if (jacobian) builder.clear();
    const J = (row: number, col: number, value: number) => {
      if (jacobian && row >= 0 && col >= 0) builder.add(row, col, value);
    };
    const massRow = (port: number) => unknownOf[port]!;
    const aRow = (port: number) => (withComposition && unknownOf[port]! >= 0 ? compAt + unknownOf[port]! : -1);
    const pCol = (port: number) => unknownOf[port]!;
    const xCol = (port: number) => (withComposition && unknownOf[port]! >= 0 ? compAt + unknownOf[port]! : -1);

    /**
     * Stamps a flow Q from → to that carries the composition of port `up`: into the volume rows
     * and (with compositions) the phase-A rows. Its partial derivatives are dQ/dp_from = g,
     * dQ/dp_to = −g, dQ/d(extra unknown) = dExtra and dQ/dx_up = dMu (through the viscosity).
     */
    const stamp = (from: number, to: number, q: number, up: number, g: number, extra: number, dExtra: number, dMu: number, otherFrom = -1, otherTo = -1, otherUp = -1, otherDMu = 0) => {
      const xu = compositionOf(v, up);
      const rf = massRow(from);
      const rt = massRow(to);
      if (rf >= 0) F[rf] -= q;
      if (rt >= 0) F[rt] += q;
      // Rounding of p_from − p_to: what no iteration can remove from these rows.
      const rounding = g * (Math.abs(pressureOf(v, from)) + Math.abs(pressureOf(v, to))) * Number.EPSILON;
      if (rf >= 0) noise[rf] += rounding;
      if (rt >= 0) noise[rt] += rounding;
      const af = aRow(from);
      const at = aRow(to);
      if (af >= 0) F[af] -= q * xu;
      if (at >= 0) F[at] += q * xu;
      if (af >= 0) noise[af] += rounding * xu;
      if (at >= 0) noise[at] += rounding * xu;
      if (!jacobian) return;
      partial(rf, rt, af, at, pCol(from), g, g * xu);
      partial(rf, rt, af, at, pCol(to), -g, -g * xu);
      if (extra >= 0) partial(rf, rt, af, at, extra, dExtra, dExtra * xu);
      // Both ends' composition columns are stamped (one with 0) so the pattern does not depend
      // on the flow direction and the symbolic factorisation can be reused.
      if (withComposition) {
        partial(rf, rt, af, at, xCol(from), up === from ? dMu : 0, up === from ? q + xu * dMu : 0);
        partial(rf, rt, af, at, xCol(to), up === to ? dMu : 0, up === to ? q + xu * dMu : 0);
        // A lane also feels the viscosity of the other lane, through the shared interface.
        if (otherFrom >= 0) {
          partial(rf, rt, af, at, xCol(otherFrom), otherUp === otherFrom ? otherDMu : 0, otherUp === otherFrom ? xu * otherDMu : 0);
          partial(rf, rt, af, at, xCol(otherTo), otherUp === otherTo ? otherDMu : 0, otherUp === otherTo ? xu * otherDMu : 0);
        }
      }
    };
    /** Explicit zeros keep a contactor row's pattern the same in every state. */
    function zeroPressureEntries(row: number, el: ContactorElement): void {
      J(row, pCol(el.nearIn), 0);
      J(row, pCol(el.nearOut), 0);
      J(row, pCol(el.farIn), 0);
      J(row, pCol(el.farOut), 0);
    }
    /** dQ/d(col) = d into the volume rows and dA into the phase-A rows of both ends. */
    function partial(rf: number, rt: number, af: number, at: number, col: number, d: number, dA: number): void {
      if (col < 0) return;
      J(rf, col, -d);
      J(rt, col, d);
      J(af, col, -dA);
      J(at, col, dA);
    }

    for (let i = 0; i < ports.length; i++) {
      const p = ports[i]!;
      if (p.injection === 0) continue;
      const r = massRow(i);
      if (r >= 0) F[r] += p.injection;
      const ar = aRow(i);
      if (ar >= 0) F[ar] += p.injection * (p.supplies ?? 1);
    }
    for (let e = 0; e < plains.length; e++) {
      const el = plains[e]!;
      const dp = pressureOf(v, el.from) - pressureOf(v, el.to);
      const up = dp >= 0 ? el.from : el.to;
      const xu = compositionOf(v, up);
      const mu = mix(xu);
      const g = 1 / (el.r0 * mu);
      const q = dp * g;
      plainFlow[e] = q;
      plainComposition[e] = xu;
      stamp(el.from, el.to, q, up, g, -1, 0, (-q * (muA - muB)) / mu);
    }
    for (let c = 0; c < contactors.length; c++) {
      const el = contactors[c]!;
      const alpha = v[alphaAt + c]!;
      const L = el.segment.length;
      const dn = pressureOf(v, el.nearIn) - pressureOf(v, el.nearOut);
      const df = pressureOf(v, el.farIn) - pressureOf(v, el.farOut);
      const upNear = dn >= 0 ? el.nearIn : el.nearOut;
      const upFar = df >= 0 ? el.farIn : el.farOut;
      const xn = compositionOf(v, upNear);
      const xf = compositionOf(v, upFar);
      const muN = mix(xn);
      const muF = mix(xf);
      const r = laneFlows(c, el, alpha, muN, muF);
      const qn = (dn * r.kA) / L;
      const qf = (df * r.kB) / L;
      laneFlow[2 * c] = qn;
      laneFlow[2 * c + 1] = qf;
      laneComposition[2 * c] = xn;
      laneComposition[2 * c + 1] = xf;
      const col = alphaAt + c;
      // Lane viscosities depend on lane compositions. k_i(α; cμ_n, cμ_f) = k_i/c gives
      // μ_n ∂k/∂μ_n + μ_f ∂k/∂μ_f = −k, so one difference quotient in μ_n yields both slopes.
      let dkAdMuN = 0;
      let dkAdMuF = 0;
      let dkBdMuN = 0;
      let dkBdMuF = 0;
      if (withComposition && jacobian) {
        const h = 1e-6;
        const rp = laneFlows(contactors.length + c, el, alpha, muN * (1 + h), muF);
        dkAdMuN = (rp.kA - r.kA) / (muN * h);
        dkBdMuN = (rp.kB - r.kB) / (muN * h);
        dkAdMuF = (-r.kA - muN * dkAdMuN) / muF;
        dkBdMuF = (-r.kB - muN * dkBdMuN) / muF;
      }
      const dMix = muA - muB;
      stamp(el.nearIn, el.nearOut, qn, upNear, r.kA / L, col, (dn * r.dkA) / L, (dn * dkAdMuN * dMix) / L, el.farIn, el.farOut, upFar, (dn * dkAdMuF * dMix) / L);
      stamp(el.farIn, el.farOut, qf, upFar, r.kB / L, col, (df * r.dkB) / L, (df * dkBdMuF * dMix) / L, el.nearIn, el.nearOut, upNear, (df * dkBdMuN * dMix) / L);
      const cc = crossAt + c;
      const cross = v[cc]!;
      stamp(el.nearIn, el.farIn, cross, cross >= 0 ? el.nearIn : el.farIn, 0, cc, 1, 0);
      const feed = feedStates[c]!;
      if (feed !== 'open') {
        // Starved feed: α held at its edge, and the merge is one liquid: p_far = p_near there.
        const edge = feed === 'nearFills' ? 1 - STARVED_EDGE : STARVED_EDGE;
        F[col] = el.scale * pressureScale * (alpha - edge);
        J(col, col, el.scale * pressureScale);
        zeroPressureEntries(col, el);
        F[cc] = el.scale * (pressureOf(v, el.farIn) - pressureOf(v, el.nearIn));
        J(cc, pCol(el.farIn), el.scale);
        J(cc, pCol(el.nearIn), -el.scale);
        J(cc, cc, 0);
      } else {
        F[cc] = cross;
        J(cc, cc, 1);
        J(cc, pCol(el.farIn), 0);
        J(cc, pCol(el.nearIn), 0);
        if (freezeHoldup) {
          F[col] = 0;
          J(col, col, el.scale);
          zeroPressureEntries(col, el);
        } else {
          // A contactor whose drop is lost in rounding carries no flow worth resolving: its
          // holdup is held where it is by a tiny pull toward the last iterate.
          const pull = holdupRegularisation * el.scale;
          const stagnant = Math.max(Math.abs(dn), Math.abs(df)) < holdupRegularisation;
          const w = stagnant ? 0 : el.scale;
          F[col] = w * (dn - df) + pull * (alpha - anchor[col]!);
          J(col, pCol(el.nearIn), w);
          J(col, pCol(el.nearOut), -w);
          J(col, pCol(el.farIn), -w);
          J(col, pCol(el.farOut), w);
          J(col, col, pull);
        }
      }
    }
    for (let s = 0; s < splits.length; s++) {
      const sp = splits[s]!;
      const col = leakAt + s;
      const leak = v[col]!;
      stamp(sp.far, sp.near, leak, leak >= 0 ? sp.far : sp.near, 0, col, 1, 0);
      // Semismooth form of the split's complementarity (pinned inside the window with no leak,
      // or held at a limit while the leak runs toward the other phase's outlet):
      //   Δ = clamp(Δ + ℓ_A/κ, low, high),  ℓ_A = sign·ℓ the leak toward A's outlet, κ the scale.
      // Newton on it switches between the branches by itself (an active-set method).
      const sign = sp.nearPhase === 'A' ? 1 : -1;
      const scale = sp.contactor.scale;
      const delta = sign * (pressureOf(v, sp.far) - pressureOf(v, sp.near));
      const trial = delta + (sign * leak) / scale;
      const [low, high] = sp.window;
      if (trial > low && trial < high) {
        states[s] = 'pinned';
        F[col] = -sign * leak;
        J(col, col, -sign);
        J(col, pCol(sp.far), 0);
        J(col, pCol(sp.near), 0);
      } else {
        states[s] = trial >= high ? 'high' : 'low';
        F[col] = scale * (delta - (trial >= high ? high : low));
        J(col, pCol(sp.far), sign * scale);
        J(col, pCol(sp.near), -sign * scale);
        J(col, col, 0);
      }
    }
    for (let u = 0; u < freePorts; u++) {
      const row = compAt + u;
      if (withComposition) {
        // A stagnant port has no composition of its own: a tiny pull toward the last value keeps it defined.
        F[row] += regularisation * (v[row]! - anchor[row]!);
        J(row, row, regularisation);
      } else {
        F[row] = 0;
        J(row, row, 1);
      }
    }
  };

  /** What the inlets deliver of each phase, m³/s; the smaller sets the tolerance. */
  const flowReference = (): number => {
    const delivered = { A: 0, B: 0 };
    const outflow = new Float64Array(ports.length);
    for (const [e, el] of plains.entries()) {
      outflow[el.from] += plainFlow[e]!;
      outflow[el.to] -= plainFlow[e]!;
    }
    for (const [i, p] of ports.entries()) {
      if (p.node.kind === 'inlet') delivered[p.node.phase] += Math.max(0, p.fixed !== undefined ? outflow[i]! : p.injection);
    }
    const positive = [delivered.A, delivered.B].filter((q) => q > 0);
    return positive.length ? Math.min(...positive) : 1e-300;
  };

  /**
   * Every row within the tolerance, or (for mass rows) within a small multiple of its rounding
   * floor: with highly conductive manifolds at high pressure, g·(p_i − p_j) cannot be resolved
   * below ε·g·(|p_i| + |p_j|), whatever the iteration does.
   */
  const settledRows = (tolerance: number): boolean => {
    for (let i = 0; i < n; i++) {
      if (Math.abs(F[i]!) > Math.max(tolerance, ROUNDING_FLOOR_FACTOR * noise[i]!)) return false;
    }
    return true;
  };

  /**
   * Norms of the residual above each row's rounding floor: the line search must not judge a
   * step by rounding noise in the rows of highly conductive channels, which no step can change.
   * `all`, the merit of the line search, divides each row by its largest Jacobian entry (row
   * equilibration), so a row of a channel 10¹⁰ times more conductive than a contactor does not
   * veto a step that settles the contactor.
   */
  const residualNorms = (): { worst: number; all: number } => {
    let worst = 0;
    let all = 0;
    for (let i = 0; i < n; i++) {
      const a = Math.max(0, Math.abs(F[i]!) - ROUNDING_FLOOR_FACTOR * noise[i]!);
      worst = Math.max(worst, a);
      const scaled = a / rowScale[i]!;
      all += scaled * scaled;
    }
    return { worst, all: Math.sqrt(all) };
  };

  let iterations = 0;
  const newtonStep = (freezeHoldup: boolean): Float64Array => {
    evaluate(x, true, freezeHoldup);
    const matrix = builder.toCsc();
    // Rows are weighed by their largest pressure coefficient (a conductance), so every row of
    // the merit is in pascals; leak and holdup columns carry other units and are left out.
    rowScale.fill(0);
    for (let j = 0; j < alphaAt; j++) {
      for (let k = matrix.colPtr[j]!; k < matrix.colPtr[j + 1]!; k++) {
        const row = matrix.rowIdx[k]!;
        rowScale[row] = Math.max(rowScale[row]!, Math.abs(matrix.values[k]!));
      }
    }
    let typical = 0;
    for (let i = 0; i < alphaAt; i++) typical = Math.max(typical, rowScale[i]!);
    for (let i = 0; i < n; i++) if (!(rowScale[i]! > 0)) rowScale[i] = typical > 0 ? typical : 1;
    const rhs = new Float64Array(n);
    for (let i = 0; i < n; i++) rhs[i] = -F[i]!;
    if (opt.linear === 'dense') return refinedSolve(matrix, factorize(matrix, 'dense'), rhs, 1)!;
    return sparseNewtonSolve(matrix, rhs);
  };
  const unsettled: string[] = [];
  const finish = (converged: boolean, rounds: number, message?: string): NetworkSolution => {
    evaluate(x, false, false);
    const pressure = new Float64Array(ports.length);
    const finalComposition = new Float64Array(ports.length);
    for (let i = 0; i < ports.length; i++) {
      pressure[i] = pressureOf(x, i);
      finalComposition[i] = compositionOf(x, i);
    }
    let mass = 0;
    for (let u = 0; u < freePorts; u++) mass = Math.max(mass, Math.abs(F[u]!), withComposition ? Math.abs(F[compAt + u]!) : 0);
    return {
      converged,
      iterations,
      rounds,
      residual: mass / flowReference(),
      pressure,
      holdup: x.slice(alphaAt, leakAt),
      leak: x.slice(leakAt, crossAt),
      crossover: x.slice(crossAt, compAt),
      feedStates: [...feedStates],
      splitStates: [...states],
      composition: finalComposition,
      plainFlow: plainFlow.slice(),
      plainComposition: plainComposition.slice(),
      laneFlow: laneFlow.slice(),
      laneComposition: laneComposition.slice(),
      unsettled,
      message,
    };
  };

  try {
    if (!warm) {
      // Start: lanes as independent resistors at α = 0.5 (a linear solve), then α from the
      // lane flow fractions through the holdup table (one Picard step).
      const step = newtonStep(true);
      for (let i = 0; i < compAt; i++) x[i] += step[i]!;
      for (let c = 0; c < contactors.length; c++) x[alphaAt + c] = 0.5;
      iterations++;
      evaluate(x, false, true);
      for (const [c, el] of contactors.entries()) {
        const qn = laneFlow[2 * c]!;
        const qf = laneFlow[2 * c + 1]!;
        if (qn * qf > 0) {
          const table = tableFor(el, mix(laneComposition[2 * c]!), mix(laneComposition[2 * c + 1]!));
          x[alphaAt + c] = table.solve(qn / (qn + qf)).holdup;
        }
      }
      if (starveFeeds(net, x, alphaAt, feedStates, laneFlow, plainFlow) > 0) withComposition = true;
    }

    for (let round = 1; round <= opt.maxStateRounds; round++) {
      let settled = false;
      let stalls = 0;
      for (let k = 0; k < opt.maxNewtonIterations && stalls < STALLS_BEFORE_STATE_CHANGE; k++) {
        anchor.set(x);
        evaluate(x, false, false);
        const reference = flowReference();
        regularisation = 1e-10 * reference / Math.max(1e-300, Math.abs(fixedMean) + 1);
        if (settledRows(opt.relativeTolerance * reference)) {
          settled = true;
          break;
        }
        const step = newtonStep(false);
        iterations++;
        // The merit weights come from this Jacobian: judge the start point with them too.
        const start0 = residualNorms();
        // Each holdup step is kept inside (0, 1) on its own (a stagnant contactor can ask for a
        // huge one without that shortening everybody else's step).
        for (let c = 0; c < contactors.length; c++) {
          const a = x[alphaAt + c]!;
          const da = step[alphaAt + c]!;
          step[alphaAt + c] = Math.min(opt.holdupBoundaryFraction * (1 - a), Math.max(-opt.holdupBoundaryFraction * a, da));
        }
        let t = 1;
        const start = x.slice();
        for (;;) {
          for (let i = 0; i < n; i++) x[i] = start[i]! + t * step[i]!;
          for (let i = compAt; i < n; i++) x[i] = Math.min(1, Math.max(0, x[i]!));
          for (let i = alphaAt; i < leakAt; i++) x[i] = Math.min(1 - STARVED_EDGE / 16, Math.max(STARVED_EDGE / 16, x[i]!));
          evaluate(x, false, false);
          if (residualNorms().all <= (1 - 1e-4 * t) * start0.all || t <= opt.minStep) break;
          t /= 2;
        }
        stalls = t <= opt.minStep ? stalls + 1 : 0;


      }
      if (!settled && stalls > 0 && settledRows(STALLED_ACCEPTANCE * opt.relativeTolerance * flowReference())) {
        // The line search cannot improve further and every row is within a small multiple of
        // the tolerance: a rounding floor the per-row estimate missed. Accept; `residual` says it.
        settled = true;
      }
      if (!settled) {
        // No solution with every feed open: starve the feeds whose holdup ran to an edge.
        evaluate(x, false, false);
        const starved = starveFeeds(net, x, alphaAt, feedStates, laneFlow, plainFlow);
        if (starved > 0 && round < opt.maxStateRounds) {
          withComposition = true;
          continue;
        }
        unsettled.push(...worstPorts(F, unknownOf, ports, compAt, 5));
        return finish(false, round, stalls >= STALLS_BEFORE_STATE_CHANGE ? 'Newton iteration stalled (no step reduces the residual)' : `Newton iteration did not settle within ${opt.maxNewtonIterations} steps`);
      }
      let changed = false;
      if (!withComposition) {
        const propagated = propagatedCompositions(net, x, pressureOf, plainFlow, laneFlow, leakAt);
        if (propagated.some((c, i) => Math.abs(c - compositionOf(x, i)) > 1e-12)) {
          withComposition = true;
          for (const [i, u] of unknownOf.entries()) if (u >= 0) x[compAt + u] = propagated[i]!;
          changed = true;
        }
      }
      if (reopenFeeds(x, alphaAt, crossAt, feedStates) > 0) changed = true;
      if (!withComposition && states.some((st) => st !== 'pinned')) {
        withComposition = true;
        changed = true;
      }
      if (!changed) return finish(true, round);
      if (round === opt.maxStateRounds) {
        unsettled.push(...contactors.filter((_, c) => feedStates[c] !== 'open').map((el) => `merge ${el.segment.from}`));
        return finish(false, round, 'feeds kept switching between open and starved');
      }
    }
  } catch (error) {
    if (error instanceof SingularMatrixError) {
      unsettled.push(describeUnknown(error.index, unknownOf, ports, contactors, splits, alphaAt, leakAt, compAt));
      return finish(false, 0, `the linear system is singular at ${unsettled[unsettled.length - 1]}`);
    }
    throw error;
  }
  return finish(false, opt.maxStateRounds, 'no convergence');
}

/**
 * Open feeds become starved where the holdup ran to an edge or one lane runs against the
 * contactor's net flow (no two-layer state can carry that); returns how many.
 */
function starveFeeds(net: Network, x: Float64Array, alphaAt: number, feedStates: FeedState[], laneFlow: Float64Array, plainFlow: Float64Array): number {
  let count = 0;
  /** Net flow that plain segments bring into each port, m³/s. */
  const fed = new Float64Array(net.ports.length);
  net.plains.forEach((el, e) => {
    fed[el.to] += plainFlow[e]!;
    fed[el.from] -= plainFlow[e]!;
  });
  const fedInto = (port: number) => fed[port]!;
  feedStates.forEach((state, c) => {
    const alpha = x[alphaAt + c]!;
    if (state !== 'open') return;
    const el = net.contactors[c]!;
    const qn = laneFlow[2 * c]!;
    const qf = laneFlow[2 * c + 1]!;
    const total = qn + qf;
    // A feed that runs away from the merge while the contactor runs forward is starved.
    const farStarved = alpha > 1 - STARVING || qf * total < 0 || fedInto(el.farIn) * total < 0;
    const nearStarved = alpha < STARVING || qn * total < 0 || fedInto(el.nearIn) * total < 0;
    if (farStarved && !nearStarved) feedStates[c] = 'nearFills';
    else if (nearStarved && !farStarved) feedStates[c] = 'farFills';
    else return;
    x[alphaAt + c] = feedStates[c] === 'nearFills' ? 1 - STARVED_EDGE : STARVED_EDGE;
    count++;
  });
  return count;
}

/**
 * A starved feed whose crossover runs the wrong way (the starved phase now pushes into the
 * merge) opens again; returns how many did.
 */
function reopenFeeds(x: Float64Array, alphaAt: number, crossAt: number, feedStates: FeedState[]): number {
  let count = 0;
  feedStates.forEach((state, c) => {
    const cross = x[crossAt + c]!;
    if ((state === 'nearFills' && cross < 0) || (state === 'farFills' && cross > 0)) {
      feedStates[c] = 'open';
      x[crossAt + c] = 0;
      x[alphaAt + c] = state === 'nearFills' ? 1 - 10 * STARVING : 10 * STARVING;
      count++;
    }
  });
  return count;
}

/**
 * The last sparse factorisation, kept across iterations and across solves of chips with the same
 * topology (sweeps, tolerance samples). A Jacobian changes little from one iterate or grid point
 * to the next, so the old factors serve as the preconditioner of a few refinement sweeps against
 * the current matrix; when those do not bring the linear residual below LINEAR_ACCURACY the
 * matrix is factored afresh. The Newton step is therefore always accurate to that level.
 */
let lastFactor: { pattern: SparseMatrix; symbolic: SparseLuSymbolic; factor: LinearFactor; uses: number } | undefined;
/** Relative linear residual that a Newton step must reach. */
const LINEAR_ACCURACY = 1e-10;
/** Refinement sweeps tried with stale factors, and uses of one factorisation at most. */
const STALE_SWEEPS = 4;
const STALE_USES = 8;

function sparseNewtonSolve(matrix: SparseMatrix, rhs: Float64Array): Float64Array {
  if (lastFactor && lastFactor.uses < STALE_USES && samePattern(lastFactor.pattern, matrix)) {
    lastFactor.uses++;
    const step = refinedSolve(matrix, lastFactor.factor, rhs, STALE_SWEEPS, LINEAR_ACCURACY);
    if (step) return step;
  }
  const symbolic = lastFactor && samePattern(lastFactor.pattern, matrix) ? lastFactor.symbolic : new SparseLuSymbolic(matrix);
  const factor = symbolic.factor(matrix);
  lastFactor = { pattern: matrix, symbolic, factor, uses: 0 };
  // One sweep of iterative refinement (Wilkinson; Higham, Accuracy and Stability of Numerical
  // Algorithms, 2nd ed., 2002, §12.1): chips whose feeds are far more conductive than their
  // contactors give badly scaled systems, and the refined step is markedly better there.
  return refinedSolve(matrix, factor, rhs, 1)!;
}

/**
 * x with matrix·x ≈ rhs from `factor` (of this matrix or of a nearby one) and up to `sweeps`
 * refinement sweeps x += factor⁻¹(rhs − matrix·x). With `accuracy`, returns undefined unless
 * ‖rhs − matrix·x‖∞ ≤ accuracy·‖rhs‖∞ at the end.
 */
function refinedSolve(matrix: SparseMatrix, factor: LinearFactor, rhs: Float64Array, sweeps: number, accuracy?: number): Float64Array | undefined {
  const n = rhs.length;
  const step = factor.solve(rhs);
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(rhs[i]!));
  const residual = (): Float64Array => {
    const r = rhs.slice();
    for (let j = 0; j < n; j++) {
      const xj = step[j]!;
      if (xj === 0) continue;
      for (let k = matrix.colPtr[j]!; k < matrix.colPtr[j + 1]!; k++) r[matrix.rowIdx[k]!] -= matrix.values[k]! * xj;
    }
    return r;
  };
  for (let sweep = 0; sweep < sweeps; sweep++) {
    const r = residual();
    let worst = 0;
    for (let i = 0; i < n; i++) worst = Math.max(worst, Math.abs(r[i]!));
    if (accuracy !== undefined && worst <= accuracy * scale) return step;
    if (!Number.isFinite(worst)) return undefined;
    const correction = factor.solve(r);
    for (let i = 0; i < n; i++) step[i] += correction[i]!;
  }
  if (accuracy === undefined) return step;
  const r = residual();
  let worst = 0;
  for (let i = 0; i < n; i++) worst = Math.max(worst, Math.abs(r[i]!));
  return worst <= accuracy * scale ? step : undefined;
}

function samePattern(a: SparseMatrix, b: SparseMatrix): boolean {
  if (a.n !== b.n || a.rowIdx.length !== b.rowIdx.length) return false;
  for (let j = 0; j <= a.n; j++) if (a.colPtr[j] !== b.colPtr[j]) return false;
  for (let k = 0; k < a.rowIdx.length; k++) if (a.rowIdx[k] !== b.rowIdx[k]) return false;
  return true;
}

function allPure(composition: Float64Array): boolean {
  return composition.every((c) => c < 1e-12 || c > 1 - 1e-12);
}

function mean(values: number[]): number {
  return values.length ? values.reduce((a, b) => a + b, 0) / values.length : 0;
}

function worstPorts(F: Float64Array, unknownOf: Int32Array, ports: Network['ports'], compAt: number, count: number): string[] {
  const rows = [...unknownOf.entries()].filter(([, u]) => u >= 0).map(([i, u]) => ({ id: ports[i]!.node.id, r: Math.max(Math.abs(F[u]!), Math.abs(F[compAt + u]!)) }));
  rows.sort((a, b) => b.r - a.r);
  return [...new Set(rows.slice(0, count).map((r) => `node ${r.id}`))];
}

function describeUnknown(index: number, unknownOf: Int32Array, ports: Network['ports'], contactors: ContactorElement[], splits: SplitElement[], alphaAt: number, leakAt: number, compAt: number): string {
  const crossAt = leakAt + splits.length;
  if (index >= compAt) index -= compAt;
  else if (index >= crossAt) return `merge ${contactors[index - crossAt]?.segment.from}`;
  else if (index >= leakAt) return `split ${splits[index - leakAt]?.node.id}`;
  if (index >= alphaAt) return `contactor ${contactors[index - alphaAt]?.segment.id}`;
  const port = [...unknownOf].indexOf(index);
  return `node ${ports[port]?.node.id ?? index}`;
}

/**
 * Carries phase compositions along the actual flow: each port's outflow is the flow-weighted
 * mix of its inflows (boundary ports supply their own liquid). Sweeps until nothing changes.
 * Used to start the composition unknowns once the nominal compositions no longer hold.
 */
function propagatedCompositions(net: Network, x: Float64Array, pressureOf: (v: Float64Array, p: number) => number, plainFlow: Float64Array, laneFlow: Float64Array, leakAt: number): Float64Array {
  const { ports, plains, contactors, splits } = net;
  const composition = Float64Array.from(ports, (p) => p.nominal);
  const order = ports.map((_, i) => i).sort((a, b) => pressureOf(x, b) - pressureOf(x, a));
  const inflow: Array<Array<[number, number]>> = ports.map(() => []); // [upstream port, flow]
  const link = (from: number, to: number, q: number) => {
    if (q > 0) inflow[to]!.push([from, q]);
    else if (q < 0) inflow[from]!.push([to, -q]);
  };
  plains.forEach((el, e) => link(el.from, el.to, plainFlow[e]!));
  contactors.forEach((el, c) => {
    link(el.nearIn, el.nearOut, laneFlow[2 * c]!);
    link(el.farIn, el.farOut, laneFlow[2 * c + 1]!);
  });
  splits.forEach((sp, s) => link(sp.far, sp.near, x[leakAt + s]!));
  const crossAt = leakAt + splits.length;
  contactors.forEach((el, c) => link(el.nearIn, el.farIn, x[crossAt + c]!));
  for (let sweep = 0; sweep < ports.length + 1; sweep++) {
    let changed = false;
    for (const i of order) {
      const port = ports[i]!;
      let value: number;
      if (port.fixed !== undefined) value = port.supplies ?? port.nominal;
      else {
        let q = 0;
        let qa = 0;
        if (port.injection > 0) {
          q += port.injection;
          qa += port.injection * (port.supplies ?? 1);
        }
        for (const [from, f] of inflow[i]!) {
          q += f;
          qa += f * composition[from]!;
        }
        value = q > 0 ? qa / q : composition[i]!;
      }
      if (Math.abs(value - composition[i]!) > 1e-15) {
        composition[i] = value;
        changed = true;
      }
    }
    if (!changed) break;
  }
  return composition;
}

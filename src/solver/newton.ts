/**
 * The nonlinear network solve: pseudo-transient continuation with switched evolution relaxation
 * (Kelley & Keyes, 1998, SIAM J. Numer. Anal. 35:508) on the semismooth system of
 * assembly.ts. Exports `solveNetwork`, `SolverWorkspace` and the solution types. Keeps only the
 * iteration: the equations are in assembly.ts and elements.ts, the numbering in unknowns.ts,
 * the linear step in linearStep.ts, the named tolerances in defaults.ts.
 *
 * Each step is a semismooth Newton step with the split states predicted from the step itself
 * (primal–dual active sets) and a backtracking line search on the row-equilibrated residual.
 * Where the line search fails, the iteration falls back to pseudo-time steps (J − D/τ)·δ = −F,
 * D weighing the rows that have a physical dynamics (the compliance of each port, the hold-up
 * of phase A at each port, the relaxation of each interface, and of each leak): one implicit
 * Euler step of the chip's start-up with a local time step τ per row. τ grows again as the
 * residual falls, τ_{k+1} = τ_k·‖F_k‖/‖F_{k+1}‖, back to Newton's method and its quadratic end.
 */
import type { HoldupTable } from '../physics/section.js';
import { SectionTables } from './sectionTables.js';
import { SingularMatrixError } from './linear.js';
import { Matrix, QrDecomposition } from 'ml-matrix';
import { SOLVER_DEFAULTS, type SolverOptions } from './defaults.js';
import type { ContactorElement, Network } from '../network/assemble.js';
import { UnknownMap } from './unknowns.js';
import { NetworkEquations, type EvaluateOptions } from './assembly.js';
import { FactorCache, linearStep } from './linearStep.js';
import { TripletBuilder } from './sparseMatrix.js';
import { propagatedCompositions } from './compositions.js';
import type { FeedBranch, SplitBranch } from './elements.js';

export type SplitState = SplitBranch;
export type FeedState = FeedBranch;

/** Steps one stage of the composition-coupling homotopy may take before its step is halved. */
const STAGE_STEPS = 25;
/**
 * Steps the composition stage may take at full viscosity coupling, straight from the flows
 * solved without it, before it falls back to the homotopy from coupling 0: a split that barely
 * leaks (a tolerance realisation, a window map's edge) settles in 2–4 Newton steps that way,
 * where the homotopy's stages took 6–8 (measured on a 64-contactor tolerance study).
 */
const JUMP_STEPS = 8;
/**
 * Where a split leaks or a feed starves, the compositions become unknowns once the flows
 * solved without them settle to this share of the smaller phase throughput, rather than to the
 * convergence tolerance: the flows move again when the compositions come in, and the digits in
 * between cost a Newton step or two (a leaking 64-contactor tolerance realisation, measured).
 */
const EARLY_COMPOSITIONS = 1e-8;
/** Picard sweeps at most, and active-set Newton steps per sweep, in the Picard start. */
const PICARD_SWEEPS = 200;
const PICARD_INNER_STEPS = 12;
/** The frozen-holdup network of a sweep is solved to this share of the smaller phase throughput. */
const PICARD_INNER_SETTLED = 1e-11;
/**
 * The sweeps have settled when no holdup moves by more than this, each weighed by the share of
 * the throughput its lanes carry (a holdup change moves flow in that proportion).
 */
const PICARD_SETTLED = 1e-12;
/** A layer thinner than this (as a share of the channel) that is still thinning closes. */
const PICARD_CLOSE = 1e-4;
/** Anderson depth: previous sweeps kept for the acceleration. */
const ANDERSON_DEPTH = 5;
/** Sweeps that move a holdup by more than this are plain (the first sweeps jump between active sets). */
const ANDERSON_FROM = 1e-2;
/**
 * Pull of a port's composition toward the iterate, as a share of the smaller phase throughput:
 * it defines the composition of a stagnant port. A proximal term, so ports whose throughflow is
 * comparable converge only linearly: at ten times the settling tolerance it slows no port whose
 * composition the tolerance resolves (1e-8 made the dead zone of a 512-contactor ladder creep).
 */
export const COMPOSITION_PULL = 1e-11;
/** Largest holdup change of one Newton step after the Picard sweeps. */
const HOLDUP_STEP = 0.2;
/** z just outside [0, 1]: a feed the sweeps close. */
const EDGE = 1e-9;
/** Lane flows below this share of the smaller phase throughput: a stagnant contactor (rounding level). */
const STAGNANT = 1e-14;
/**
 * Steps an attempt may go without halving its best merit (in one stage) before it is given up
 * for the next weighting: every chip of the test families that settles at all halves it within
 * 20 steps.
 */
const STALL_STEPS = 60;
/** Rounds of split-branch prediction per step. */
const ACTIVE_SET_ROUNDS = 4;
/**
 * A step may reuse the last factors when the whole Newton step before it cut the merit by this
 * factor or more: Newton's quadratic phase, where the matrix hardly moves between steps.
 */
const NEAR_CONTRACTION = 1e-3;
/** A row counts as settled within this multiple of its rounding floor. */
const ROUNDING_FLOOR_FACTOR = 16;
/**
 * The smoothing attempt: first width of the smoothed complementarities (a share of each split's
 * window, and in z), the factor each settled width is cut by, the width below which the exact
 * rows take over, and the relative residual per unit width at which a width counts as settled
 * (the smoothed solution is itself within about the width of the exact one).
 */
const SMOOTHING_START = 0.05;
const SMOOTHING_CUT = 0.1;
const SMOOTHING_END = 1e-9;
const SMOOTHING_SETTLED = 1e-2;

export interface NetworkSolution {
  converged: boolean;
  iterations: number;
  /** Times the set of unknowns changed (compositions switched on): 1 or 2. */
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
  /** Not settled: the elements with the largest residuals. */
  unsettled: string[];
  /** A warm start was given and did not settle; this solution comes from a cold start. */
  restartedCold: boolean;
  /** Attempts made (solveNetwork's attempt plan), this solution's included. */
  starts: number;
  message?: string;
}

/** What a new solve of a chip with the same topology starts from. */
export type WarmStart = Pick<NetworkSolution, 'pressure' | 'holdup' | 'leak' | 'splitStates' | 'crossover' | 'feedStates' | 'composition'>;

/**
 * What a sequence of solves may share: holdup tables by geometry and fluids, the symbolic
 * analyses of the sparse factors by pattern, and the Jacobian's triplet builder by system size
 * (with the compressions of its patterns). Numeric factors are not carried from one solve to
 * the next, so a solve's result does not depend on what ran before it (a tolerance study gives
 * the same figures on one thread or two); each solve's factorisations start from fixed pivots,
 * the primed ones (`primeWorkspace`) or a search. A solve given none makes its own; sweeps pass one.
 */
export class SolverWorkspace {
  readonly factors = new FactorCache();
  readonly tables = new SectionTables();
  private readonly builders = new Map<number, TripletBuilder>();

  /** The triplet builder for systems of n unknowns (a sweep's chips share one size; a few sizes are kept). */
  builderFor(n: number): TripletBuilder {
    let builder = this.builders.get(n);
    if (!builder) {
      if (this.builders.size >= 4) this.builders.clear();
      builder = new TripletBuilder(n);
      this.builders.set(n, builder);
    }
    return builder;
  }

  holdupTable(c: ContactorElement, muNear: number, muFar: number): HoldupTable {
    return this.tables.holdup(c.section, muNear, muFar);
  }
}

/**
 * Primes `workspace` for a sweep of chips near `solution` (a settled solve of `net`'s topology,
 * such as the nominal chip of a tolerance study): the Newton matrices at the solution, with the
 * compositions as unknowns and without, are factored by pivot search, and every later solve
 * with this workspace starts from those pivots (FactorCache.keepPivotsAsStart). The matrices of
 * a nearby chip mostly keep them, so its first factorisation of each pattern is a refactorisation
 * instead of a search (in a 64-contactor tolerance study, a third of the factorisation cost;
 * measured); its patterns are ordered for sweeps (FactorCache.orderForSweeps). Deterministic:
 * two threads primed from one solution start every solve alike.
 */
export function primeWorkspace(net: Network, solution: WarmStart, workspace: SolverWorkspace): void {
  const map = new UnknownMap(net);
  const eq = new NetworkEquations(net, map, workspace.tables, workspace.builderFor(map.size));
  const { x } = unknownsOf(eq, solution);
  eq.evaluate(x, { jacobian: false, freezeHoldup: false, withComposition: false, anchor: x, compositionPull: 0 });
  const reference = eq.flowReference();
  workspace.factors.orderForSweeps();
  for (const withComposition of [false, true]) {
    eq.evaluate(x, { jacobian: true, freezeHoldup: false, withComposition, anchor: x, compositionPull: COMPOSITION_PULL * reference });
    try {
      workspace.factors.factor(eq.builder.toCsc());
    } catch (error) {
      // A matrix with no usable pivot primes nothing: its pattern searches as it would unprimed.
      if (!(error instanceof SingularMatrixError)) throw error;
    }
  }
  workspace.factors.keepPivotsAsStart();
}

/**
 * How the merit weighs each contactor's lane constraint w·(d_near − d_far): like the stiffest
 * port row of the chip (`manifold`: the constraints barely count, the line search follows the
 * mass balances), in pascals (`natural`), or halfway between on a log scale (`geometric`).
 * No one weighting globalises every chip of the test families; the solve tries them in this
 * order, each from the start, and the converged answer does not depend on the weighting.
 */
const LANE_WEIGHTS = ['manifold', 'natural', 'geometric'] as const;
type LaneWeight = (typeof LANE_WEIGHTS)[number];

type PicardMode = 'off' | 'keep' | 'restart';

interface Attempt {
  laneWeight: LaneWeight;
  /** The warm start, or undefined for a cold one. */
  start: WarmStart | undefined;
  /**
   * A cold start that first runs the Picard sweeps on the holdups (`picardSweeps`): `keep`
   * accelerates through feeds opening and closing (the switching contactors leave the history),
   * `restart` clears the history at every switch (slower where a feed flickers at the edge of
   * starving, steadier where many weak contactors switch).
   */
  picard: PicardMode;
  /**
   * A cold start on smoothed complementarities, their width driven to 0 (a smoothing Newton
   * method), marched by pure pseudo-transient continuation: what settles chips where feeds
   * starve and splits leak side by side, where the plain start's line searches stall at the
   * kinks between states.
   */
  smooth: boolean;
}

/**
 * The order of attempts: for each merit weighting of LANE_WEIGHTS, from `warm` when given and
 * then cold; after the first weighting, the smoothing start and then the Picard starts. Chips
 * that settle from the plain start (every well-designed chip of the test families) never pay
 * for the others. The smoothing start settles chips where feeds starve next to leaking splits
 * (the corners of a window map, where the plain start's line searches stall at the kinks
 * between states); the Picard start settles chips whose manifolds carry most of the drop, where
 * the plain start stalls with feeds starving and splits leaking all along the ladder.
 */
function attemptPlan(warm: WarmStart | undefined): Attempt[] {
  const plan: Attempt[] = [];
  for (const laneWeight of LANE_WEIGHTS) {
    if (warm) plan.push({ laneWeight, start: warm, picard: 'off', smooth: false });
    plan.push({ laneWeight, start: undefined, picard: 'off', smooth: false });
    if (laneWeight === LANE_WEIGHTS[0]) {
      plan.push({ laneWeight, start: undefined, picard: 'off', smooth: true });
      plan.push({ laneWeight, start: undefined, picard: 'keep', smooth: false }, { laneWeight, start: undefined, picard: 'restart', smooth: false });
    }
  }
  return plan;
}

/**
 * The steady state of the network: the attempts of `attemptPlan` in turn until one settles (at
 * most `maxAttempts`, each of at most `maxIterations` steps). A solve that settles in none
 * returns the attempt with the smallest residual, and the steps of all attempts.
 */
export function solveNetwork(net: Network, options: SolverOptions = {}, warm?: WarmStart, workspace = new SolverWorkspace()): NetworkSolution {
  const opt = { ...SOLVER_DEFAULTS, ...options };
  workspace.factors.startSolve();
  let best: NetworkSolution | undefined;
  let steps = 0;
  let attempts = 0;
  for (const { laneWeight, start, picard, smooth } of attemptPlan(warm)) {
    if (attempts++ >= opt.maxAttempts) break;
    const attempt = solveFrom(net, start ? { ...opt, maxIterations: Math.min(opt.maxIterations, opt.maxWarmIterations) } : opt, start, workspace, laneWeight, picard, smooth);
    steps += attempt.iterations;
    if (attempt.converged) return { ...attempt, iterations: steps, restartedCold: warm !== undefined && start === undefined, starts: attempts };
    if (!best || attempt.residual < best.residual || !(best.residual >= 0)) best = attempt;
  }
  attempts = Math.min(attempts, opt.maxAttempts);
  return { ...best!, iterations: steps, restartedCold: warm !== undefined, starts: attempts, message: `${best!.message ?? 'the solve did not settle'} (${steps} steps from ${attempts} starts)` };
}

function solveFrom(net: Network, opt: Required<SolverOptions>, warm: WarmStart | undefined, workspace: SolverWorkspace, laneWeight: LaneWeight, picard: PicardMode, smooth = false): NetworkSolution {
  const map = new UnknownMap(net);
  const eq = new NetworkEquations(net, map, workspace.tables, workspace.builderFor(map.size));
  const { alphaAt, leakAt, compAt, size: n, freePorts, unknownOf } = map;
  const { ports, contactors, splits } = net;
  const muA = net.chip.phases.A.viscosity;
  const muB = net.chip.phases.B.viscosity;
  const mix = (x: number) => x * muA + (1 - x) * muB;
  /** Every plain element joins two ports of one pure nominal phase (no junction mixes A and B). */
  const pureNetwork = net.plains.every((el) => ports[el.from]!.nominal === ports[el.to]!.nominal && (ports[el.from]!.nominal === 0 || ports[el.from]!.nominal === 1));

  let x = new Float64Array(n);
  const anchor = new Float64Array(n);
  let withComposition = false;
  if (warm) {
    ({ x, withComposition } = unknownsOf(eq, warm));
  } else {
    for (const u of unknownOf) if (u >= 0) x[u] = eq.fixedMean;
    for (let c = 0; c < contactors.length; c++) x[alphaAt + c] = 0.5;
    for (const [i, u] of unknownOf.entries()) if (u >= 0) x[compAt + u] = ports[i]!.nominal;
  }
  let reference = 1e-300;
  const settings = (jacobian: boolean, freezeHoldup: boolean | 'open' = false): EvaluateOptions => ({ jacobian, freezeHoldup, withComposition, anchor, compositionPull: COMPOSITION_PULL * reference, coupling, smoothing });
  let coupling = 1;
  /** Width of the smoothed complementarities (EvaluateOptions.smoothing); 0: the exact rows. */
  let smoothing = 0;

  /** Largest |J_ij| over the pressure columns of each row: the row's conductance, for the merit. */
  const rowScale = new Float64Array(n).fill(1);
  /** Row-equilibrated 2-norm of the residual above each row's rounding floor, Pa. */
  const merit = (F = eq.F, noise = eq.noise): number => {
    let all = 0;
    for (let i = 0; i < n; i++) {
      const a = Math.max(0, Math.abs(F[i]!) - ROUNDING_FLOOR_FACTOR * noise[i]!) / rowScale[i]!;
      all += a * a;
    }
    return Math.sqrt(all);
  };
  /**
   * Every row within the tolerance or within a small multiple of its rounding floor: with highly
   * conductive manifolds at high pressure, g·(p_i − p_j) cannot be resolved below
   * ε·g·(|p_i| + |p_j|), whatever the iteration does.
   */
  const settled = (tolerance: number): boolean => {
    // Written so that a NaN row is not settled.
    for (let i = 0; i < n; i++) if (!(Math.abs(eq.F[i]!) <= Math.max(tolerance, ROUNDING_FLOOR_FACTOR * eq.noise[i]!))) return false;
    return true;
  };

  let iterations = 0;
  let scaled = false;
  const negated = (F: Float64Array) => F.map((v) => -v);
  /**
   * The holdup freezing of a Jacobian that eq already holds for x, or undefined. The evaluation
   * before a step (`evaluateBeforeStep`) assembles the Jacobian too, and the step's first
   * linearisation at that x then uses it instead of evaluating again: the same F and J, since
   * without compositions an evaluation does not read the composition pull (which the flow
   * reference taken in between moves). A cost only: the iterates are the same to the bit.
   */
  let heldJacobian: boolean | 'open' | undefined;
  const evaluateBeforeStep = (freezeHoldup: false | 'open') => {
    eq.evaluate(x, settings(!withComposition, freezeHoldup));
    heldJacobian = withComposition ? undefined : freezeHoldup;
  };
  /** The linear step of (J − D/τ)·δ = −F at x; τ = Infinity is Newton's step. */
  const linearised = (tau: number, freezeHoldup: boolean | 'open', near = false): Float64Array => {
    if (heldJacobian !== freezeHoldup) eq.evaluate(x, settings(true, freezeHoldup));
    heldJacobian = undefined;
    if (Number.isFinite(tau)) for (let i = 0; i < n; i++) if (eq.dynamic[i]! !== 0) eq.builder.add(i, i, eq.dynamic[i]! / tau);
    const matrix = eq.builder.toCsc();
    if (near && scaled && opt.linear === 'sparse') {
      const reused = workspace.factors.solveNear(matrix, negated(eq.F));
      if (reused) return reused;
    }
    if (scaled) return linearStep(matrix, negated(eq.F), opt.linear, workspace.factors, withComposition);
    scaled = true;
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
    if (laneWeight !== 'manifold') {
      contactors.forEach((el, c) => (rowScale[alphaAt + c] = laneWeight === 'natural' ? el.scale : Math.sqrt(el.scale * rowScale[alphaAt + c]!)));
    }
    // A split row weighs in by its conductance scale κ in either branch, so that every row of
    // the merit is in pascals.
    splits.forEach((sp, s) => (rowScale[leakAt + s] = sp.contactor.scale));
    const rhs = new Float64Array(n);
    for (let i = 0; i < n; i++) rhs[i] = -eq.F[i]!;
    return linearStep(matrix, rhs, opt.linear, workspace.factors, withComposition);
  };
  /**
   * The step, with split and merge branches predicted from it (primal–dual active sets,
   * Hintermüller, Ito & Kunisch, 2002, SIAM J. Optim. 13:865): a split that the step carries
   * past a window limit is re-solved at that limit, one whose predicted leak runs against its
   * limit is re-solved pinned; a contactor whose z the step carries across 0 or 1 is re-solved
   * with the slopes of the piece it lands on; until the prediction agrees with the branches used
   * (a few rounds at most).
   */
  const step = (tau: number, freeze: boolean | 'open' = false, near = false): Float64Array => {
    eq.splitBranch.fill(undefined);
    eq.mergeBranch.fill(undefined);
    let delta = linearised(tau, freeze, near);
    iterations++;
    // Smoothed rows have one piece: their Jacobian is the exact one, nothing to predict.
    for (let round = 0; round < (smoothing > 0 ? 0 : ACTIVE_SET_ROUNDS); round++) {
      let changed = false;
      const at = (port: number) => eq.pressureOf(x, port) + (unknownOf[port]! >= 0 ? delta[unknownOf[port]!]! : 0);
      for (let s = 0; s < splits.length; s++) {
        const sp = splits[s]!;
        const used = eq.splitStates[s]!;
        const sign = sp.nearPhase === 'A' ? 1 : -1;
        const predictedDelta = sign * (at(sp.far) - at(sp.near));
        const leakA = sign * (x[leakAt + s]! + delta[leakAt + s]!);
        const [low, high] = sp.window;
        let predicted: SplitState = used;
        if (used === 'pinned') predicted = predictedDelta >= high ? 'high' : predictedDelta <= low ? 'low' : 'pinned';
        else if ((used === 'high' && leakA < 0) || (used === 'low' && leakA > 0)) predicted = 'pinned';
        if (predicted !== used) {
          eq.splitBranch[s] = predicted;
          changed = true;
        }
      }
      for (let c = 0; c < contactors.length; c++) {
        const z = x[alphaAt + c]! + delta[alphaAt + c]!;
        const predicted: FeedState = z >= 1 ? 'nearFills' : z <= 0 ? 'farFills' : 'open';
        const used = eq.mergeBranch[c] ?? eq.feedStates[c]!;
        if ((predicted === 'open') !== (used === 'open')) {
          eq.mergeBranch[c] = predicted;
          changed = true;
        }
      }
      if (!changed) break;
      delta = linearised(tau, freeze);
    }
    eq.splitBranch.fill(undefined);
    eq.mergeBranch.fill(undefined);
    return delta;
  };
  /** x = from + t·δ, compositions kept in [0, 1]. */
  const apply = (from: Float64Array, delta: Float64Array, t: number) => {
    heldJacobian = undefined;
    for (let i = 0; i < n; i++) x[i] = from[i]! + t * delta[i]!;
    for (let i = compAt; i < n; i++) x[i] = Math.min(1, Math.max(0, x[i]!));
  };


  /** The solution at x; `evaluated` when eq already holds x's evaluation without Jacobian. */
  const finish = (converged: boolean, rounds: number, message?: string, unsettled: string[] = [], evaluated = false): NetworkSolution => {
    if (!evaluated) eq.evaluate(x, settings(false));
    const pressure = new Float64Array(ports.length);
    const composition = new Float64Array(ports.length);
    for (let i = 0; i < ports.length; i++) {
      pressure[i] = eq.pressureOf(x, i);
      composition[i] = eq.compositionOf(x, i);
    }
    let mass = 0;
    for (let u = 0; u < freePorts; u++) mass = Math.max(mass, Math.abs(eq.F[u]!), withComposition ? Math.abs(eq.F[compAt + u]!) : 0);
    return {
      converged,
      iterations,
      rounds,
      residual: mass / eq.flowReference(),
      pressure,
      holdup: Float64Array.from(contactors, (_, c) => Math.min(1, Math.max(0, x[alphaAt + c]!))),
      leak: x.slice(leakAt, compAt),
      crossover: eq.crossover.slice(),
      feedStates: [...eq.feedStates],
      splitStates: [...eq.splitStates],
      composition,
      plainFlow: eq.plainFlow.slice(),
      plainComposition: eq.plainComposition.slice(),
      laneFlow: eq.laneFlow.slice(),
      laneComposition: eq.laneComposition.slice(),
      unsettled,
      message,
      restartedCold: false,
      starts: 1,
    };
  };

  /**
   * The compositions that the flows at x carry (a linear transport solve), or undefined when the
   * nominal ones still hold: every split pinned, every feed open, nothing mixed.
   */
  const carriedCompositions = (): Float64Array | undefined => {
    // Every plain element joins ports of one pure phase, every split pinned and every feed open,
    // and the compositions at their nominal values: no port can receive the other phase (a lane
    // carries its own phase, leaks and crossovers are zero), so the transport solve would give
    // the nominal compositions back.
    if (pureNetwork && eq.splitStates.every((st) => st === 'pinned') && eq.feedStates.every((st) => st === 'open') && unknownOf.every((u, i) => u < 0 || x[compAt + u] === ports[i]!.nominal)) return undefined;
    const carried = propagatedCompositions(net, {
      pressure: (p) => eq.pressureOf(x, p),
      plainFlow: eq.plainFlow,
      laneFlow: eq.laneFlow,
      leak: x.subarray(leakAt, compAt),
      crossover: eq.crossover,
    });
    const changed = carried.some((c, i) => Math.abs(c - eq.compositionOf(x, i)) > 1e-12);
    if (!changed && eq.splitStates.every((st) => st === 'pinned') && eq.feedStates.every((st) => st === 'open')) return undefined;
    return carried;
  };

  /**
   * The holdup whose flow fraction contactor c's lanes carry at the last evaluation (the holdup
   * table inverted), or `edge` beyond 0 or 1 when one lane runs against the contactor's net
   * flow; undefined when the lanes carry `stagnant` or less (m³/s) or no defined fraction.
   */
  const holdupOfLanes = (c: number, edge: number, stagnant: number): number | undefined => {
    const qn = eq.laneFlow[2 * c]!;
    const qf = eq.laneFlow[2 * c + 1]!;
    const phi = qn / (qn + qf);
    if (!Number.isFinite(phi) || Math.abs(qn) + Math.abs(qf) <= stagnant) return undefined;
    if (phi <= 0) return -edge;
    if (phi >= 1) return 1 + edge;
    return workspace.holdupTable(contactors[c]!, mix(eq.laneComposition[2 * c]!), mix(eq.laneComposition[2 * c + 1]!)).solve(phi).holdup;
  };

  /**
   * Picard sweeps on the holdups: with every open contactor's holdup frozen, the network is a
   * piecewise-linear one (lanes as fixed resistors, split windows, starved contactors'
   * crossovers), solved by active-set Newton steps; then each holdup is set to the one whose
   * flow fraction the lanes carried. At the fixed point both lanes of every contactor feel one
   * gradient. The plain map contracts by the share of a contactor's loop resistance that lies in
   * its own lanes, and slowly where a layer thins toward a wall (its lane conductance goes as
   * its thickness squared), so the sweeps are Anderson-accelerated (Walker & Ni, 2011, SIAM J.
   * Numer. Anal. 49:1715; depth ANDERSON_DEPTH). A feed that opens or closes leaves the history
   * (its entries zeroed), or with `restartOnSwitch` clears it. A layer the accelerated sweep
   * carries through a wall closes: its phase starves, and the inner steps' crossover decides
   * whether it opens again.
   */
  function picardSweeps(restartOnSwitch: boolean): void {
    const nc = contactors.length;
    const dG: Float64Array[] = [];
    const dF: Float64Array[] = [];
    let lastG: Float64Array | undefined;
    let lastF: Float64Array | undefined;
    let lastNorm = Infinity;
    const wasOpen = contactors.map((_, c) => x[alphaAt + c]! > 0 && x[alphaAt + c]! < 1);
    for (let sweep = 0; sweep < PICARD_SWEEPS; sweep++) {
      for (let inner = 0; inner < PICARD_INNER_STEPS; inner++) {
        evaluateBeforeStep('open');
        reference = eq.flowReference();
        if (settled(PICARD_INNER_SETTLED * reference)) break;
        apply(x.slice(), step(Infinity, 'open'), 1);
      }
      if (iterations >= opt.maxIterations / 2) return;
      eq.evaluate(x, settings(false, 'open'));
      const g = new Float64Array(nc);
      // Contactors whose feed opened or closed in this sweep: they leave the acceleration.
      const switched = new Uint8Array(nc);
      for (let c = 0; c < nc; c++) {
        const z = x[alphaAt + c]!;
        g[c] = z;
        if (z > 0 && z < 1) {
          // A stagnant contactor (lane flows at the rounding level) keeps its holdup.
          const holdup = holdupOfLanes(c, EDGE, STAGNANT * reference);
          if (holdup === undefined) continue;
          g[c] = holdup;
          if (holdup <= 0 || holdup >= 1) switched[c] = 1;
        }
        // A starved contactor's crossover is an unknown of the inner steps, and a step that
        // carries its z inside (0, 1) opens the feed again.
        const open = z > 0 && z < 1;
        if (open !== wasOpen[c]) switched[c] = 1;
        wasOpen[c] = open;
      }
      const f = g.map((v, c) => v - x[alphaAt + c]!);
      // Each holdup weighs in by the share of the throughput its lanes carry.
      const weight = contactors.map((_, c) => Math.min(1, (Math.abs(eq.laneFlow[2 * c]!) + Math.abs(eq.laneFlow[2 * c + 1]!)) / reference));
      let norm = 0;
      for (let c = 0; c < nc; c++) norm = Math.max(norm, weight[c]! * Math.abs(f[c]!));
      if (norm < PICARD_SETTLED) return;
      const kept = (v: number, c: number) => (switched[c] ? 0 : v);
      if (!(norm < 2 * lastNorm) || norm > ANDERSON_FROM || (restartOnSwitch && switched.includes(1))) {
        dG.length = 0;
        dF.length = 0;
      } else if (lastG && lastF) {
        for (const col of [...dG, ...dF]) for (let c = 0; c < nc; c++) if (switched[c]) col[c] = 0;
        dG.push(g.map((v, c) => kept(v - lastG![c]!, c)));
        dF.push(f.map((v, c) => kept(v - lastF![c]!, c)));
        if (dG.length > ANDERSON_DEPTH) {
          dG.shift();
          dF.shift();
        }
      }
      lastG = g;
      lastF = f;
      lastNorm = norm;
      const next = g.slice();
      if (dF.length > 0) {
        const gamma = leastSquares(dF.map((col) => col.map((v, c) => v * weight[c]!)), f.map((v, c) => kept(v * weight[c]!, c)));
        if (gamma) for (let k = 0; k < dF.length; k++) for (let c = 0; c < nc; c++) next[c] -= gamma[k]! * dG[k]![c]!;
      }
      for (let c = 0; c < nc; c++) {
        const z = x[alphaAt + c]!;
        let v = next[c]!;
        if (z > 0 && z < 1) {
          // Open stays open inside the walls; through one, or thinner than PICARD_CLOSE and still thinning, it closes.
          if (v <= 0 || (v < PICARD_CLOSE && v < z)) v = -EDGE;
          else if (v >= 1 || (v > 1 - PICARD_CLOSE && v > z)) v = 1 + EDGE;
          if (v <= 0 || v >= 1) {
            if (restartOnSwitch) {
              dG.length = 0;
              dF.length = 0;
            } else for (const col of [...dG, ...dF]) col[c] = 0;
          }
        } else v = g[c]!;
        x[alphaAt + c] = v;
      }
    }
  }

  try {
    if (!warm) {
      // Start: lanes as independent resistors at α = 0.5 (a linear solve), then α from the lane
      // flow fractions through the holdup table (one Picard step); a lane that runs against its
      // contactor's net flow starts at the edge where the other phase fills the channel.
      anchor.set(x);
      apply(x.slice(), linearised(Infinity, true), 1);
      iterations++;
      eq.evaluate(x, settings(false, true));
      for (let c = 0; c < contactors.length; c++) {
        const holdup = holdupOfLanes(c, 0, 0);
        if (holdup !== undefined) x[alphaAt + c] = holdup;
      }
      eq.rescale(x);
      if (picard !== 'off') picardSweeps(picard === 'restart');
      if (smooth) smoothing = SMOOTHING_START;
    }

    // The smoothing attempt marches in pseudo-time from the start (Kelley & Keyes's τ₀).
    let tau = smooth ? opt.fallbackPseudoStep : Infinity;
    let rounds = 1;
    let settledAt: Float64Array | undefined;
    let settledCoupling = 1;
    let couplingStep = 0.25;
    let stageStart = 0;
    /** The composition stage started at full coupling (JUMP_STEPS) and has not fallen back. */
    let jumped = false;
    let bestMerit = Infinity;
    let improvedAt = 0;
    /** The line search's evaluation of the step taken holds F and J at x, anchored at x (`evaluateBeforeStep`'s). */
    let evaluatedHere = false;
    /** The merit before the last step, and whether that step was a whole Newton step. */
    let lastMerit = Infinity;
    let lastWhole = false;
    while (iterations < opt.maxIterations) {
      if (!evaluatedHere) {
        anchor.set(x);
        evaluateBeforeStep(false);
      }
      evaluatedHere = false;
      reference = eq.flowReference();
      // In the Picard attempts the last stage (coupling 1) may fall back too; the plain attempt
      // keeps its last stage to the end, which settles the default 16-contactor ladder in 86 steps
      // where the fallback sent it through every attempt without settling.
      if (jumped && !settled(opt.relativeTolerance * reference) && iterations - stageStart > JUMP_STEPS) {
        // Full coupling at once did not settle: the homotopy from coupling 0 instead, marched
        // from the flows solved without it.
        x.set(settledAt!);
        jumped = false;
        coupling = 0;
        stageStart = iterations;
        tau = opt.fallbackPseudoStep;
        continue;
      }
      const fallbackCoupling = picard === 'off' ? coupling : settledCoupling;
      if (withComposition && fallbackCoupling < 1 && !settled(opt.relativeTolerance * reference) && iterations - stageStart > STAGE_STEPS) {
        // This stage of the homotopy does not settle: back to the last settled one, half the step.
        x.set(settledAt!);
        couplingStep /= 2;
        coupling = settledCoupling + couplingStep;
        stageStart = iterations;
        tau = Infinity;
        continue;
      }
      if (smoothing > 0 && settled(Math.max(opt.relativeTolerance, SMOOTHING_SETTLED * smoothing) * reference)) {
        // This width settled: the next, SMOOTHING_CUT narrower, and the exact rows below SMOOTHING_END.
        smoothing = smoothing * SMOOTHING_CUT < SMOOTHING_END ? 0 : smoothing * SMOOTHING_CUT;
        stageStart = iterations;
        continue;
      }
      // A split leaks or a feed starves: the compositions will be unknowns, so the flows need
      // not settle to the last digit first (EARLY_COMPOSITIONS).
      const mixing = !withComposition && smoothing === 0 && (eq.splitStates.some((st) => st !== 'pinned') || eq.feedStates.some((st) => st !== 'open'));
      if (settled(opt.relativeTolerance * reference) || (mixing && settled(EARLY_COMPOSITIONS * reference))) {
        if (withComposition && coupling < 1) {
          settledAt = x.slice();
          settledCoupling = coupling;
          couplingStep = Math.min(1 - coupling, 1.5 * couplingStep);
          coupling = Math.min(1, coupling + couplingStep);
          stageStart = iterations;
          tau = Infinity;
          continue;
        }
        if (withComposition) return finish(true, rounds, undefined, [], true);
        // Compositions become unknowns once the nominal ones no longer hold.
        const carried = carriedCompositions();
        if (!carried) return finish(true, rounds, undefined, [], true);
        withComposition = true;
        rounds++;
        for (const [i, u] of unknownOf.entries()) if (u >= 0) x[compAt + u] = carried[i]!;
        // The viscosity coupling of the compositions at full strength, by Newton's method from
        // the flows just solved; if that does not settle within JUMP_STEPS, marched from 0 (the
        // flows just solved) to 1 in stages.
        coupling = 1;
        jumped = true;
        settledCoupling = 0;
        couplingStep = 0.25;
        settledAt = x.slice();
        stageStart = iterations;
        tau = Infinity;
        continue;
      }
      const start = x.slice();
      const startF = eq.F.slice();
      const startNoise = eq.noise.slice();
      // Near the solution (the last full Newton step cut the merit by NEAR_CONTRACTION or more)
      // the step may come from the last factors (FactorCache.solveNear).
      const now = merit();
      const delta = step(tau, false, tau === Infinity && lastWhole && now <= NEAR_CONTRACTION * lastMerit);
      lastMerit = now;
      if (picard !== 'off') {
        // From the Picard point, a holdup whose lanes carry almost nothing is weakly determined
        // and its Newton step can be tens of channel widths, far outside the lanes' linear
        // range; it moves by HOLDUP_STEP at most (the other unknowns keep Newton's step).
        for (let c = 0; c < contactors.length; c++) {
          const d = delta[alphaAt + c]!;
          if (Math.abs(d) > HOLDUP_STEP) delta[alphaAt + c] = Math.sign(d) * HOLDUP_STEP;
        }
      }
      // The merit of the start, with its own split states and this step's row weights.
      const before = merit(startF, startNoise);
      if (improvedAt < stageStart) {
        bestMerit = Infinity;
        improvedAt = stageStart;
      }
      if (before <= 0.5 * bestMerit) {
        bestMerit = before;
        improvedAt = iterations;
      } else if (iterations - improvedAt > STALL_STEPS) {
        break;
      }
      if (smooth) {
        // Pseudo-transient continuation as Kelley & Keyes (1998) state it: every step is taken
        // whole, unless it multiplies the merit by more than rejectGrowth (then τ is cut by 4 and
        // the step taken again), and τ follows the merit by switched evolution relaxation. No
        // line search: on the smoothed rows a step that first raises the merit is often the way
        // out of a curved valley where a backtracking search cuts τ to nothing.
        apply(start, delta, 1);
        eq.evaluate(x, settings(false));
        const after = merit();
        if (!(after <= opt.rejectGrowth * before)) {
          x.set(start);
          tau = Math.min(tau, opt.fallbackPseudoStep) / 4;
          continue;
        }
        tau = Math.min(opt.maxPseudoStep, (tau * before) / Math.max(after, 1e-300));
        if (tau >= opt.maxPseudoStep) tau = Infinity;
        continue;
      }
      // Backtracking on the row-equilibrated merit (Armijo). Without compositions the full step
      // is evaluated as the next step would start (Jacobian assembled, anchored at the trial
      // point), so a step taken whole needs no evaluation of its own at the top of the loop; the
      // anchor moves only the lane rows' pull of 1e-12 of a row's scale per unit z, which no
      // merit comparison resolves, and leaves stagnant rows alone (their z does not move).
      let t = 1;
      let after = Infinity;
      let descended = false;
      for (;;) {
        apply(start, delta, t);
        const whole = t === 1 && !withComposition;
        if (whole) anchor.set(x);
        eq.evaluate(x, settings(whole));
        after = merit();
        descended = Number.isFinite(after) && after <= (1 - 1e-4 * t) * before;
        if (whole && descended) {
          heldJacobian = false;
          evaluatedHere = true;
        }
        lastWhole = t === 1 && descended && tau === Infinity;
        if (whole && !descended) anchor.set(start);
        if (descended || t <= opt.minStep) break;
        t /= 2;
      }
      if (!descended) {
        // Not even a short step helps: keep it unless it made things much worse, and take
        // shorter pseudo-time steps from here.
        if (!(after <= opt.rejectGrowth * before)) x.set(start);
        tau = Math.min(tau, opt.fallbackPseudoStep) / 4;
        continue;
      }
      // Switched evolution relaxation: the pseudo-time step grows as the residual falls.
      tau = Math.min(opt.maxPseudoStep, (tau * before) / Math.max(after, 1e-300) / t);
      if (tau >= opt.maxPseudoStep) tau = Infinity;
    }
    eq.evaluate(x, settings(false));
    return finish(false, rounds, 'the solve did not settle', worstRows(eq.F, map, 5));
  } catch (error) {
    if (error instanceof SingularMatrixError) {
      const where = map.describe(error.index);
      return finish(false, 0, `the linear system is singular at ${where}`, [where]);
    }
    throw error;
  }
}

/**
 * The unknowns of a solution (or warm start) for `eq`'s numbering, and whether its compositions
 * are unknowns: they are once any stream is mixed, a split leaks or a feed is starved. Widens
 * eq's pressure scale to the solution's pressures first (the merge crossover is scaled by it).
 */
export function unknownsOf(eq: NetworkEquations, warm: WarmStart): { x: Float64Array<ArrayBuffer>; withComposition: boolean } {
  const { alphaAt, leakAt, compAt, size, unknownOf } = eq.map;
  const x = new Float64Array(size);
  for (const [i, u] of unknownOf.entries()) if (u >= 0) x[u] = warm.pressure[i]!;
  eq.rescale(x);
  eq.net.contactors.forEach((el, c) => (x[alphaAt + c] = warm.holdup[c]! + warm.crossover[c]! / eq.mergeKappa(el)));
  x.set(warm.leak, leakAt);
  for (const [i, u] of unknownOf.entries()) if (u >= 0) x[compAt + u] = warm.composition[i]!;
  const withComposition = !allPure(warm.composition) || warm.splitStates.some((st) => st !== 'pinned') || warm.feedStates.some((st) => st !== 'open');
  return { x, withComposition };
}

/** γ minimising ‖f − Σ γ_k·columns_k‖₂ (Anderson's small least-squares problem, by QR); undefined when it is rank deficient. */
function leastSquares(columns: Float64Array[], f: Float64Array): number[] | undefined {
  const a = new Matrix(f.length, columns.length);
  columns.forEach((col, k) => col.forEach((v, i) => a.set(i, k, v)));
  const qr = new QrDecomposition(a);
  if (!qr.isFullRank()) return undefined;
  return qr.solve(Matrix.columnVector(Array.from(f))).to1DArray();
}

function allPure(composition: Float64Array): boolean {
  return composition.every((c) => c < 1e-12 || c > 1 - 1e-12);
}

function worstRows(F: Float64Array, map: UnknownMap, count: number): string[] {
  const rows = [...F.keys()].map((i) => ({ i, r: Math.abs(F[i]!) }));
  rows.sort((a, b) => b.r - a.r);
  return [...new Set(rows.slice(0, count).map((r) => map.describe(r.i)))];
}

/**
 * Target seeking: find the inlet and outlet settings that give the wanted flows (total flow of
 * A and of B, or throughput and flow ratio, or a mean holdup), with every split inside its
 * Young–Laplace window; where more settings may vary than targets fix, the spare freedom puts
 * the splits as far inside their windows as it can (the smallest margin is maximised).
 *
 * Method. The targets are met by Newton's method on the settings (minimum-norm steps, so
 * settings the targets do not need stay where they are), with finite-difference sensitivities;
 * each evaluation is a whole-chip solve warm-started from the last. This runs on an "open"
 * copy of the chip whose splits never leak, so p_B − p_A at every split is a smooth function of
 * the settings and a margin can go negative; once every margin is positive the open chip and the
 * real one have the same solution. The smallest margin is raised by sequential linear
 * programming with a trust region (as in Nocedal & Wright, Numerical Optimization, 2nd ed., 2006,
 * ch. 18, from memory): in the null space of the target sensitivities, a small linear programme
 * maximises the linearised smallest margin within the trust region and the bounds; then Newton
 * restores the targets.
 *
 * Exports `tuneChip`, `targetValue`, `TARGET_KINDS`, `openWindows` and the types. No I/O.
 * Infeasible targets raise StratiflowError('infeasible') with the reason and what would help; so
 * do targets met at settings where the chip does not work (./verdict.ts: a starved contactor,
 * backflow, an impure outlet), since a tuned point must be one to run the chip at.
 */
import { DISPLAY, show } from '../units/format.js';
import { Matrix, SingularValueDecomposition, pseudoInverse } from 'ml-matrix';
import { solveChip, warmStartFrom, type ChipSolution, type SolvedChip } from './chip.js';
import { settingName, settingValue, withSettings, type Setting } from './settings.js';
import { spannedDimension } from '../network/topology.js';
import { assembleNetwork } from '../network/assemble.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { WarmStart } from '../solver/newton.js';
import type { Chip } from '../network/model.js';
import { StratiflowError } from '../errors.js';
import { describeProblems, operatingVerdict } from './verdict.js';
import { max as maxOf, maxIndex, min as minOf, minIndex } from 'd3-array';

export const TARGET_KINDS = ['flowA', 'flowB', 'throughput', 'ratio', 'holdup'] as const;
export type TargetKind = (typeof TARGET_KINDS)[number];

export interface Target {
  kind: TargetKind;
  /** m³/s for flows and throughput; A/B for the ratio; the mean holdup of A (0…1). */
  value: number;
}

export interface Freedom {
  setting: Setting;
  /** Allowed values; default 0 to the chip's rating for pressures, 0 and up for flows. */
  bounds?: [number, number];
}

export interface TuneSpec {
  targets: Target[];
  vary: Freedom[];
  solver?: SolverOptions;
}

export interface TunedSetting {
  setting: Setting;
  name: string;
  initial: number;
  value: number;
  bounds: [number, number];
}

export interface TargetResult {
  kind: TargetKind;
  target: number;
  achieved: number;
  relativeError: number;
}

export interface TuneResult {
  /** The chip with the tuned settings. */
  chip: Chip;
  /** Its whole-chip solution. */
  solved: SolvedChip;
  settings: TunedSetting[];
  targets: TargetResult[];
  /** sensitivity[k][l] = ∂ target k / ∂ setting l, SI units. */
  sensitivity: number[][];
  /** Smallest split margin, Pa. */
  minMargin: number;
  /** Directions of the settings, beyond the targets, that move the splits in their windows. */
  spareFreedom: number;
  /** Whole-chip solves made. */
  solves: number;
}

/** Relative accuracy to which the targets are met. */
const TARGET_TOLERANCE = 1e-11;
const MAX_NEWTON_STEPS = 40;
/** Finite-difference step, relative to a setting's scale. */
const DIFFERENCE_STEP = 1e-6;
/** Margin optimisation stops when a step gains less than this, Pa, or the trust region is this small (scaled units). */
const MARGIN_GAIN = 1e-6;
const MIN_TRUST = 1e-9;
const MAX_MARGIN_STEPS = 30;
/** A direction moves the splits when its largest effect is above this share of the strongest one. */
const FLAT = 1e-7;
/** How closely the real chip at the tuned settings must reproduce the targets of the open one. */
const AGREEMENT = 1e-9;
/** Limits of the open chip's windows, Pa: far beyond any pressure in a chip. */
const OPEN = 1e12;

export function targetValue(result: ChipSolution, kind: TargetKind): number {
  const flowOf = (phase: 'A' | 'B') => result.summary.inlets.filter((i) => i.phase === phase).reduce((sum, i) => sum + i.flow, 0);
  switch (kind) {
    case 'flowA':
      return flowOf('A');
    case 'flowB':
      return flowOf('B');
    case 'throughput':
      return flowOf('A') + flowOf('B');
    case 'ratio':
      return flowOf('A') / flowOf('B');
    case 'holdup':
      return result.contactors.reduce((sum, c) => sum + c.holdupA, 0) / Math.max(1, result.contactors.length);
  }
}

/** A copy of the chip whose splits never leak (windows ±1e12 Pa). */
export function openWindows(chip: Chip): Chip {
  return { ...chip, nodes: chip.nodes.map((n) => (n.kind === 'split' ? { ...n, window: [-OPEN, OPEN] as [number, number] } : n)) };
}

interface Evaluation {
  u: number[];
  solved: SolvedChip;
  /** Relative target errors. */
  r: number[];
  /** p_B − p_A at every split, Pa. */
  delta: number[];
  /** Pressure of every flow-set inlet and flow of every pressure-set inlet. */
  inletPressure: number[];
  inletFlow: number[];
}

interface Linearisation {
  /** ∂r/∂(u/scale), targets × settings. */
  J: Matrix;
  /** ∂Δ/∂(u/scale), splits × settings. */
  G: Matrix;
  P: Matrix;
  F: Matrix;
}

export function tuneChip(chip: Chip, spec: TuneSpec): TuneResult {
  checkSpec(chip, spec);
  const seeker = new Seeker(chip, spec);
  const first = seeker.meetTargets(seeker.firstEvaluation(), seeker.bounds);
  if (!first.met) throw unreachable(chip, spec, first.at, seeker.bounds, seeker.ratingBound, () => seeker.unboundedSolution(first.at));
  const { at, lin, spareFreedom } = seeker.raiseMargins(first.at, first.lin);

  // The real chip at the tuned settings.
  const { settings, scale } = seeker;
  const tuned = withSettings(chip, settings.map((s, l) => [s, at.u[l]!] as const));
  const solved = solveChip(tuned, spec.solver, warmStartFrom(at.solved));
  seeker.solves++;
  if (!solved.result.converged) throw new StratiflowError('no-convergence', `the chip solve at the tuned settings did not converge: ${solved.result.message ?? ''}`);
  checkOutcome(chip, spec, solved, at, seeker.windows, spareFreedom, seeker.bounds);
  // Success is the shared verdict: pinned splits, fed contactors, no backflow, pure outlets, within the rating.
  const problems = operatingVerdict(solved);
  if (problems.length > 0) {
    const settingsText = spec.vary.map((v, l) => `${settingName(v.setting)} = ${describeValue(v.setting, at.u[l]!)}`).join(', ');
    throw new StratiflowError('infeasible', `the targets are met at ${settingsText}, but the chip does not work there: ${describeProblems(problems)}`);
  }
  // The real chip must have settled where the open one did.
  const settled = spec.targets.every((t) => Math.abs(targetValue(solved.result, t.kind) / t.value - 1) <= AGREEMENT);
  if (!settled) throw new StratiflowError('no-convergence', 'the chip solved at the tuned settings settled in another state than the one tuned');

  return {
    chip: tuned,
    solved,
    settings: settings.map((s, l) => ({ setting: s, name: settingName(s), initial: seeker.initial[l]!, value: at.u[l]!, bounds: seeker.bounds[l]! })),
    targets: spec.targets.map((t) => {
      const achieved = targetValue(solved.result, t.kind);
      return { kind: t.kind, target: t.value, achieved, relativeError: Math.abs(achieved - t.value) / Math.abs(t.value) };
    }),
    sensitivity: lin.J.to2DArray().map((row, k) => row.map((v, l) => (v * Math.abs(spec.targets[k]!.value)) / scale[l]!)),
    minMargin: minOf(solved.result.splits.map((s) => s.margin)) ?? Infinity,
    spareFreedom,
    solves: seeker.solves,
  };
}

type Bounds = ReadonlyArray<readonly [number, number]>;

/** The state of one tuning: the open chip, the settings and their scales, and the solves made. */
class Seeker {
  readonly open: Chip;
  readonly settings: Setting[];
  /** Allowed values of each setting, and whether the upper one is the chip's rating. */
  readonly bounds: Array<[number, number]>;
  readonly ratingBound: boolean[];
  readonly initial: number[];
  /** Typical size of each setting: steps and sensitivities are taken in units of it. */
  readonly scale: number[];
  /** The real windows of the splits (the open chip's are ±1e12 Pa). */
  readonly windows: Array<[number, number]>;
  readonly rating: number;
  /** Inlets whose pressure the solve finds (flow set) and whose flow it finds (pressure set). */
  readonly flowSet: string[];
  readonly pressureSet: string[];
  solves = 0;
  private warm: WarmStart;
  /** The open chip's solution as given. */
  private readonly start: SolvedChip;

  constructor(
    chip: Chip,
    private readonly spec: TuneSpec,
  ) {
    this.open = openWindows(chip);
    const start = this.solve(this.open);
    this.start = start;
    if (!start.result.converged) throw new StratiflowError('no-convergence', `the chip as given does not solve: ${start.result.message ?? ''}`);
    this.warm = warmStartFrom(start);
    // The settings as given are read from the real chip where it solves (its splits may leak).
    const given = this.solve(chip, this.warm);
    this.settings = spec.vary.map((v) => v.setting);
    this.rating = chip.maxPressure ?? Infinity;
    this.ratingBound = [];
    this.bounds = spec.vary.map((v): [number, number] => {
      const node = chip.nodes.find((x) => x.id === v.setting.node) as { head: number };
      const ceiling = v.setting.quantity === 'pressure' ? this.rating - node.head : Infinity;
      const [lo, hi] = v.bounds ?? [0, Infinity];
      this.ratingBound.push(ceiling <= hi);
      return [lo, Math.min(hi, ceiling)];
    });
    this.initial = this.settings.map((s) => settingValue(given.result.converged ? given : start, s));
    const throughput = Math.abs(targetValue(start.result, 'throughput'));
    this.scale = this.settings.map((s, l) => Math.max(Math.abs(this.initial[l]!), s.quantity === 'pressure' ? 1e3 : Math.max(1e-3 * throughput, 1e-15)));
    this.windows = assembleNetwork(chip).splits.map((s) => s.window);
    const flowSet = (id: string) => this.settings.some((s) => s.node === id && s.quantity === 'flow') || chip.nodes.some((x) => x.id === id && x.kind === 'inlet' && x.flow !== undefined && !this.settings.some((s) => s.node === id));
    const inlets = chip.nodes.filter((x) => x.kind === 'inlet').map((x) => x.id);
    this.flowSet = inlets.filter(flowSet);
    this.pressureSet = inlets.filter((id) => !flowSet(id));
  }

  private solve(chip: Chip, warm?: WarmStart): SolvedChip {
    this.solves++;
    return solveChip(chip, this.spec.solver, warm);
  }

  clip(u: readonly number[], bounds: Bounds): number[] {
    return u.map((v, l) => Math.min(bounds[l]![1], Math.max(bounds[l]![0], v)));
  }

  evaluate(u: number[], from: WarmStart = this.warm): Evaluation {
    const solved = this.solve(withSettings(this.open, this.settings.map((s, l) => [s, u[l]!] as const)), from);
    if (!solved.result.converged) {
      throw new StratiflowError('no-convergence', `the chip solve did not converge at ${this.settings.map((s, l) => `${settingName(s)} = ${describeValue(s, u[l]!)}`).join(', ')}: ${solved.result.message ?? ''}`);
    }
    const inlet = (id: string) => solved.result.summary.inlets.find((i) => i.id === id)!;
    return {
      u,
      solved,
      r: this.spec.targets.map((t) => (targetValue(solved.result, t.kind) - t.value) / Math.abs(t.value)),
      delta: solved.result.splits.map((s) => s.pressureDifference),
      inletPressure: this.flowSet.map((id) => inlet(id).pressure),
      inletFlow: this.pressureSet.map((id) => inlet(id).flow),
    };
  }

  /** At the settings as given, within bounds; where the open chip does not settle there, at its own solution's. */
  firstEvaluation(): Evaluation {
    return this.tryEvaluate(this.clip(this.initial, this.bounds), this.warm) ?? this.evaluate(this.clip(this.settings.map((s) => settingValue(this.start, s)), this.bounds));
  }

  tryEvaluate(u: number[], from: WarmStart): Evaluation | undefined {
    try {
      return this.evaluate(u, from);
    } catch (error) {
      if (error instanceof StratiflowError && error.code === 'no-convergence') return undefined;
      throw error;
    }
  }

  /** Forward differences, each from a solve warm-started at `at`; a step that would leave the rating goes backwards. */
  linearise(at: Evaluation): Linearisation {
    const columns = this.settings.map((_, l) => {
      const size = DIFFERENCE_STEP * this.scale[l]!;
      const h = at.u[l]! + size > this.bounds[l]![1] ? -size : size;
      const e = this.evaluate(at.u.map((v, k) => (k === l ? v + h : v)), warmStartFrom(at.solved));
      const slope = (a: number[], b: number[]) => a.map((v, k) => ((v - b[k]!) / h) * this.scale[l]!);
      return { r: slope(e.r, at.r), delta: slope(e.delta, at.delta), p: slope(e.inletPressure, at.inletPressure), f: slope(e.inletFlow, at.inletFlow) };
    });
    const build = (pick: (c: (typeof columns)[number]) => number[], rows: number) => new Matrix(Array.from({ length: rows }, (_, k) => columns.map((c) => pick(c)[k]!)));
    return {
      J: build((c) => c.r, this.spec.targets.length),
      G: build((c) => c.delta, this.windows.length),
      P: build((c) => c.p, this.flowSet.length),
      F: build((c) => c.f, this.pressureSet.length),
    };
  }

  /** Newton on the targets within the bounds, minimum-norm steps with backtracking. */
  meetTargets(start: Evaluation, bounds: Bounds): { at: Evaluation; lin: Linearisation; met: boolean } {
    const worst = (e: Evaluation) => maxOf(e.r.map(Math.abs)) ?? -Infinity;
    let at = start;
    let lin = this.linearise(at);
    for (let step = 0; step < MAX_NEWTON_STEPS && worst(at) > TARGET_TOLERANCE; step++) {
      const free = this.settings.map(() => true);
      let du: number[] = [];
      for (let pass = 0; pass <= free.length; pass++) {
        du = minimumNormStep(lin.J, at.r, free);
        // A setting at a bound that the step pushes further out is held there.
        const blocked = free.findIndex((f, l) => f && ((at.u[l]! <= bounds[l]![0] && du[l]! < 0) || (at.u[l]! >= bounds[l]![1] && du[l]! > 0)));
        if (blocked < 0) break;
        free[blocked] = false;
      }
      const before = norm(at.r);
      let next: Evaluation | undefined;
      for (let t = 1; t >= 1 / 64 && !next; t /= 2) {
        // A trial point the solver cannot settle counts as no progress: the step is halved.
        const trial = this.tryEvaluate(this.clip(at.u.map((v, l) => v + t * du[l]! * this.scale[l]!), bounds), warmStartFrom(at.solved));
        if (trial && norm(trial.r) < (1 - 1e-4 * t) * before) next = trial;
      }
      if (!next) return { at, lin, met: false };
      this.warm = warmStartFrom(next.solved);
      at = next;
      lin = this.linearise(at);
    }
    return { at, lin, met: worst(at) <= TARGET_TOLERANCE };
  }

  /** The settings that would meet the targets with no bounds but non-negative flows, if any. */
  unboundedSolution(from: Evaluation): number[] | undefined {
    const loose = this.settings.map((s): [number, number] => [s.quantity === 'flow' ? 0 : -Infinity, Infinity]);
    try {
      const result = this.meetTargets(from, loose);
      return result.met ? result.at.u : undefined;
    } catch {
      return undefined;
    }
  }

  /**
   * Sequential linear programming on the smallest margin, within a trust region (scaled units)
   * that doubles after a step that gains as predicted and shrinks fourfold after one that does not.
   */
  raiseMargins(at: Evaluation, lin: Linearisation): { at: Evaluation; lin: Linearisation; spareFreedom: number } {
    const spareFreedom = this.spec.targets.length < this.settings.length ? movingDirections(lin).columns : 0;
    let trust = 0.1;
    for (let k = 0; spareFreedom > 0 && k < MAX_MARGIN_STEPS && trust > MIN_TRUST; k++) {
      const basis = movingDirections(lin);
      if (basis.columns === 0) break;
      const plan = this.marginStep(at, lin, basis, trust);
      if (plan.gain < MARGIN_GAIN) break;
      const moved = this.tryEvaluate(this.clip(at.u.map((v, l) => v + plan.du[l]! * this.scale[l]!), this.bounds), warmStartFrom(at.solved));
      const restored = moved && this.meetTargets(moved, this.bounds);
      const gained = restored ? smallestMargin(restored.at.delta, this.windows) - smallestMargin(at.delta, this.windows) : -Infinity;
      if (restored && restored.met && gained > MARGIN_GAIN / 10) {
        ({ at, lin } = restored);
        this.warm = warmStartFrom(at.solved);
        if (gained > 0.75 * plan.gain) trust *= 2;
      } else {
        trust /= 4;
      }
    }
    return { at, lin, spareFreedom };
  }

  /**
   * One linear programme: maximise t over moves w along the basis, |w_q| ≤ trust, with every
   * linearised margin ≥ t, the settings within bounds, flow-set inlets within the rating and
   * pressure-set inlets not taking liquid back. A tiny cost on |w| keeps moves that gain nothing
   * from being made.
   */
  private marginStep(at: Evaluation, lin: Linearisation, basis: Matrix, trust: number): { du: number[]; gain: number } {
    const k = basis.columns;
    const base = smallestMargin(at.delta, this.windows);
    const rows: number[][] = [];
    const rhs: number[] = [];
    // Variables: w⁺ (k), w⁻ (k), t' = t − base ≥ 0; every row scaled to a largest coefficient of 1.
    const add = (coefficients: number[], tOn: number, limit: number) => {
      if (!Number.isFinite(limit)) return;
      const size = Math.max(Math.abs(tOn), ...coefficients.map(Math.abs), 1e-300);
      rows.push([...coefficients.map((c) => c / size), ...coefficients.map((c) => -c / size), tOn / size]);
      rhs.push(Math.max(0, limit) / size);
    };
    const effect = lin.G.mmul(basis).to2DArray();
    at.delta.forEach((d, i) => {
      const [low, high] = this.windows[i]!;
      add(effect[i]!.map((g) => -g), 1, d - low - base);
      add(effect[i]!, 1, high - d - base);
    });
    basis.to2DArray().forEach((row, l) => {
      add(row, 0, (this.bounds[l]![1] - at.u[l]!) / this.scale[l]!);
      add(row.map((v) => -v), 0, (at.u[l]! - this.bounds[l]![0]) / this.scale[l]!);
    });
    lin.P.mmul(basis).to2DArray().forEach((row, q) => add(row, 0, this.rating - at.inletPressure[q]!));
    lin.F.mmul(basis).to2DArray().forEach((row, q) => add(row.map((v) => -v), 0, at.inletFlow[q]!));
    for (let q = 0; q < k; q++) {
      const unit = Array.from({ length: k }, (_, p) => (p === q ? 1 : 0));
      add(unit, 0, trust);
      add(unit.map((v) => -v), 0, trust);
    }
    const width = Math.max(1, maxOf(this.windows, ([low, high]) => high - low) ?? 0);
    const x = simplexMaximise([...new Array<number>(2 * k).fill(-1e-9 * width), 1], rows, rhs);
    if (!x) return { du: new Array<number>(basis.rows).fill(0), gain: 0 };
    const w = Array.from({ length: k }, (_, q) => x[q]! - x[k + q]!);
    return { du: basis.mmul(Matrix.columnVector(w)).to1DArray(), gain: x[2 * k]! };
  }
}

function checkSpec(chip: Chip, spec: TuneSpec): void {
  const { targets, vary } = spec;
  if (targets.length === 0) throw new StratiflowError('bad-option', 'give at least one target');
  if (vary.length === 0) throw new StratiflowError('bad-option', 'give at least one setting to vary');
  if (targets.length > vary.length) throw new StratiflowError('bad-option', `${targets.length} targets need at least as many settings to vary; ${vary.length} given`);
  const kinds = new Set(targets.map((t) => t.kind));
  if (kinds.size !== targets.length) throw new StratiflowError('bad-option', 'each target may be given once');
  if (['flowA', 'flowB', 'throughput', 'ratio'].filter((k) => kinds.has(k as TargetKind)).length > 2) {
    throw new StratiflowError('bad-option', 'flow A, flow B, throughput and ratio: any two fix the other two; give at most two of them');
  }
  for (const t of targets) {
    const ok = t.kind === 'holdup' ? t.value > 0 && t.value < 1 : t.value > 0;
    if (!Number.isFinite(t.value) || !ok) throw new StratiflowError('bad-option', `target ${t.kind} must be ${t.kind === 'holdup' ? 'between 0 and 1' : 'positive'}`);
  }
  const names = vary.map((v) => settingName(v.setting));
  if (new Set(vary.map((v) => v.setting.node)).size !== names.length) throw new StratiflowError('bad-option', 'each inlet or outlet may be varied through one setting only');
  for (const v of vary) {
    if (v.bounds && !(v.bounds[0] < v.bounds[1])) throw new StratiflowError('bad-option', `${settingName(v.setting)}: the lower bound must be below the upper one`);
    if (!chip.nodes.some((x) => x.id === v.setting.node)) throw new StratiflowError('bad-option', `no node "${v.setting.node}"`);
  }
}

function norm(v: readonly number[]): number {
  return Math.sqrt(v.reduce((s, x) => s + x * x, 0));
}

/** The least-squares step of smallest norm for J·du = −r using only the free columns. */
function minimumNormStep(J: Matrix, r: number[], free: boolean[]): number[] {
  const columns = free.flatMap((f, l) => (f ? [l] : []));
  const du = new Array<number>(free.length).fill(0);
  if (columns.length === 0) return du;
  const sub = new Matrix(J.to2DArray().map((row) => columns.map((l) => row[l]!)));
  const step = pseudoInverse(sub, 1e-12).mmul(Matrix.columnVector(r.map((x) => -x)));
  columns.forEach((l, k) => (du[l] = step.get(k, 0)));
  return du;
}

/**
 * An orthonormal basis (settings × k, scaled units) of the directions that leave the targets
 * unchanged to first order but move some split: the null space of J, less the directions in
 * it that move no split (such as raising every pressure of the chip together).
 */
function movingDirections(lin: Linearisation): Matrix {
  const { J, G } = lin;
  const n = J.columns;
  const square = new Matrix(n, n);
  J.to2DArray().forEach((row, k) => row.forEach((v, l) => square.set(k, l, v)));
  const svd = new SingularValueDecomposition(square, { autoTranspose: false });
  const largest = Math.max(maxOf(svd.diagonal) ?? 0, 1e-300);
  const nullColumns = svd.diagonal.flatMap((s, l) => (s <= 1e-10 * largest ? [l] : []));
  if (nullColumns.length === 0 || G.rows === 0) return new Matrix(n, 0);
  const N = new Matrix(svd.rightSingularVectors.to2DArray().map((row) => nullColumns.map((l) => row[l]!)));
  const effect = G.mmul(N);
  const inner = new SingularValueDecomposition(effect.rows >= effect.columns ? effect : effect.transpose(), { autoTranspose: false });
  const sigma = inner.diagonal;
  const strongest = maxOf(sigma) ?? 0;
  if (strongest === 0) return new Matrix(n, 0);
  const V = effect.rows >= effect.columns ? inner.rightSingularVectors : inner.leftSingularVectors;
  const keep = sigma.flatMap((s, q) => (s > FLAT * strongest ? [q] : []));
  return N.mmul(new Matrix(V.to2DArray().map((row) => keep.map((q) => row[q]!))));
}

function smallestMargin(delta: readonly number[], windows: ReadonlyArray<readonly [number, number]>): number {
  let smallest = Infinity;
  delta.forEach((d, i) => (smallest = Math.min(smallest, d - windows[i]![0], windows[i]![1] - d)));
  return smallest;
}

/**
 * Maximise c·x subject to A·x ≤ b, x ≥ 0, with b ≥ 0 (so x = 0 is feasible): the simplex
 * method on a dense tableau with Bland's rule against cycling (Chvátal, Linear Programming,
 * 1983, ch. 2–3, from memory). Returns null when the objective is unbounded. Written here: the
 * programs are tiny (two unknowns per setting, a few rows per split), and a library would add
 * more code than this; its result is checked by re-solving the chip at the tuned settings.
 */
export function simplexMaximise(c: readonly number[], A: readonly (readonly number[])[], b: readonly number[]): number[] | null {
  const m = A.length;
  const n = c.length;
  const width = n + m + 1;
  const T = A.map((row, i) => {
    const r = new Array<number>(width).fill(0);
    row.forEach((v, j) => (r[j] = v));
    r[n + i] = 1;
    r[width - 1] = b[i]!;
    return r;
  });
  const z = new Array<number>(width).fill(0);
  c.forEach((v, j) => (z[j] = -v));
  const basis = Array.from({ length: m }, (_, i) => n + i);
  const EPS = 1e-12;
  for (let iteration = 0; iteration < 50 * (n + m); iteration++) {
    const enter = z.slice(0, width - 1).findIndex((v) => v < -EPS);
    if (enter < 0) break;
    let leave = -1;
    let best = Infinity;
    for (let i = 0; i < m; i++) {
      const a = T[i]![enter]!;
      if (a <= EPS) continue;
      const ratio = T[i]![width - 1]! / a;
      if (ratio < best - EPS || (Math.abs(ratio - best) <= EPS && basis[i]! < basis[leave]!)) {
        best = ratio;
        leave = i;
      }
    }
    if (leave < 0) return null;
    const pivotRow = T[leave]!;
    const p = pivotRow[enter]!;
    for (let j = 0; j < width; j++) pivotRow[j]! /= p;
    for (const row of [...T, z]) {
      if (row === pivotRow) continue;
      const f = row[enter]!;
      if (f !== 0) for (let j = 0; j < width; j++) row[j]! -= f * pivotRow[j]!;
    }
    basis[leave] = enter;
  }
  const x = new Array<number>(n).fill(0);
  basis.forEach((v, i) => {
    if (v < n) x[v] = T[i]![width - 1]!;
  });
  return x;
}

// ---------------------------------------------------------------------------------------------
// Explaining failures

const kPa = (p: number) => show(p, DISPLAY.pressure);
const Pa = (p: number) => `${Number(p.toPrecision(3))} Pa`;

function describeValue(setting: Setting, value: number): string {
  return setting.quantity === 'pressure' ? kPa(value) : show(value, DISPLAY.flow);
}

function unreachable(
  chip: Chip,
  spec: TuneSpec,
  at: Evaluation,
  bounds: ReadonlyArray<readonly [number, number]>,
  ratingBound: readonly boolean[],
  unboundedSolution: () => number[] | undefined,
): StratiflowError {
  const reached = spec.targets.map((t, k) => `${t.kind} ${Number((at.r[k]! * 100).toPrecision(3))}% off`).join(', ');
  const atBound = spec.vary.flatMap((v, l) => (at.u[l]! <= bounds[l]![0] || at.u[l]! >= bounds[l]![1] ? [`${settingName(v.setting)} at ${describeValue(v.setting, at.u[l]!)}`] : []));
  const needed = atBound.length > 0 ? unboundedSolution() : undefined;
  if (needed) {
    const beyond = spec.vary.flatMap((v, l) => {
      const value = needed[l]!;
      const [lo, hi] = bounds[l]!;
      if (value > hi) return [`${settingName(v.setting)} = ${describeValue(v.setting, value)}, above ${ratingBound[l] && chip.maxPressure !== undefined ? `the chip's pressure rating of ${kPa(chip.maxPressure)}` : `its upper bound ${describeValue(v.setting, hi)}`}`];
      if (value < lo) return [`${settingName(v.setting)} = ${describeValue(v.setting, value)}, below its lower bound ${describeValue(v.setting, lo)}`];
      return [];
    });
    return new StratiflowError('infeasible', `the targets cannot be met within the bounds: they need ${beyond.join(' and ')}`);
  }
  return new StratiflowError('infeasible', `the targets cannot be met by varying ${spec.vary.map((v) => settingName(v.setting)).join(', ')}: the closest reached is ${reached}${atBound.length ? ` with ${atBound.join(', ')}` : ''}`);
}

function checkOutcome(
  chip: Chip,
  spec: TuneSpec,
  solved: SolvedChip,
  at: Evaluation,
  windows: ReadonlyArray<readonly [number, number]>,
  spareFreedom: number,
  bounds: ReadonlyArray<readonly [number, number]>,
): void {
  const { result } = solved;
  const settingsText = spec.vary.map((v, l) => `${settingName(v.setting)} = ${describeValue(v.setting, at.u[l]!)}`).join(', ');
  if (chip.maxPressure !== undefined && result.summary.maxPressure > chip.maxPressure) {
    throw new StratiflowError('infeasible', `meeting the targets needs ${kPa(result.summary.maxPressure)} in the chip, above its pressure rating of ${kPa(chip.maxPressure)} (${settingsText})`);
  }
  const back = result.summary.inlets.filter((i) => i.flow < 0);
  if (back.length > 0) {
    throw new StratiflowError('infeasible', `meeting the targets makes liquid flow back into inlet ${back.map((i) => i.id).join(', ')} (${settingsText})`);
  }
  const outside = at.delta.flatMap((d, i) => (d < windows[i]![0] || d > windows[i]![1] ? [i] : []));
  if (outside.length === 0) return;
  const splitIds = solved.network.splits.map((s) => s.node.id);
  // Can one common shift of every split's p_B − p_A bring all into their windows?
  const lowest = maxOf(at.delta.map((d, i) => windows[i]![0] - d)) ?? -Infinity;
  const highest = minOf(at.delta.map((d, i) => windows[i]![1] - d)) ?? Infinity;
  const iMin = minIndex(at.delta);
  const iMax = maxIndex(at.delta);
  const spread = at.delta[iMax]! - at.delta[iMin]!;
  const widths = windows.map(([low, high]) => high - low);
  const width = minOf(widths) ?? Infinity;
  const where = `${outside.length} of ${at.delta.length} splits outside their windows`;
  if (lowest > highest) {
    const factor = spread / width;
    const contactor = solved.network.splits[0]!.contactor.segment;
    const depth = spannedDimension(contactor);
    const youngLaplace = chip.splitWindow === undefined && solved.network.splits.every((s) => s.node.window === undefined) && chip.interfacialTension !== undefined;
    const windowAdvice = youngLaplace && Number.isFinite(depth)
      ? `a window at least ${Pa(spread)} wide (now ${Pa(width)}): the Young–Laplace window 2γ(cos θ_rec − cos θ_adv)/d widens as the depth d that the interface spans shrinks, so d at most ${show(depth / factor, DISPLAY.length, 3)} at the splits (now ${show(depth, DISPLAY.length, 3)})`
      : `a window at least ${Pa(spread)} wide (now ${Pa(width)})`;
    throw new StratiflowError(
      'infeasible',
      `the contactors spread more than the split window allows: p_B − p_A ranges over ${Pa(spread)} (from ${Pa(at.delta[iMin]!)} at ${splitIds[iMin]} to ${Pa(at.delta[iMax]!)} at ${splitIds[iMax]}) but the window is ${Pa(width)} wide, so no setting pins every split (${where}). ` +
        `Needed: ${windowAdvice}; or manifolds with about ${Number(factor.toPrecision(2))} times less pressure drop along the row of contactors (roughly: the spread scales with the manifold resistance, e.g. manifolds ${Number(factor.toPrecision(2))} times wider at the same depth)`,
    );
  }
  if (spareFreedom === 0) {
    const i = outside[0]!;
    const outletVaried = spec.vary.some((v) => chip.nodes.find((x) => x.id === v.setting.node)?.kind === 'outlet');
    throw new StratiflowError(
      'infeasible',
      `the targets fix every setting (${settingsText}), and there split ${splitIds[i]} has p_B − p_A = ${Pa(at.delta[i]!)}, outside its window [${Pa(windows[i]![0])}, ${Pa(windows[i]![1])}] (${where}); ` +
        (outletVaried ? 'let one more setting vary so the splits can be moved into their windows' : 'let an outlet back-pressure vary too, to move the splits into their windows'),
    );
  }
  const blocked = spec.vary.flatMap((v, l) => (at.u[l]! <= bounds[l]![0] * (1 + 1e-9) || at.u[l]! >= bounds[l]![1] * (1 - 1e-9) ? [`${settingName(v.setting)} at its bound ${describeValue(v.setting, at.u[l]!)}`] : []));
  throw new StratiflowError(
    'infeasible',
    `the splits cannot all be brought into their windows within the bounds (${where}; ${blocked.length ? blocked.join(', ') : settingsText}); a shift of p_B − p_A by ${Pa(lowest)} to ${Pa(highest)} would be needed`,
  );
}

/**
 * The search of one tuning (see ./tune.ts for the method): evaluations of the open chip at given
 * settings, finite-difference sensitivities, Newton on the targets within bounds, and sequential
 * linear programming on the smallest split margin. Exports `Seeker` and the `Evaluation`
 * type; the search runs on an open copy of the chip (`openWindows`). Errors of a solve that does not settle are StratiflowError('no-convergence').
 */
import { Matrix } from 'ml-matrix';
import { max as maxOf } from 'd3-array';
import { solveChip, warmStartFrom, type SolvedChip } from './chip.js';
import { settingName, settingValue, withSettings, type Setting } from './settings.js';
import { describeValue } from './tuneFailures.js';
import { targetValue, type TuneSpec } from './tuneSpec.js';
import { minimumNormStep, movingDirections, norm, smallestMargin, type Linearisation } from './tuneSteps.js';
import { simplexMaximise } from './simplex.js';
import { assembleNetwork } from '../network/assemble.js';
import type { WarmStart } from '../solver/newton.js';
import type { Chip } from '../network/model.js';
import { StratiflowError } from '../errors.js';

/** Relative accuracy to which the targets are met. */
const TARGET_TOLERANCE = 1e-11;
const MAX_NEWTON_STEPS = 40;
/** Finite-difference step, relative to a setting's scale. */
const DIFFERENCE_STEP = 1e-6;
/** Margin optimisation stops when a step gains less than this, Pa, or the trust region is this small (scaled units). */
const MARGIN_GAIN = 1e-6;
const MIN_TRUST = 1e-9;
const MAX_MARGIN_STEPS = 30;
/** Limits of the open chip's windows, Pa: far beyond any pressure in a chip. */
const OPEN = 1e12;

/** A copy of the chip whose splits never leak (windows ±1e12 Pa). */
function openWindows(chip: Chip): Chip {
  return { ...chip, nodes: chip.nodes.map((n) => (n.kind === 'split' ? { ...n, window: [-OPEN, OPEN] as [number, number] } : n)) };
}

export interface Evaluation {
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

type Bounds = ReadonlyArray<readonly [number, number]>;

/** The state of one tuning: the open chip, the settings and their scales, and the solves made. */
export class Seeker {
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

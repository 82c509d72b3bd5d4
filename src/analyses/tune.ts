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
 * Exports `tuneChip`, its result types and (from ./tuneSpec.ts) the spec types. No I/O. The jobs
 * live in files of their own: the spec and target values (./tuneSpec.ts), the search
 * (./tuneSeeker.ts), its linear algebra (./tuneSteps.ts, ./simplex.ts) and the explanation of
 * failures (./tuneFailures.ts).
 * Infeasible targets raise StratiflowError('infeasible') with the reason and what would help; so
 * do targets met at settings where the chip does not work (./verdict.ts: a starved contactor,
 * backflow, an impure outlet), since a tuned point must be one to run the chip at.
 */
import { min as minOf } from 'd3-array';
import { solveChip, warmStartFrom, type SolvedChip } from './chip.js';
import { settingName, withSettings, type Setting } from './settings.js';
import { checkOutcome, describeValue, unreachable } from './tuneFailures.js';
import { Seeker } from './tuneSeeker.js';
import { checkSpec, targetValue, type TargetKind, type TuneSpec } from './tuneSpec.js';
import type { Chip } from '../network/model.js';
import { StratiflowError } from '../errors.js';
import { describeProblems, operatingVerdict } from './verdict.js';

export { defaultFreedoms, type Freedom, type Target, type TargetKind, type TuneSpec } from './tuneSpec.js';

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

/** How closely the real chip at the tuned settings must reproduce the targets of the open one. */
const AGREEMENT = 1e-9;

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

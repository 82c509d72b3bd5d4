/**
 * Why a tuning failed, in words a user can act on: targets out of reach (and the settings they
 * would need), a pressure over the rating, backflow into an inlet, splits that no setting within
 * the bounds brings into their windows (and the window or manifolds that would). Exports
 * `unreachable`, `checkOutcome` and `describeValue`; values are shown through ../units/format.ts.
 */
import { max as maxOf, maxIndex, min as minOf, minIndex } from 'd3-array';
import { DISPLAY, show } from '../units/format.js';
import type { SolvedChip } from './chip.js';
import { settingName, type Setting } from './settings.js';
import type { Evaluation } from './tuneSeeker.js';
import type { TuneSpec } from './tuneSpec.js';
import { spannedDimension } from '../network/topology.js';
import type { Chip } from '../network/model.js';
import { StratiflowError } from '../errors.js';

const kPa = (p: number) => show(p, DISPLAY.pressure);
const Pa = (p: number) => show(p, DISPLAY.pressureDifference, 3);

export function describeValue(setting: Setting, value: number): string {
  return setting.quantity === 'pressure' ? kPa(value) : show(value, DISPLAY.flow);
}

export function unreachable(
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

export function checkOutcome(
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

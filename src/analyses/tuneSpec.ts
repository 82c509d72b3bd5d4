/**
 * What a tuning asks for and how it is measured: the target kinds, the settings that may vary,
 * the spec's own checks, and the value of a target in a chip solution. Exports `TARGET_KINDS`,
 * `targetValue`, `checkSpec`, `defaultFreedoms` and the spec types. No solving here.
 */
import type { Chip } from '../network/model.js';
import { StratiflowError } from '../errors.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { ChipSolution } from './chip.js';
import { settingName, type Setting } from './settings.js';

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

/** The targets and settings of a tuning make sense together, or a StratiflowError says why not. */
export function checkSpec(chip: Chip, spec: TuneSpec): void {
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

/** The settings a tuning varies when none are named: the pressure of every inlet. */
export function defaultFreedoms(chip: Chip): Freedom[] {
  return chip.nodes.filter((n) => n.kind === 'inlet').map((n) => ({ setting: { node: n.id, quantity: 'pressure' as const } }));
}

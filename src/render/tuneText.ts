/**
 * The text report of a tuning: settings as given and tuned, targets, sensitivities, split
 * margins, the pressure rating and the per-contactor table. Exports `tuneText`. Pure: data in,
 * text out. Also `tuneHeader`, the line that heads the tuned layout file.
 */
import { settingName, type Setting } from '../analyses/settings.js';
import type { HoldResult } from '../analyses/hold.js';
import type { TargetKind, TuneResult } from '../analyses/tune.js';
import type { Chip } from '../network/model.js';
import { DISPLAY, fmt, fmtResolved, show } from '../units/format.js';
import { chipText, textTable } from './text.js';

const TARGET_LABELS: Record<TargetKind, string> = {
  flowA: 'flow of A',
  flowB: 'flow of B',
  throughput: 'throughput',
  ratio: 'flow ratio A/B',
  holdup: 'mean holdup of A',
};

function targetUnit(kind: TargetKind): { symbol: string; factor: number } {
  return kind === 'ratio' || kind === 'holdup' ? { symbol: '', factor: 1 } : DISPLAY.flow;
}

function settingUnit(setting: Setting): { symbol: string; factor: number } {
  return setting.quantity === 'pressure' ? DISPLAY.pressure : DISPLAY.flow;
}

const withUnit = (value: number, unit: { symbol: string; factor: number }, digits = 6) => `${fmt(value * unit.factor, digits)}${unit.symbol ? ` ${unit.symbol}` : ''}`;

export function tuneText(chip: Chip, result: TuneResult, written?: string, hold?: HoldResult): string {
  const out: string[] = [];
  out.push(`${chip.name}: tuned ${result.settings.length} setting${result.settings.length > 1 ? 's' : ''} for ${result.targets.length} target${result.targets.length > 1 ? 's' : ''} (${result.solves} chip solves)`);
  out.push('');
  out.push(textTable(
    ['setting', 'as given', 'tuned', 'allowed'],
    result.settings.map((s) => {
      const u = settingUnit(s.setting);
      const bound = (v: number) => (Number.isFinite(v) ? fmt(v * u.factor) : '∞');
      return [s.name, withUnit(s.initial, u), withUnit(s.value, u, 8), `${bound(s.bounds[0])} … ${bound(s.bounds[1])} ${u.symbol}`];
    }),
  ));
  out.push('');
  out.push(textTable(
    ['target', 'wanted', 'predicted', 'rel. error'],
    result.targets.map((t) => [TARGET_LABELS[t.kind], withUnit(t.target, targetUnit(t.kind)), withUnit(t.achieved, targetUnit(t.kind), 10), t.relativeError.toExponential(1)]),
  ));
  out.push('');
  out.push('sensitivity of each target to each setting (change of the target per unit of the setting)');
  out.push(textTable(
    ['target', ...result.settings.map((s) => `per ${settingUnit(s.setting).symbol} of ${s.name}`)],
    result.targets.map((t, k) => [
      `${TARGET_LABELS[t.kind]}${targetUnit(t.kind).symbol ? ` (${targetUnit(t.kind).symbol})` : ''}`,
      ...result.settings.map((s, l) => fmt((result.sensitivity[k]![l]! * targetUnit(t.kind).factor) / settingUnit(s.setting).factor)),
    ]),
  ));
  out.push('');
  const splits = result.solved.result.splits;
  const resolution = result.solved.result.summary.pressureResolution;
  if (splits.length > 0) {
    out.push(`split windows (p_B − p_A, Pa): smallest margin ${fmtResolved(result.minMargin, resolution)} Pa${result.spareFreedom > 0 ? `, raised as far as the ${result.spareFreedom} spare direction${result.spareFreedom > 1 ? 's' : ''} of the settings allow` : ''}`);
    if (result.spareFreedom === 0) {
      const outlet = chip.nodes.find((n) => n.kind === 'outlet' && !result.settings.some((x) => x.setting.node === n.id));
      out.push(`  the targets fix every setting, so the margins are what they are${outlet ? `; to centre the splits, let an outlet back-pressure vary too (${outlet.id}.pressure)` : ''}`);
    }
    out.push(textTable(
      ['split', 'state', 'p_B − p_A', 'window', 'margin low', 'margin high'],
      splits.map((s) => [s.id, s.state, fmt(s.pressureDifference), `${fmt(s.window[0])} … ${fmt(s.window[1])}`, fmtResolved(s.pressureDifference - s.window[0], resolution), fmtResolved(s.window[1] - s.pressureDifference, resolution)]),
    ));
    out.push('');
  }
  const rating = chip.maxPressure;
  out.push(rating !== undefined
    ? `highest pressure in the chip ${show(result.solved.result.summary.maxPressure, DISPLAY.pressure)}, within its rating of ${show(rating, DISPLAY.pressure)}`
    : 'the layout gives no pressure rating (maxPressure): check the tuned pressures against the rating of the chip, fittings and tubing yourself');
  if (written) out.push(`tuned layout written to ${written}`);
  out.push('');
  // tuneChip returns only settings at which the chip works (src/analyses/verdict.ts): an empty verdict.
  out.push(chipText(chip.name, result.solved.result, [], hold));
  return out.join('\n');
}

/** The comment line that heads a tuned layout file: what was tuned, for which targets. */
export function tuneHeader(result: TuneResult): string {
  return ` Tuned by stratiflow tune for ${result.targets.map((t) => `${TARGET_LABELS[t.kind]} ${withUnit(t.target, targetUnit(t.kind))}`).join(', ')}: ${result.settings.map((s) => settingName(s.setting)).join(', ')} set.`;
}

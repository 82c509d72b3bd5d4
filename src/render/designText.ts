/**
 * The text report of a design: what changed (each variable with its bounds and whether a bound
 * is reached), the free settings, the evenness before and after, the split margins, the
 * per-contactor flows before and after, and, when the design falls short, the rules that bind.
 * Exports `designText` and `designHeader` (the line that heads the designed layout file).
 * Pure: data in, text out.
 */
import type { DesignResult } from '../analyses/design.js';
import { settingName } from '../analyses/settings.js';
import { DISPLAY, fmt, fmtResolved, show } from '../units/format.js';
import { cautionLines, textTable, warningsLines } from './text.js';

const percent = (v: number) => `${fmt(100 * v, 3)} %`;

function sizes(values: number[], quantity: 'width' | 'length'): string {
  const unit = quantity === 'width' ? DISPLAY.length : DISPLAY.lengthMm;
  let min = Infinity;
  let max = -Infinity;
  for (const v of values) {
    min = Math.min(min, v);
    max = Math.max(max, v);
  }
  const show1 = (v: number) => fmt(v * unit.factor, 5);
  return min === max ? `${show1(min)} ${unit.symbol}` : `${show1(min)} … ${show1(max)} ${unit.symbol}`;
}

export function designText(r: DesignResult, written?: string): string {
  const out: string[] = [];
  const { before, after } = r.flowCv;
  out.push(`${r.before.chip.name}: ${r.met ? 'design meets every target' : 'no design meets the targets under these rules'} (${r.iterations} steps, ${r.solves} chip solves)`);
  out.push(`flow per contactor, coefficient of variation: A ${percent(before.A)} → ${percent(after.A)}, B ${percent(before.B)} → ${percent(after.B)} (asked: ${percent(r.flowCv.target)} or less)`);
  out.push('');
  out.push(textTable(
    ['varied', 'segments', 'as laid out', 'designed', 'factor', 'allowed factor', 'bound reached'],
    r.variables.map((v) => [
      v.variable.name,
      String(v.sizes.length),
      sizes(v.sizes.map((s) => s.before), v.variable.quantity),
      sizes(v.sizes.map((s) => s.after), v.variable.quantity),
      fmt(v.factor, 5),
      `${fmt(v.bounds[0], 4)} … ${fmt(v.bounds[1], 4)}`,
      v.active === null ? '–' : v.active === 'lower' ? 'smallest' : 'largest',
    ]),
  ));
  if (r.settings.length > 0) {
    out.push('');
    out.push(textTable(
      ['setting', 'as given', 'designed', 'bound reached'],
      r.settings.map((s) => {
        const unit = s.setting.quantity === 'pressure' ? DISPLAY.pressure : DISPLAY.flow;
        return [settingName(s.setting), show(s.before, unit, 6), show(s.after, unit, 8), s.active === null ? '–' : s.active];
      }),
    ));
  }
  const held = [
    r.targets.throughput !== undefined ? `throughput ${show(r.targets.throughput, DISPLAY.flow)}` : undefined,
    r.targets.ratio !== undefined ? `flow ratio A/B ${fmt(r.targets.ratio)}` : undefined,
  ].filter((s) => s !== undefined);
  out.push('');
  out.push(held.length > 0 ? `held: ${held.join(', ')}` : 'throughput and flow ratio not held (no setting varies and no target given): see the table for what they became');
  const summary = r.after.result.summary;
  out.push(`delivered: A ${show(summary.throughputA, DISPLAY.flow)}, B ${show(summary.throughputB, DISPLAY.flow)}; highest pressure ${show(summary.maxPressure, DISPLAY.pressure)}`);
  const splits = r.after.result.splits;
  if (splits.length > 0) {
    const resolution = summary.pressureResolution;
    out.push('');
    const same = r.margins.every((m) => m === r.margins[0]);
    out.push(`split windows (p_B − p_A, Pa): each split keeps ${same ? `${fmt(r.margins[0], 3)} Pa` : 'the share of its window asked'} from both limits`);
    out.push(textTable(
      ['split', 'state before', 'state after', 'p_B − p_A after', 'window', 'margin after'],
      splits.map((s, i) => [s.id, r.before.result.splits[i]!.state, s.state, fmt(s.pressureDifference), `${fmt(s.window[0])} … ${fmt(s.window[1])}`, fmtResolved(Math.min(s.pressureDifference - s.window[0], s.window[1] - s.pressureDifference), resolution)]),
    ));
  }
  out.push('');
  out.push(textTable(
    ['contactor', `flow A before (${DISPLAY.flow.symbol})`, 'after', `flow B before (${DISPLAY.flow.symbol})`, 'after'],
    r.after.result.contactors.map((c, i) => {
      const b = r.before.result.contactors[i]!;
      return [c.id, fmt(b.flowA * DISPLAY.flow.factor), fmt(c.flowA * DISPLAY.flow.factor, 6), fmt(b.flowB * DISPLAY.flow.factor), fmt(c.flowB * DISPLAY.flow.factor, 6)];
    }),
  ));
  if (!r.met) {
    out.push('');
    out.push('what binds:');
    for (const line of r.binding) out.push(`  ${line}`);
    out.push('no layout written: widen the rules (--min-width, --max-width, --max-lengthen), let more segments or settings vary, or ask for less (--flow-cv, --margin)');
  } else if (written) {
    out.push('');
    out.push(`designed layout written to ${written}; round its sizes to what the mask and the etch can hold, then check the rounded layout with stratiflow solve and stratiflow tolerance`);
  }
  out.push(...warningsLines(r.after.result.warnings));
  out.push('');
  out.push(...cautionLines());
  return out.join('\n') + '\n';
}

/** The comment line that heads a designed layout file. */
export function designHeader(r: DesignResult): string {
  return ` Designed by stratiflow design: ${r.variables.map((v) => v.variable.name).join(', ')}${r.settings.length > 0 ? `; settings ${r.settings.map((s) => settingName(s.setting)).join(', ')}` : ''}; flow per contactor CV A ${percent(r.flowCv.after.A)}, B ${percent(r.flowCv.after.B)}.`;
}

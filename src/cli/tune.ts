/**
 * `stratiflow tune FILE`: find the settings that meet flow targets with every split pinned and,
 * where settings are to spare, centred in its window; print the settings, targets, sensitivities,
 * split margins and the per-contactor table (or JSON), and write the tuned layout: a copy of the
 * file with the settings filled in, its comments kept. An unreachable target ends with one line
 * that says why, and exit status 3.
 * Exports `registerTune`, `tunedLayoutText` and `tuneText` (pure: data in, text out).
 */
import { readFileSync } from 'node:fs';
import { basename, dirname, extname, join } from 'node:path';
import type { Command } from 'commander';
import { parseDocument, isMap, isSeq } from 'yaml';
import { loadLayout } from '../layout/load.js';
import { parseSetting, settingName, type Setting } from '../analyses/window.js';
import { tuneChip, type Freedom, type Target, type TargetKind, type TuneResult } from '../analyses/tune.js';
import { chipText, textTable } from '../render/text.js';
import { DISPLAY, fmt, fmtResolved } from '../units/format.js';
import { pressureResolution } from '../analyses/resolution.js';
import { parseQuantity } from '../units/quantity.js';
import { numberOption, linearOption, type LinearSolver } from './options.js';
import { outputFile, writeOutputs } from './io.js';
import { jsonNumbers, type CommandContext } from './context.js';

import { StratiflowError, optionError } from '../errors.js';
import type { Chip } from '../network/model.js';

interface TuneOptions {
  flowA?: string;
  flowB?: string;
  throughput?: string;
  ratio?: string;
  holdup?: string;
  vary: string[];
  out?: string;
  json?: boolean;
  linear: string;
}

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

/** The value as written into the layout: 15 significant digits, so a reload meets the targets to ~1e-12. */
function layoutQuantity(setting: Setting, value: number): string {
  return setting.quantity === 'pressure' ? `${Number((value / 1e3).toPrecision(15))} kPa` : `${Number((value * 6e10).toPrecision(15))} uL/min`;
}

/**
 * The layout file's text with the tuned settings filled in (YAML keeps its comments and order;
 * JSON is rewritten as JSON). An inlet whose flow is tuned loses its pressure and vice versa.
 */
export function tunedLayoutText(original: string, json: boolean, result: TuneResult, header: string): string {
  const doc = parseDocument(original);
  const nodes = doc.get('nodes');
  if (!isSeq(nodes)) throw new StratiflowError('bad-file', 'the layout has no list of nodes');
  for (const s of result.settings) {
    const item = nodes.items.find((n) => isMap(n) && n.get('id') === s.setting.node);
    if (!isMap(item)) throw new StratiflowError('bad-file', `node "${s.setting.node}" not found in the file`);
    item.set(s.setting.quantity, layoutQuantity(s.setting, s.value));
    if (item.get('type') === 'inlet') item.delete(s.setting.quantity === 'pressure' ? 'flow' : 'pressure');
  }
  if (json) return JSON.stringify(doc.toJS(), null, 2) + '\n';
  doc.commentBefore = [header, doc.commentBefore].filter(Boolean).join('\n');
  return doc.toString({ lineWidth: 0 });
}

export function tuneText(chip: Chip, result: TuneResult, written?: string): string {
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
  const resolution = pressureResolution(result.solved.result);
  if (splits.length > 0) {
    out.push(`split windows (p_B − p_A, Pa): smallest margin ${fmtResolved(result.minMargin, resolution)} Pa${result.spareFreedom > 0 ? `, raised as far as the ${result.spareFreedom} spare direction${result.spareFreedom > 1 ? 's' : ''} of the settings allow` : ''}`);
    if (result.spareFreedom === 0) {
      const outlet = chip.nodes.find((n) => n.kind === 'outlet' && !result.settings.some((x) => x.setting.node === n.id));
      out.push(`  the targets fix every setting, so the margins are what they are${outlet ? `; to centre the splits, let an outlet back-pressure vary too (--vary ${outlet.id}.pressure)` : ''}`);
    }
    out.push(textTable(
      ['split', 'state', 'p_B − p_A', 'window', 'margin low', 'margin high'],
      splits.map((s) => [s.id, s.state, fmt(s.pressureDifference), `${fmt(s.window[0])} … ${fmt(s.window[1])}`, fmtResolved(s.pressureDifference - s.window[0], resolution), fmtResolved(s.window[1] - s.pressureDifference, resolution)]),
    ));
    out.push('');
  }
  const rating = chip.maxPressure;
  out.push(rating !== undefined
    ? `highest pressure in the chip ${fmt(result.solved.result.summary.maxPressure / 1e3)} kPa, within its rating of ${fmt(rating / 1e3)} kPa`
    : 'the layout gives no pressure rating (maxPressure): check the tuned pressures against the rating of the chip, fittings and tubing yourself');
  if (written) out.push(`tuned layout written to ${written}`);
  out.push('');
  // tuneChip returns only settings at which the chip works (src/analyses/verdict.ts): an empty verdict.
  out.push(chipText(chip.name, result.solved.result, []));
  return out.join('\n');
}

function collect(value: string, previous: string[]): string[] {
  return [...previous, value];
}

/** `node.quantity` or `node.quantity=from:to` (the unit of the second end applying to both). */
function freedomOption(text: string, chip: Chip): Freedom {
  const [name, range] = text.split('=');
  let setting: Setting;
  try {
    setting = parseSetting(name!, chip);
  } catch (error) {
    if (error instanceof StratiflowError) throw optionError('--vary', error.message);
    throw error;
  }
  if (range === undefined) return { setting };
  const parts = range.split(':');
  if (parts.length !== 2) throw optionError('--vary', `"${range}" is not a range: write ${name}=from:to, e.g. ${name}=0kPa:50kPa`);
  const dimension = setting.quantity === 'pressure' ? 'pressure' : 'flow';
  const unit = /[A-Za-zµ/]+.*$/.exec(parts[1]!.trim())?.[0];
  const read = (s: string) => parseQuantity(/^[-+]?[\d.]+([eE][-+]?\d+)?$/.test(s.trim()) && unit ? `${s.trim()} ${unit}` : s, dimension, { field: '--vary' });
  return { setting, bounds: [read(parts[0]!), read(parts[1]!)] };
}

function targetsOf(o: TuneOptions): Target[] {
  const targets: Target[] = [];
  const flow = (v: string | undefined, flag: string, kind: TargetKind) => {
    if (v !== undefined) targets.push({ kind, value: parseQuantity(v, 'flow', { field: flag }) });
  };
  flow(o.flowA, '--flow-a', 'flowA');
  flow(o.flowB, '--flow-b', 'flowB');
  flow(o.throughput, '--throughput', 'throughput');
  if (o.ratio !== undefined) targets.push({ kind: 'ratio', value: numberOption(o.ratio, '--ratio')! });
  if (o.holdup !== undefined) targets.push({ kind: 'holdup', value: numberOption(o.holdup, '--holdup')! });
  if (targets.length === 0) throw optionError('--throughput', 'give a target: --flow-a and --flow-b, or --throughput and --ratio, or --holdup');
  return targets;
}

export function registerTune(program: Command, context: CommandContext): void {
  program
    .command('tune')
    .description('Find the inlet pressures (or flows) and outlet back-pressures that meet flow targets with every split pinned, as far inside its window as the spare settings allow; writes the tuned layout.')
    .argument('<layout>', 'layout file (YAML or JSON)')
    .option('--flow-a <flow>', 'target: total flow of A, e.g. 20uL/min')
    .option('--flow-b <flow>', 'target: total flow of B')
    .option('--throughput <flow>', 'target: total flow of A and B')
    .option('--ratio <A/B>', 'target: flow ratio A/B')
    .option('--holdup <fraction>', 'target: mean holdup of A in the contactors (0 to 1)')
    .option('--vary <setting>', 'a setting that may change, node.pressure or node.flow, optionally with bounds: outB.pressure=0:20kPa (repeat; default: the pressures of all inlets)', collect, [])
    .option('--out <file>', 'tuned layout to write (default: beside the layout, with -tuned in its name)')
    .option('--json', 'print one JSON object (SI units) instead of the tables')
    .addOption(linearOption())
    .action((file: string, o: TuneOptions) => {
      const chip = loadLayout(file);
      const linear = o.linear as LinearSolver;
      const targets = targetsOf(o);
      const vary = o.vary.length > 0
        ? o.vary.map((v) => freedomOption(v, chip))
        : chip.nodes.filter((n) => n.kind === 'inlet').map((n) => ({ setting: { node: n.id, quantity: 'pressure' as const } }));
      const ext = extname(file);
      const out = outputFile(o.out ?? join(dirname(file), `${basename(file, ext)}-tuned${ext || '.yaml'}`), '--out');
      let result: TuneResult;
      try {
        result = tuneChip(chip, { targets, vary, solver: { linear } });
      } catch (error) {
        if (error instanceof StratiflowError && !error.place.file) throw new StratiflowError(error.code, error.message, { file });
        throw error;
      }
      const header = ` Tuned by stratiflow tune for ${result.targets.map((t) => `${TARGET_LABELS[t.kind]} ${withUnit(t.target, targetUnit(t.kind))}`).join(', ')}: ${result.settings.map((s) => settingName(s.setting)).join(', ')} set.`;
      writeOutputs([{ path: out, option: '--out', content: tunedLayoutText(readFileSync(file, 'utf8'), out.endsWith('.json'), result, header) }]);
      if (o.json) {
        const { chip: _tuned, solved, ...rest } = result;
        context.out(JSON.stringify({ layout: file, written: out, ...rest, result: solved.result }, jsonNumbers, 2) + '\n');
      } else {
        context.out(tuneText(chip, result, out));
      }
    });
}

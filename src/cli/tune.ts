/**
 * `stratiflow tune FILE`: find the settings that meet flow targets with every split pinned and,
 * where settings are to spare, centred in its window; print the settings, targets, sensitivities,
 * split margins and the per-contactor table (or JSON), and write the tuned layout: a copy of the
 * file with the settings filled in, its comments kept, and with `--report` an HTML report of the
 * tuned chip with its live operating point. An unreachable target ends with one line
 * that says why, and exit status 3.
 * Exports `registerTune`; the text is render/tuneText.ts, the tuned file layout/tunedLayout.ts.
 */
import type { Command } from 'commander';
import { holdTolerances } from '../analyses/hold.js';
import { loadLayout, readLayoutText } from '../layout/load.js';
import { defaultFreedoms, tuneChip, type Target, type TargetKind } from '../analyses/tune.js';
import { tunedLayoutText } from '../layout/tunedLayout.js';
import { tuneHeader, tuneText } from '../render/tuneText.js';
import { parseQuantity } from '../units/quantity.js';
import { collect, freedomOption, numberOption, linearOption, type LinearSolver } from './options.js';
import { besideLayout, outputFile, writeOutputs, type Output } from './io.js';
import { liveReport } from './pageScript.js';
import { chipReport } from '../render/report.js';
import { findManifolds } from '../analyses/manifolds.js';
import { jsonNumbers, type CommandContext } from './context.js';

import { inFile, optionError } from '../errors.js';

interface TuneOptions {
  flowA?: string;
  flowB?: string;
  throughput?: string;
  ratio?: string;
  holdup?: string;
  vary: string[];
  out?: string;
  report?: string;
  json?: boolean;
  linear: string;
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
    .option('--report <file>', 'also write an HTML report of the tuned chip: the tuning, and the live operating point at the tuned settings')
    .option('--json', 'print one JSON object (SI units) instead of the tables')
    .addOption(linearOption())
    .action((file: string, o: TuneOptions) => {
      const chip = loadLayout(file);
      const linear = o.linear as LinearSolver;
      const targets = targetsOf(o);
      const vary = o.vary.length > 0 ? o.vary.map((v) => freedomOption(v, chip)) : defaultFreedoms(chip);
      const out = outputFile(o.out ?? besideLayout(file, 'tuned'), '--out');
      const report = o.report === undefined ? undefined : outputFile(o.report, '--report');
      const result = inFile(file, () => tuneChip(chip, { targets, vary, solver: { linear } }));
      const original = readLayoutText(file);
      const tuned = tunedLayoutText(original, out.endsWith('.json'), result, tuneHeader(result));
      // How tightly each tuned setting must be held (src/analyses/hold.ts).
      const hold = holdTolerances(result.solved);
      const files: Output[] = [{ path: out, option: '--out', content: tuned }];
      if (report) {
        const analysis = { title: 'Tuning', text: tuneText(chip, result, out, hold), note: `The chip below is the tuned layout ${out}; its live operating point starts at the tuned settings.` };
        const live = liveReport({ text: tuned, source: out }, result.solved.result);
        files.push({ path: report, option: '--report', content: chipReport(result.solved, findManifolds(result.solved), { analysis, live }) });
      }
      writeOutputs(files);
      if (o.json) {
        const { chip: _tuned, solved, ...rest } = result;
        context.out(JSON.stringify({ layout: file, written: out, ...rest, result: solved.result, hold }, jsonNumbers, 2) + '\n');
      } else {
        context.out(tuneText(chip, result, out, hold));
      }
    });
}

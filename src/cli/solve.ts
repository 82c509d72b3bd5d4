/**
 * `stratiflow solve FILE`: load a layout, solve the whole chip, print the per-contactor table
 * and summary (or JSON), optionally write the CSV table, or with `--out DIR` the JSON, the CSV,
 * the drawing and the HTML report.
 */
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip } from '../analyses/chip.js';
import { join } from 'node:path';
import { chipText, contactorCsv } from '../render/text.js';
import { chipDrawing } from '../render/chipDrawing.js';
import { chipReport } from '../render/report.js';
import { choiceOption } from './options.js';
import { writeFileAtomic } from './io.js';
import type { CommandContext } from './main.js';
import { StratiflowError } from '../errors.js';

interface SolveOptions {
  json?: boolean;
  csv?: string;
  out?: string;
  linear: string;
}

export function registerSolve(program: Command, context: CommandContext): void {
  program
    .command('solve')
    .description('Solve the whole chip: pressures, per-phase flows, holdups and outlet states of every contactor.')
    .argument('<layout>', 'layout file (YAML or JSON)')
    .option('--json', 'print one JSON object (SI units)')
    .option('--csv <file>', 'write the per-contactor table as CSV')
    .option('--out <dir>', 'write result.json, contactors.csv, chip.svg and report.html into this folder')
    .option('--linear <sparse|dense>', 'linear solver inside Newton', 'sparse')
    .action((file: string, options: SolveOptions) => {
      const chip = loadLayout(file);
      const linear = choiceOption(options.linear, '--linear', ['sparse', 'dense'] as const);
      const solved = solveChip(chip, { linear });
      const { result } = solved;
      if (options.csv) writeFileAtomic(options.csv, contactorCsv(result));
      if (options.out) {
        // Everything is rendered before the first file is written.
        const files: Array<[string, string]> = [
          ['result.json', JSON.stringify(result, jsonNumbers, 2) + '\n'],
          ['contactors.csv', contactorCsv(result)],
          ['chip.svg', chipDrawing(solved)],
          ['report.html', chipReport(solved)],
        ];
        for (const [name, content] of files) writeFileAtomic(join(options.out, name), content);
      }
      context.out(options.json ? JSON.stringify(result, jsonNumbers, 2) + '\n' : chipText(chip.name, result));
      if (!result.converged) throw new StratiflowError('no-convergence', result.message ?? 'the solve did not converge', { file });
    });
}

/** JSON has no Infinity or NaN: such values become null. */
export function jsonNumbers(_key: string, value: unknown): unknown {
  return typeof value === 'number' && !Number.isFinite(value) ? null : value;
}

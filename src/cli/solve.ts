/**
 * `stratiflow solve FILE`: load a layout, solve the whole chip, print the per-contactor table
 * and summary (or JSON), optionally write the CSV table, or with `--out DIR` the JSON, the CSV,
 * the drawing and the HTML report. When the layout names a solute, the JSON (printed or written)
 * and the files of `--out` also carry its extraction (src/analyses/extraction.ts, default
 * accuracy); the printed table stays as it is.
 */
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip, type SolvedChip } from '../analyses/chip.js';
import { analyseExtraction, soluteSetup, type ExtractionResult } from '../analyses/extraction.js';
import { join } from 'node:path';
import { chipText, contactorCsv } from '../render/text.js';
import { chipDrawing } from '../render/chipDrawing.js';
import { extractionColouring } from '../render/extractionCharts.js';
import { chipReport } from '../render/report.js';
import { choiceOption } from './options.js';
import { writeFileAtomic } from './io.js';
import type { CommandContext } from './main.js';
import { StratiflowError, StratiflowErrors } from '../errors.js';

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
    .option('--out <dir>', 'write result.json, contactors.csv, chip.svg and report.html into this folder (with the extraction of the layout\'s solute, if it names one)')
    .option('--linear <sparse|dense>', 'linear solver inside Newton', 'sparse')
    .action((file: string, options: SolveOptions) => {
      const chip = loadLayout(file);
      const linear = choiceOption(options.linear, '--linear', ['sparse', 'dense'] as const);
      const solved = solveChip(chip, { linear });
      const { result } = solved;
      const extraction = options.out || options.json ? layoutExtraction(solved, context) : undefined;
      const json = JSON.stringify(extraction ? { ...result, extraction } : result, jsonNumbers, 2) + '\n';
      if (options.csv) writeFileAtomic(options.csv, contactorCsv(result));
      if (options.out) {
        // Everything is rendered before the first file is written.
        const files: Array<[string, string]> = [
          ['result.json', json],
          ['contactors.csv', contactorCsv(result)],
          ['chip.svg', chipDrawing(solved, extraction ? { extraction: extractionColouring(extraction) } : {})],
          ['report.html', chipReport(solved, { extraction })],
        ];
        for (const [name, content] of files) writeFileAtomic(join(options.out, name), content);
      }
      context.out(options.json ? json : chipText(chip.name, result));
      if (!result.converged) throw new StratiflowError('no-convergence', result.message ?? 'the solve did not converge', { file });
    });
}

/**
 * The extraction of the layout's solute, or undefined when it names none or the flows did not
 * settle. Solute data the layout lacks cost the extraction, not the solve: they are named on
 * standard error.
 */
function layoutExtraction(solved: SolvedChip, context: CommandContext): ExtractionResult | undefined {
  if (!solved.chip.solute || !solved.result.converged) return undefined;
  try {
    return analyseExtraction(solved, soluteSetup(solved.chip));
  } catch (error) {
    if (!(error instanceof StratiflowErrors)) throw error;
    const lines = error.problems.map((p) => `stratiflow: no extraction: ${p.format()}\n`);
    context.err(lines.join('') + 'stratiflow: no extraction: `stratiflow extract` takes the missing values as options\n');
    return undefined;
  }
}

/** JSON has no Infinity or NaN: such values become null. */
export function jsonNumbers(_key: string, value: unknown): unknown {
  return typeof value === 'number' && !Number.isFinite(value) ? null : value;
}

/**
 * `stratiflow solve FILE`: load a layout, solve the whole chip, print the per-contactor table
 * and summary with the hold tolerances of every setting (src/analyses/hold.ts) and the operating
 * verdict (or JSON), optionally write the CSV table, or with `--out DIR` the JSON, the CSV,
 * the drawing and the HTML report (live: it solves again in the browser when a setting
 * changes). When the layout names a solute, the JSON (printed or written)
 * and the files of `--out` also carry its extraction (src/analyses/extraction.ts, default
 * accuracy); the printed table stays as it is. A solve that does not converge writes no files:
 * its table is printed under a NOT CONVERGED banner and the command ends with exit status 4.
 */
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip, type SolvedChip } from '../analyses/chip.js';
import { operatingVerdict } from '../analyses/verdict.js';
import { analyseExtraction, soluteSetup, type ExtractionResult } from '../analyses/extraction.js';
import { holdTolerances } from '../analyses/hold.js';
import { join } from 'node:path';
import { chipText, contactorCsv } from '../render/text.js';
import { linearOption, type LinearSolver } from './options.js';
import { outputFile, outputFolder, writeOutputs, type Output } from './io.js';
import { jsonNumbers, type CommandContext } from './context.js';
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
    .addOption(linearOption())
    .action(async (file: string, options: SolveOptions) => {
      const chip = loadLayout(file);
      const linear = options.linear as LinearSolver;
      const csv = options.csv === undefined ? undefined : outputFile(options.csv, '--csv');
      const out = options.out === undefined ? undefined : outputFolder(options.out, '--out');
      const solved = solveChip(chip, { linear });
      const { result } = solved;
      const extraction = options.out || options.json ? layoutExtraction(solved, context) : undefined;
      const hold = result.converged ? holdTolerances(solved) : undefined;
      const solution = { ...result, ...(hold && { hold }), ...(extraction && { extraction }) };
      const json = JSON.stringify(solution, jsonNumbers, 2) + '\n';
      if (result.converged) {
        // Everything is rendered before the first file is written.
        const files: Output[] = [];
        if (csv) files.push({ path: csv, option: '--csv', content: contactorCsv(result) });
        if (out) {
          const { chipDrawing, extractionColouring, chipReport, liveReport, findManifolds } = await drawingModules();
          const into = (name: string, content: string) => files.push({ path: join(out, name), option: '--out', content });
          into('result.json', json);
          into('contactors.csv', contactorCsv(result));
          const drawingSvg = chipDrawing(solved, extraction ? { extraction: extractionColouring(extraction) } : {});
          into('chip.svg', drawingSvg);
          into('report.html', chipReport(solved, findManifolds(solved), { extraction, drawingSvg, live: liveReport({ file }, solution) }));
        }
        writeOutputs(files, out ? [{ path: out, option: '--out' }] : []);
      }
      context.out(options.json ? json : chipText(chip.name, result, result.converged ? operatingVerdict(solved) : undefined, hold));
      if (!result.converged) throw unconverged(result.message, file, Boolean(csv || out));
    });
}

/**
 * The renderers of `--out`, loaded only when it is given: they bring the SVG document model and
 * the report page, several tenths of a second of loading that a plain solve does not need.
 */
async function drawingModules() {
  const [drawing, extractionCharts, report, pageScript, manifolds] = await Promise.all([
    import('../render/chipDrawing.js'),
    import('../render/extractionCharts.js'),
    import('../render/report.js'),
    import('./pageScript.js'),
    import('../analyses/manifolds.js'),
  ]);
  return {
    chipDrawing: drawing.chipDrawing,
    extractionColouring: extractionCharts.extractionColouring,
    chipReport: report.chipReport,
    liveReport: pageScript.liveReport,
    findManifolds: manifolds.findManifolds,
  };
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

/** The error of a solve that did not settle; `unwritten` says that the files asked for were not written. */
export function unconverged(message: string | undefined, file: string, unwritten: boolean): StratiflowError {
  return new StratiflowError('no-convergence', `${message ?? 'the solve did not converge'}${unwritten ? '; no files written (results that did not converge are not saved)' : ''}`, { file });
}

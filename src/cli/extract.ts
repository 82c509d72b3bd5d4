/**
 * `stratiflow extract FILE`: solve the chip, then the solute transport in every contactor; print
 * the per-contactor table and the chip's yield (or JSON: the chip solution with an `extraction`
 * member), optionally write the CSV table, the HTML report (`--report`, live: the flows are solved
 * again in the page when a setting changes) and, into a folder, the charts, the report and the
 * chip drawing with the contactors coloured by approach to equilibrium.
 * Options → solute overrides → solveChip → analyseExtraction → output.
 */
import { join } from 'node:path';
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip } from '../analyses/chip.js';
import { analyseExtraction, soluteSetup, type SoluteOverrides } from '../analyses/extraction.js';
import { TRANSPORT_DEFAULTS } from '../physics/transport.js';
import { contactorExtractionChart, extractionAlongChart, extractionColouring, extractionCsv, extractionText } from '../render/extractionCharts.js';
import { chipDrawing } from '../render/chipDrawing.js';
import { chipReport } from '../render/report.js';
import { liveReport } from './pageScript.js';
import { findManifolds } from '../analyses/manifolds.js';
import { numberOption, quantityOption, linearOption, type LinearSolver, choice } from './options.js';
import { outputFile, outputFolder, writeOutputs, type Output } from './io.js';
import { jsonNumbers, type CommandContext } from './context.js';

import { StratiflowError, StratiflowErrors, optionError } from '../errors.js';

interface ExtractOptions {
  solute?: string;
  partition?: string;
  feedPhase?: string;
  feedConcentration?: string;
  diffusivityA?: string;
  diffusivityB?: string;
  tolerance?: string;
  linear: string;
  json?: boolean;
  csv?: string;
  out?: string;
  report?: string;
}

/** Files written by --out. */
const OUT_FILES = {
  along: 'extraction-along.svg',
  perContactor: 'extraction-per-contactor.svg',
  drawing: 'chip.svg',
  report: 'report.html',
} as const;

export function registerExtract(program: Command, context: CommandContext): void {
  program
    .command('extract')
    .description('Mass transfer of a solute across the interface: extraction in each contactor and the yield of the whole chip.')
    .argument('<layout>', 'layout file (YAML or JSON); its `solute` and phase `diffusivity` values are used unless given here')
    .option('--solute <name>', 'name of the solute, for the output')
    .option('--partition <K>', 'partition coefficient K = c_B/c_A at equilibrium')
    .addOption(choice('--feed-phase <A|B>', 'phase that carries the solute in (the other enters clean)', ['A', 'B']))
    .option('--feed-concentration <concentration>', 'solute concentration in the fed phase, e.g. 10mM (default 1 mol/m3: results are relative)')
    .option('--diffusivity-a <diffusivity>', 'diffusivity of the solute in phase A, e.g. 1e-9m2/s or 800um2/s')
    .option('--diffusivity-b <diffusivity>', 'diffusivity of the solute in phase B')
    .option('--tolerance <fraction>', 'accuracy of every extraction figure, as a share of the feed', String(TRANSPORT_DEFAULTS.tolerance))
    .addOption(linearOption())
    .option('--json', 'print one JSON object (SI units): the chip solution with an `extraction` member')
    .option('--csv <file>', 'write the per-contactor extraction table as CSV')
    .option('--report <file>', 'write the HTML report (the extraction, and the live operating point of the flows) to this file')
    .option('--out <dir>', `write the charts ${OUT_FILES.along} and ${OUT_FILES.perContactor}, the drawing ${OUT_FILES.drawing} (contactors coloured by approach to equilibrium) and ${OUT_FILES.report} into this folder`)
    .action((file: string, options: ExtractOptions) => {
      const overrides: SoluteOverrides = {
        label: options.solute,
        partition: quantityOption(options.partition, '--partition', 'dimensionless', true),
        feedPhase: options.feedPhase as 'A' | 'B' | undefined,
        feedConcentration: quantityOption(options.feedConcentration, '--feed-concentration', 'concentration', true),
        diffusivityA: quantityOption(options.diffusivityA, '--diffusivity-a', 'diffusivity', true),
        diffusivityB: quantityOption(options.diffusivityB, '--diffusivity-b', 'diffusivity', true),
      };
      const tolerance = numberOption(options.tolerance, '--tolerance')!;
      if (!(tolerance >= 1e-6 && tolerance <= 1e-2)) throw optionError('--tolerance', 'must lie between 1e-6 and 1e-2');
      const linear = options.linear as LinearSolver;

      const csv = options.csv === undefined ? undefined : outputFile(options.csv, '--csv');
      const out = options.out === undefined ? undefined : outputFolder(options.out, '--out');
      const reportFile = options.report === undefined ? undefined : outputFile(options.report, '--report');

      const chip = loadLayout(file);
      const solute = withOptionHint(() => soluteSetup(chip, overrides));
      const solved = solveChip(chip, { linear });
      if (!solved.result.converged) throw new StratiflowError('no-convergence', `${solved.result.message ?? 'the flow solve did not converge'}; no extraction on unsettled flows`, { file });
      const extraction = analyseExtraction(solved, solute, { tolerance });

      // Everything is rendered before the first file is written.
      const files: Output[] = [];
      if (csv) files.push({ path: csv, option: '--csv', content: extractionCsv(extraction) });
      // The live page solves the flows again; it redoes the extraction only where the layout names the solute.
      // Drawn once and reported once, whether --report, --out or both ask for them.
      const drawingSvg = reportFile || out ? chipDrawing(solved, { extraction: extractionColouring(extraction) }) : '';
      const report = reportFile || out ? chipReport(solved, findManifolds(solved), { extraction, drawingSvg, live: liveReport({ file }, { ...solved.result, extraction }) }) : '';
      if (reportFile) files.push({ path: reportFile, option: '--report', content: report });
      if (out) {
        const into = (name: string, content: string) => files.push({ path: join(out, name), option: '--out', content });
        into(OUT_FILES.along, extractionAlongChart(extraction));
        into(OUT_FILES.perContactor, contactorExtractionChart(extraction));
        into(OUT_FILES.drawing, drawingSvg);
        into(OUT_FILES.report, report);
      }
      writeOutputs(files, out ? [{ path: out, option: '--out' }] : []);
      context.out(options.json ? JSON.stringify({ ...solved.result, extraction }, jsonNumbers, 2) + '\n' : extractionText(chip.name, extraction));
    });
}

/** Missing solute values may also come from the command line: say so after the layout's places. */
function withOptionHint<T>(run: () => T): T {
  try {
    return run();
  } catch (error) {
    if (!(error instanceof StratiflowErrors)) throw error;
    const hint = new StratiflowError('bad-option', 'give them in the layout or with --partition, --diffusivity-a, --diffusivity-b');
    throw new StratiflowErrors([...error.problems, hint]);
  }
}

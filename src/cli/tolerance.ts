/**
 * `stratiflow tolerance FILE`: how fabrication tolerance and property uncertainty spread the
 * flow between contactors and make splits leak. Tolerances come from options and/or a tolerance
 * file (YAML or JSON, checked here); a value is one standard deviation ("2%", "0.5um") or, with
 * ±, the half-width of a uniform range ("±2%", "±1deg"). Prints the summary (or JSON), writes
 * the sample CSV, the SVG charts and (`--report`) an HTML report of the study beside the nominal
 * chip's live operating point. A progress bar goes to stderr when it is a terminal.
 * Exports `registerTolerance`. Reading tolerances is src/layout/toleranceFile.ts.
 */
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { runTolerance, type ToleranceSpec } from '../analyses/tolerance.js';
import { commonestProblem } from '../analyses/toleranceSummary.js';
import { hasTolerances, MAX_SAMPLES, overlayTolerances, parseTolerance, readToleranceFile } from '../layout/toleranceFile.js';
import { toleranceCsv, toleranceText } from '../render/toleranceText.js';
import { toleranceCharts } from '../render/toleranceCharts.js';
import type { Dimension } from '../units/quantity.js';
import { numberOption, wholeNumberOption, MAX_WORKERS, linearOption, type LinearSolver } from './options.js';
import { outputFile, outputFolder, writeOutputs, type Output } from './io.js';
import { jsonNumbers, type CommandContext } from './context.js';
import { progressBar } from './progress.js';
import { liveReport } from './pageScript.js';
import { chipReport } from '../render/report.js';
import { findManifolds } from '../analyses/manifolds.js';
import { solveChip } from '../analyses/chip.js';

import { StratiflowError, optionError } from '../errors.js';

/** At most this many tolerance multiples in --sweep, each costing a full set of samples. */
const MAX_SWEEP = 20;
/** Multiples of the tolerances in --sweep go up to this: beyond it a chip is a different design. */
const MAX_MULTIPLE = 100;

interface ToleranceOptions {
  spec?: string;
  report?: string;
  depth?: string;
  depthOffset?: string;
  width?: string;
  widthOffset?: string;
  muA?: string;
  muB?: string;
  tension?: string;
  angle?: string;
  samples?: string;
  seed?: string;
  workers?: string;
  sweep?: string;
  firstOrderOnly?: boolean;
  json?: boolean;
  csv?: string;
  svg?: string;
  linear: string;
}

/** The spec from the file with the options laid over it; refused when it gives no tolerance. */
function mergedSpec(fromFile: ToleranceSpec | undefined, o: ToleranceOptions): ToleranceSpec {
  const option = (value: string | undefined, flag: string, dim: Dimension) => (value === undefined ? undefined : parseTolerance(value, dim, { field: flag }));
  const spec = overlayTolerances(fromFile, {
    depth: option(o.depth, '--depth', 'length'),
    depthOffset: option(o.depthOffset, '--depth-offset', 'length'),
    width: option(o.width, '--width', 'length'),
    widthOffset: option(o.widthOffset, '--width-offset', 'length'),
    viscosityA: option(o.muA, '--mu-a', 'viscosity'),
    viscosityB: option(o.muB, '--mu-b', 'viscosity'),
    interfacialTension: option(o.tension, '--tension', 'tension'),
    contactAngle: option(o.angle, '--angle', 'angle'),
  });
  if (!hasTolerances(spec)) throw optionError('--depth', 'no tolerance given: use --depth, --width, --mu-a, … or --spec FILE');
  return spec;
}

/** The error of a study in which no realisation solved, naming the most frequent reason. */
function noneSolved(notSolved: ReadonlyArray<{ problem: string }>, file: string): StratiflowError {
  const { problem, count } = commonestProblem(notSolved) ?? { problem: 'no reason given', count: 0 };
  return new StratiflowError('no-convergence', `none of the ${notSolved.length} realisations solved (${count} of them: ${problem}); no files written — narrower tolerances may help`, { file });
}

const FILE_HELP = `
A tolerance file (YAML or JSON) names its tolerances per segment group of the layout:
  samples: 1000
  seed: 7
  channels:
    - group: contactor           # the segments of one group
      depth: { each: 1%, offset: 2% }
      width: { each: ±1 um }
    - depth: { offset: 3% }      # no group: every segment no other rule names
      width: { offset: ±2 um }   # a tube's inner diameter follows width
  viscosityA: 3%
  viscosityB: 3%
  interfacialTension: 5%
  contactAngle: ±2 deg
"each" is drawn for every channel on its own, "offset" once per chip for all channels of the rule.
`;

export function registerTolerance(program: Command, context: CommandContext): void {
  program
    .command('tolerance')
    .description('Draw many realisations of the chip within fabrication and property tolerances, solve each, and report the spread between contactors and the chance that every split stays pinned.')
    .argument('<layout>', 'layout file (YAML or JSON)')
    .option('--spec <file>', 'tolerance file (YAML or JSON); the options below are laid over it')
    .option('--depth <tolerance>', 'etch depth, every channel on its own: "1%" or "0.5um" is one sd, "±1%" a uniform range')
    .option('--depth-offset <tolerance>', 'etch depth, one offset per chip shared by all channels (wafer to wafer)')
    .option('--width <tolerance>', 'channel width (tube inner diameter), every channel on its own')
    .option('--width-offset <tolerance>', 'channel width, one offset per chip')
    .option('--mu-a <tolerance>', 'viscosity of phase A, e.g. 3% or 0.1mPa.s')
    .option('--mu-b <tolerance>', 'viscosity of phase B')
    .option('--tension <tolerance>', 'interfacial tension, e.g. 5% or 0.3mN/m')
    .option('--angle <tolerance>', 'contact angle (advancing and receding together), e.g. ±2deg')
    .option('--samples <n>', 'realisations to solve (default 1000, or the file\'s)')
    .option('--seed <n>', 'seed of the random draws; the same seed gives the same numbers (default 1, or the file\'s)')
    .option('--workers <n>', 'worker threads (default: one per processor core)')
    .option('--sweep <multiples>', 'also sample at these multiples of every tolerance, e.g. 0.5,2, for the failure chart')
    .option('--first-order-only', 'solve only for the derivatives; draw the realisations for the first-order model without solving them')
    .option('--json', 'print one JSON object (SI units) instead of the summary')
    .option('--csv <file>', 'write one row per realisation')
    .option('--svg <dir>', 'write histograms of the spreads, the failure chart and the per-contactor leak chart')
    .option('--report <file>', 'write an HTML report: the study with its charts, and the chip at the layout\'s settings with its live operating point')
    .addOption(linearOption())
    .addHelpText('after', FILE_HELP)
    .action(async (file: string, o: ToleranceOptions) => {
      const chip = loadLayout(file);
      const fromFile = o.spec ? readToleranceFile(o.spec) : undefined;
      const spec = mergedSpec(fromFile?.spec, o);
      const samples = wholeNumberOption(o.samples, '--samples', 1, MAX_SAMPLES) ?? fromFile?.samples ?? 1000;
      const seed = wholeNumberOption(o.seed, '--seed', 0, Number.MAX_SAFE_INTEGER) ?? fromFile?.seed ?? 1;
      const workers = wholeNumberOption(o.workers, '--workers', 1, MAX_WORKERS) ?? availableParallelism();
      const scales = o.sweep === undefined ? [] : o.sweep.split(',').map((s) => {
        const v = numberOption(s.trim(), '--sweep')!;
        if (!(v >= 0 && v <= MAX_MULTIPLE)) throw optionError('--sweep', `${s} is not a multiple from 0 to ${MAX_MULTIPLE}`);
        return v;
      });
      if (scales.length > MAX_SWEEP) throw optionError('--sweep', `${scales.length} multiples given; at most ${MAX_SWEEP}`);
      const linear = o.linear as LinearSolver;
      const csv = o.csv === undefined ? undefined : outputFile(o.csv, '--csv');
      const svg = o.svg === undefined ? undefined : outputFolder(o.svg, '--svg');
      const report = o.report === undefined ? undefined : outputFile(o.report, '--report');

      const progress = progressBar('solving', 'solves');
      const start = performance.now();
      let result;
      try {
        result = await runTolerance(chip, spec, {
          samples,
          seed,
          workers,
          scales,
          solveSamples: !o.firstOrderOnly,
          solver: { linear },
          onProgress: progress.onProgress,
        });
      } finally {
        progress.stop();
      }
      const seconds = (performance.now() - start) / 1000;

      if (result.sampled && result.solved === 0) {
        context.out(o.json ? JSON.stringify(result, jsonNumbers, 2) + '\n' : toleranceText(result, { workers, seconds }));
        throw noneSolved(result.notSolved, file);
      }
      const outputs: Output[] = [];
      if (csv) outputs.push({ path: csv, option: '--csv', content: toleranceCsv(result, result.contactors.map((c) => c.id)) });
      if (svg) for (const chart of toleranceCharts(result)) outputs.push({ path: join(svg, chart.name), option: '--svg', content: chart.svg });
      if (report) {
        const nominal = solveChip(chip, { linear });
        const analysis = {
          title: 'Tolerance study',
          text: toleranceText(result, { workers, seconds }),
          charts: toleranceCharts(result).map((c) => ({ id: c.name.replace(/\.svg$/, ''), svg: c.svg })),
          note: 'The study is of the layout\'s settings; the live operating point below solves the nominal chip again, not the study.',
        };
        outputs.push({ path: report, option: '--report', content: chipReport(nominal, findManifolds(nominal), { analysis, live: nominal.result.converged ? liveReport({ file }, nominal.result) : undefined }) });
      }
      writeOutputs(outputs, svg ? [{ path: svg, option: '--svg' }] : []);
      context.out(o.json ? JSON.stringify(result, jsonNumbers, 2) + '\n' : toleranceText(result, { workers, seconds }));
    });
}

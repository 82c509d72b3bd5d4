/**
 * `stratiflow tolerance FILE`: how fabrication tolerance and property uncertainty spread the
 * flow between contactors and make splits leak. Tolerances come from options and/or a tolerance
 * file (YAML or JSON, checked here); a value is one standard deviation ("2%", "0.5um") or, with
 * ±, the half-width of a uniform range ("±2%", "±1deg"). Prints the summary (or JSON), writes
 * the sample CSV and the SVG charts. A progress bar goes to stderr when it is a terminal.
 * Exports `registerTolerance`, `parseTolerance`, `readToleranceFile`.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import type { Command } from 'commander';
import cliProgress from 'cli-progress';
import { parse as parseYaml } from 'yaml';
import { z } from 'zod';
import { loadLayout } from '../layout/load.js';
import { runTolerance, type ChannelTolerance, type DimensionTolerance, type ToleranceSpec, type Variation } from '../analyses/tolerance.js';
import { toleranceCsv, toleranceText } from '../render/toleranceText.js';
import { toleranceCharts } from '../render/toleranceCharts.js';
import { parseQuantity, type Dimension } from '../units/quantity.js';
import { numberOption, wholeNumberOption, MAX_WORKERS, linearOption, type LinearSolver } from './options.js';
import { outputFile, outputFolder, writeOutputs, type Output } from './io.js';
import { jsonNumbers, type CommandContext } from './context.js';

import { StratiflowError, StratiflowErrors, optionError, type ErrorPlace } from '../errors.js';

/**
 * At most this many realisations: enough to put the chance that every split stays pinned within
 * ±0.3 % (95 %: 1.96·√(0.25/n) for n = 1e5, the binomial standard error), and few enough that the
 * rows kept for the CSV fit in memory.
 */
const MAX_SAMPLES = 100_000;
/** At most this many tolerance multiples in --sweep, each costing a full set of samples. */
const MAX_SWEEP = 20;
/** Multiples of the tolerances in --sweep go up to this: beyond it a chip is a different design. */
const MAX_MULTIPLE = 100;

/** Relative tolerances go up to this share of the value: a 100 % spread already draws channels of no size. */
const MAX_RELATIVE = 1;

/** A unit to suggest in messages, per dimension a tolerance can have. */
const EXAMPLE_UNIT: Partial<Record<Dimension, string>> = { length: 'um', viscosity: 'mPa.s', tension: 'mN/m', angle: 'deg' };

/**
 * A tolerance as written: "2%" (relative sd), "0.5 um" (absolute sd), "±2%" or "+-0.5um"
 * (uniform range). A plain number is refused, in a file as on the command line, since "2" could
 * mean 2 %, 2 µm or 2 deg.
 */
export function parseTolerance(value: unknown, dimension: Dimension, place: ErrorPlace): Variation {
  const fail = (message: string) => new StratiflowError('bad-option', message, place);
  const unit = EXAMPLE_UNIT[dimension] ?? 'unit';
  const text = String(value).trim();
  if (typeof value === 'number' || /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text)) throw fail(`"${text}" needs % or a unit, e.g. "${text}%" or "${text} ${unit}"`);
  if (typeof value !== 'string' || text === '') throw fail(`expected a tolerance such as "2%", "±2%" or "0.5 ${unit}"`);
  const uniform = /^(±|\+-|\+\/-)\s*/.exec(text);
  const body = uniform ? text.slice(uniform[0].length) : text;
  const distribution = uniform ? 'uniform' : 'normal';
  const percent = /^(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*%$/.exec(body);
  if (percent) {
    const size = Number(body.slice(0, -1)) / 100;
    if (size > MAX_RELATIVE) throw fail(`"${text}" is more than ${100 * MAX_RELATIVE} % of the value: such a chip or liquid is not the one in the layout`);
    return { distribution, size, relative: true };
  }
  const size = parseQuantity(body, dimension, place);
  if (!(size >= 0)) throw fail(`"${text}" is not a tolerance ≥ 0`);
  return { distribution, size, relative: false };
}

// ---------------------------------------------------------------------------------------------
// Tolerance file

const tolerance = z.union([z.number(), z.string()]).describe('"2%" or "0.5 um" is one standard deviation; "±2%" or "±0.5 um" the half-width of a uniform range');
const dimension = z.strictObject({
  each: tolerance.optional().describe('every channel on its own'),
  offset: tolerance.optional().describe('one offset per chip, shared by the channels of this rule (wafer to wafer)'),
});
const toleranceFileSchema = z.strictObject({
  samples: z.number().int().min(1).max(MAX_SAMPLES).optional(),
  seed: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER).optional(),
  channels: z
    .array(z.strictObject({ group: z.string().min(1).optional(), depth: dimension.optional(), width: dimension.optional() }))
    .optional()
    .describe('one rule per segment group; a rule without a group covers every segment no other rule names; a tube diameter follows width'),
  viscosityA: tolerance.optional(),
  viscosityB: tolerance.optional(),
  interfacialTension: tolerance.optional(),
  contactAngle: tolerance.optional().describe('shifts the advancing and receding angles together'),
});

export interface ToleranceFile {
  spec: ToleranceSpec;
  samples?: number;
  seed?: number;
}

/** Reads and checks a tolerance file; every problem found is reported with its field. */
export function readToleranceFile(path: string): ToleranceFile {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (error) {
    throw new StratiflowError('bad-file', `cannot read: ${error instanceof Error ? error.message : String(error)}`, { file: path });
  }
  let raw: unknown;
  try {
    raw = path.endsWith('.json') ? JSON.parse(text) : parseYaml(text);
  } catch (error) {
    throw new StratiflowError('bad-file', `not valid ${path.endsWith('.json') ? 'JSON' : 'YAML'}: ${error instanceof Error ? error.message : String(error)}`, { file: path });
  }
  const parsed = toleranceFileSchema.safeParse(raw);
  if (!parsed.success) {
    throw new StratiflowErrors(parsed.error.issues.map((issue) => new StratiflowError('bad-file', issue.message, { file: path, field: issue.path.join('.') || undefined })));
  }
  const f = parsed.data;
  const problems: StratiflowError[] = [];
  const read = (value: unknown, dim: Dimension, field: string): Variation | undefined => {
    if (value === undefined) return undefined;
    try {
      return parseTolerance(value, dim, { file: path, field });
    } catch (error) {
      if (error instanceof StratiflowError) problems.push(new StratiflowError('bad-file', error.message, error.place));
      return undefined;
    }
  };
  const readDimension = (d: z.infer<typeof dimension> | undefined, field: string): DimensionTolerance | undefined =>
    d && { each: read(d.each, 'length', `${field}.each`), offset: read(d.offset, 'length', `${field}.offset`) };
  const spec: ToleranceSpec = {
    channels: f.channels?.map((c, i) => ({ group: c.group, depth: readDimension(c.depth, `channels.${i}.depth`), width: readDimension(c.width, `channels.${i}.width`) })),
    viscosityA: read(f.viscosityA, 'viscosity', 'viscosityA'),
    viscosityB: read(f.viscosityB, 'viscosity', 'viscosityB'),
    interfacialTension: read(f.interfacialTension, 'tension', 'interfacialTension'),
    contactAngle: read(f.contactAngle, 'angle', 'contactAngle'),
  };
  if (problems.length) throw new StratiflowErrors(problems);
  return { spec, samples: f.samples, seed: f.seed };
}

// ---------------------------------------------------------------------------------------------
// Command

interface ToleranceOptions {
  spec?: string;
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

/** The spec from the file, with the options laid over it (dimension options act on the rule without a group). */
function mergedSpec(fromFile: ToleranceSpec | undefined, o: ToleranceOptions): ToleranceSpec {
  const spec: ToleranceSpec = { ...fromFile, channels: [...(fromFile?.channels ?? [])] };
  const option = (value: string | undefined, flag: string, dim: Dimension) => (value === undefined ? undefined : parseTolerance(value, dim, { field: flag }));
  const depth = option(o.depth, '--depth', 'length');
  const depthOffset = option(o.depthOffset, '--depth-offset', 'length');
  const width = option(o.width, '--width', 'length');
  const widthOffset = option(o.widthOffset, '--width-offset', 'length');
  if (depth || depthOffset || width || widthOffset) {
    const at = spec.channels!.findIndex((c) => c.group === undefined);
    const base: ChannelTolerance = at >= 0 ? spec.channels![at]! : {};
    const rule: ChannelTolerance = {
      ...base,
      depth: { ...base.depth, ...(depth ? { each: depth } : {}), ...(depthOffset ? { offset: depthOffset } : {}) },
      width: { ...base.width, ...(width ? { each: width } : {}), ...(widthOffset ? { offset: widthOffset } : {}) },
    };
    if (at >= 0) spec.channels![at] = rule;
    else spec.channels!.push(rule);
  }
  spec.viscosityA = option(o.muA, '--mu-a', 'viscosity') ?? spec.viscosityA;
  spec.viscosityB = option(o.muB, '--mu-b', 'viscosity') ?? spec.viscosityB;
  spec.interfacialTension = option(o.tension, '--tension', 'tension') ?? spec.interfacialTension;
  spec.contactAngle = option(o.angle, '--angle', 'angle') ?? spec.contactAngle;
  const given = [spec.viscosityA, spec.viscosityB, spec.interfacialTension, spec.contactAngle].some(Boolean) || spec.channels!.some((c) => c.depth?.each || c.depth?.offset || c.width?.each || c.width?.offset);
  if (!given) throw optionError('--depth', 'no tolerance given: use --depth, --width, --mu-a, … or --spec FILE');
  return spec;
}

/** The error of a study in which no realisation solved, naming the most frequent reason. */
function noneSolved(notSolved: ReadonlyArray<{ problem: string }>, file: string): StratiflowError {
  const counts = new Map<string, number>();
  for (const { problem } of notSolved) counts.set(problem, (counts.get(problem) ?? 0) + 1);
  const [problem, count] = [...counts].sort((a, b) => b[1] - a[1])[0] ?? ['no reason given', 0];
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

      const bar = process.stderr.isTTY
        ? new cliProgress.SingleBar({ stream: process.stderr, format: 'solving |{bar}| {value}/{total} solves, {eta_formatted} left', hideCursor: true, clearOnComplete: true }, cliProgress.Presets.shades_classic)
        : undefined;
      const start = performance.now();
      let started = false;
      let result;
      try {
        result = await runTolerance(chip, spec, {
          samples,
          seed,
          workers,
          scales,
          solveSamples: !o.firstOrderOnly,
          solver: { linear },
          onProgress: bar
            ? (done, total) => {
                if (!started) bar.start(total, done);
                else bar.update(done);
                started = true;
              }
            : undefined,
        });
      } finally {
        bar?.stop();
      }
      const seconds = (performance.now() - start) / 1000;

      if (result.sampled && result.solved === 0) {
        context.out(o.json ? JSON.stringify(result, jsonNumbers, 2) + '\n' : toleranceText(result, { workers, seconds }));
        throw noneSolved(result.notSolved, file);
      }
      const outputs: Output[] = [];
      if (csv) outputs.push({ path: csv, option: '--csv', content: toleranceCsv(result, result.contactors.map((c) => c.id)) });
      if (svg) for (const chart of toleranceCharts(result)) outputs.push({ path: join(svg, chart.name), option: '--svg', content: chart.svg });
      writeOutputs(outputs, svg ? [{ path: svg, option: '--svg' }] : []);
      context.out(o.json ? JSON.stringify(result, jsonNumbers, 2) + '\n' : toleranceText(result, { workers, seconds }));
    });
}

/**
 * `stratiflow design FILE`: change the widths and lengths of chosen segment groups (and, where
 * allowed, settings) so that every contactor gets an even share of each phase with every split
 * pinned inside a margin, within the fabrication rules; print what changed, the evenness and
 * margins before and after and the per-contactor flows (or JSON), and write the designed layout.
 * A design that falls short prints what binds, writes nothing and ends with exit status 3.
 * Exports `registerDesign`; the text is render/designText.ts, the search analyses/design.ts.
 */
import type { Command } from 'commander';
import { loadLayout, readLayoutText } from '../layout/load.js';
import { designChip, type DesignResult } from '../analyses/design.js';
import { DESIGN_DEFAULTS, designVariables, parseDesignVariable, type DesignSelector } from '../analyses/designSpec.js';
import type { Freedom } from '../analyses/tuneSpec.js';
import { editedLayoutText, type LayoutEdit } from '../layout/tunedLayout.js';
import { designHeader, designText } from '../render/designText.js';
import { parseQuantity } from '../units/quantity.js';
import { DISPLAY, fmt } from '../units/format.js';
import { collect, freedomOption, linearOption, numberOption, quantityOption, type LinearSolver } from './options.js';
import { besideLayout, outputFile, writeOutputs, type Output } from './io.js';
import { liveReport } from './pageScript.js';
import { chipReport } from '../render/report.js';
import { designCharts } from '../render/designCharts.js';
import { findManifolds } from '../analyses/manifolds.js';
import { jsonNumbers, type CommandContext } from './context.js';
import { StratiflowError, inFile, optionError } from '../errors.js';
import type { ChipSegment } from '../network/model.js';

interface DesignOptions {
  vary: string[];
  flowCv: string;
  margin: string;
  throughput?: string;
  ratio?: string;
  minWidth: string;
  maxWidth: string;
  maxLengthen: string;
  out?: string;
  report?: string;
  json?: boolean;
  linear: string;
}

/** `0.5%` or a plain fraction. */
function fractionOption(text: string, option: string): number {
  const t = text.trim();
  const value = t.endsWith('%') ? numberOption(t.slice(0, -1), option)! / 100 : numberOption(t, option)!;
  if (!(value > 0 && value < 1)) throw optionError(option, `${text} is not a share between 0 and 100 %`);
  return value;
}

/** `1Pa` (a pressure difference) or `20%` (a share of each split's window). */
function marginOption(text: string): { pressure?: number; fraction?: number } {
  if (text.trim().endsWith('%')) return { fraction: fractionOption(text, '--margin') };
  const pressure = quantityOption(text, '--margin', 'pressure');
  if (!(pressure >= 0)) throw optionError('--margin', 'a margin cannot be negative');
  return { pressure };
}

/** The layout key of a segment's width. */
function widthKey(segment: ChipSegment): string {
  switch (segment.section.shape) {
    case 'rect':
      return 'width';
    case 'tube':
      return 'diameter';
    case 'etched':
      return 'maskWidth';
    case 'trapezoid':
      return 'bottomWidth';
  }
}

function editsOf(result: DesignResult): LayoutEdit[] {
  const edits: LayoutEdit[] = [];
  for (const v of result.variables) {
    for (const size of v.sizes) {
      if (size.after === size.before) continue;
      const segment = result.before.chip.segments.find((s) => s.id === size.segment)!;
      const unit = v.variable.quantity === 'width' ? DISPLAY.length : DISPLAY.lengthMm;
      const key = v.variable.quantity === 'width' ? widthKey(segment) : 'length';
      const note = `designed: ${key} ${fmt(size.before * unit.factor, 5)} → ${fmt(size.after * unit.factor, 5)} ${unit.symbol === 'µm' ? 'um' : unit.symbol}`;
      edits.push({ segment: size.segment, key, metres: size.after, note });
    }
  }
  for (const s of result.settings) if (s.after !== s.before) edits.push({ setting: s.setting, value: s.after });
  return edits;
}

export function registerDesign(program: Command, context: CommandContext): void {
  program
    .command('design')
    .description('Size the manifolds, feeds and outlet arms of a chip for even flow: change the widths (or lengths) of chosen segment groups, within the fabrication rules, so that every contactor gets the same share of each phase with every split pinned inside a margin; writes the designed layout.')
    .argument('<layout>', 'layout file (YAML or JSON)')
    .option('--vary <what>', 'what may change (repeat): group.width (one factor for the group), group.widths (one per segment: a taper), group.length or group.lengths (meanders: only longer), group:A.… for one phase\'s segments, a segment id in place of a group; or a setting node.pressure / node.flow, optionally =from:to', collect, [])
    .option('--flow-cv <share>', 'evenness asked: coefficient of variation of each phase\'s flow per contactor', '1%')
    .option('--margin <Pa|share>', 'room every split keeps from both window limits: a pressure difference (0.5Pa) or a share of its window (10%)', '10%')
    .option('--throughput <flow>', 'total flow of A and B to hold (default: as the layout solves, when a setting varies)')
    .option('--ratio <A/B>', 'flow ratio A/B to hold (default: as the layout solves, when a setting varies)')
    .option('--min-width <length>', 'narrowest feature the fabrication holds (common practice default)', '10um')
    .option('--max-width <length>', 'widest channel allowed (common practice default)', '1mm')
    .option('--max-lengthen <factor>', 'longest a varied length may grow, as a multiple of its length as laid out', '10')
    .option('--out <file>', 'designed layout to write (default: beside the layout, with -designed in its name)')
    .option('--report <file>', 'also write an HTML report: the design, the chip before and after, flows and widths, and the live operating point of the designed chip')
    .option('--json', 'print one JSON object (SI units) instead of the tables')
    .addOption(linearOption())
    .action((file: string, o: DesignOptions) => {
      const chip = loadLayout(file);
      const selectors: DesignSelector[] = [];
      const settings: Freedom[] = [];
      for (const word of o.vary) {
        if (/\.(pressure|flow)(=|$)/.test(word)) settings.push(freedomOption(word, chip));
        else selectors.push(parseDesignVariable(word));
      }
      if (selectors.length === 0) throw optionError('--vary', 'say which segments may change: --vary feed.widths, --vary manifold:A.width, … (settings alone are what stratiflow tune is for)');
      const minWidth = quantityOption(o.minWidth, '--min-width', 'length');
      const maxWidth = quantityOption(o.maxWidth, '--max-width', 'length');
      if (!(minWidth > 0 && minWidth < maxWidth)) throw optionError('--min-width', 'the narrowest feature must be positive and below --max-width');
      const maxLengthFactor = numberOption(o.maxLengthen, '--max-lengthen')!;
      if (!(maxLengthFactor >= 1)) throw optionError('--max-lengthen', 'a factor of 1 or more');
      const rules = { ...DESIGN_DEFAULTS, minWidth, maxWidth, maxLengthFactor };
      const out = outputFile(o.out ?? besideLayout(file, 'designed'), '--out');
      const report = o.report === undefined ? undefined : outputFile(o.report, '--report');
      const result = inFile(file, () =>
        designChip(chip, {
          variables: designVariables(chip, selectors, rules),
          settings,
          flowCv: fractionOption(o.flowCv, '--flow-cv'),
          margin: marginOption(o.margin),
          throughput: o.throughput === undefined ? undefined : parseQuantity(o.throughput, 'flow', { field: '--throughput' }),
          ratio: o.ratio === undefined ? undefined : numberOption(o.ratio, '--ratio'),
          solver: { linear: o.linear as LinearSolver },
        }),
      );
      if (result.met) {
        const text = editedLayoutText(readLayoutText(file), out.endsWith('.json'), editsOf(result), designHeader(result));
        const files: Output[] = [{ path: out, option: '--out', content: text }];
        if (report) {
          const analysis = { title: 'Design', text: designText(result, out), charts: designCharts(result), note: `The chip below is the designed layout ${out}; its live operating point starts at the designed settings.` };
          files.push({ path: report, option: '--report', content: chipReport(result.after, findManifolds(result.after), { analysis, live: liveReport({ text, source: out }, result.after.result) }) });
        }
        writeOutputs(files);
      }
      if (o.json) {
        const { before, after, chip: _designed, ...rest } = result;
        context.out(JSON.stringify({ layout: file, written: result.met ? out : null, ...rest, before: before.result.summary, result: after.result }, jsonNumbers, 2) + '\n');
      } else {
        context.out(designText(result, result.met ? out : undefined));
      }
      if (!result.met) throw new StratiflowError('infeasible', `no design meets the targets: ${result.binding[0] ?? 'no step improves the design further'}`, { file });
    });
}

/**
 * `stratiflow section`: one cross-section with two layers. Options → SectionQuery → analyseSection
 * → text or JSON; optional charts.
 */
import { StratiflowError } from '../errors.js';
import type { Command } from 'commander';
import { analyseSection, type SectionSummary } from '../analyses/section.js';
import type { RectSection } from '../physics/section.js';
import { DISPLAY, fmt, show } from '../units/format.js';
import { numberOption, quantityOption, choice } from './options.js';
import type { CommandContext } from './context.js';
import { outputFile, writeOutputs, type Output } from './io.js';
import { flowFractionChart, velocityFieldChart } from '../render/sectionCharts.js';
import { flowFractionCurves, sectionVelocity } from '../analyses/sectionCurves.js';

interface SectionOptions {
  width?: string;
  depth?: string;
  muA?: string;
  muB?: string;
  holdup?: string;
  flowFraction?: string;
  flow?: string;
  orientation: string;
  json?: boolean;
  plot?: string;
  field?: string;
}

/** The option that sets each field of the section query, for the library's messages. */
const OPTION_OF: Record<string, string> = {
  width: '--width',
  depth: '--depth',
  muA: '--mu-a',
  muB: '--mu-b',
  holdup: '--holdup',
  flowFraction: '--flow-fraction',
  totalFlow: '--flow',
};

export function registerSection(program: Command, context: CommandContext): void {
  program
    .command('section')
    .description('Two liquids side by side (or stacked) in one rectangular channel: holdup, flow fraction, velocities.')
    .option('--width <length>', 'channel width, e.g. 200um')
    .option('--depth <length>', 'channel depth, e.g. 50um')
    .option('--mu-a <viscosity>', 'viscosity of phase A, e.g. 6.5mPa.s')
    .option('--mu-b <viscosity>', 'viscosity of phase B, e.g. 1.9mPa.s')
    .option('--holdup <fraction>', 'fraction of the width (side) or depth (stacked) filled by phase A')
    .option('--flow-fraction <fraction>', 'fraction of the total flow that is phase A')
    .option('--flow <flow>', 'total flow of both phases, e.g. 10uL/min (gives absolute velocities)')
    .addOption(choice('--orientation <side|stacked>', 'layers side by side across the width, or one above the other', ['side', 'stacked'], 'side'))
    .option('--json', 'print one JSON object in SI units')
    .option('--plot <file.svg>', 'write a chart of flow fraction against holdup')
    .option('--field <file.svg>', 'write a map of the velocity over the cross-section')
    .action((options: SectionOptions) => {
      const plot = options.plot === undefined ? undefined : outputFile(options.plot, '--plot');
      const field = options.field === undefined ? undefined : outputFile(options.field, '--field');
      const section: RectSection = {
        shape: 'rect',
        width: quantityOption(options.width, '--width', 'length'),
        depth: quantityOption(options.depth, '--depth', 'length'),
        orientation: options.orientation as 'side' | 'stacked',
      };
      const query = {
        section,
        muA: quantityOption(options.muA, '--mu-a', 'viscosity'),
        muB: quantityOption(options.muB, '--mu-b', 'viscosity'),
        holdup: numberOption(options.holdup, '--holdup', true),
        flowFraction: numberOption(options.flowFraction, '--flow-fraction', true),
        totalFlow: quantityOption(options.flow, '--flow', 'flow', true),
      };
      let summary: SectionSummary;
      try {
        summary = analyseSection(query);
      } catch (error) {
        const flag = error instanceof StratiflowError && error.place.field ? OPTION_OF[error.place.field] : undefined;
        if (flag && error instanceof StratiflowError) throw new StratiflowError(error.code, error.message.replace('the holdup and the flow fraction', '--holdup and --flow-fraction'), { field: flag });
        throw error;
      }
      const outputs: Output[] = [];
      if (plot) outputs.push({ path: plot, option: '--plot', content: flowFractionChart(flowFractionCurves(section, query.muA, query.muB, summary.holdup)) });
      if (field) outputs.push({ path: field, option: '--field', content: velocityFieldChart(sectionVelocity(section, query.muA, query.muB, summary.holdup)) });
      writeOutputs(outputs);
      context.out(options.json ? JSON.stringify(summary, null, 2) + '\n' : describeSection(section, summary));
    });
}

function describeSection(section: RectSection, s: SectionSummary): string {
  const lines = [
    `cross-section ${show(section.width, DISPLAY.length)} wide × ${show(section.depth, DISPLAY.length)} deep, layers ${section.orientation === 'side' ? 'side by side' : 'stacked'}`,
    `  viscosity ratio μA/μB     ${fmt(s.viscosityRatio)}`,
    `  holdup of A               ${fmt(s.holdup, 8)}`,
    `  flow fraction of A        ${fmt(s.flowFraction, 8)}`,
    `  dα/dφ                     ${fmt(s.dHoldupDFlowFraction)}`,
    `  resistance per length     ${fmt(s.resistancePerLength)} Pa·s/m⁴`,
  ];
  if (s.velocityPerGradient) {
    lines.push(`  mean velocity A, B        ${fmt(s.meanVelocity.a)}, ${fmt(s.meanVelocity.b)} m²/(Pa·s) per unit pressure gradient`);
    lines.push(`  velocity maximum          ${fmt(s.maximum.u)} m²/(Pa·s) in phase ${s.maximum.phase}`);
  } else {
    lines.push(`  pressure gradient         ${show(s.gradient!, { symbol: 'kPa/mm', factor: 1e-6 })}`);
    lines.push(`  mean velocity A, B        ${show(s.meanVelocity.a, DISPLAY.velocity)}, ${show(s.meanVelocity.b, DISPLAY.velocity)}`);
    lines.push(`  velocity maximum          ${show(s.maximum.u, DISPLAY.velocity)} in phase ${s.maximum.phase}`);
  }
  lines.push(`  velocity maximum lies at  y = ${show(s.maximum.y, DISPLAY.length)}, z = ${show(s.maximum.z, DISPLAY.length)}`);
  return lines.join('\n') + '\n';
}

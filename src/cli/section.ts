/**
 * `stratiflow section`: one cross-section with two layers (a rectangle, or an etched or
 * trapezoidal channel). Options → SectionQuery → analyseSection → text or JSON; optional charts.
 */
import { StratiflowError } from '../errors.js';
import type { Command } from 'commander';
import { analyseSection, type SectionSummary } from '../analyses/section.js';
import type { TwoLayerSection } from '../physics/section.js';
import { SILICON_WALL_ANGLE } from '../physics/shapedSection.js';
import { RIGHT_ANGLE_ROUNDING } from '../layout/plausibility.js';
import { DISPLAY, fmt, show } from '../units/format.js';
import { numberOption, quantityOption, choice } from './options.js';
import type { CommandContext } from './context.js';
import { outputFile, writeOutputs, type Output } from './io.js';
import { flowFractionChart, velocityFieldChart } from '../render/sectionCharts.js';
import { flowFractionCurves, sectionVelocity } from '../analyses/sectionCurves.js';

interface SectionOptions {
  shape: string;
  width?: string;
  maskWidth?: string;
  bottomWidth?: string;
  wallAngle?: string;
  depth?: string;
  muA?: string;
  muB?: string;
  holdup?: string;
  flowFraction?: string;
  flow?: string;
  delta?: string;
  tension?: string;
  orientation: string;
  json?: boolean;
  plot?: string;
  field?: string;
}

/** The option that sets each field of the section query, for the library's messages. */
const OPTION_OF: Record<string, string> = {
  width: '--width',
  maskWidth: '--mask-width',
  bottomWidth: '--bottom-width',
  wallAngle: '--wall-angle',
  depth: '--depth',
  muA: '--mu-a',
  muB: '--mu-b',
  holdup: '--holdup',
  flowFraction: '--flow-fraction',
  totalFlow: '--flow',
  delta: '--delta',
  tension: '--tension',
};

export function registerSection(program: Command, context: CommandContext): void {
  program
    .command('section')
    .description('Two liquids side by side (or stacked) in one channel cross-section: holdup, flow fraction, velocities.')
    .addOption(choice('--shape <rect|etched|trapezoid>', 'rectangle, wet-etched (flat bottom, quarter-round walls) or trapezoid', ['rect', 'etched', 'trapezoid'], 'rect'))
    .option('--width <length>', 'rect: channel width, e.g. 200um')
    .option('--depth <length>', 'channel depth, e.g. 50um (etched: also the radius of the round walls)')
    .option('--mask-width <length>', 'etched: width of the mask opening (the flat bottom), e.g. 100um; 0 for a half-disc')
    .option('--bottom-width <length>', 'trapezoid: width of the flat bottom, e.g. 60um')
    .option('--wall-angle <angle>', 'trapezoid: angle between wall and bottom, e.g. 60deg (a plain number is in degrees; default 54.74)')
    .option('--mu-a <viscosity>', 'viscosity of phase A, e.g. 6.5mPa.s')
    .option('--mu-b <viscosity>', 'viscosity of phase B, e.g. 1.9mPa.s')
    .option('--holdup <fraction>', 'fraction of the width (side) or depth (stacked) filled by phase A')
    .option('--flow-fraction <fraction>', 'fraction of the total flow that is phase A')
    .option('--flow <flow>', 'total flow of both phases, e.g. 10uL/min (gives absolute velocities)')
    .option('--delta <pressure>', 'p_B − p_A across the interface, e.g. 3Pa: the interface becomes the Young–Laplace arc of curvature Δ/γ (side by side only; needs --tension)')
    .option('--tension <tension>', 'interfacial tension, e.g. 0.1mN/m (with --delta)')
    .addOption(choice('--orientation <side|stacked>', 'layers side by side across the width, or one above the other', ['side', 'stacked'], 'side'))
    .option('--json', 'print one JSON object in SI units')
    .option('--plot <file.svg>', 'write a chart of flow fraction against holdup')
    .option('--field <file.svg>', 'write a map of the velocity over the cross-section')
    .action((options: SectionOptions) => {
      const plot = options.plot === undefined ? undefined : outputFile(options.plot, '--plot');
      const field = options.field === undefined ? undefined : outputFile(options.field, '--field');
      const section = sectionOf(options);
      const query = {
        section,
        muA: quantityOption(options.muA, '--mu-a', 'viscosity'),
        muB: quantityOption(options.muB, '--mu-b', 'viscosity'),
        holdup: numberOption(options.holdup, '--holdup', true),
        flowFraction: numberOption(options.flowFraction, '--flow-fraction', true),
        totalFlow: quantityOption(options.flow, '--flow', 'flow', true),
        delta: quantityOption(options.delta, '--delta', 'pressure', true),
        tension: quantityOption(options.tension, '--tension', 'tension', true),
      };
      if (query.delta !== undefined && field) {
        throw new StratiflowError('bad-option', 'the velocity map draws the flat interface only; leave out --delta to draw it', { field: '--field' });
      }
      let summary: SectionSummary;
      try {
        summary = analyseSection(query);
      } catch (error) {
        const flag = error instanceof StratiflowError && error.place.field ? OPTION_OF[error.place.field] : undefined;
        if (flag && error instanceof StratiflowError) throw new StratiflowError(error.code, error.message.replace('the holdup and the flow fraction', '--holdup and --flow-fraction'), { field: flag });
        throw error;
      }
      const outputs: Output[] = [];
      if (plot) outputs.push({ path: plot, option: '--plot', content: flowFractionChart(flowFractionCurves(section, query.muA, query.muB, summary.holdup, summary.curvedInterface?.curvature)) });
      if (field) outputs.push({ path: field, option: '--field', content: velocityFieldChart(sectionVelocity(section, query.muA, query.muB, summary.holdup)) });
      writeOutputs(outputs);
      context.out(options.json ? JSON.stringify(summary, null, 2) + '\n' : describeSection(section, summary));
    });
}

/** The options each shape takes, beside --depth (and --orientation for a rectangle). */
const SHAPE_OPTIONS = {
  rect: ['width'],
  etched: ['maskWidth'],
  trapezoid: ['bottomWidth', 'wallAngle'],
} as const;

function sectionOf(options: SectionOptions): TwoLayerSection {
  const shape = options.shape as keyof typeof SHAPE_OPTIONS;
  for (const key of ['width', 'maskWidth', 'bottomWidth', 'wallAngle'] as const) {
    if (options[key] !== undefined && !(SHAPE_OPTIONS[shape] as readonly string[]).includes(key)) {
      throw new StratiflowError('bad-option', `is not an option of --shape ${shape} (it takes ${[...SHAPE_OPTIONS[shape].map((k) => OPTION_OF[k]), '--depth'].join(', ')})`, { field: OPTION_OF[key] });
    }
  }
  const depth = quantityOption(options.depth, '--depth', 'length');
  if (shape === 'rect') return { shape, width: quantityOption(options.width, '--width', 'length'), depth, orientation: options.orientation as 'side' | 'stacked' };
  if (options.orientation !== 'side') throw new StratiflowError('bad-option', `layers in --shape ${shape} lie side by side only`, { field: '--orientation' });
  if (shape === 'etched') return { shape, maskWidth: quantityOption(options.maskWidth, '--mask-width', 'length'), depth };
  // A plain number is in degrees, as in layout files.
  const angle = options.wallAngle !== undefined && /^\s*[-+]?[\d.]+(e[-+]?\d+)?\s*$/i.test(options.wallAngle) ? `${options.wallAngle} deg` : options.wallAngle;
  const read = quantityOption(angle, '--wall-angle', 'angle', true) ?? SILICON_WALL_ANGLE;
  // 90° converted from degrees may land an ulp above π/2.
  const wallAngle = Math.abs(read - Math.PI / 2) <= RIGHT_ANGLE_ROUNDING ? Math.PI / 2 : read;
  return { shape, bottomWidth: quantityOption(options.bottomWidth, '--bottom-width', 'length'), depth, wallAngle };
}

function sectionLine(section: TwoLayerSection): string {
  const length = (v: number) => show(v, DISPLAY.length);
  switch (section.shape) {
    case 'rect':
      return `cross-section ${length(section.width)} wide × ${length(section.depth)} deep, layers ${section.orientation === 'side' ? 'side by side' : 'stacked'}`;
    case 'etched':
      return `etched cross-section, mask opening ${length(section.maskWidth)}, ${length(section.depth)} deep (top ${length(section.maskWidth + 2 * section.depth)}), layers side by side`;
    case 'trapezoid':
      return `trapezoidal cross-section, bottom ${length(section.bottomWidth)}, ${length(section.depth)} deep, walls at ${fmt((section.wallAngle * 180) / Math.PI, 4)}°, layers side by side`;
  }
}

function describeSection(section: TwoLayerSection, s: SectionSummary): string {
  const lines = [
    sectionLine(section),
    `  viscosity ratio μA/μB     ${fmt(s.viscosityRatio)}`,
    `  holdup of A               ${fmt(s.holdup, 8)}`,
    `  flow fraction of A        ${fmt(s.flowFraction, 8)}`,
    `  dα/dφ                     ${fmt(s.dHoldupDFlowFraction)}`,
    `  interface spans           ${show(s.interfaceSpan, DISPLAY.length)}`,
    `  resistance per length     ${fmt(s.resistancePerLength)} Pa·s/m⁴`,
  ];
  const m = s.maximum;
  if (s.velocityPerGradient) {
    lines.push(`  mean velocity A, B        ${fmt(s.meanVelocity.a)}, ${fmt(s.meanVelocity.b)} m²/(Pa·s) per unit pressure gradient`);
    if (m) lines.push(`  velocity maximum          ${fmt(m.u)} m²/(Pa·s) in phase ${m.phase}`);
  } else {
    lines.push(`  pressure gradient         ${show(s.gradient!, { symbol: 'kPa/mm', factor: 1e-6 })}`);
    lines.push(`  mean velocity A, B        ${show(s.meanVelocity.a, DISPLAY.velocity)}, ${show(s.meanVelocity.b, DISPLAY.velocity)}`);
    if (m) lines.push(`  velocity maximum          ${show(m.u, DISPLAY.velocity)} in phase ${m.phase}`);
  }
  if (m) lines.push(`  velocity maximum lies at  y = ${show(m.y, DISPLAY.length)}, z = ${show(m.z, DISPLAY.length)}`);
  const c = s.curvedInterface;
  if (c) {
    lines.push(`  curved interface          Δ = ${fmt(c.delta)} Pa, γ = ${fmt(c.tension * 1000)} mN/m: arc of curvature ${fmt(c.curvature / 1000)} 1/mm (κ·depth/2 = ${fmt(c.dimensionless, 4)}), bulging into ${c.curvature > 0 ? 'A' : c.curvature < 0 ? 'B' : 'neither phase'}`);
    lines.push(c.given === 'flowFraction' ? `  flat interface holdup     ${fmt(c.flatHoldup, 8)} (shift ${fmt(c.shift, 4)})` : `  flat interface fraction   ${fmt(c.flatFlowFraction, 8)} (shift ${fmt(c.shift, 4)})`);
  }
  return lines.join('\n') + '\n';
}

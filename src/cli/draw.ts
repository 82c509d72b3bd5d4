/**
 * `stratiflow draw FILE`: solve the chip and write only its plan-view drawing (SVG).
 * Options → a typed config → solveChip → chipDrawing → one file. A solve that does not converge
 * draws nothing and ends with exit status 4.
 */
import { basename, extname } from 'node:path';
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip } from '../analyses/chip.js';
import { chipDrawing, type ChipDrawingOptions } from '../render/chipDrawing.js';
import { numberOption, choice } from './options.js';
import { outputFile, writeOutputs } from './io.js';
import { unconverged } from './solve.js';
import type { CommandContext } from './context.js';
import { optionError } from '../errors.js';

interface DrawOptions {
  out?: string;
  colourBy: string;
  widthScale?: string;
}

export function registerDraw(program: Command, context: CommandContext): void {
  program
    .command('draw')
    .description('Solve the chip and write its plan-view drawing: interfaces, flow directions, outlet split states (SVG).')
    .argument('<layout>', 'layout file (YAML or JSON)')
    .option('--out <file>', 'SVG file to write (default: the layout name with .svg, in the current directory)')
    .addOption(choice('--colour-by <phase|pressure>', 'colour single-phase channels by phase or by pressure', ['phase', 'pressure'], 'phase'))
    .option('--width-scale <n>', 'draw channel widths n times wider than the length scale (default: automatic)')
    .action((file: string, options: DrawOptions) => {
      const config: ChipDrawingOptions = {
        colourBy: options.colourBy as 'phase' | 'pressure',
        widthScale: numberOption(options.widthScale, '--width-scale', true),
      };
      if (config.widthScale !== undefined && !(config.widthScale > 0)) throw optionError('--width-scale', 'must be positive');
      const chip = loadLayout(file);
      const out = outputFile(options.out ?? `${basename(file, extname(file))}.svg`, '--out');
      const solved = solveChip(chip);
      if (!solved.result.converged) throw unconverged(solved.result.message, file, true);
      writeOutputs([{ path: out, option: '--out', content: chipDrawing(solved, config) }]);
      context.out(`wrote ${out}\n`);
    });
}

/**
 * `stratiflow draw FILE`: solve the chip and write only its plan-view drawing (SVG).
 * Options → a typed config → solveChip → chipDrawing → one file.
 */
import { basename, extname } from 'node:path';
import type { Command } from 'commander';
import { loadLayout } from '../layout/load.js';
import { solveChip } from '../analyses/chip.js';
import { chipDrawing, type ChipDrawingOptions } from '../render/chipDrawing.js';
import { choiceOption, numberOption } from './options.js';
import { writeFileAtomic } from './io.js';
import type { CommandContext } from './main.js';
import { StratiflowError, optionError } from '../errors.js';

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
    .option('--colour-by <phase|pressure>', 'colour single-phase channels by phase or by pressure', 'phase')
    .option('--width-scale <n>', 'draw channel widths n times wider than the length scale (default: automatic)')
    .action((file: string, options: DrawOptions) => {
      const config: ChipDrawingOptions = {
        colourBy: choiceOption(options.colourBy, '--colour-by', ['phase', 'pressure'] as const),
        widthScale: numberOption(options.widthScale, '--width-scale', true),
      };
      if (config.widthScale !== undefined && !(config.widthScale > 0)) throw optionError('--width-scale', 'must be positive');
      const out = options.out ?? `${basename(file, extname(file))}.svg`;
      const chip = loadLayout(file);
      const solved = solveChip(chip);
      writeFileAtomic(out, chipDrawing(solved, config));
      context.out(`wrote ${out}\n`);
      if (!solved.result.converged) throw new StratiflowError('no-convergence', solved.result.message ?? 'the solve did not converge', { file });
    });
}

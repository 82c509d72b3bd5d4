/**
 * `stratiflow fluids`: list the built-in liquid table with sources.
 */
import type { Command } from 'commander';
import { FLUIDS } from '../physics/fluids.js';
import { fluidsText } from '../render/fluidsText.js';
import type { CommandContext } from './context.js';

export function registerFluids(program: Command, context: CommandContext): void {
  program
    .command('fluids')
    .description('List the built-in liquids (viscosity, density, tension against water) with sources.')
    .option('--json', 'print JSON in SI units')
    .action((options: { json?: boolean }) => {
      if (options.json) return context.out(JSON.stringify(FLUIDS, null, 2) + '\n');
      context.out(fluidsText(FLUIDS));
    });
}

/**
 * `stratiflow fluids`: list the built-in liquid table with sources.
 */
import type { Command } from 'commander';
import { FLUIDS } from '../physics/fluids.js';
import { textTable } from '../render/text.js';
import { fmt } from '../units/format.js';
import type { CommandContext } from './context.js';

export function registerFluids(program: Command, context: CommandContext): void {
  program
    .command('fluids')
    .description('List the built-in liquids (viscosity, density, tension against water) with sources.')
    .option('--json', 'print JSON in SI units')
    .action((options: { json?: boolean }) => {
      if (options.json) return context.out(JSON.stringify(FLUIDS, null, 2) + '\n');
      const rows = FLUIDS.map((f) => [f.id, f.label, `${f.temperatureC}`, fmt(f.viscosity * 1e3), fmt(f.density), f.tensionAgainstWater ? fmt(f.tensionAgainstWater * 1e3) : '–', f.source]);
      context.out(textTable(['id', 'liquid', '°C', 'mPa·s', 'kg/m³', 'mN/m vs water', 'source'], rows) + '\n');
    });
}

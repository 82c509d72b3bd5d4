/**
 * `stratiflow window`: placeholder registration; the command is being built.
 */
import type { Command } from 'commander';
import type { CommandContext } from './main.js';
import { StratiflowError } from '../errors.js';

export function registerWindow(program: Command, _context: CommandContext): void {
  program
    .command('window')
    .description('(not yet available)')
    .allowUnknownOption()
    .action(() => {
      throw new StratiflowError('bad-option', 'this command is not available yet');
    });
}

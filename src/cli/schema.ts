/**
 * `stratiflow schema`: print the JSON Schema of layout files, for editors.
 */
import type { Command } from 'commander';
import { layoutJsonSchema } from '../layout/schema.js';
import type { CommandContext } from './context.js';

export function registerSchema(program: Command, context: CommandContext): void {
  program
    .command('schema')
    .description('Print the JSON Schema of layout files.')
    .action(() => context.out(JSON.stringify(layoutJsonSchema(), null, 2) + '\n'));
}

/**
 * The stratiflow command line: builds the commander program from one module per command and
 * turns known errors into one line and an exit status. Exports `main(argv)` → exit status.
 */
import { Command, CommanderError } from 'commander';
import { readFileSync } from 'node:fs';
import { StratiflowError } from '../errors.js';
import type { CommandContext, Registrar } from './context.js';
import { registerSection } from './section.js';
import { registerSolve } from './solve.js';
import { registerSchema } from './schema.js';
import { registerFluids } from './fluids.js';
import { registerMake } from './make.js';
import { registerDraw } from './draw.js';
import { registerWindow } from './window.js';
import { registerTune } from './tune.js';
import { registerTolerance } from './tolerance.js';
import { registerExtract } from './extract.js';


/** The version users see, from package.json (the one place it is set). */
const VERSION = (JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string }).version;

const COMMANDS: Registrar[] = [
  registerSection,
  registerSolve,
  registerDraw,
  registerWindow,
  registerTune,
  registerTolerance,
  registerExtract,
  registerMake,
  registerSchema,
  registerFluids,
];

export function buildProgram(context: CommandContext): Command {
  const program = new Command('stratiflow')
    .description('Two-phase stratified flow in parallel microfluidic extraction chips.')
    .version(VERSION)
    .showHelpAfterError(false)
    .exitOverride()
    .configureOutput({
      writeOut: (s) => context.out(s),
      writeErr: (s) => context.err(s),
      outputError: (s, write) => write(s.replace(/^error: /, 'stratiflow: ')),
    });
  for (const register of COMMANDS) register(program, context);
  return program;
}

export async function main(argv: string[], context: CommandContext = defaultContext()): Promise<number> {
  const program = buildProgram(context);
  try {
    await program.parseAsync(argv);
    return 0;
  } catch (error) {
    if (error instanceof CommanderError) {
      if (error.code === 'commander.helpDisplayed' || error.code === 'commander.version' || error.exitCode === 0) return 0;
      return 2;
    }
    if (error instanceof StratiflowError) {
      context.err(error.format().split('\n').map((line) => `stratiflow: ${line}\n`).join(''));
      return error.exitStatus;
    }
    const message = error instanceof Error ? error.message : String(error);
    context.err(`stratiflow: internal error: ${message}\n`);
    return 70;
  }
}

/**
 * The process's own streams. A reader that stops early (`stratiflow solve … | head`) closes the
 * pipe: the command then ends at once and quietly, with status 0, as text filters do.
 */
function defaultContext(): CommandContext {
  for (const stream of [process.stdout, process.stderr]) {
    stream.on('error', (error: NodeJS.ErrnoException) => {
      if (error.code !== 'EPIPE') throw error;
      process.exit(0);
    });
  }
  return { out: (s) => process.stdout.write(s), err: (s) => process.stderr.write(s) };
}

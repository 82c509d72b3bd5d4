/**
 * The stratiflow command line: builds the commander program from one module per command and
 * turns known errors into one line and an exit status. Exports `main(argv)` → exit status.
 */
import { Command, CommanderError } from 'commander';
import { readFileSync } from 'node:fs';
import { StratiflowError } from '../errors.js';
import type { CommandContext, Registrar } from './context.js';


/** The version users see, from package.json (the one place it is set). */
const VERSION = (JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string }).version;

/**
 * Each command's module, loaded only when it is needed: a command line that names one command
 * loads that command's module alone, since the modules of the others (their renderers, the
 * optimiser, the schema generator) take several tenths of a second to load. Help, a version
 * request or an unknown command loads them all, in this order (the order help lists them).
 */
const COMMANDS: Record<string, () => Promise<Registrar>> = {
  section: async () => (await import('./section.js')).registerSection,
  solve: async () => (await import('./solve.js')).registerSolve,
  draw: async () => (await import('./draw.js')).registerDraw,
  window: async () => (await import('./window.js')).registerWindow,
  tune: async () => (await import('./tune.js')).registerTune,
  design: async () => (await import('./design.js')).registerDesign,
  tolerance: async () => (await import('./tolerance.js')).registerTolerance,
  extract: async () => (await import('./extract.js')).registerExtract,
  make: async () => (await import('./make.js')).registerMake,
  schema: async () => (await import('./schema.js')).registerSchema,
  fluids: async () => (await import('./fluids.js')).registerFluids,
};

/** The command that `argv` (node, script, arguments…) runs, when its first argument names one. */
function namedCommand(argv: string[]): string | undefined {
  const first = argv[2];
  return first !== undefined && Object.hasOwn(COMMANDS, first) ? first : undefined;
}

/** The program with every command, or with `only` the one named. */
export async function buildProgram(context: CommandContext, only?: string): Promise<Command> {
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
  const names = only === undefined ? Object.keys(COMMANDS) : [only];
  const registrars = await Promise.all(names.map((name) => COMMANDS[name]!()));
  for (const register of registrars) register(program, context);
  return program;
}

export async function main(argv: string[], context: CommandContext = defaultContext()): Promise<number> {
  const program = await buildProgram(context, namedCommand(argv));
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

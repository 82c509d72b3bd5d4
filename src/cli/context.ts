/**
 * What every command module shares: where it writes (`CommandContext`, replaceable in tests),
 * how it registers itself (`Registrar`), and how numbers go into JSON (`jsonNumbers`, from
 * ../units/format.ts, which the live report shares). Kept apart
 * from main.ts so that command modules do not import the module that imports them.
 */
import type { Command } from 'commander';

export interface CommandContext {
  /** Standard output and error writers, replaceable in tests. */
  out: (text: string) => void;
  err: (text: string) => void;
}

export type Registrar = (program: Command, context: CommandContext) => void;

export { jsonNumbers } from '../units/format.js';

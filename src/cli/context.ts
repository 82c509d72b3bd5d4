/**
 * What every command module shares: where it writes (`CommandContext`, replaceable in tests),
 * how it registers itself (`Registrar`), and how numbers go into JSON (`jsonNumbers`). Kept apart
 * from main.ts so that command modules do not import the module that imports them.
 */
import type { Command } from 'commander';

export interface CommandContext {
  /** Standard output and error writers, replaceable in tests. */
  out: (text: string) => void;
  err: (text: string) => void;
}

export type Registrar = (program: Command, context: CommandContext) => void;

/** JSON has no Infinity or NaN: such values become null. */
export function jsonNumbers(_key: string, value: unknown): unknown {
  return typeof value === 'number' && !Number.isFinite(value) ? null : value;
}

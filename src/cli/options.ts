/**
 * Reading command-line values: quantities with units, numbers in a range, choices. Every failure
 * names the option. Exports `quantityOption`, `numberOption`, `wholeNumberOption`, `choice`,
 * `linearOption`, `settingOption`, `freedomOption`, `collect` and `MAX_WORKERS`.
 */
import { Option } from 'commander';
import { parseQuantity, parseRange, type Dimension } from '../units/quantity.js';
import { StratiflowError, optionError } from '../errors.js';
import { parseSetting, type Setting } from '../analyses/settings.js';
import type { Chip } from '../network/model.js';
import type { Freedom } from '../analyses/tuneSpec.js';

export function quantityOption(value: unknown, option: string, dimension: Dimension): number;
export function quantityOption(value: unknown, option: string, dimension: Dimension, optional: true): number | undefined;
export function quantityOption(value: unknown, option: string, dimension: Dimension, optional = false): number | undefined {
  if (value === undefined) {
    if (optional) return undefined;
    throw optionError(option, 'is required');
  }
  return parseQuantity(value, dimension, { field: option });
}

export function numberOption(value: unknown, option: string, optional = false): number | undefined {
  if (value === undefined) {
    if (optional) return undefined;
    throw optionError(option, 'is required');
  }
  const n = Number(value);
  if (typeof value !== 'string' || value.trim() === '' || !Number.isFinite(n)) throw optionError(option, `"${String(value)}" is not a number`);
  return n;
}

/** At most this many worker threads: far more than the cores of any workstation. */
export const MAX_WORKERS = 256;

/**
 * A whole number from `min` to `max`, or undefined when the option is not given. Every count a
 * command takes (samples, steps, workers, contactors, …) is read here, so that an absurd count
 * ends with one line naming the option instead of running out of memory.
 */
export function wholeNumberOption(value: unknown, option: string, min: number, max: number): number | undefined {
  if (value === undefined) return undefined;
  const n = numberOption(value, option)!;
  if (!Number.isInteger(n) || n < min || n > max) throw optionError(option, `"${String(value)}" is not allowed: give a whole number from ${min} to ${max}`);
  return n;
}

/**
 * An option with a fixed set of values, which commander checks itself (Option.choices): a value
 * outside the set ends with one line naming the option and the allowed values, exit 2.
 */
export function choice(flags: string, description: string, values: readonly string[], fallback?: string): Option {
  const option = new Option(flags, description).choices(values);
  return fallback === undefined ? option : option.default(fallback);
}

/** `--linear`: the linear solver inside Newton's method, the same option in every solving command. */
export function linearOption(): Option {
  return choice('--linear <sparse|dense>', 'linear solver inside Newton', ['sparse', 'dense'], 'sparse');
}

export type LinearSolver = 'sparse' | 'dense';

/** A setting of the chip, `node.pressure` or `node.flow`; a bad one ends with one line naming the option. */
export function settingOption(text: string, option: string, chip: Chip): Setting {
  try {
    return parseSetting(text, chip);
  } catch (error) {
    if (error instanceof StratiflowError) throw optionError(option, error.message);
    throw error;
  }
}

/** commander's collector for an option that may be repeated. */
export function collect(value: string, previous: string[]): string[] {
  return [...previous, value];
}

/** `node.quantity` or `node.quantity=from:to` (the unit of the second end applying to both): a setting that may vary. */
export function freedomOption(text: string, chip: Chip): Freedom {
  const [name, range] = text.split('=');
  const setting = settingOption(name!, '--vary', chip);
  if (range === undefined) return { setting };
  return { setting, bounds: parseRange(range, setting.quantity === 'pressure' ? 'pressure' : 'flow', { field: '--vary' }) };
}

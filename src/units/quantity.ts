/**
 * Parsing of quantities with units at the edges of the program (layout files, command-line flags).
 * Exports `parseQuantity` and the `Dimension` names; returns SI numbers. Formatting for reports
 * lives in ./format.ts. Nothing inside the physics or the solver ever sees a unit string.
 *
 * Unit arithmetic is done by js-quantities; this module only normalises the spellings that
 * engineers write (µm, mPa.s, mPa·s, m3/s) and checks the dimension.
 */
import Qty from 'js-quantities';
import { StratiflowError, type ErrorPlace } from '../errors.js';

export type Dimension =
  | 'length'
  | 'flow'
  | 'pressure'
  | 'viscosity'
  | 'tension'
  | 'angle'
  | 'density'
  | 'diffusivity'
  | 'concentration'
  | 'dimensionless';

/** A reference quantity of each dimension, in the SI unit that the number form is read in. */
const SI_REFERENCE: Record<Exclude<Dimension, 'dimensionless' | 'angle'>, string> = {
  length: 'm',
  flow: 'm^3/s',
  pressure: 'Pa',
  viscosity: 'Pa*s',
  tension: 'N/m',
  density: 'kg/m^3',
  diffusivity: 'm^2/s',
  concentration: 'mol/m^3',
};

const EXAMPLES: Record<Dimension, string> = {
  length: 'um, mm, m',
  flow: 'uL/min, mL/h, m3/s',
  pressure: 'Pa, kPa, mbar, bar, psi',
  viscosity: 'mPa.s, cP, Pa.s',
  tension: 'mN/m, N/m',
  angle: 'deg, rad',
  density: 'kg/m3, g/cm3',
  diffusivity: 'm2/s, um2/s',
  concentration: 'mol/m3, mM, g/L',
  dimensionless: 'a plain number',
};

/** Rewrites the spellings js-quantities does not read: a dot or middle dot between units, µ, m3. */
function normalise(text: string): string {
  return text
    .trim()
    .replace(/(?<=[A-Za-zµμ])\s*[.·⋅]\s*(?=[A-Za-z])/g, '*')
    .replace(/[µμ]/g, 'u')
    .replace(/(?<=[A-Za-z])([23])(?![\d.])/g, '^$1')
    .replace(/\bmM\b/g, 'mmol/L')
    .replace(/\bM\b/g, 'mol/L');
}

/**
 * Reads a number (already SI) or a string with a unit and returns the SI value.
 * Angles are returned in radians; a plain number for an angle is taken as degrees only when
 * `angleNumbersInDegrees` is set (layout files write angles like 75 deg).
 */
export function parseQuantity(
  value: unknown,
  dimension: Dimension,
  place: ErrorPlace = {},
  options: { angleNumbersInDegrees?: boolean } = {},
): number {
  const fail = (message: string) => new StratiflowError('bad-unit', message, place);
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw fail(`${value} is not a finite number`);
    if (dimension === 'angle' && options.angleNumbersInDegrees) return (value * Math.PI) / 180;
    return value;
  }
  if (typeof value !== 'string' || value.trim() === '') {
    throw fail(`expected a number or a quantity such as "${exampleOf(dimension)}"`);
  }
  const text = value.trim();
  if (/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text)) {
    return parseQuantity(Number(text), dimension, place, options);
  }
  if (dimension === 'dimensionless') {
    const percent = /^([-+]?[\d.eE+-]+)\s*%$/.exec(text);
    if (percent && Number.isFinite(Number(percent[1]))) return Number(percent[1]) / 100;
    throw fail(`"${text}" is not a plain number`);
  }
  const leading = /^[-+]?(Infinity|NaN|(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?)/.exec(text);
  if (leading && !Number.isFinite(Number(leading[0]))) throw fail(`"${text}": the number ${leading[0]} is not finite`);
  let q: Qty;
  try {
    q = Qty(normalise(text));
  } catch {
    throw fail(`"${text}" has a unit that is not known (use ${EXAMPLES[dimension]})`);
  }
  if (dimension === 'angle') {
    if (q.kind() !== 'angle') throw fail(`"${text}" is not an angle (use ${EXAMPLES.angle})`);
    return q.to('rad').scalar;
  }
  const reference = SI_REFERENCE[dimension];
  if (!q.isCompatible(reference)) {
    throw fail(`"${text}" is not a ${dimension} (use ${EXAMPLES[dimension]})`);
  }
  const si = q.to(reference).scalar;
  if (!Number.isFinite(si)) throw fail(`"${text}" is not a finite ${dimension}`);
  return si;
}

function exampleOf(dimension: Dimension): string {
  return EXAMPLES[dimension].split(',')[0]!.trim();
}

/**
 * A range "from:to" such as "10kPa:60kPa", or "10:60kPa" (the unit of the second end applying to
 * both), in SI. The caller's `place` names where it was written.
 */
export function parseRange(text: string, dimension: Dimension, place: ErrorPlace = {}): [number, number] {
  const parts = text.split(':');
  if (parts.length !== 2) {
    throw new StratiflowError('bad-unit', `"${text}" is not a range: write from:to, e.g. ${dimension === 'pressure' ? '10kPa:60kPa' : '1uL/min:20uL/min'}`, place);
  }
  const unit = /[A-Za-zµ/]+.*$/.exec(parts[1]!.trim())?.[0];
  const read = (s: string) => parseQuantity(/^[-+]?[\d.]+([eE][-+]?\d+)?$/.test(s.trim()) && unit ? `${s.trim()} ${unit}` : s, dimension, place);
  return [read(parts[0]!), read(parts[1]!)];
}

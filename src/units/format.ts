/**
 * Formatting of SI values for reports and tables. Exports `fmt`, `fmtResolved`, `show`, the
 * display units used in tables, and `jsonNumbers` (how numbers go into JSON, for `--json` and the
 * live report alike). Reports convert here and nowhere else.
 */

export interface DisplayUnit {
  symbol: string;
  /** SI value × factor = displayed value. */
  factor: number;
}

export const DISPLAY = {
  length: { symbol: 'µm', factor: 1e6 },
  lengthMm: { symbol: 'mm', factor: 1e3 },
  flow: { symbol: 'µL/min', factor: 6e10 },
  pressure: { symbol: 'kPa', factor: 1e-3 },
  pressureDifference: { symbol: 'Pa', factor: 1 },
  viscosity: { symbol: 'mPa·s', factor: 1e3 },
  tension: { symbol: 'mN/m', factor: 1e3 },
  velocity: { symbol: 'mm/s', factor: 1e3 },
  time: { symbol: 's', factor: 1 },
  resistancePerLength: { symbol: 'Pa·s/m⁴', factor: 1 },
} satisfies Record<string, DisplayUnit>;

/** A number to `digits` significant digits without exponent noise for ordinary magnitudes. */
export function fmt(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '–';
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e6) return Number(value.toPrecision(digits)).toString();
  return value.toExponential(digits - 1);
}

/**
 * A value that the computation knows only to ±`resolution` (same unit): 0 when smaller than
 * that, so that rounding noise (a margin of −1e-13 Pa) is not printed as a result.
 */
export function fmtResolved(value: number | null | undefined, resolution: number, digits = 4): string {
  if (value !== null && value !== undefined && Math.abs(value) < resolution) return '0';
  return fmt(value, digits);
}

export function show(value: number, unit: DisplayUnit, digits = 4): string {
  return `${fmt(value * unit.factor, digits)} ${unit.symbol}`;
}

/** JSON has no Infinity or NaN: such values become null (a JSON.stringify replacer). */
export function jsonNumbers(_key: string, value: unknown): unknown {
  return typeof value === 'number' && !Number.isFinite(value) ? null : value;
}

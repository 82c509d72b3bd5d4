/**
 * The table of built-in liquids as text: viscosity, density and tension against water, each with
 * its source. Exports `fluidsText`. Pure: data in (the rows of physics/fluids.ts, a type import
 * only), text out; units converted by ../units/format.ts.
 */
import type { Fluid } from '../physics/fluids.js';
import { DISPLAY, fmt } from '../units/format.js';
import { textTable } from './text.js';

export function fluidsText(fluids: readonly Fluid[]): string {
  const rows = fluids.map((f) => [
    f.id, f.label, `${f.temperatureC}`, fmt(f.viscosity * DISPLAY.viscosity.factor), fmt(f.density),
    f.tensionAgainstWater ? fmt(f.tensionAgainstWater * DISPLAY.tension.factor) : '–', f.source,
  ]);
  return textTable(['id', 'liquid', '°C', DISPLAY.viscosity.symbol, 'kg/m³', `${DISPLAY.tension.symbol} vs water`, 'source'], rows) + '\n';
}

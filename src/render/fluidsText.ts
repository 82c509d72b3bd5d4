/**
 * The table of built-in liquids as text: viscosity, density and tension against water, each with
 * its source. Exports `fluidsText`. Pure: data in, text out; units converted by ../units/format.ts.
 */
import { DISPLAY, fmt } from '../units/format.js';
import { textTable } from './text.js';

/** A row of the table, in SI units (the shape of physics/fluids.ts `Fluid`, named here so that the renderer needs no physics module). */
export interface FluidRow {
  id: string;
  label: string;
  temperatureC: number;
  viscosity: number;
  density: number;
  tensionAgainstWater?: number;
  source: string;
}

export function fluidsText(fluids: readonly FluidRow[]): string {
  const rows = fluids.map((f) => [
    f.id, f.label, `${f.temperatureC}`, fmt(f.viscosity * DISPLAY.viscosity.factor), fmt(f.density),
    f.tensionAgainstWater ? fmt(f.tensionAgainstWater * DISPLAY.tension.factor) : '–', f.source,
  ]);
  return textTable(['id', 'liquid', '°C', DISPLAY.viscosity.symbol, 'kg/m³', `${DISPLAY.tension.symbol} vs water`, 'source'], rows) + '\n';
}

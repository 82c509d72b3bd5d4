/**
 * The liquids table (src/render/fluidsText.ts): SI values shown in the table's units.
 */
import { describe, expect, it } from 'vitest';
import { fluidsText } from '../../src/render/fluidsText.js';

describe('fluidsText', () => {
  it('shows viscosity in mPa·s and tension in mN/m (1 Pa·s = 1000 mPa·s, 1 N/m = 1000 mN/m), with a dash for no tension', () => {
    // Invented liquids.
    const text = fluidsText([
      { id: 'thick', label: 'thick liquid', temperatureC: 25, viscosity: 2.5e-3, density: 1100, tensionAgainstWater: 0.0312, source: 'invented' },
      { id: 'watery', label: 'watery liquid', temperatureC: 20, viscosity: 1e-3, density: 1000, source: 'invented' },
    ]);
    const [header, , thick, watery] = text.trimEnd().split('\n').map((line) => line.trim().split(/\s{2,}/));
    expect(header).toEqual(['id', 'liquid', '°C', 'mPa·s', 'kg/m³', 'mN/m vs water', 'source']);
    expect(thick).toEqual(['thick', 'thick liquid', '25', '2.5', '1100', '31.2', 'invented']);
    expect(watery).toEqual(['watery', 'watery liquid', '20', '1', '1000', '–', 'invented']);
  });
});

/**
 * `parseRange`: the "from:to" ranges of `window --x-range` and `tune --vary node.quantity=from:to`.
 * Unit factors are the SI definitions (BIPM, The International System of Units, 9th ed., 2019).
 */
import { describe, expect, it } from 'vitest';
import { parseRange } from '../../src/units/quantity.js';

describe('parseRange', () => {
  it('reads both ends with their units, and lets the unit of the second end apply to a bare first end', () => {
    expect(parseRange('10kPa:60kPa', 'pressure')).toEqual([10e3, 60e3]);
    expect(parseRange('10:60kPa', 'pressure')).toEqual([10e3, 60e3]);
    // 1 µL/min = 1e-9 m³ / 60 s.
    const [from, to] = parseRange('1:20 uL/min', 'flow');
    expect(from).toBeCloseTo(1e-9 / 60, 24);
    expect(to).toBeCloseTo(20e-9 / 60, 24);
  });

  it('refuses a text that is not two ends, naming the place it was given', () => {
    expect(() => parseRange('10kPa', 'pressure', { field: '--x-range' })).toThrow(/"10kPa" is not a range: write from:to/);
    expect(() => parseRange('1:2:3kPa', 'pressure')).toThrow(/is not a range/);
    expect(() => parseRange('a:b', 'pressure')).toThrow();
  });
});

/**
 * Quantities at the edges: plain numbers and strings with units become SI numbers, and what
 * cannot become one is refused with a line that says why.
 */
import { describe, expect, it } from 'vitest';
import { parseQuantity } from '../../src/units/quantity.js';

const place = { file: 'chip.yaml', element: 'segment k1', field: 'width' };

describe('parseQuantity', () => {
  it('reads "200 um" as 2e-4 m', () => {
    expect(parseQuantity('200 um', 'length', place)).toBeCloseTo(2e-4, 15);
  });

  it('says that the number is not finite, not that the unit is unknown, for "1e400 um"', () => {
    expect(() => parseQuantity('1e400 um', 'length', place)).toThrow(/not finite/);
  });

  it('says that "Infinity um" is not finite', () => {
    expect(() => parseQuantity('Infinity um', 'length', place)).toThrow(/not finite/);
  });
});

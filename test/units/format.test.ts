/**
 * Formatting for reports (src/units/format.ts): values below what the computation resolves print
 * as 0 (tracker issue 11, item 9), others as `fmt` gives them.
 */
import { describe, expect, it } from 'vitest';
import { fmt, fmtResolved } from '../../src/units/format.js';
import { pressureResolution } from '../../src/analyses/resolution.js';

describe('fmtResolved', () => {
  it('prints a margin of −1.137e-13 Pa in a chip at 10 kPa as 0', () => {
    const resolution = pressureResolution({ nodes: [{ id: 'in', kind: 'inlet', pressure: 10e3, compositionA: 1 }] });
    expect(resolution).toBe(1e-5);
    expect(fmtResolved(-1.137e-13, resolution)).toBe('0');
  });

  it('prints a value at or above the resolution as fmt does', () => {
    expect(fmtResolved(38.85, 1e-5)).toBe(fmt(38.85));
    expect(fmtResolved(-2e-5, 1e-5)).toBe(fmt(-2e-5));
    expect(fmtResolved(null, 1)).toBe('–');
  });
});

describe('pressureResolution', () => {
  it('takes the highest pressure of any side of any node', () => {
    const nodes = [
      { id: 'a', kind: 'inlet', pressure: 100, compositionA: 1 },
      { id: 's', kind: 'split', pressure: 50, pressureA: 50, pressureB: -3e3, compositionA: 1 },
    ];
    expect(pressureResolution({ nodes })).toBe(3e-6);
  });
});

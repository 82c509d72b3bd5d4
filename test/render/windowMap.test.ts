import { describe, expect, it } from 'vitest';
import { liveMapPoint } from '../../src/render/windowMap.js';

/**
 * Where a live report's page puts the live point of a window map (`liveMapPoint`): the axes are
 * linear from domain to frame (px, y down), in the map's coordinates and display units. Closed
 * forms on an invented frame of 100 × 100 px.
 */
describe('liveMapPoint', () => {
  const frame = { frame: '0 0 100 100', xFactor: '0.001', yFactor: '1' };

  it('puts two settings on a map of the settings themselves, the x axis in kPa', () => {
    // x: 15.5 kPa on 10…20 kPa is 55 % across; y: 2 Pa on −5…5 Pa is 70 % up, so 30 px down.
    expect(liveMapPoint({ ...frame, xDomain: '10 20', yDomain: '-5 5', coordinates: 'settings' }, [15500, 2])).toBe('translate(55,30)');
  });

  it('puts two pressures on a map of their mean and difference', () => {
    // Mean (15002 + 14998)/2 = 15 kPa, half-way; difference 4 Pa on −5…5 Pa: 90 % up, 10 px down.
    expect(liveMapPoint({ ...frame, xDomain: '10 20', yDomain: '-5 5', coordinates: 'mean-difference' }, [15002, 14998])).toBe('translate(50,10)');
  });

  it('leaves a point off the map unplaced', () => {
    expect(liveMapPoint({ ...frame, xDomain: '10 20', yDomain: '-5 5', coordinates: 'mean-difference' }, [16000, 14000])).toBeUndefined();
  });
});

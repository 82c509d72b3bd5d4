/**
 * Etched and trapezoidal segments in layout files: loading, solving a chip whose feeds and arms
 * have those shapes, and the one-line refusals of bad shape keys.
 */
import { describe, expect, it } from 'vitest';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';
import { SILICON_WALL_ANGLE } from '../../src/physics/shapedSection.js';
import { singleContactorLayout, DEMO_PHASES } from '../support/layouts.js';
import { problemsOf } from '../support/loadProblems.js';
import type { LayoutFile, LayoutSegment } from '../../src/layout/schema.js';

const relativeError = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

/** The single-contactor chip with half-disc feeds (etched, no opening) and trapezoidal outlet arms. */
function shapedLayout(): LayoutFile {
  const layout = singleContactorLayout();
  const shaped = (s: LayoutSegment, extra: Partial<LayoutSegment>): LayoutSegment => {
    const { width: _w, depth: _d, ...rest } = s;
    return { ...rest, ...extra } as LayoutSegment;
  };
  layout.segments = layout.segments.map((s) => {
    if (s.id === 'fA' || s.id === 'fB') return shaped(s, { shape: 'etched', maskWidth: 0, depth: '60 um' });
    if (s.id === 'oA' || s.id === 'oB') return shaped(s, { shape: 'trapezoid', bottomWidth: '80 um', depth: '40 um' });
    return s;
  });
  return layout;
}

describe('etched and trapezoid segments', () => {
  it('load with their sizes in SI and the silicon wall angle by default', () => {
    const chip = layoutToChip(shapedLayout(), 'chip.yaml');
    expect(chip.segments.find((s) => s.id === 'fA')!.section).toEqual({ shape: 'etched', maskWidth: 0, depth: 60e-6 });
    const arm = chip.segments.find((s) => s.id === 'oA')!.section;
    expect(arm).toEqual({ shape: 'trapezoid', bottomWidth: 80e-6, depth: 40e-6, wallAngle: SILICON_WALL_ANGLE });
  });

  it('carry a half-disc feed with the resistance of the Poiseuille number 15.767', () => {
    // Shah & London, Laminar Flow Forced Convection in Ducts, 1978, semicircular duct: fRe = 15.767
    // (from memory), so Δp/Q = 2 μ fRe L / (D_h² A) with D_h = 4A/P, A = πr²/2, P = (π + 2)r.
    // Tolerance 5e-5: the table's five digits.
    const { result, chip } = solveChip(layoutToChip(shapedLayout(), 'chip.yaml'));
    expect(result.converged, result.message).toBe(true);
    const r = 60e-6;
    const area = (Math.PI * r * r) / 2;
    const dh = (4 * area) / ((Math.PI + 2) * r);
    const length = chip.segments.find((s) => s.id === 'fA')!.length;
    const resistance = (2 * DEMO_PHASES.A.viscosity * 15.767 * length) / (dh * dh * area);
    const feed = result.segments.find((s) => s.id === 'fA')!;
    expect(relativeError(feed.pressureDrop / feed.flowA, resistance)).toBeLessThan(5e-5);
  });
});

describe('the loader on bad shape keys', () => {
  const withSegment = (id: string, change: (s: LayoutSegment) => LayoutSegment) => {
    const layout = shapedLayout();
    layout.segments = layout.segments.map((s) => (s.id === id ? change(s) : s));
    return layout;
  };

  it('names a missing mask width', () => {
    const layout = withSegment('fA', ({ maskWidth: _m, ...s }) => s as LayoutSegment);
    expect(problemsOf(layout)).toEqual(['chip.yaml: segment fA: maskWidth: missing (an etched segment needs it)']);
  });

  it('refuses a key of another shape, naming the keys the shape takes', () => {
    const layout = withSegment('oA', (s) => ({ ...s, width: '80 um' }));
    expect(problemsOf(layout)).toEqual(['chip.yaml: segment oA: width: not a key of a trapezoid segment (it takes bottomWidth, depth, wallAngle, orientation)']);
  });

  it('refuses stacked layers in an etched channel', () => {
    const layout = withSegment('fA', (s) => ({ ...s, orientation: 'stacked' }));
    expect(problemsOf(layout)).toEqual(['chip.yaml: segment fA: orientation: layers in an etched channel lie side by side only']);
  });

  it('reads a plain wall angle in degrees and refuses one above 90', () => {
    const ok = withSegment('oA', (s) => ({ ...s, wallAngle: 60 }));
    expect(layoutToChip(ok, 'chip.yaml').segments.find((s) => s.id === 'oA')!.section).toMatchObject({ wallAngle: Math.PI / 3 });
    const bad = withSegment('oA', (s) => ({ ...s, wallAngle: 120 }));
    expect(problemsOf(bad)).toEqual(['chip.yaml: segment oA: wallAngle: "120 deg" is outside the range of a wall angle (5 deg to 90 deg)']);
  });

  it('refuses a tube as a contactor with one line', () => {
    const layout = withSegment('k', ({ width: _w, depth: _d, orientation: _o, ...s }) => ({ ...s, shape: 'tube', diameter: '100 um' }) as LayoutSegment);
    expect(problemsOf(layout)).toEqual(['chip.yaml: segment k: shape: a contactor must be rectangular, etched or trapezoidal (not a tube)']);
  });

  it('accepts an etched contactor', () => {
    const layout = withSegment('k', ({ width: _w, orientation: _o, ...s }) => ({ ...s, shape: 'etched', maskWidth: '100 um' }) as LayoutSegment);
    expect(problemsOf(layout)).toEqual([]);
  });
});

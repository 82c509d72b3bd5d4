/**
 * Tests of src/layout/plausibility.ts and its use by the loader: a value outside the range of a
 * microchannel chip is refused, with the unit a plain number was probably meant in; zero or
 * negative ratings are refused; the ranges admit every bundled and generated layout.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { implausible, PLAUSIBLE } from '../../src/layout/plausibility.js';
import { singleContactorLayout } from '../support/layouts.js';
import { problemsOf } from '../support/loadProblems.js';


describe('implausible', () => {
  it('passes values inside the range and its limits themselves', () => {
    for (const range of Object.keys(PLAUSIBLE) as (keyof typeof PLAUSIBLE)[]) {
      const { low, high, usual } = PLAUSIBLE[range];
      for (const v of [low, high, usual]) expect(implausible(range, v, v), `${range} ${v}`).toBeUndefined();
    }
  });

  it('has every range stated in the table of README.md', () => {
    const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
    for (const range of Object.values(PLAUSIBLE)) expect(readme).toContain(`| ${range.limits} |`);
  });

  it('names the unit that brings a plain number nearest the usual size', () => {
    // The factors are exact by the definitions of the SI prefixes, the litre, the minute and the bar.
    expect(implausible('channel', 200, 200)).toBe('200 m is outside the range of a channel width or depth (1 um to 10 mm); did you mean 200 um?');
    expect(implausible('length', 20, 20)).toMatch(/did you mean 20 mm\?$/);
    expect(implausible('tension', 8.5, 8.5)).toMatch(/did you mean 8.5 mN\/m\?$/);
    expect(implausible('flow', 12, 12)).toMatch(/did you mean 12 uL\/min\?$/);
    expect(implausible('rating', 500, 500)).toMatch(/did you mean 500 kPa\?$/);
    expect(implausible('density', 1.2, 1.2)).toMatch(/did you mean 1.2 g\/cm3\?$/);
  });

  it('suggests nothing for a value written with its unit, or one no usual unit brings into range', () => {
    expect(implausible('channel', 1e-9, '1 nm')).toBe('"1 nm" is outside the range of a channel width or depth (1 um to 10 mm)');
    expect(implausible('pressure', 2e7, 2e7)).toBe('20000000 Pa is outside the range of a gauge pressure (-101.325 kPa (vacuum) to 10 MPa)');
  });
});

describe('the loader on implausible values', () => {
  it('refuses a bare width of 200 (read as metres) and suggests micrometres', () => {
    const layout = singleContactorLayout();
    layout.segments[2] = { ...layout.segments[2]!, width: 200 };
    expect(problemsOf(layout)).toEqual(['chip.yaml: segment k: width: 200 m is outside the range of a channel width or depth (1 um to 10 mm); did you mean 200 um?']);
  });

  it('refuses a depth of 1 nm', () => {
    const layout = singleContactorLayout();
    layout.segments[2] = { ...layout.segments[2]!, depth: '1 nm' };
    expect(problemsOf(layout)).toEqual(['chip.yaml: segment k: depth: "1 nm" is outside the range of a channel width or depth (1 um to 10 mm)']);
  });

  it('refuses a zero or negative pressure rating', () => {
    for (const maxPressure of ['-1 kPa', 0]) {
      expect(problemsOf({ ...singleContactorLayout(), maxPressure })).toEqual(['chip.yaml: maxPressure: the pressure rating must be positive']);
    }
  });

  it('refuses a zero or negative inlet flow, diffusivity and feed concentration', () => {
    const layout = singleContactorLayout();
    layout.nodes[0] = { id: 'inA', type: 'inlet', phase: 'A', flow: 0 };
    layout.phases.A.diffusivity = -1e-9;
    layout.solute = { partition: 2, feedPhase: 'A', feedConcentration: 0 };
    expect(problemsOf(layout)).toEqual([
      'chip.yaml: phase A: diffusivity: diffusivity must be positive',
      'chip.yaml: node inA: flow: an inlet flow must be positive',
      'chip.yaml: solute: feedConcentration: feed concentration must be positive',
    ]);
  });

  it('refuses a length of 1e308 m, a pressure of 1e308 Pa and a window of ±1e308 Pa', () => {
    const layout = singleContactorLayout();
    layout.segments[0] = { ...layout.segments[0]!, length: 1e308 };
    layout.nodes[0] = { id: 'inA', type: 'inlet', phase: 'A', pressure: 1e308 };
    layout.splitWindow = { low: -1e308, high: 1e308 };
    expect(problemsOf(layout)).toEqual([
      'chip.yaml: splitWindow.low: -1e+308 Pa is outside the range of a pressure difference (-10 MPa to 10 MPa)',
      'chip.yaml: splitWindow.high: 1e+308 Pa is outside the range of a pressure difference (-10 MPa to 10 MPa)',
      'chip.yaml: node inA: pressure: 1e+308 Pa is outside the range of a gauge pressure (-101.325 kPa (vacuum) to 10 MPa)',
      'chip.yaml: segment fA: length: 1e+308 m is outside the range of a segment length (1 um to 10 m)',
    ]);
  });

  it('refuses a number that overflows once converted to SI (an angle of 1e308 degrees)', () => {
    const layout = { ...singleContactorLayout(), interfacialTension: 0.01, contactAngleA: { angle: 1e308 } };
    expect(problemsOf(layout)).toEqual(['chip.yaml: contactAngleA: angle: 1e+308 is too large a number once converted to SI']);
  });

  it('shows a plain number in the unit the file declares, and suggests no other unit for it', () => {
    const layout = { ...singleContactorLayout(), units: { length: 'mm' } };
    layout.segments = layout.segments.map((s) => ({ ...s, width: (s.width as number) * 1e3, depth: (s.depth as number) * 1e3, length: (s.length as number) * 1e3 }));
    layout.nodes = layout.nodes.map((n) => ({ ...n, x: 0, y: 0 }));
    layout.segments[2] = { ...layout.segments[2]!, width: 200 };
    expect(problemsOf(layout)).toEqual(['chip.yaml: segment k: width: "200 mm" is outside the range of a channel width or depth (1 um to 10 mm)']);
  });
});

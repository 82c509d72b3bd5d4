/**
 * Tests of src/layout/load.ts: layout files (YAML or JSON) become chips in SI units; every
 * problem found is collected, with its element and field, before loading fails.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { stringify } from 'yaml';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { layoutToChip, loadLayout, MAX_LAYOUT_BYTES, parseLayout } from '../../src/layout/load.js';
import { StratiflowError, StratiflowErrors } from '../../src/errors.js';
import type { InletNode, OutletNode, SplitNode } from '../../src/network/model.js';
import { singleContactorLayout, wellDesignedLadder } from '../support/layouts.js';
import { SHOWN_PROBLEMS } from '../../src/errors.js';

const deg = Math.PI / 180;

const TEXT = `
name: units demo
phases:
  A: { viscosity: 6.5 mPa.s, density: 0.85 g/cm3 }
  B: { fluid: water }
interfacialTension: 8.5 mN/m
contactAngleA: { angle: 130, hysteresis: 20 deg }
nodes:
  - { id: inA, type: inlet, phase: A, pressure: 0.2 bar, reservoirHeight: 10 cm }
  - { id: inB, type: inlet, phase: B, flow: 12 uL/min }
  - { id: m, type: merge, inlets: [fA, fB] }
  - { id: s, type: split, outlets: [oA, oB], window: { low: -1 kPa, high: 50 mbar } }
  - { id: outA, type: outlet, pressure: 0, phase: A }
  - { id: outB, type: outlet, pressure: 1 kPa, phase: B, reservoirHeight: 2 cm }
segments:
  - { id: fA, from: inA, to: m, shape: rect, width: 100 um, depth: 50 µm, length: 5 mm }
  - { id: fB, from: inB, to: m, shape: tube, diameter: 0.25 mm, length: 30 cm }
  - { id: k, from: m, to: s, shape: rect, width: 200um, depth: 50um, length: 2 cm, orientation: stacked, group: contactor }
  - { id: oA, from: s, to: outA, shape: rect, width: 100 um, depth: 50 um, length: 5 mm }
  - { id: oB, from: s, to: outB, shape: rect, width: 100 um, depth: 50 um, length: 5 mm }
`;

/** Standard gravity, m/s² (CGPM 1901, exact by definition). */
const G = 9.80665;

describe('parseLayout', () => {
  const chip = parseLayout(TEXT, 'units.yaml');
  const node = <T>(id: string) => chip.nodes.find((n) => n.id === id) as T;
  const segment = (id: string) => chip.segments.find((s) => s.id === id)!;

  it('converts every quantity with a unit to SI', () => {
    expect(chip.phases.A.viscosity).toBeCloseTo(6.5e-3, 15);
    expect(chip.phases.A.density).toBeCloseTo(850, 9);
    expect(chip.interfacialTension).toBeCloseTo(8.5e-3, 15);
    expect(segment('fA').section).toEqual({ shape: 'rect', width: 100e-6, depth: 50e-6, orientation: 'side' });
    expect(segment('fB').section.shape).toBe('tube');
    expect(segment('fB').length).toBeCloseTo(0.3, 15);
    expect(segment('k').section).toEqual({ shape: 'rect', width: 200e-6, depth: 50e-6, orientation: 'stacked' });
    expect(segment('k').group).toBe('contactor');
    expect(node<InletNode>('inB').flow).toBeCloseTo(12e-9 / 60, 20);
    expect(node<SplitNode>('s').window![0]).toBeCloseTo(-1000, 9);
    expect(node<SplitNode>('s').window![1]).toBeCloseTo(5000, 9);
  });

  it('takes missing phase values from the built-in fluid table', () => {
    expect(chip.phases.B.viscosity).toBeCloseTo(1.002e-3, 12);
    expect(chip.phases.B.density).toBeCloseTo(998.2, 9);
  });

  it('adds the reservoir head ρ·g·h of the liquid to inlet and outlet pressures', () => {
    // Hydrostatics, p = ρ g h (common practice).
    const inA = node<InletNode>('inA');
    expect(inA.head).toBeCloseTo(850 * G * 0.1, 9);
    expect(inA.pressure).toBeCloseTo(20e3 + 850 * G * 0.1, 9);
    const outB = node<OutletNode>('outB');
    expect(outB.pressure).toBeCloseTo(1000 + 998.2 * G * 0.02, 9);
  });

  it('reads a contact angle with hysteresis as advancing θ + h/2 and receding θ − h/2, plain numbers in degrees', () => {
    expect(chip.contactAngle!.advancing).toBeCloseTo(140 * deg, 14);
    expect(chip.contactAngle!.receding).toBeCloseTo(120 * deg, 14);
  });

  it('reads plain numbers in the units declared by the file', () => {
    const layout = { ...singleContactorLayout(), units: { length: 'um', pressure: 'kPa' } };
    layout.nodes = layout.nodes.map((n) => ((n.type === 'inlet' || n.type === 'outlet') && typeof n.pressure === 'number' ? { ...n, pressure: n.pressure / 1e3 } : n));
    layout.segments = layout.segments.map((s) => ({ ...s, width: (s.width as number) * 1e6, depth: (s.depth as number) * 1e6, length: (s.length as number) * 1e6 }));
    // The split window of the builder is in SI numbers; give it in the file's pressure unit too.
    layout.nodes = layout.nodes.map((n) => (n.type === 'split' ? { ...n, window: { low: -0.2, high: 0.2 } } : n));
    const a = layoutToChip(singleContactorLayout(), 'si');
    const b = layoutToChip(layout, 'units');
    for (const [i, s] of a.segments.entries()) {
      const t = b.segments[i]!;
      expect(t.length).toBeCloseTo(s.length, 15);
      expect(t.section).toEqual({ ...s.section, width: expect.closeTo((s.section as { width: number }).width, 15), depth: expect.closeTo((s.section as { depth: number }).depth, 15) });
    }
    expect((b.nodes[0] as InletNode).pressure).toBeCloseTo((a.nodes[0] as InletNode).pressure!, 9);
    expect((b.nodes.find((n) => n.kind === 'split') as SplitNode).window).toEqual([expect.closeTo(-200, 9), expect.closeTo(200, 9)]);
  });

  it('reads JSON and YAML of the same layout into the same chip', () => {
    const layout = singleContactorLayout();
    expect(parseLayout(JSON.stringify(layout), 'x')).toEqual(parseLayout(stringify(layout), 'x'));
  });
});

describe('layoutToChip on a faulty layout', () => {
  it('collects every problem, each with its element and field, before it fails', () => {
    const layout = singleContactorLayout();
    layout.segments[0] = { ...layout.segments[0]!, width: -1 };
    layout.segments[2] = { ...layout.segments[2]!, depth: '50 kPa' };
    layout.nodes[0] = { ...layout.nodes[0]!, flow: 1e-11 } as never;
    let error: unknown;
    try {
      layoutToChip(layout, 'faulty.yaml');
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(StratiflowErrors);
    const places = (error as StratiflowErrors).problems.map((p) => [p.place.element, p.place.field, p.code]);
    expect(places).toEqual(
      expect.arrayContaining([
        ['segment fA', 'width', 'bad-layout'],
        ['segment k', 'depth', 'bad-unit'],
        ['node inA', 'pressure', 'bad-layout'],
      ]),
    );
    for (const p of (error as StratiflowErrors).problems) {
      expect(p).toBeInstanceOf(StratiflowError);
      expect(p.place.file).toBe('faulty.yaml');
      expect(p.format()).not.toContain('\n');
    }
  });

  it('asks for exactly one of pressure and flow at an inlet', () => {
    const layout = singleContactorLayout();
    layout.nodes[1] = { id: 'inB', type: 'inlet', phase: 'B' };
    expect(() => layoutToChip(layout, 'x')).toThrow(/node inB: pressure: give exactly one of pressure and flow/);
  });

  it('rejects a window whose low limit exceeds its high limit', () => {
    const layout = { ...singleContactorLayout(), splitWindow: { low: 100, high: -100 } };
    expect(() => layoutToChip(layout, 'x')).toThrow(/splitWindow: low must not exceed high/);
  });
});

describe('layoutToChip on names and unit blocks', () => {
  it('refuses node and segment ids and group names that JavaScript objects already carry', () => {
    const layout = singleContactorLayout();
    layout.nodes[2] = { ...layout.nodes[2]!, id: '__proto__' } as never;
    layout.segments[1] = { ...layout.segments[1]!, id: 'hasOwnProperty' };
    layout.segments[2] = { ...layout.segments[2]!, group: 'constructor' };
    layout.segments[3] = { ...layout.segments[3]!, group: 'constructor' };
    expect(() => layoutToChip(layout, 'x')).toThrow(
      new StratiflowErrors([
        new StratiflowError('bad-layout', '"__proto__" is a reserved name; choose another', { file: 'x', element: 'node #3', field: 'id' }),
        new StratiflowError('bad-layout', '"hasOwnProperty" is a reserved name; choose another', { file: 'x', element: 'segment #2', field: 'id' }),
        new StratiflowError('bad-layout', '"constructor" is a reserved name; choose another', { file: 'x', element: 'segment k', field: 'group' }),
      ]),
    );
  });

  it('names a unit of the units block that is not of its kind once, not at every plain number', () => {
    const layout = { ...singleContactorLayout(), units: { length: 'kPa' } };
    expect(() => layoutToChip(layout, 'x')).toThrow(new StratiflowErrors([new StratiflowError('bad-unit', '"kPa" is not a unit of length', { file: 'x', element: 'units', field: 'length' })]));
  });

  it('names an empty id as empty and an empty list as needing an entry', () => {
    const layout = singleContactorLayout();
    layout.nodes[0] = { ...layout.nodes[0]!, id: '' } as never;
    expect(() => layoutToChip(layout, 'x')).toThrow(/^x: node #1: id: must not be empty$/);
    expect(() => layoutToChip({ ...singleContactorLayout(), segments: [] }, 'x')).toThrow(/^x: segments: needs at least one entry$/);
  });
});

/** The one line a failing load prints. */
function lineOf(load: () => unknown): string {
  try {
    load();
  } catch (error) {
    if (error instanceof StratiflowError) return error.format();
    throw error;
  }
  return 'loaded';
}

describe('loadLayout and parseLayout on files that are not layouts', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-load-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('call an empty file empty, and name what a file holds instead of a mapping', () => {
    expect(lineOf(() => parseLayout('', 'e.yaml'))).toMatch(/^e\.yaml: the file is empty/);
    expect(lineOf(() => parseLayout('# only a comment\n', 'e.yaml'))).toMatch(/^e\.yaml: the file is empty/);
    expect(lineOf(() => parseLayout('[1, 2]', 'l.yaml'))).toMatch(/^l\.yaml: holds a list, not a layout/);
    expect(lineOf(() => parseLayout('42', 'n.yaml'))).toMatch(/^n\.yaml: holds a number, not a layout/);
  });

  it('call a file with NUL bytes a binary file', () => {
    expect(lineOf(() => parseLayout('PK\u0003\u0004\u0000\u0000junk', 'z.yaml'))).toMatch(/^z\.yaml: a binary file, not YAML or JSON$/);
  });

  it('say a file holds several YAML documents in plain words', () => {
    expect(lineOf(() => parseLayout('name: a\n---\nname: b\n', 'd.yaml'))).toMatch(/several YAML documents \(---\); a layout file holds one$/);
  });

  it('refuse a reservoir height without the density that sets its head, and say when a density is assumed', () => {
    // Regression: a missing density silently became 1000 kg/m³, also in the head ρgh of a reservoir.
    const noDensity = TEXT.replace('A: { viscosity: 6.5 mPa.s, density: 0.85 g/cm3 }', 'A: { viscosity: 6.5 mPa.s }');
    expect(lineOf(() => parseLayout(noDensity, 'c.yaml'))).toBe('c.yaml: node inA: reservoirHeight: the reservoir head ρgh needs the density of phase A: give phases.A.density or a known fluid');
    const noHeight = noDensity.replace(', reservoirHeight: 10 cm', '');
    const chip = parseLayout(noHeight, 'c.yaml');
    expect(chip.warnings).toContain('phase A: no density given; 1000 kg/m³ (about water) assumed, which enters only the Reynolds and Bond numbers');
    const outletWithoutPhase = TEXT.replace('phase: B, reservoirHeight: 2 cm', 'reservoirHeight: 2 cm');
    expect(lineOf(() => parseLayout(outletWithoutPhase, 'c.yaml'))).toMatch(/^c\.yaml: node outB: phase: give the phase of the outlet/);
  });

  it('print at most SHOWN_PROBLEMS problems and count the rest', () => {
    // Regression: one slip repeated on every node of a generated ladder printed 38 000 lines.
    const layout = wellDesignedLadder(40);
    for (const node of layout.nodes) node.x = 1e6;
    const lines = lineOf(() => layoutToChip(layout, 'big.json')).split('\n');
    expect(lines).toHaveLength(SHOWN_PROBLEMS + 1);
    expect(lines[0]).toMatch(/^big\.json: node \w+: x: 1000000 m is outside the range of a drawing position \(-100 m to 100 m\)/);
    expect(lines[SHOWN_PROBLEMS]).toMatch(/^big\.json: … and \d+ more problems$/);
  });

  it('refuse a file larger than MAX_LAYOUT_BYTES before reading it, and a folder', () => {
    // Regression: a 90 MB file of nodes ran the process out of memory after two minutes.
    const file = join(dir, 'huge.yaml');
    writeFileSync(file, 'name: huge\n' + '#'.repeat(MAX_LAYOUT_BYTES));
    expect(lineOf(() => loadLayout(file))).toMatch(/huge\.yaml: is 16 MB; a YAML layout file is at most 16 MB$/);
    expect(lineOf(() => loadLayout(dir))).toMatch(/: is a folder, not a layout file$/);
  });
});

describe('parseLayout on JSON files', () => {
  it('reads a .json layout into the same chip as the same layout written as YAML', () => {
    const layout = singleContactorLayout();
    const fromJson = parseLayout(JSON.stringify(layout), 'chip.json');
    const fromYaml = parseLayout(stringify(layout), 'chip.yaml');
    expect({ ...fromJson, source: '' }).toEqual({ ...fromYaml, source: '' });
  });

  it('names the line of a syntax error in a .json file, in one line', () => {
    const text = '{\n  "name": "x",\n  "nodes": [ }\n';
    let error: unknown;
    try {
      parseLayout(text, 'broken.json');
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(StratiflowError);
    const line = (error as StratiflowError).format();
    expect(line).toMatch(/broken\.json/);
    expect(line).toMatch(/line 3/);
    expect(line.split('\n')).toHaveLength(1);
  });
});

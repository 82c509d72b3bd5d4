/**
 * Tests of src/layout/generate.ts: generated ladders and trees are valid layout files with the
 * asked number of contactors, unique ids, drawing positions on every node, channels where the
 * options put them, and they survive a round trip through YAML.
 */
import { describe, expect, it } from 'vitest';
import { stringify } from 'yaml';
import { ladderLayout, treeLayout, LADDER_DEFAULTS, TREE_DEFAULTS } from '../../src/layout/generate.js';
import { layoutToChip, parseLayout } from '../../src/layout/load.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import type { Chip } from '../../src/network/model.js';

function contactorsOf(chip: Chip) {
  const merges = new Set(chip.nodes.filter((n) => n.kind === 'merge').map((n) => n.id));
  return chip.segments.filter((s) => merges.has(s.from));
}

function expectWellFormed(layout: LayoutFile, contactors: number): Chip {
  const chip = layoutToChip(layout, 'generated');
  const ids = [...chip.nodes.map((n) => n.id), ...chip.segments.map((s) => s.id)];
  expect(new Set(ids).size).toBe(ids.length);
  expect(contactorsOf(chip)).toHaveLength(contactors);
  expect(chip.nodes.filter((n) => n.kind === 'split')).toHaveLength(contactors);
  for (const n of chip.nodes) {
    expect(Number.isFinite(n.x) && Number.isFinite(n.y), `position of ${n.id}`).toBe(true);
  }
  for (const s of chip.segments) expect(s.group, `group of ${s.id}`).toMatch(/^(contactor|feed|drain|manifold|tubing)$/);
  return chip;
}

describe('ladderLayout', () => {
  for (const contactors of [1, 2, 7, 64]) {
    it(`builds a valid ladder of ${contactors} contactors`, () => {
      expectWellFormed(ladderLayout({ contactors }), contactors);
    });
  }

  it('puts contactor i at x = (i − 1)·pitch, from its merge at y = 0 down to its split at y = −L', () => {
    const pitch = 1.5e-3;
    const chip = expectWellFormed(ladderLayout({ contactors: 5, pitch }), 5);
    for (let i = 1; i <= 5; i++) {
      const m = chip.nodes.find((n) => n.id === `m${i}`)!;
      const s = chip.nodes.find((n) => n.id === `s${i}`)!;
      expect(m.x).toBeCloseTo((i - 1) * pitch, 12);
      expect(m.y).toBe(0);
      expect(s.y).toBeCloseTo(-LADDER_DEFAULTS.contactor.length, 12);
    }
  });

  it('runs the distribution manifolds away from the inlets and the collection manifolds toward the outlets', () => {
    for (const [inletAt, outletAt] of [['end', 'opposite'], ['end', 'same'], ['middle', 'middle']] as const) {
      const chip = layoutToChip(ladderLayout({ contactors: 6, inletAt, outletAt }), 'x');
      const x = (id: string) => chip.nodes.find((n) => n.id === id)!.x!;
      const entry = x(chip.segments.find((s) => s.id === 'entryA')!.to);
      const exit = x(chip.segments.find((s) => s.id === 'exitA')!.from);
      for (const s of chip.segments.filter((seg) => seg.id.startsWith('mdA'))) {
        expect(Math.abs(x(s.to) - entry), s.id).toBeGreaterThan(Math.abs(x(s.from) - entry));
      }
      for (const s of chip.segments.filter((seg) => seg.id.startsWith('mcA'))) {
        expect(Math.abs(x(s.to) - exit), s.id).toBeLessThan(Math.abs(x(s.from) - exit));
      }
    }
  });

  it('adds tubing between every port and the chip when asked', () => {
    const chip = layoutToChip(ladderLayout({ contactors: 3, tubing: { diameter: 250e-6, length: 0.3 } }), 'x');
    expect(chip.segments.filter((s) => s.group === 'tubing').map((s) => s.id).sort()).toEqual(['tubeInA', 'tubeInB', 'tubeOutA', 'tubeOutB']);
  });

  it('drives an inlet by flow when asked', () => {
    const chip = layoutToChip(ladderLayout({ contactors: 2, drive: { A: { pressure: 2e4 }, B: { flow: 1e-10 } } }), 'x');
    const inB = chip.nodes.find((n) => n.id === 'inB');
    expect(inB).toMatchObject({ kind: 'inlet', flow: 1e-10, pressure: undefined });
  });
});

describe('treeLayout', () => {
  for (const levels of [0, 1, 3, 6]) {
    it(`builds a valid tree of 2^${levels} contactors`, () => {
      expectWellFormed(treeLayout({ levels }), 2 ** levels);
    });
  }

  it('narrows each branch level by branchScale and halves its length', () => {
    const chip = layoutToChip(treeLayout({ levels: 3 }), 'x');
    for (let level = 1; level <= 3; level++) {
      const branches = chip.segments.filter((s) => s.id.startsWith(`btA${level}_`));
      expect(branches).toHaveLength(2 ** level);
      for (const b of branches) {
        expect(b.section.shape === 'rect' && b.section.width).toBeCloseTo(TREE_DEFAULTS.branch.width * TREE_DEFAULTS.branchScale ** (level - 1), 12);
        expect(b.length).toBeCloseTo((TREE_DEFAULTS.branch.length * 2 ** -(level - 1)) / 2, 12);
      }
    }
  });
});

describe('generated layouts as files', () => {
  it('load from YAML into the same chip as from the object', () => {
    for (const layout of [ladderLayout({ contactors: 4 }), treeLayout({ levels: 2 })]) {
      expect(parseLayout(stringify(layout), 'generated')).toEqual(layoutToChip(layout, 'generated'));
    }
  });

  it('check the topology of a 10000-contactor ladder without overflowing the call stack', () => {
    // Regression: graphlib's recursive components() overflowed on the long manifold chains.
    expect(() => layoutToChip(ladderLayout({ contactors: 10000 }), 'large')).not.toThrow();
  });
});

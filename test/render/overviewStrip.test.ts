import { describe, expect, it } from 'vitest';
import { ladderLayout, treeLayout } from '../../src/layout/generate.js';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';
import { chipDrawing } from '../../src/render/chipDrawing.js';
import { overviewStrip } from '../../src/render/overviewStrip.js';
import { viridis } from '../../src/render/palette.js';
import { all, hasClass, parse, textOf } from '../support/svgTree.js';

/** Invented demo values: generated ladders and trees. */
const drive = { A: { pressure: 10e3 }, B: { pressure: 8e3 } };

describe('overviewStrip', () => {
  const ladder = solveChip(layoutToChip(ladderLayout({ contactors: 64, drive }), 'ladder.yaml'));

  it('draws one cell per contactor in each of the four strips, in contactor order, each linked to that contactor in the drawing', () => {
    const root = parse(overviewStrip(ladder));
    const strips = all(root, hasClass('strip'));
    expect(strips.map((g) => g.attrs['data-quantity'])).toEqual(['flow of A', 'flow of B', 'holdup of A', 'split margin']);
    const drawn = new Set(all(parse(chipDrawing(ladder)), hasClass('contactor')).map((g) => g.attrs.id));
    for (const strip of strips) {
      const links = all(strip, (e) => e.name === 'a');
      expect(links.map((a) => a.attrs.href)).toEqual(ladder.result.contactors.map((r) => `#contactor-${r.index}`));
      for (const a of links) expect(drawn.has(a.attrs.href!.slice(1))).toBe(true);
      const xs = links.map((a) => Number(a.children[0]!.attrs.x));
      for (let i = 1; i < xs.length; i++) expect(xs[i]!).toBeGreaterThan(xs[i - 1]!);
    }
  });

  it('colours the smallest and largest flow of A at the two ends of viridis and writes both values', () => {
    const root = parse(overviewStrip(ladder));
    const strip = all(root, hasClass('strip'))[0]!;
    const cells = all(strip, (e) => e.name === 'rect' && e.attrs['data-index'] !== undefined);
    const flows = ladder.result.contactors.map((r) => r.flowA);
    const low = flows.indexOf(Math.min(...flows));
    const high = flows.indexOf(Math.max(...flows));
    expect(cells[low]!.attrs.fill).toBe(viridis(0));
    expect(cells[high]!.attrs.fill).toBe(viridis(1));
  });

  it('says so when a strip is uniform, as the contactors of a symmetric tree are', () => {
    const tree = solveChip(layoutToChip(treeLayout({ levels: 6, drive }), 'tree.yaml'));
    const strips = all(parse(overviewStrip(tree)), hasClass('strip'));
    expect(textOf(strips[0]!)).toMatch(/uniform to 1e-12/);
    // Its split margins differ only below the pressure the solution resolves: the strip says 0, not rounding noise.
    expect(tree.result.splits.every((s) => Math.abs(s.margin) < tree.result.summary.pressureResolution)).toBe(true);
    expect(textOf(strips[3]!)).toMatch(/every contactor 0 Pa/);
  });

  it('says how little a strip spreads where the contactors are equal only to the solver\'s tolerance', () => {
    // The flows of A spread by 2.4e-12 of their size, as those of the even 1024-contactor tree of
    // make tree --levels 10 (measured): above 1e-12, so not called uniform, yet no colour could show it.
    const tree = solveChip(layoutToChip(treeLayout({ levels: 4, drive }), 'tree.yaml'));
    const contactors = tree.result.contactors.map((c, k) => ({ ...c, flowA: c.flowA * (1 + (k % 2) * 2.4e-12) }));
    const strips = all(parse(overviewStrip({ ...tree, result: { ...tree.result, contactors } })), hasClass('strip'));
    expect(textOf(strips[0]!)).toMatch(/every contactor [\d.]+ µL\/min, within 2\.4e-12 of it/);
  });

  it('fits 16 384 contactors in its fixed width, each cell at least a pixel, and a lone starved contactor still shows', () => {
    // Only the renderer is exercised: the rows of a 64-contactor ladder repeated (not a solved chip of that size),
    // with contactor 9000 starved of A. Regression of scale: one cell per contactor (0.05 px wide, blended
    // by the browser) drew 65 536 links, 1.7 s of the 16 384-contactor report.
    const rows = Array.from({ length: 16384 }, (_, i) => ({ ...ladder.result.contactors[i % 64]!, index: i + 1, id: `k${i + 1}` }));
    rows[8999] = { ...rows[8999]!, flowA: 0 };
    const big = { ...ladder, result: { ...ladder.result, contactors: rows, splits: [] } };
    const root = parse(overviewStrip(big));
    expect(Number(root.attrs.width)).toBe(1100);
    const cells = all(all(root, hasClass('strip'))[0]!, (e) => e.name === 'rect' && e.attrs['data-index'] !== undefined);
    // Every cell but the last (the remainder of the runs) is at least the 1 px minimum, to the 0.01 px of the written digits.
    const widths = cells.slice(0, -1).map((c) => Number(c.attrs.width));
    expect(Math.min(...widths)).toBeGreaterThanOrEqual(0.99);
    // The runs cover every contactor once, in order.
    const runs = cells.map((c) => c.attrs['data-contactors']!.split('-').map(Number));
    expect(runs[0]![0]).toBe(1);
    expect(runs.at(-1)![1]).toBe(16384);
    for (let k = 1; k < runs.length; k++) expect(runs[k]![0]).toBe(runs[k - 1]![1]! + 1);
    // The starved contactor is its cell's pick (farthest from the mean), at the bottom of the colour scale, linked.
    const starved = cells.find((c) => c.attrs['data-index'] === '9000')!;
    expect(starved.attrs.fill).toBe(viridis(0));
    expect(all(root, (e) => e.name === 'a' && e.attrs.href === '#contactor-9000')).toHaveLength(1);
    expect(textOf(root)).toMatch(/16384 contactors in \d+ cells of up to \d+: each cell shows \(and links to\) its contactor farthest from the row's mean/);
  });
});

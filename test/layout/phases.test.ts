/**
 * Tests of src/layout/phases.ts through the loader: the phase of every stream is traced from the
 * inlets, and a chip that cannot work (no inlet of a phase, a merge fed one phase twice, a split
 * whose outlets lead to the other phase's outlet) is refused with one line per problem; a
 * crossed order that can work but looks like a slip loads with a warning in `chip.warnings`.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync } from 'node:fs';
import { layoutToChip, loadLayout } from '../../src/layout/load.js';
import { ladderLayout, treeLayout } from '../../src/layout/generate.js';
import type { LayoutFile, LayoutNode, LayoutSegment } from '../../src/layout/schema.js';
import { mirroredLayout, phaseSwappedLayout, singleContactorLayout, wellDesignedLadder } from '../support/layouts.js';
import { problemsOf } from '../support/loadProblems.js';


const nodeOf = (layout: LayoutFile, id: string) => layout.nodes.find((n) => n.id === id)! as LayoutNode & { inlets: [string, string]; outlets: [string, string]; phase?: 'A' | 'B' };
const segmentOf = (layout: LayoutFile, id: string) => layout.segments.find((s) => s.id === id)! as LayoutSegment;

describe('layouts that can work', () => {
  it('the bundled layouts load without a warning', () => {
    const folder = new URL('../../layouts/', import.meta.url);
    const files = readdirSync(folder).filter((f) => f.endsWith('.yaml'));
    expect(files.length).toBeGreaterThan(0);
    for (const file of files) expect(loadLayout(new URL(file, folder).pathname).warnings, file).toEqual([]);
  });

  it('generated ladders and trees load without a warning, whatever their inlet, outlet and tubing options', () => {
    const tubing = { diameter: 250e-6, length: 0.3 };
    for (const inletAt of ['end', 'middle'] as const) {
      for (const outletAt of ['same', 'opposite', 'middle'] as const) {
        for (const withTubing of [false, true]) {
          const chip = layoutToChip(ladderLayout({ contactors: 5, inletAt, outletAt, ...(withTubing ? { tubing } : {}) }), 'ladder');
          expect(chip.warnings, `${inletAt} ${outletAt} ${withTubing}`).toEqual([]);
        }
      }
    }
    for (const levels of [0, 1, 3]) expect(layoutToChip(treeLayout({ levels, tubing }), 'tree').warnings).toEqual([]);
  });

  it('a mirrored chip (every merge and split listed the other way round) and a chip with A and B renamed load without a warning', () => {
    for (const layout of [mirroredLayout(wellDesignedLadder(4)), phaseSwappedLayout(wellDesignedLadder(4)), mirroredLayout(singleContactorLayout())]) {
      expect(layoutToChip(layout, 'x').warnings).toEqual([]);
    }
  });

  it('a chip without merges (a single-phase network) needs no inlet of phase B', () => {
    const layout = singleContactorLayout();
    layout.nodes = [
      { id: 'in', type: 'inlet', phase: 'A', pressure: 1e4 },
      { id: 'out', type: 'outlet', pressure: 0 },
    ];
    layout.segments = [{ ...segmentOf(layout, 'fA'), from: 'in', to: 'out' }];
    expect(problemsOf(layout)).toEqual([]);
  });
});

describe('layouts that cannot work', () => {
  it('refuses a contactor chip without an inlet of phase B', () => {
    const layout = singleContactorLayout();
    nodeOf(layout, 'inB').phase = 'A';
    expect(problemsOf(layout)).toEqual(['chip.yaml: chip: no inlet of phase B: every contactor needs an inlet of each phase']);
  });

  it('refuses every merge whose two inlets carry the same phase, naming the inlet each comes from', () => {
    // The B manifold is fed from inlet A by mistake; inlet B runs straight to its outlet.
    const layout = ladderLayout({ contactors: 3 });
    segmentOf(layout, 'entryB').from = 'inA';
    layout.segments.push({ ...segmentOf(layout, 'entryB'), id: 'bypass', from: 'inB', to: 'outB' });
    expect(problemsOf(layout)).toEqual(
      [1, 2, 3].map((k) => `chip.yaml: node m${k}: inlets: both inlets carry phase A (fA${k} from inlet inA, fB${k} from inlet inA); a merge needs one inlet of each phase`),
    );
  });

  it('refuses a feed junction where the two phases meet before any merge', () => {
    const layout = ladderLayout({ contactors: 3 });
    layout.segments.push({ ...segmentOf(layout, 'mdA1'), id: 'bridge', from: 'dA2', to: 'dB2' });
    expect(problemsOf(layout)).toEqual(['chip.yaml: node dB2: phase A (from inlet inA) and phase B (from inlet inB) meet at this junction, before any merge; each feed manifold must carry one phase']);
  });

  it('refuses a split whose outlets are listed in the wrong order, and says how to fix it', () => {
    const layout = singleContactorLayout();
    nodeOf(layout, 's').outlets = ['oB', 'oA'];
    expect(problemsOf(layout)).toEqual([
      'chip.yaml: node s: outlets: the near lane carries phase A and the far lane phase B, but oB leads to outlet outB (phase B) and oA leads to outlet outA (phase A); list the outlets as [oA, oB], or the inlets of merge m the other way round',
    ]);
  });

  it('refuses a merge whose inlets are listed in the wrong order against its split', () => {
    const layout = singleContactorLayout();
    nodeOf(layout, 'm').inlets = ['fB', 'fA'];
    expect(problemsOf(layout)).toEqual([expect.stringMatching(/^chip\.yaml: node s: outlets: the near lane carries phase B .*oA leads to outlet outA \(phase A\)/)]);
  });

  it('takes the phase of an outlet without one from most of the split arms that reach it', () => {
    const layout = ladderLayout({ contactors: 4 });
    for (const n of layout.nodes) if (n.type === 'outlet') delete n.phase;
    nodeOf(layout, 's3').outlets = ['oB3', 'oA3'];
    expect(problemsOf(layout)).toEqual([expect.stringMatching(/^chip\.yaml: node s3: outlets: the near lane carries phase A .*oB3 leads to outlet outB \(phase B\)/)]);
  });

  it('refuses a split arm that leads to the outlets of both phases', () => {
    const layout = ladderLayout({ contactors: 2 });
    layout.segments.push({ ...segmentOf(layout, 'mcA1'), id: 'bridge', from: 'cA1', to: 'cB1' });
    expect(problemsOf(layout)).toContain('chip.yaml: node s1: outlets: the near lane carries phase A and the far lane phase B, but oA1 leads to outlet outA (phase A) and outlet outB (phase B)');
  });
});

describe('crossed orders that can work', () => {
  it('warn about a contactor that takes the other phase on its near side than the rest', () => {
    const layout = ladderLayout({ contactors: 4 });
    nodeOf(layout, 'm2').inlets = ['fB2', 'fA2'];
    nodeOf(layout, 's2').outlets = ['oB2', 'oA2'];
    expect(layoutToChip(layout, 'x').warnings).toEqual(['merge m2: phase B on the near side (first inlet), while 3 other merges take phase A there; check the order of its inlets and outlets']);
  });

  it('warn about a split arm that reaches no outlet along the direction the segments are written', () => {
    const layout = ladderLayout({ contactors: 2, outletAt: 'opposite' });
    const drain = segmentOf(layout, 'mcA1');
    [drain.from, drain.to] = [drain.to, drain.from];
    expect(layoutToChip(layout, 'x').warnings).toEqual([expect.stringMatching(/^split s1: its outlet oA1 reaches no outlet along the direction the segments are written/)]);
  });
});

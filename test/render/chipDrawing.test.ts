import { describe, expect, it } from 'vitest';
import { XMLValidator } from 'fast-xml-parser';
import { ladderLayout, treeLayout } from '../../src/layout/generate.js';
import { layoutToChip } from '../../src/layout/load.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip, type SolvedChip } from '../../src/analyses/chip.js';
import { analyseExtraction, type SoluteSetup } from '../../src/analyses/extraction.js';
import { chipDrawing, PHASE_COLOURS } from '../../src/render/chipDrawing.js';
import { approachColour, extractionColouring, type ExtractionColouring } from '../../src/render/extractionCharts.js';
import { textWidth } from '../../src/render/svg.js';
import { all, distance, firstPoint, hasClass, matrixOf, parse, textOf, type Element } from '../support/svgTree.js';

/** Invented demo values throughout: a ladder driven so that its splits leak both ways. */
function ladder(change: (layout: LayoutFile) => void = () => {}, contactors = 16): SolvedChip {
  const layout = ladderLayout({ contactors, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } });
  change(layout);
  return solveChip(layoutToChip(layout, 'ladder.yaml'));
}

function setPressure(layout: LayoutFile, id: string, pressure: number): void {
  const node = layout.nodes.find((n) => n.id === id) as { pressure?: unknown };
  node.pressure = pressure;
}

const MARKUP_NAME = `bench <chip> & "co" 'x'`;

/** A hand-written layout without coordinates, with markup characters in its strings (invented values). */
const HAND: LayoutFile = {
  name: MARKUP_NAME,
  phases: { A: { label: 'oil <A>', viscosity: '5 mPa.s', density: 900 }, B: { label: "water 'B'", viscosity: '1 mPa.s', density: 1000 } },
  interfacialTension: '20 mN/m',
  contactAngleA: { advancing: '150 deg', receding: '120 deg' },
  maxPressure: '50 kPa',
  nodes: [
    { id: 'in<A>', type: 'inlet', phase: 'A', pressure: '8 kPa' },
    { id: 'inB', type: 'inlet', phase: 'B', pressure: '6 kPa' },
    { id: 'jA', type: 'junction' },
    { id: 'jB', type: 'junction' },
    { id: 'm1', type: 'merge', inlets: ['a1', 'b1'] },
    { id: 'm2', type: 'merge', inlets: ['a2', 'b2'] },
    { id: 's1', type: 'split', outlets: ['oa1', 'ob1'] },
    { id: 's2', type: 'split', outlets: ['oa2', 'ob2'] },
    { id: 'cA', type: 'junction' },
    { id: 'cB', type: 'junction' },
    { id: 'outA', type: 'outlet', pressure: 0, phase: 'A' },
    { id: 'outB', type: 'outlet', pressure: 0, phase: 'B' },
  ],
  segments: [
    { id: 'tA', from: 'in<A>', to: 'jA', shape: 'rect', width: '300 um', depth: '50 um', length: '5 mm' },
    { id: 'tB', from: 'inB', to: 'jB', shape: 'rect', width: '300 um', depth: '50 um', length: '5 mm' },
    { id: 'a1', from: 'jA', to: 'm1', shape: 'rect', width: '100 um', depth: '50 um', length: '4 mm' },
    { id: 'a2', from: 'jA', to: 'm2', shape: 'rect', width: '100 um', depth: '50 um', length: '6 mm' },
    { id: 'b1', from: 'jB', to: 'm1', shape: 'rect', width: '100 um', depth: '50 um', length: '4 mm' },
    { id: 'b2', from: 'jB', to: 'm2', shape: 'rect', width: '100 um', depth: '50 um', length: '6 mm' },
    { id: 'k<1>', from: 'm1', to: 's1', shape: 'rect', width: '200 um', depth: '50 um', length: '20 mm' },
    { id: 'k&2', from: 'm2', to: 's2', shape: 'rect', width: '200 um', depth: '50 um', length: '20 mm' },
    { id: 'oa1', from: 's1', to: 'cA', shape: 'rect', width: '100 um', depth: '50 um', length: '4 mm' },
    { id: 'ob1', from: 's1', to: 'cB', shape: 'rect', width: '100 um', depth: '50 um', length: '4 mm' },
    { id: 'oa2', from: 's2', to: 'cA', shape: 'rect', width: '100 um', depth: '50 um', length: '4 mm' },
    { id: 'ob2', from: 's2', to: 'cB', shape: 'rect', width: '100 um', depth: '50 um', length: '4 mm' },
    { id: 'xA', from: 'cA', to: 'outA', shape: 'tube', diameter: '500 um', length: '50 mm' },
    { id: 'xB', from: 'cB', to: 'outB', shape: 'tube', diameter: '500 um', length: '50 mm' },
  ],
};

/** The same with phase B on the near side of the second contactor (merge and split lists swapped). */
const HAND_SWAPPED: LayoutFile = {
  ...HAND,
  nodes: HAND.nodes.map((n) => (n.id === 'm2' ? { ...n, inlets: ['b2', 'a2'] } : n.id === 's2' ? { ...n, outlets: ['ob2', 'oa2'] } : n)) as LayoutFile['nodes'],
};

describe('chipDrawing', () => {
  const leaky = ladder((l) => setPressure(l, 'outB', 600));
  const tree = solveChip(layoutToChip(treeLayout({ drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } }), 'tree.yaml'));
  const hand = solveChip(layoutToChip(HAND, 'hand.yaml'));
  const swapped = solveChip(layoutToChip(HAND_SWAPPED, 'hand.yaml'));

  it('writes well-formed SVG for a ladder, a tree, a layout without coordinates and the pressure colouring', () => {
    for (const solved of [leaky, tree, hand]) {
      for (const colourBy of ['phase', 'pressure'] as const) {
        const root = parse(chipDrawing(solved, { colourBy }));
        expect(root.name).toBe('svg');
        expect(root.attrs.xmlns).toBe('http://www.w3.org/2000/svg');
      }
    }
  });

  it('draws every two-phase segment with its interface at the solved holdup, to 1e-6 of the drawn width', () => {
    for (const solved of [leaky, tree, hand, swapped]) {
      const root = parse(chipDrawing(solved));
      const contactors = all(root, hasClass('contactor'));
      const expected = solved.result.segments.filter((s) => s.kind === 'contactor');
      expect(contactors.map((g) => g.attrs['data-segment']).sort()).toEqual(expected.map((s) => s.id).sort());
      for (const g of contactors) {
        const segment = expected.find((s) => s.id === g.attrs['data-segment'])!;
        const frame = all(g, hasClass('frame'))[0]!;
        const interfaces = all(g, hasClass('interface'));
        expect(interfaces).toHaveLength(1);
        const line = interfaces[0]!.attrs;
        expect(Number(line.y1)).toBe(Number(line.y2));
        // Walls at v = 0 (near) and v = 1 (far) of the channel's own frame.
        expect(all(frame, hasClass('wall'))[0]!.attrs.d).toBe('M0,0H1M0,1H1');
        const map = matrixOf(frame.attrs.transform!);
        const near = map(0.5, 0);
        const far = map(0.5, 1);
        const across = distance(map(0.5, Number(line.y1)), near) / distance(far, near);
        const nearA = g.attrs['data-near-phase'] === 'A';
        expect(Math.abs(across - (nearA ? segment.holdupA! : 1 - segment.holdupA!))).toBeLessThanOrEqual(1e-6);
      }
    }
  });

  it('puts the near phase of each contactor (its merge\'s first inlet) on the near side named by its split', () => {
    for (const solved of [leaky, swapped]) {
      const root = parse(chipDrawing(solved));
      for (const split of solved.result.splits) {
        const g = all(root, (e) => hasClass('contactor')(e) && e.attrs['data-segment'] === split.contactor)[0]!;
        expect(g.attrs['data-near-phase']).toBe(split.nearPhase);
        expect(all(g, hasClass('near'))[0]!.attrs.class).toContain(`phase-${split.nearPhase}`);
      }
    }
    expect(swapped.result.splits.find((s) => s.id === 's2')!.nearPhase).toBe('B');
  });

  it('marks every outlet split by its state, a leak by a triangle pointing from the invading phase across the channel', () => {
    // Raising one outlet's pressure pushes the other phase into it: B into A's outlet when outB is
    // high, A into B's outlet when outA is high (common practice in running such chips).
    const intoA = ladder((l) => setPressure(l, 'outB', 3000), 8);
    const intoB = ladder((l) => setPressure(l, 'outA', 3000), 8);
    const states = new Set<string>();
    for (const solved of [leaky, intoA, intoB]) {
      const svg = chipDrawing(solved);
      const root = parse(svg);
      for (const split of solved.result.splits) {
        states.add(split.state);
        const marks = all(root, (e) => hasClass('split')(e) && e.attrs['data-split'] === split.id);
        expect(marks).toHaveLength(1);
        expect(marks[0]!.attrs.class).toBe(`split ${split.state}`);
        if (split.state === 'pinned') {
          // A diamond: inlets are the circles of the drawing.
          expect(all(marks[0]!, (e) => e.name === 'path' && /^M[-\d.]+,[-\d.]+(L[-\d.]+,[-\d.]+){3}Z$/.test(e.attrs.d ?? ''))).toHaveLength(1);
          continue;
        }
        const contactor = all(root, (e) => hasClass('contactor')(e) && e.attrs['data-segment'] === split.contactor)[0]!;
        const map = matrixOf(all(contactor, hasClass('frame'))[0]!.attrs.transform!);
        const end = map(1, 0.5);
        const towardFar = [map(1, 1)[0] - end[0], map(1, 1)[1] - end[1]];
        const tip = firstPoint(all(marks[0]!, (e) => e.name === 'path')[0]!.attrs.d!);
        const invader = split.state === 'leaking-A-to-B' ? 'A' : 'B';
        const projection = (tip[0] - end[0]) * towardFar[0]! + (tip[1] - end[1]) * towardFar[1]!;
        expect(Math.sign(projection)).toBe(invader === split.nearPhase ? 1 : -1);
        expect(textOf(marks[0]!)).toMatch(/outlet purities/);
      }
    }
    expect(states).toContain('leaking-A-to-B');
    expect(states).toContain('leaking-B-to-A');
  });

  it('marks backflow on exactly the segments that flow against their design direction', () => {
    // Phase B's inlet far below phase A's: A pushes back into the B feeds.
    const back = ladder((l) => setPressure(l, 'inB', 500), 8);
    const reversed = back.result.segments.filter((s) => s.reversed).map((s) => s.id).sort();
    expect(reversed.length).toBeGreaterThan(0);
    const root = parse(chipDrawing(back));
    const arrows = all(root, hasClass('backflow')).map((e) => e.attrs['data-segment']).sort();
    const halos = all(root, hasClass('backflow-halo')).map((e) => e.attrs['data-segment']).sort();
    expect(arrows).toEqual(reversed);
    expect(halos).toEqual(reversed);
    expect(all(parse(chipDrawing(hand)), hasClass('backflow'))).toHaveLength(hand.result.segments.filter((s) => s.reversed).length);
  });

  it('marks the segments whose pressure exceeds the rating, and none below it', () => {
    const low = { ...leaky, chip: { ...leaky.chip, maxPressure: 5e3 } };
    const peak = new Map(leaky.result.nodes.map((n) => [n.id, Math.max(n.pressure, n.pressureA ?? -Infinity, n.pressureB ?? -Infinity)]));
    const over = leaky.chip.segments.filter((s) => Math.max(peak.get(s.from)!, peak.get(s.to)!) > 5e3).map((s) => s.id).sort();
    expect(over.length).toBeGreaterThan(0);
    const marked = all(parse(chipDrawing(low)), hasClass('over-rating')).map((e) => e.attrs['data-segment']).sort();
    // Zero-length segments (none in this ladder) are not drawn at all.
    expect(marked).toEqual(over);
    expect(all(parse(chipDrawing(leaky)), hasClass('over-rating'))).toHaveLength(0);
  });

  it('draws to scale with a scale bar, contactor widths exaggerated by the factor it states', () => {
    const root = parse(chipDrawing(leaky));
    const caption = textOf(all(root, hasClass('caption'))[0]!);
    const factor = Number(caption.match(/channel widths drawn ×([\d.]+)/)![1]);
    const bar = all(root, hasClass('scale-bar'))[0]!;
    const barPath = all(bar, (e) => e.name === 'path')[0]!.attrs.d!;
    const [, x0, x1] = barPath.match(/^M([-\d.]+),[-\d.]+V[-\d.]+H([-\d.]+)/)!;
    const barMetres = Number(textOf(bar).match(/([\d.]+) mm/)![1]) * 1e-3;
    const pxPerMetre = (Number(x1) - Number(x0)) / barMetres;
    const g = all(root, hasClass('contactor'))[0]!;
    const map = matrixOf(all(g, hasClass('frame'))[0]!.attrs.transform!);
    const width = distance(map(0, 0), map(0, 1));
    const trueWidth = 200e-6; // the ladder generator's default contactor width
    expect(width).toBeCloseTo(trueWidth * pxPerMetre * factor, 1);
    expect(caption).toMatch(/to scale/);
  });

  it('lays out a graph without coordinates automatically and says so instead of drawing a scale bar', () => {
    const root = parse(chipDrawing(hand));
    const caption = textOf(all(root, hasClass('caption'))[0]!);
    expect(caption).toMatch(/laid out automatically/);
    expect(caption).toMatch(/contactors side by side/);
    expect(caption).toMatch(/not to scale/);
    expect(all(root, hasClass('scale-bar'))).toHaveLength(0);
  });

  it('escapes every user string: names, labels and ids with markup characters', () => {
    const svg = chipDrawing(hand);
    expect(svg).toContain('bench &lt;chip&gt; &amp; &quot;co&quot; &apos;x&apos;');
    expect(svg).toContain('in&lt;A&gt;');
    expect(svg).toContain('data-segment="k&lt;1&gt;"');
    expect(svg).toContain('oil &lt;A&gt;');
    expect(svg).not.toMatch(/<chip>|<A>|<1>/);
    const root = parse(svg);
    expect(all(root, hasClass('chip-title'))[0]!.text).toBe(MARKUP_NAME);
    expect(all(root, hasClass('contactor')).map((g) => g.attrs['data-segment']).sort()).toEqual(['k&2', 'k<1>']);
  });

  it('colours by pressure with a labelled colour bar', () => {
    const root = parse(chipDrawing(leaky, { colourBy: 'pressure' }));
    const bar = all(root, hasClass('colour-bar'));
    expect(bar).toHaveLength(1);
    expect(textOf(bar[0]!)).toContain('pressure (kPa)');
    expect(all(root, (e) => e.attrs['data-node'] !== undefined && e.name === 'circle').length).toBeGreaterThan(0);
  });

  it('gives byte-identical output run to run', () => {
    expect(chipDrawing(leaky)).toBe(chipDrawing(leaky));
  });
});

describe('chipDrawing with the contactors coloured by approach to equilibrium', () => {
  /** Invented demo solute; the leaky ladder's flows (splits leaking both ways) are what it runs on. */
  const SOLUTE: SoluteSetup = { label: 'demo dye', partition: 4, feedPhase: 'A', feedConcentration: 1, diffusivityA: 0.5e-9, diffusivityB: 1e-9 };
  const leaky = ladder((l) => setPressure(l, 'outB', 600));
  const colouring = extractionColouring(analyseExtraction(leaky, SOLUTE));
  const contactorIds = leaky.result.segments.filter((s) => s.kind === 'contactor').map((s) => s.id);
  const bandsOf = (g: Element) => all(g, (e) => (e.attrs.class ?? '').split(' ').includes('band'));

  it('fills both bands of every contactor with the colouring\'s fill, keeping the interface and the hatch of phase B', () => {
    const root = parse(chipDrawing(leaky, { extraction: colouring }));
    const contactors = all(root, hasClass('contactor'));
    expect(contactors.map((g) => g.attrs['data-segment']).sort()).toEqual([...contactorIds].sort());
    for (const g of contactors) {
      const id = g.attrs['data-segment']!;
      expect(g.attrs.class).toContain('by-approach');
      const bands = bandsOf(g);
      expect(bands.length).toBeGreaterThan(0);
      for (const band of bands) expect(band.attrs.fill, id).toBe(colouring.fill.get(id));
      expect(all(g, hasClass('interface'))).toHaveLength(1);
      const bandsOfB = bands.filter((b) => b.attrs.class!.includes('phase-B'));
      expect(all(g, hasClass('hatch'))).toHaveLength(bandsOfB.length);
      expect(textOf(g)).toContain(`approach to equilibrium ${colouring.label.get(id)}`);
    }
  });

  it('leaves a contactor the colouring does not name in its phase colours', () => {
    const [left, ...rest] = contactorIds;
    const partial: ExtractionColouring = {
      ...colouring,
      fill: new Map(rest.map((id) => [id, colouring.fill.get(id)!])),
      label: new Map(rest.map((id) => [id, colouring.label.get(id)!])),
    };
    const root = parse(chipDrawing(leaky, { extraction: partial }));
    const g = all(root, (e) => hasClass('contactor')(e) && e.attrs['data-segment'] === left)[0]!;
    expect(g.attrs.class).not.toContain('by-approach');
    for (const band of bandsOf(g)) {
      const look = band.attrs.class!.match(/phase-(A|B|mixed)/)![1]!;
      if (look !== 'mixed') expect(band.attrs.fill).toBe(PHASE_COLOURS[look as 'A' | 'B']);
    }
    expect(textOf(all(root, hasClass('caption'))[0]!)).toMatch(/1 contactor not analysed keeps the phase colours/);
  });

  it('draws a labelled colour bar of approach to equilibrium from 0 to 1 in the colours of the fills', () => {
    const root = parse(chipDrawing(leaky, { extraction: colouring }));
    const bars = all(root, hasClass('colour-bar'));
    expect(bars).toHaveLength(1);
    expect(bars[0]!.attrs.class).toBe('colour-bar approach');
    const title = all(bars[0]!, hasClass('title'))[0]!;
    expect(title.text).toBe(colouring.title);
    expect(colouring.title).toBe('approach to equilibrium');
    const ticks = all(bars[0]!, (e) => e.name === 'text' && !hasClass('title')(e)).map((e) => Number(e.text));
    expect(ticks).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    // 64 strips from the bottom (approach 0) up, each in the colour of its middle value, each
    // starting where the one below ends (edges rounded once, so no gap and no overlap). Positions
    // are written to 0.01 px; 1e-6 px allows for the binary sum of two such decimals.
    const strips = all(bars[0]!, (e) => e.name === 'rect' && e.attrs.fill !== 'none');
    expect(strips).toHaveLength(64);
    strips.forEach((r, k) => expect(r.attrs.fill).toBe(approachColour((k + 0.5) / 64)));
    for (let k = 1; k < strips.length; k++) expect(Number(strips[k - 1]!.attrs.y)).toBeCloseTo(Number(strips[k]!.attrs.y) + Number(strips[k]!.attrs.height), 6);
    for (const stop of colouring.stops) expect(stop.colour).toBe(approachColour(stop.value));
  });

  it('labels each contactor with its approach along the channel where neighbours leave room', () => {
    const root = parse(chipDrawing(leaky, { extraction: colouring }));
    const labels = all(all(root, hasClass('approach-labels'))[0]!, (e) => e.name === 'text').map((e) => e.text);
    expect(labels).toEqual(contactorIds.map((id) => colouring.label.get(id)));
  });

  it('puts the pressure and approach colour bars side by side inside the canvas', () => {
    const root = parse(chipDrawing(leaky, { colourBy: 'pressure', extraction: colouring }));
    const bars = all(root, hasClass('colour-bar'));
    expect(bars.map((b) => b.attrs.class)).toEqual(['colour-bar pressure', 'colour-bar approach']);
    const [pressureX, approachX] = bars.map((b) => Number(all(b, hasClass('title'))[0]!.attrs.x));
    expect(approachX! - pressureX!).toBeGreaterThanOrEqual(12 + 90);
    expect(approachX! + Math.max(12 + 90, textWidth(colouring.title))).toBeLessThanOrEqual(Number(root.attrs.width));
  });

  it('gives byte-identical output run to run', () => {
    expect(chipDrawing(leaky, { extraction: colouring })).toBe(chipDrawing(leaky, { extraction: extractionColouring(analyseExtraction(leaky, SOLUTE)) }));
  });
});

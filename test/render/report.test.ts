import { describe, expect, it } from 'vitest';
import { XMLValidator } from 'fast-xml-parser';
import { Graph, alg } from '@dagrejs/graphlib';
import { ladderLayout, treeLayout } from '../../src/layout/generate.js';
import { layoutToChip } from '../../src/layout/load.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip } from '../../src/analyses/chip.js';
import { chipCharts } from '../../src/render/chipCharts.js';
import { findManifolds } from '../../src/analyses/manifolds.js';
import { chipReport, inputTables } from '../../src/render/report.js';
import { SAFETY_NOTES } from '../../src/render/text.js';
import { analyseExtraction, type SoluteSetup } from '../../src/analyses/extraction.js';
import { EXTRACTION_MODEL_NOTES, extractionColouring, extractionSummaryItems, soluteLine } from '../../src/render/extractionCharts.js';
import { escapeXml } from '../../src/render/svg.js';

const MARKUP_NAME = `report <chip> & "co"`;
const PITCH = 1e-3;

/** A generated ladder (invented demo values), its coordinates removed and a contactor renamed with markup characters. */
function withoutCoordinates(): LayoutFile {
  const layout = ladderLayout({ contactors: 3, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } });
  const rename = (id: string) => (id === 'k2' ? 'k<2>&' : id);
  return {
    ...layout,
    name: MARKUP_NAME,
    phases: { ...layout.phases, A: { ...layout.phases.A, label: 'oil <A>' } },
    nodes: layout.nodes.map(({ x: _x, y: _y, ...n }) => n) as LayoutFile['nodes'],
    segments: layout.segments.map((s) => ({ ...s, id: rename(s.id) })),
  };
}

const ladder = solveChip(layoutToChip(ladderLayout({ contactors: 16, pitch: PITCH, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } }), 'ladder.yaml'));
const tree = solveChip(layoutToChip(treeLayout({ levels: 3, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } }), 'tree.yaml'));
const bare = solveChip(layoutToChip(withoutCoordinates(), 'bare.yaml'));

describe('findManifolds', () => {
  it('finds the four manifolds of a ladder, each a chain starting at its inlet or outlet', () => {
    const manifolds = findManifolds(ladder);
    expect(manifolds.map((m) => `${m.role} ${m.phase} ${m.entry}`).sort()).toEqual(['collection A outA', 'collection B outB', 'distribution A inA', 'distribution B inB']);
    for (const m of manifolds) {
      expect(m.branched).toBe(false);
      expect(m.profile).toHaveLength(17);
      expect(m.profile[0]).toMatchObject({ node: m.entry, distance: 0 });
    }
  });

  it('measures distance along the channels: the ladder generator puts junction k at half a pitch plus k − 1 pitches from the inlet', () => {
    const a = findManifolds(ladder).find((m) => m.entry === 'inA')!;
    for (let k = 1; k <= 16; k++) {
      const point = a.profile.find((p) => p.node === `dA${k}`)!;
      expect(point.distance).toBeCloseTo(0.5 * PITCH + (k - 1) * PITCH, 12);
    }
  });

  it('takes the pressures of the solution', () => {
    const pressure = new Map(ladder.result.nodes.map((n) => [n.id, n.pressure]));
    for (const m of findManifolds(ladder)) for (const p of m.profile) expect(p.pressure).toBe(pressure.get(p.node));
  });

  it('knows a tree manifold as branched', () => {
    const manifolds = findManifolds(tree);
    expect(manifolds).toHaveLength(4);
    expect(manifolds.every((m) => m.branched)).toBe(true);
  });
});

describe('findManifolds distances', () => {
  // Reference: graphlib's Dijkstra (a general-purpose graph library from the npm registry) over the
  // same channels; the manifolds of a ladder and of a tree have no loops, and findManifolds walks them.
  const dijkstra = (solved: typeof ladder, m: ReturnType<typeof findManifolds>[number]) => {
    const members = new Set(m.profile.map((p) => p.node));
    const g = new Graph({ directed: false, multigraph: true });
    for (const id of members) g.setNode(id);
    for (const s of solved.chip.segments) if (members.has(s.from) && members.has(s.to) && s.section.shape !== 'tube') g.setEdge(s.from, s.to, s.length, s.id);
    return alg.dijkstra(g, m.entry, (e) => g.edge(e) as number, (v) => g.nodeEdges(v) ?? []);
  };

  it('walks a chain and a tree to the distances Dijkstra gives, to rounding (1e-15 m on sums of metres)', () => {
    for (const solved of [ladder, tree]) {
      for (const m of findManifolds(solved)) {
        const reference = dijkstra(solved, m);
        for (const p of m.profile) expect(Math.abs(p.distance - reference[p.node]!.distance)).toBeLessThan(1e-15);
      }
    }
  });

  it('takes the shorter way round a manifold whose channels close a loop', () => {
    // The 16-contactor ladder with a bypass from dA1 straight to dA16 of 2 pitches: dA16 is then 2.5 pitches from the inlet, not 15.5.
    const layout = ladderLayout({ contactors: 16, pitch: PITCH, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } });
    const bypass = { ...layout.segments.find((s) => s.id === 'mdA1')!, id: 'bypassA', from: 'dA1', to: 'dA16', length: 2 * PITCH };
    const looped = solveChip(layoutToChip({ ...layout, segments: [...layout.segments, bypass] }, 'looped.yaml'));
    const a = findManifolds(looped).find((m) => m.entry === 'inA')!;
    expect(a.profile.find((p) => p.node === 'dA16')!.distance).toBeCloseTo(2.5 * PITCH, 12);
    const reference = dijkstra(looped, a);
    for (const p of a.profile) expect(p.distance).toBeCloseTo(reference[p.node]!.distance, 12);
  });
});

describe('inputTables of a large chip', () => {
  it('lists nodes by kind and segments by group above 10 000 rows, with every port in full', () => {
    // A generated 1700-contactor ladder (invented demo values), not solved: 15 300 segments, 10 204 nodes.
    // Regression of scale: 16 384 contactors wrote 147 456 segment rows, 34 MB of the report.
    const chip = layoutToChip(ladderLayout({ contactors: 1700 }), 'big.yaml');
    const html = inputTables(chip).join('\n');
    const segments = html.slice(html.indexOf('<details><summary>Segments'));
    expect(segments).toContain('15300 segments, more than 10000 to list: by group and shape here, every one in the layout file.');
    const rows = [...segments.matchAll(/<tr><td class="text">(\w+)<\/td><td class="text">rect<\/td><td>(\d+)<\/td>/g)].map((m) => [m[1], Number(m[2])]);
    // The generator's groups: 2 feeds, 1 contactor and 2 drains per contactor; 4 manifolds of 1699 segments plus an entry or exit each.
    expect(Object.fromEntries(rows)).toEqual({ feed: 3400, contactor: 1700, drain: 3400, manifold: 4 * 1700 });
    const nodes = html.slice(html.indexOf('<details><summary>Nodes'), html.indexOf('<details><summary>Segments'));
    expect(nodes).toContain('10204 nodes, more than 10000 to list');
    expect(nodes).toContain('<td class="text">inA</td>');
    expect(nodes).toContain('<td class="text">outB</td>');
    expect(nodes).not.toContain('<td class="text">dA600</td>');
  });

  it('lists every node and segment of a chip below that', () => {
    const html = inputTables(ladder.chip).join('\n');
    expect(html).toContain('<td class="text">dA7</td>');
    expect(html).toContain('<td class="text">mcB3</td>');
  });
});

describe('findManifolds with tubing', () => {
  // The ladder generator with 300 mm of tubing at each port (invented demo values).
  const tubed = solveChip(layoutToChip(ladderLayout({ contactors: 8, pitch: PITCH, tubing: { diameter: 250e-6, length: 0.3 }, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } }), 'tubed.yaml'));

  it('starts each manifold at the chip port its tubing joins and gives the tubing apart, with its pressure drop', () => {
    const manifolds = findManifolds(tubed);
    const pressure = new Map(tubed.result.nodes.map((n) => [n.id, n.pressure]));
    expect(manifolds.map((m) => m.entry).sort()).toEqual(['portA', 'portB', 'portOutA', 'portOutB']);
    const a = manifolds.find((m) => m.entry === 'portA')!;
    expect(a.tubing).toEqual([{ segment: 'tubeInA', length: 0.3, pressureDrop: pressure.get('inA')! - pressure.get('portA')! }]);
    // Along the chip only: no node lies farther than the manifold's own channels reach (a few pitches, not the tubing's 300 mm).
    for (const m of manifolds) expect(Math.max(...m.profile.map((p) => p.distance))).toBeLessThan(10 * PITCH);
    expect(manifolds.flatMap((m) => m.profile.map((p) => p.node))).not.toContain('inA');
  });

  it('charts the pressure along the chip and states the tubing drop in words', () => {
    const svg = chipCharts(tubed, findManifolds(tubed)).find((c) => c.id === 'pressure-distribution')!.svg;
    expect(svg).toMatch(/Tubing tubeInA \(300 mm, not drawn\): pressure drop [\d.]+ kPa\./);
  });
});

describe('chipCharts', () => {
  it('draws per-contactor flows, holdup and deviation, and the pressure along both kinds of manifold, with labelled axes', () => {
    const charts = chipCharts(ladder, findManifolds(ladder));
    expect(charts.map((c) => c.id)).toEqual(['flows', 'holdup', 'deviation', 'pressure-distribution', 'pressure-collection']);
    for (const c of charts) expect(XMLValidator.validate(c.svg)).toBe(true);
    const svg = Object.fromEntries(charts.map((c) => [c.id, c.svg]));
    expect(svg.flows).toContain('flow (µL/min)');
    expect(svg.flows).toContain('contactor number');
    expect(svg.holdup).toContain('holdup of A (–)');
    expect(svg.deviation).toContain('deviation from the mean (%)');
    expect(svg['pressure-distribution']).toContain('pressure (kPa)');
    expect(svg['pressure-distribution']).toContain('distance along the manifold from its inlet port (mm)');
    expect(svg['pressure-collection']).toContain('distance along the manifold from its outlet port (mm)');
  });

  it('gives equal contactors a readable axis instead of one spanning rounding noise', () => {
    // A symmetric tree feeds every contactor alike, up to rounding.
    const holdup = chipCharts(tree, findManifolds(tree)).find((c) => c.id === 'holdup')!.svg;
    const ticks = [...holdup.matchAll(/<g class="axis y">(.*?)<\/g>/g)][0]![1]!;
    for (const m of ticks.matchAll(/>([-\d.]+)<\/text>/g)) expect(m[1]!.length).toBeLessThanOrEqual(6);
  });
});

describe('chipReport', () => {
  const html = chipReport(bare, findManifolds(bare));

  it('is one well-formed document', () => {
    for (const page of [html, chipReport(ladder, findManifolds(ladder)), chipReport(tree, findManifolds(tree))]) {
      expect(page.startsWith('<!DOCTYPE html>')).toBe(true);
      expect(XMLValidator.validate(page)).toBe(true);
    }
  });

  it('needs no network: no scripts, links, external images or fonts', () => {
    expect(html).not.toMatch(/<script|<link|<img|<iframe|@import|src=/i);
    // The only URLs are the SVG namespace names, which browsers never fetch.
    const urls = [...html.matchAll(/https?:\/\/[^"'\s)]+/g)].map((m) => m[0]);
    expect(new Set(urls)).toEqual(new Set(['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink']));
    for (const m of html.matchAll(/url\(([^)]*)\)/g)) expect(m[1]!.startsWith('#')).toBe(true);
  });

  it('holds the cautions, the summary, the warnings, the drawing, the charts, the tables and the inputs', () => {
    for (const note of SAFETY_NOTES) expect(html).toContain(escapeXml(note));
    for (const heading of ['Cautions', 'Summary', 'Warnings', 'Chip drawing', 'Charts', 'Per-contactor table', 'Outlet splits', 'Inputs as read']) {
      expect(html).toMatch(new RegExp(`<h2>${heading}( \\(\\d+\\))?</h2>`));
    }
    for (const warning of bare.result.warnings.slice(0, 5)) expect(html).toContain(escapeXml(warning));
    expect(html).toContain('class="contactor"');
    expect((html.match(/<figure class="chart"/g) ?? []).length).toBe(5);
    const table = html.slice(html.indexOf('Per-contactor table'), html.indexOf('Outlet splits'));
    expect((table.match(/<tr/g) ?? []).length).toBe(1 + bare.result.contactors.length);
    for (const node of bare.chip.nodes) expect(html).toContain(`<td class="text">${escapeXml(node.id)}</td>`);
    expect(html).toContain('viscosity 7.3 mPa·s'); // the generator's default phase A
  });

  it('escapes every user string', () => {
    expect(html).toContain('<title>report &lt;chip&gt; &amp; &quot;co&quot; — stratiflow report</title>');
    expect(html).toContain('<h1>report &lt;chip&gt; &amp; &quot;co&quot;</h1>');
    expect(html).toContain('k&lt;2&gt;&amp;');
    expect(html).toContain('oil &lt;A&gt;');
    expect(html).not.toMatch(/<chip>|<2>|<A>/);
  });
});

describe('chipReport with an extraction', () => {
  /** Invented demo solute, its name with markup characters; the 16-contactor ladder's splits leak, which the extraction warns about. */
  const SOLUTE: SoluteSetup = { label: 'dye <D> & "co"', partition: 4, feedPhase: 'A', feedConcentration: 1, diffusivityA: 0.5e-9, diffusivityB: 1e-9 };
  const extraction = analyseExtraction(ladder, SOLUTE);
  const html = chipReport(ladder, findManifolds(ladder), { extraction });
  const section = html.slice(html.indexOf('<h2>Extraction</h2>'), html.indexOf('<h2>Inputs as read</h2>'));

  it('is one well-formed document that needs no network', () => {
    expect(XMLValidator.validate(html)).toBe(true);
    expect(html).not.toMatch(/<script|<link|<img|<iframe|@import|src=/i);
    for (const m of html.matchAll(/url\(([^)]*)\)/g)) expect(m[1]!.startsWith('#')).toBe(true);
  });

  it('holds the Extraction section: the solute, the chip figures, the model notes and the per-contactor table', () => {
    expect(section.length).toBeGreaterThan(0);
    expect(section).toContain(escapeXml(soluteLine(extraction)));
    for (const [key, value] of extractionSummaryItems(extraction)) expect(section).toContain(`<dt>${escapeXml(key)}</dt><dd>${escapeXml(value)}</dd>`);
    for (const note of EXTRACTION_MODEL_NOTES) expect(section).toContain(`<li>${escapeXml(note)}</li>`);
    const table = section.slice(section.indexOf('<table>'), section.indexOf('</table>'));
    expect((table.match(/<tr/g) ?? []).length).toBe(1 + extraction.contactors.length);
    expect(table).toContain('approach %');
  });

  it('draws the chart along the channel for the best, median and worst contactor, and the chart per contactor', () => {
    const along = section.match(/<figure class="chart" id="chart-extraction-along">(.*?)<\/figure>/s)![1]!;
    const perContactor = section.match(/<figure class="chart" id="chart-extraction-per-contactor">(.*?)<\/figure>/s)![1]!;
    for (const svg of [along, perContactor]) expect(XMLValidator.validate(svg)).toBe(true);
    expect(extraction.profiles.map((p) => p.role)).toEqual(['best', 'median', 'worst']);
    for (const p of extraction.profiles) expect(along).toContain(`${p.role}: ${p.id} (#${p.index})`);
    expect(perContactor).toContain('at equilibrium');
    expect((html.match(/<figure class="chart"/g) ?? []).length).toBe(5 + 2);
  });

  it('lists the extraction warnings after those of the flow solve, and counts both', () => {
    expect(extraction.warnings.length).toBeGreaterThan(0);
    const count = ladder.result.warnings.length + extraction.warnings.length;
    expect(html).toContain(`<h2>Warnings (${count})</h2>`);
    for (const w of extraction.warnings) expect(html).toContain(escapeXml(`extraction: ${w}`));
  });

  it('draws the chip with every contactor coloured by its approach to equilibrium', () => {
    const { fill } = extractionColouring(extraction);
    const drawing = html.slice(html.indexOf('<h2>Chip drawing</h2>'), html.indexOf('<h2>Charts</h2>'));
    expect(drawing).toContain('class="colour-bar approach"');
    const groups = [...drawing.matchAll(/<g class="contactor by-approach" data-segment="([^"]+)"(.*?)<\/g>/gs)];
    expect(groups.map((g) => g[1]).sort()).toEqual([...fill.keys()].sort());
    for (const [, id, body] of groups) {
      const bands = [...body!.matchAll(/class="band [^"]*" d="[^"]*" fill="([^"]+)"/g)].map((m) => m[1]);
      expect(bands.length, id).toBeGreaterThan(0);
      for (const colour of bands) expect(colour).toBe(fill.get(id!));
    }
  });

  it('escapes the solute name in the section and the charts', () => {
    expect(section).toContain('dye &lt;D&gt; &amp; &quot;co&quot;');
    expect(html).not.toMatch(/<D>/);
  });

  it('adds nothing without an extraction', () => {
    const plain = chipReport(ladder, findManifolds(ladder));
    expect(chipReport(ladder, findManifolds(ladder), { extraction: undefined })).toBe(plain);
    expect(plain).not.toContain('<h2>Extraction</h2>');
    expect(plain).not.toMatch(/by-approach|colour-bar|extraction: /);
  });
});

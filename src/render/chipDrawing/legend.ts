/**
 * The legend of the chip drawing and the patterns it shares with the drawing (phase B's hatch,
 * the stripes of a mixed channel). Exports `legendEntries` and `defs`.
 */
import { INK } from '../palette.js';
import { el, hatchDefs, type LegendEntry, type SvgNode } from '../svg.js';
import { approachColour } from '../extractionCharts.js';
import { arrowhead, leakTriangle, pinnedDiamond } from './geometry.js';
import { ARROW, BACKFLOW_COLOUR, MIXED, PHASE_B_HATCH, PHASE_COLOURS } from './common.js';

/** Fixed-content definitions: the hatch of phase B (shared with the charts) and the stripes of a mixed channel. */
export function defs(root: SvgNode): void {
  hatchDefs(root, 2);
  const d = el(root, 'defs');
  const p = el(d, 'pattern', { id: 'stratiflow-chip-mixed', width: 8, height: 8, patternUnits: 'userSpaceOnUse', patternTransform: 'rotate(45)' });
  el(p, 'rect', { width: 4, height: 8, fill: PHASE_COLOURS.A });
  el(p, 'rect', { x: 4, width: 4, height: 8, fill: PHASE_COLOURS.B });
}

/** `leakA`: the screen direction of phase A's leak mark in the drawing (./marks.ts legendLeakAngle); B's points the other way. */
export function legendEntries(labelA: string, labelB: string, byPressure: boolean, byApproach: boolean, leakA = 0): LegendEntry[] {
  const band = (colour: string, hatch = false): LegendEntry['swatch'] => (g, cx, cy) => {
    el(g, 'rect', { x: cx - 10, y: cy - 5, width: 20, height: 10, fill: colour, stroke: INK.axis, 'stroke-width': 0.8 });
    if (hatch) el(g, 'rect', { x: cx - 10, y: cy - 5, width: 20, height: 10, fill: PHASE_B_HATCH });
  };
  return [
    { text: `phase A: ${labelA}`, swatch: band(PHASE_COLOURS.A) },
    { text: `phase B: ${labelB}`, swatch: band(PHASE_COLOURS.B, true) },
    {
      text: 'interface at the solved holdup',
      swatch: (g, cx, cy) => {
        el(g, 'rect', { x: cx - 10, y: cy - 6, width: 20, height: 7, fill: PHASE_COLOURS.A });
        el(g, 'rect', { x: cx - 10, y: cy + 1, width: 20, height: 5, fill: PHASE_COLOURS.B });
        el(g, 'rect', { x: cx - 10, y: cy + 1, width: 20, height: 5, fill: PHASE_B_HATCH });
        el(g, 'line', { x1: cx - 10, y1: cy + 1, x2: cx + 10, y2: cy + 1, stroke: '#000000', 'stroke-width': 1.5 });
      },
    },
    ...(byPressure ? [] : [{ text: 'both phases mixed (no interface)', swatch: band(MIXED) }]),
    ...(byApproach
      ? [{
          text: 'contactor by approach to equilibrium (colour bar), B hatched',
          swatch: (g: SvgNode, cx: number, cy: number) => {
            [0.15, 0.5, 0.85].forEach((t, i) => void el(g, 'rect', { x: cx - 10 + (20 * i) / 3, y: cy - 6, width: 20 / 3, height: 12, fill: approachColour(t) }));
            el(g, 'rect', { x: cx - 10, y: cy + 1, width: 20, height: 5, fill: PHASE_B_HATCH });
            el(g, 'line', { x1: cx - 10, y1: cy + 1, x2: cx + 10, y2: cy + 1, stroke: '#000000', 'stroke-width': 1.5 });
          },
        }]
      : []),
    { text: 'flow direction', swatch: (g, cx, cy) => void el(g, 'path', { d: arrowhead({ x: cx, y: cy }, 0, ARROW + 1), fill: INK.halo, stroke: INK.text, 'stroke-width': 1 }) },
    {
      text: 'backflow (against the design direction)',
      swatch: (g, cx, cy) => {
        el(g, 'line', { x1: cx - 11, y1: cy, x2: cx + 11, y2: cy, stroke: BACKFLOW_COLOUR, 'stroke-width': 12 });
        el(g, 'path', { d: arrowhead({ x: cx, y: cy }, 0, ARROW + 1, -3) + arrowhead({ x: cx, y: cy }, 0, ARROW + 1, 4), fill: BACKFLOW_COLOUR, stroke: INK.text, 'stroke-width': 1 });
      },
    },
    { text: 'outlet split pinned', swatch: (g, cx, cy) => void el(g, 'path', { d: pinnedDiamond({ x: cx, y: cy }, 6), fill: INK.text, stroke: INK.halo, 'stroke-width': 1.2 }) },
    { text: 'split leaking A into the B outlet (purity of that outlet)', swatch: (g, cx, cy) => void el(g, 'path', { d: leakTriangle({ x: cx, y: cy }, leakA, 6), fill: PHASE_COLOURS.A, stroke: INK.text, 'stroke-width': 1.4 }) },
    { text: 'split leaking B into the A outlet', swatch: (g, cx, cy) => void el(g, 'path', { d: leakTriangle({ x: cx, y: cy }, leakA + Math.PI, 6), fill: PHASE_COLOURS.B, stroke: INK.text, 'stroke-width': 1.4 }) },
    { text: 'above the pressure rating', swatch: (g, cx, cy) => void el(g, 'line', { x1: cx - 11, y1: cy, x2: cx + 11, y2: cy, stroke: INK.text, 'stroke-width': 9, 'stroke-dasharray': '5 3' }) },
    { text: 'inlet (in its phase\'s colour)', swatch: (g, cx, cy) => void el(g, 'circle', { cx, cy, r: 5, fill: PHASE_COLOURS.A, stroke: INK.text, 'stroke-width': 1.6 }) },
    { text: 'outlet (in its phase\'s colour)', swatch: (g, cx, cy) => void el(g, 'rect', { x: cx - 5, y: cy - 5, width: 10, height: 10, fill: PHASE_COLOURS.B, stroke: INK.text, 'stroke-width': 1.6 }) },
  ];
}

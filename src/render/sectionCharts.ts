/**
 * Charts of one cross-section: flow fraction against holdup for several aspect ratios (with the
 * limit of infinitely deep plates, and with the interface an arc beside the flat one where asked), and the velocity map over the cross-section with the
 * interface. Exports `flowFractionChart`, `velocityFieldChart`. Pure: data in (from
 * analyses/sectionCurves.ts), SVG out.
 */
import type { FlowFractionCurves, SectionVelocity } from '../analyses/sectionCurves.js';
import { DISPLAY } from '../units/format.js';
import { heatmap, lineChart, type LineSeries } from './chart.js';

/** The legend name of a curve: this channel (with the arc or flat, when the interface is curved), a comparison rectangle, or the plates. */
function curveName(c: FlowFractionCurves['curves'][number], ratioName: string): string {
  const which = c.interface === 'arc' ? ', interface an arc' : c.interface === 'flat' ? ', flat interface' : '';
  if (c.kind === 'etched' || c.kind === 'trapezoid') return `this ${c.kind} channel${which}`;
  if (c.kind === 'bottom-rectangle') return 'rectangle as wide as its bottom, as deep';
  if (c.aspect === undefined) return 'infinitely deep plates';
  return c.given || c.interface ? `this channel (${ratioName} ${Number(c.aspect.toPrecision(3))})${which}` : `${ratioName} ${c.aspect}`;
}

export function flowFractionChart(data: FlowFractionCurves): string {
  const { ratioName } = data;
  const series: LineSeries[] = data.curves.map((c) => ({
    name: curveName(c, ratioName),
    points: c.points,
    ...(c.given ? {} : { dashed: true }),
  }));
  series.push({ name: 'operating point', points: [data.operatingPoint], show: 'points' });
  return lineChart({
    title: `Flow fraction against holdup, μA/μB = ${Number(data.viscosityRatio.toPrecision(3))}`,
    x: { label: 'holdup of A', unit: '–', domain: [0, 1] },
    y: { label: 'flow fraction of A', unit: '–', domain: [0, 1] },
    series,
  });
}

export function velocityFieldChart(data: SectionVelocity): string {
  const { holdup, maximum: peak } = data;
  const um = DISPLAY.length.factor;
  const scale = 1 / peak.u;
  const toDisplay = (points: Array<[number, number]>): Array<[number, number]> => points.map(([y, z]) => [y * um, z * um]);
  return heatmap({
    title: `Velocity over the cross-section (holdup ${holdup.toFixed(3)})`,
    x: { label: 'across the width', unit: DISPLAY.length.symbol, domain: [0, data.width * um] },
    y: { label: 'across the depth', unit: DISPLAY.length.symbol, domain: [0, data.height * um] },
    values: data.u.map((row) => row.map((u) => u * scale)),
    colour: { label: 'velocity / maximum', unit: '–', domain: [0, 1] },
    lines: [{ name: 'interface', points: toDisplay(data.interfaceLine) }, ...(data.outline ? [{ name: 'wall', points: toDisplay(data.outline) }] : [])],
    points: [{ at: [peak.y * um, peak.z * um], label: `maximum (phase ${peak.phase})` }],
  });
}

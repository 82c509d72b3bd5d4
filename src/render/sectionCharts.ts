/**
 * Charts of one cross-section: flow fraction against holdup for several aspect ratios (with the
 * limit of infinitely deep plates), and the velocity map over the cross-section with the
 * interface. Exports `flowFractionChart`, `velocityFieldChart`. Pure: data in (from
 * analyses/sectionCurves.ts), SVG out.
 */
import type { FlowFractionCurves, SectionVelocity } from '../analyses/sectionCurves.js';
import { DISPLAY } from '../units/format.js';
import { heatmap, lineChart, type LineSeries } from './chart.js';

export function flowFractionChart(data: FlowFractionCurves): string {
  const { ratioName } = data;
  const series: LineSeries[] = data.curves.map((c) => ({
    name: c.aspect === undefined ? 'infinitely deep plates' : c.given ? `this channel (${ratioName} ${Number(c.aspect.toPrecision(3))})` : `${ratioName} ${c.aspect}`,
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
  const { section, holdup, maximum: peak } = data;
  const um = DISPLAY.length.factor;
  const scale = 1 / peak.u;
  const interfaceLine: [number, number][] =
    section.orientation === 'side'
      ? [[data.interfaceAt * um, 0], [data.interfaceAt * um, section.depth * um]]
      : [[0, data.interfaceAt * um], [section.width * um, data.interfaceAt * um]];
  return heatmap({
    title: `Velocity over the cross-section (holdup ${holdup.toFixed(3)})`,
    x: { label: 'across the width', unit: DISPLAY.length.symbol, domain: [0, section.width * um] },
    y: { label: 'across the depth', unit: DISPLAY.length.symbol, domain: [0, section.depth * um] },
    values: data.u.map((row) => row.map((u) => u * scale)),
    colour: { label: 'velocity / maximum', unit: '–', domain: [0, 1] },
    lines: [{ name: 'interface', points: interfaceLine }],
    points: [{ at: [peak.y * um, peak.z * um], label: `maximum (phase ${peak.phase})` }],
  });
}

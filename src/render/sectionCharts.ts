/**
 * Charts of one cross-section: flow fraction against holdup for several aspect ratios (with the
 * limit of infinitely deep plates), and the velocity map over the cross-section with the
 * interface. Exports `flowFractionChart`, `velocityFieldChart`. Pure: data in, SVG out.
 */
import { flowFractionAt, layerAxes, type RectSection } from '../physics/section.js';
import { twoLayerPlates } from '../physics/twoLayer.js';
import { velocityField, velocityMaximum } from '../physics/field.js';
import { heatmap, lineChart, type LineSeries } from './chart.js';

const HOLDUPS = Array.from({ length: 49 }, (_, i) => (i + 1) / 50);
/** Ratios of the interface span to the layer thickness direction (along/across) drawn besides the given one. */
const ASPECTS = [0.25, 1, 4];

export function flowFractionChart(section: RectSection, muA: number, muB: number, holdup: number): string {
  const { across, along } = layerAxes(section);
  const curve = (alongOverAcross: number): LineSeries['points'] =>
    HOLDUPS.map((a) => [a, flowFractionAt({ ...section, ...dims(section, across, across * alongOverAcross) }, muA, muB, a).flowFraction] as [number, number]);
  const given = along / across;
  const ratio = section.orientation === 'side' ? 'depth/width' : 'width/depth';
  const series: LineSeries[] = ASPECTS.filter((r) => Math.abs(Math.log(r / given)) > 0.05).map((r) => ({ name: `${ratio} ${r}`, points: curve(r), dashed: true }));
  series.unshift({ name: `this channel (${ratio} ${Number(given.toPrecision(3))})`, points: curve(given) });
  series.push({
    name: 'infinitely deep plates',
    points: HOLDUPS.map((a) => {
      const p = twoLayerPlates(1, a, muA, muB);
      return [a, p.kA / (p.kA + p.kB)] as [number, number];
    }),
    dashed: true,
  });
  series.push({ name: 'operating point', points: [[holdup, flowFractionAt(section, muA, muB, holdup).flowFraction]], show: 'points' });
  return lineChart({
    title: `Flow fraction against holdup, μA/μB = ${Number((muA / muB).toPrecision(3))}`,
    x: { label: 'holdup of A', unit: '–', domain: [0, 1] },
    y: { label: 'flow fraction of A', unit: '–', domain: [0, 1] },
    series,
  });
}

/** The section with the given across/along dimensions in its own orientation. */
function dims(section: RectSection, across: number, along: number): Pick<RectSection, 'width' | 'depth'> {
  return section.orientation === 'side' ? { width: across, depth: along } : { width: along, depth: across };
}

export function velocityFieldChart(section: RectSection, muA: number, muB: number, holdup: number): string {
  const ny = 64;
  const nz = Math.max(8, Math.min(64, Math.round((64 * section.depth) / section.width)));
  const field = velocityField(section, holdup, muA, muB, ny, nz);
  const peak = velocityMaximum(section, holdup, muA, muB);
  const um = 1e6;
  const scale = 1 / peak.u;
  const interfaceLine: [number, number][] =
    section.orientation === 'side'
      ? [[field.interfaceAt * um, 0], [field.interfaceAt * um, section.depth * um]]
      : [[0, field.interfaceAt * um], [section.width * um, field.interfaceAt * um]];
  return heatmap({
    title: `Velocity over the cross-section (holdup ${holdup.toFixed(3)})`,
    x: { label: 'across the width', unit: 'µm', domain: [0, section.width * um] },
    y: { label: 'across the depth', unit: 'µm', domain: [0, section.depth * um] },
    values: field.u.map((row) => row.map((u) => u * scale)),
    colour: { label: 'velocity / maximum', unit: '–', domain: [0, 1] },
    lines: [{ name: 'interface', points: interfaceLine }],
    points: [{ at: [peak.y * um, peak.z * um], label: `maximum (phase ${peak.phase})` }],
  });
}

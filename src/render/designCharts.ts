/**
 * The pictures of a design for its report: the chip drawn before and after, the flow of each
 * phase per contactor before and after, and the widths along every varied group (the taper of
 * a manifold, the restrictors of the feeds). Exports `designCharts`. Pure: data in, SVG out.
 */
import type { DesignResult } from '../analyses/design.js';
import { DISPLAY } from '../units/format.js';
import { lineChart, type LineSeries } from './chart.js';
import { chipDrawing } from './chipDrawing.js';

export function designCharts(r: DesignResult): Array<{ id: string; svg: string; caption?: string }> {
  const charts: Array<{ id: string; svg: string; caption?: string }> = [
    { id: 'before', caption: 'the chip as laid out', svg: chipDrawing(r.before) },
    { id: 'after', caption: 'the chip as designed', svg: chipDrawing(r.after) },
  ];
  const flowSeries: LineSeries[] = [];
  for (const phase of ['A', 'B'] as const) {
    for (const [when, solved] of [['before', r.before], ['after', r.after]] as const) {
      flowSeries.push({
        name: `${phase} ${when}`,
        dashed: when === 'before',
        points: solved.result.contactors.map((c, i) => [i + 1, (phase === 'A' ? c.flowA : c.flowB) * DISPLAY.flow.factor] as const),
      });
    }
  }
  charts.push({
    id: 'flows',
    svg: lineChart({ title: 'flow per contactor, as laid out (dashed) and as designed', x: { label: 'contactor' }, y: { label: 'flow', unit: DISPLAY.flow.symbol }, series: flowSeries }),
  });

  // Widths along each group of the layout that the design changed, in layout order.
  const byGroup = new Map<string, Array<{ before: number; after: number }>>();
  for (const v of r.variables) {
    if (v.variable.quantity !== 'width') continue;
    for (const size of v.sizes) {
      const segment = r.before.chip.segments.find((s) => s.id === size.segment)!;
      const key = segment.group ?? v.variable.name;
      byGroup.set(key, [...(byGroup.get(key) ?? []), size]);
    }
  }
  const widthSeries: LineSeries[] = [];
  for (const [group, sizes] of byGroup) {
    widthSeries.push({ name: `${group} as laid out`, dashed: true, points: sizes.map((s, i) => [i + 1, s.before * DISPLAY.length.factor] as const) });
    widthSeries.push({ name: `${group} as designed`, points: sizes.map((s, i) => [i + 1, s.after * DISPLAY.length.factor] as const) });
  }
  if (widthSeries.length > 0) {
    charts.push({
      id: 'widths',
      svg: lineChart({ title: 'widths along each varied group (segments in layout order)', x: { label: 'segment of the group' }, y: { label: 'width', unit: DISPLAY.length.symbol }, series: widthSeries }),
    });
  }
  return charts;
}

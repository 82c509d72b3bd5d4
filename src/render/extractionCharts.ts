/**
 * Renderings of the extraction results (src/analyses/extraction.ts): the chart of extraction
 * along the channel for the best, median and worst contactor, the chart of extraction per
 * contactor, the colour of each contactor by its approach to equilibrium (for chip drawings), and
 * the table, summary and CSV of the `extract` command (pieces a report can reuse). Exports
 * `extractionAlongChart`, `contactorExtractionChart`, `approachColour`, `extractionColouring`,
 * `EXTRACTION_COLUMNS`, `soluteLine`, `extractionSummaryItems`, `EXTRACTION_MODEL_NOTES`,
 * `extractionText`, `extractionCsv`. Pure: data in, string out; SI in, display units here.
 */
import type { ContactorExtraction, ExtractionResult } from '../analyses/extraction.js';
import { DISPLAY, fmt } from '../units/format.js';
import { dotChart, lineChart, type LineSeries } from './chart.js';
import { viridis } from './palette.js';
import { cautionLines, columnsCsv, textTable, warningsLines } from './text.js';
import { max as maxOf } from 'd3-array';

const MM = DISPLAY.lengthMm.factor;
const percent = (v: number) => 100 * v;

/** Equilibrium values go into the legend: a line chart colours series by order, so extra lines would not match. */
export function extractionAlongChart(result: ExtractionResult): string {
  const series: LineSeries[] = result.profiles.map((p) => ({
    name: `${p.role}: ${p.id} (#${p.index}), ${percent(p.equilibriumExtraction).toFixed(1)} % at equilibrium`,
    points: p.x.map((x, k) => [x * MM, percent(p.extraction[k]!)] as const),
  }));
  return lineChart({
    title: `Extraction of ${result.solute.label} along the contactor`,
    x: { label: 'distance from the merge', unit: 'mm' },
    y: { label: 'extraction (share of the fed solute)', unit: '%' },
    series,
  });
}

export function contactorExtractionChart(result: ExtractionResult): string {
  const rows = result.contactors;
  const { summary } = result;
  return dotChart({
    title: `Extraction of ${result.solute.label} per contactor (a perfectly even chip: ${percent(summary.evenYield).toFixed(2)} %)`,
    index: rows.map((r) => r.index),
    x: { label: 'contactor' },
    y: { label: 'share of the fed solute', unit: '%' },
    groups: [
      { name: 'extraction', values: rows.map((r) => percent(r.extraction)) },
      { name: 'at equilibrium', values: rows.map((r) => percent(r.equilibriumExtraction)) },
    ],
    reference: [{ value: percent(summary.yield), label: `chip yield ${percent(summary.yield).toFixed(2)} %` }],
  });
}

/**
 * Colour of a contactor by its approach to equilibrium on a fixed scale from 0 to 1 (viridis,
 * see ./palette.ts), so that drawings of different chips compare directly.
 */
export function approachColour(approach: number): string {
  return viridis(approach);
}

export interface ExtractionColouring {
  /** Legend title of the colour scale. */
  title: string;
  /** Fill colour by contactor segment id; contactors not analysed are absent. Maps, so that any id (even `__proto__`) is only a key. */
  fill: ReadonlyMap<string, string>;
  /** Short label by contactor segment id, e.g. "93.1 %". */
  label: ReadonlyMap<string, string>;
  /** Colour stops for a legend bar from approach 0 to 1. */
  stops: Array<{ value: number; colour: string }>;
}

export function extractionColouring(result: ExtractionResult): ExtractionColouring {
  const fill = new Map(result.contactors.map((r) => [r.id, approachColour(r.approach)]));
  const label = new Map(result.contactors.map((r) => [r.id, `${percent(r.approach).toFixed(1)} %`]));
  const stops = Array.from({ length: 11 }, (_, k) => ({ value: k / 10, colour: approachColour(k / 10) }));
  return { title: 'approach to equilibrium', fill, label, stops };
}

const flow = (q: number) => fmt(q * DISPLAY.flow.factor);
const length = (x: number | null) => (x === null ? '–' : fmt(x * MM));
const share = (v: number) => percent(v).toFixed(2);

export const EXTRACTION_COLUMNS: Array<{ title: string; csv: string; value: (r: ContactorExtraction) => string }> = [
  { title: '#', csv: 'index', value: (r) => String(r.index) },
  { title: 'contactor', csv: 'contactor', value: (r) => r.id },
  { title: 'A µL/min', csv: 'flowA_uL_min', value: (r) => flow(r.flowA) },
  { title: 'B µL/min', csv: 'flowB_uL_min', value: (r) => flow(r.flowB) },
  { title: 'E', csv: 'extractionFactor', value: (r) => fmt(r.extractionFactor) },
  { title: 'out A', csv: 'outletA', value: (r) => fmt(r.outletA) },
  { title: 'out B', csv: 'outletB', value: (r) => fmt(r.outletB) },
  { title: 'extracted %', csv: 'extraction_percent', value: (r) => share(r.extraction) },
  { title: 'at eq. %', csv: 'equilibriumExtraction_percent', value: (r) => share(r.equilibriumExtraction) },
  { title: 'approach %', csv: 'approach_percent', value: (r) => share(r.approach) },
  { title: 'L mm', csv: 'length_mm', value: (r) => length(r.length) },
  { title: 'L90 mm', csv: 'length90_mm', value: (r) => length(r.length90) },
  { title: 'L99 mm', csv: 'length99_mm', value: (r) => length(r.length99) },
];

export function extractionCsv(result: ExtractionResult): string {
  return columnsCsv(EXTRACTION_COLUMNS, result.contactors);
}

/** One line naming the solute and its data, for the head of a text or report section. */
export function soluteLine(result: ExtractionResult): string {
  const { solute } = result;
  return `${solute.label}: K = c_B/c_A = ${fmt(solute.partition)}, fed in phase ${solute.feedPhase} at ${fmt(solute.feedConcentration)} mol/m³; D_A ${fmt(solute.diffusivityA * 1e12)} µm²/s, D_B ${fmt(solute.diffusivityB * 1e12)} µm²/s`;
}

/** A cost below the accuracy of the two yields it is the difference of is not a figure to quote. */
function spreadCostText(cost: number, tolerance: number): string {
  if (Math.abs(cost) < tolerance) return `the flow spread costs less than ${fmt(percent(tolerance))} % of the feed (the accuracy of these figures)`;
  return cost > 0 ? `the flow spread costs ${fmt(percent(cost), 3)} % of the feed` : `the flow spread gains ${fmt(percent(-cost), 3)} % of the feed`;
}

/** The chip's figures as (label, value) pairs, for the text summary and for a report's definition list. */
export function extractionSummaryItems(result: ExtractionResult): Array<[string, string]> {
  const s = result.summary;
  return [
    ['yield', `${share(s.yield)} % of the fed solute (${s.contactors} contactors${s.skipped ? `, ${s.skipped} not analysed` : ''})`],
    ['mixed outlets', `A ${fmt(s.outletA)} mol/m³, B ${fmt(s.outletB)} mol/m³`],
    ['at equilibrium', `${share(s.equilibriumYield)} % (one stage at the chip's flow ratio)`],
    ['perfectly even chip', `${share(s.evenYield)} %; ${spreadCostText(s.spreadCost, result.tolerance)}`],
    ['extraction per contactor', `${share(s.extraction.min)} … ${share(s.extraction.max)} %, CV ${(100 * s.extraction.cv).toFixed(3)} %`],
    ['approach to equilibrium', `${share(s.approach.min)} … ${share(s.approach.max)} %`],
    ['99 % of equilibrium', s.longest99 === null ? 'not reached by every contactor within the march' : `by ${fmt(s.longest99 * MM)} mm of contactor length in every contactor`],
  ];
}

/** The simplifications of the transport model, stated wherever its figures are shown. */
export const EXTRACTION_MODEL_NOTES = [
  'steady convection along and diffusion across the layers; axial diffusion neglected (large Péclet number)',
  'velocity averaged over the span of the interface (the depth, for layers side by side), concentration taken uniform over it',
  'flat interface at partition equilibrium; no transfer in the merge, split or outlet arms',
];

/** The table, the chip summary, the model's simplifications, warnings and cautions. */
export function extractionText(name: string, result: ExtractionResult): string {
  const out: string[] = [];
  out.push(`${name}: extraction of ${soluteLine(result)}`);
  out.push(`concentrations in mol/m³ (= mM); every figure converged to ${result.tolerance.toExponential(0)} of the feed${result.summary.converged ? '' : ' EXCEPT where warned'}`);
  out.push('');
  out.push(textTable(EXTRACTION_COLUMNS.map((c) => c.title), result.contactors.map((r) => EXTRACTION_COLUMNS.map((c) => c.value(r)))));
  out.push('');
  out.push('chip');
  const items = extractionSummaryItems(result);
  const width = (maxOf(items.map(([k]) => k.length)) ?? -Infinity) + 2;
  for (const [key, value] of items) out.push(`  ${key.padEnd(width)}${value}`);
  out.push('');
  out.push('model');
  for (const note of EXTRACTION_MODEL_NOTES) out.push(`  - ${note}`);
  out.push('');
  out.push(...warningsLines(result.warnings), '', ...cautionLines());
  return out.join('\n') + '\n';
}

/**
 * The words of the chip drawing: the key figures under the title (convergence, throughput,
 * spread, inlets, splits, backflow and pressure), the caption sentence of the extraction
 * colouring, and the wrapping of captions. Exports `keyFigures`, `extractionCaption`, `wrap`,
 * and the value texts `kPa`, `flowText` and `percent`; values are shown through
 * ../../units/format.ts.
 */
import type { SolvedChip } from '../../analyses/chip.js';
import type { ChipSegment, PhaseName } from '../../network/model.js';
import { DISPLAY, fmt, show } from '../../units/format.js';
import type { ExtractionColouring } from '../extractionCharts.js';
import { textWidth } from '../svg.js';

export function percent(v: number): string {
  return `${(100 * v).toFixed(2)} %`;
}

export const kPa = (p: number) => show(p, DISPLAY.pressure, 4);
export const flowText = (q: number) => show(q, DISPLAY.flow, 4);

/** The caption sentence of the extraction colouring, naming the contactors it leaves out. */
export function extractionCaption(extraction: ExtractionColouring, contactors: ChipSegment[]): string {
  const left = contactors.filter((s) => !extraction.fill.has(s.id)).length;
  return (
    `Contactors coloured by ${extraction.title} (0: no solute transferred, 1: at equilibrium by the outlet) in both bands, phase B hatched` +
    (left > 0 ? `; ${left} contactor${left === 1 ? '' : 's'} not analysed keep${left === 1 ? 's' : ''} the phase colours.` : '.')
  );
}

/** The lines under the title: convergence, throughput, spread, inlets, splits, backflow and pressure. */
export function keyFigures(solved: SolvedChip): Array<{ text: string; strong?: boolean }> {
  const { chip, result } = solved;
  const phaseName = (p: PhaseName) => `${p} (${chip.phases[p].label})`;
  const { summary } = result;
  const sp = summary.spread;
  const leaking = result.splits.filter((s) => s.state !== 'pinned').length;
  const backflow = result.segments.filter((s) => s.reversed).length;
  const heads: Array<{ text: string; strong?: boolean }> = [];
  if (!result.converged) heads.push({ text: `NOT CONVERGED after ${result.iterations} steps: ${result.message ?? ''} — figures are from the last iterate`, strong: true });
  heads.push({ text: `throughput: ${phaseName('A')} ${flowText(summary.throughputA)} · ${phaseName('B')} ${flowText(summary.throughputB)}` });
  if (result.contactors.length > 0) {
    heads.push({ text: `spread between ${result.contactors.length} contactors: total flow max/min ${fmt(sp.total.ratio)}, CV ${(100 * sp.total.cv).toFixed(2)} % · holdup of A ${fmt(sp.holdup.min, 3)} … ${fmt(sp.holdup.max, 3)}` });
  }
  const inlets = summary.inlets.slice(0, 6).map((i) => `${i.id} ${kPa(i.pressure)} (${i.phase}, ${flowText(i.flow)})`);
  heads.push({ text: `inlets: ${inlets.join(' · ')}${summary.inlets.length > 6 ? ` and ${summary.inlets.length - 6} more` : ''}` });
  const rating = chip.maxPressure !== undefined ? ` (rating ${kPa(chip.maxPressure)})` : '';
  heads.push({
    text: `outlet splits: ${result.splits.length - leaking} of ${result.splits.length} pinned, ${leaking} leaking · backflow in ${backflow} segment${backflow === 1 ? '' : 's'} · highest pressure ${kPa(summary.maxPressure)}${rating}`,
    strong: leaking > 0 || backflow > 0,
  });
  return heads;
}

/** Words of `text` in lines no wider than `width` px (by the estimate of textWidth). */
export function wrap(text: string, width: number): string[] {
  const lines: string[] = [];
  let line = '';
  for (const word of text.split(' ')) {
    const next = line === '' ? word : `${line} ${word}`;
    if (line !== '' && textWidth(next) > width) {
      lines.push(line);
      line = word;
    } else line = next;
  }
  return line === '' ? lines : [...lines, line];
}

/**
 * The report of a solved chip as one self-contained HTML page: status, cautions, summary,
 * warnings, the overview strip of every contactor (linked to the drawing), the chip drawing, the charts, the per-contactor and split tables, optionally the
 * extraction of a solute (src/analyses/extraction.ts: its figures, model, table and charts, with
 * the contactors of the drawing coloured by approach to equilibrium), and the inputs as read.
 * Exports `chipReport` and its option type. Pure: solved chip and results (its manifold profiles, an extraction) in, HTML text out.
 *
 * Self-contained: the drawings are inline SVG, the style is inline CSS, and there is no font,
 * image or link that a browser would fetch. A plain report has no script; a live one (`live`)
 * carries its operating-point controls (./liveReport.ts), its data as JSON and the page script
 * inline (base64 in a text block, started by a one-line loader, so no text of the bundle can end
 * its element or upset an XML parser). The page is well-formed XML (every element closed,
 * attributes quoted), so tests can check it with an XML parser. Every user string goes through
 * `escapeXml` (./svg.ts), the one escaping function of the render stage. `reportResults` is the
 * part a live page redraws after each solve.
 */
import type { SolvedChip } from '../analyses/chip.js';
import type { ExtractionResult } from '../analyses/extraction.js';
import type { Manifold } from '../analyses/manifolds.js';
import type { ChipNode, ChipSegment } from '../network/model.js';
import { DISPLAY, fmt, fmtResolved, show } from '../units/format.js';
import { chipCharts } from './chipCharts.js';
import { chipDrawing, type ChipDrawingOptions } from './chipDrawing.js';
import { overviewStrip } from './overviewStrip.js';
import {
  EXTRACTION_COLUMNS, EXTRACTION_MODEL_NOTES, contactorExtractionChart, extractionAlongChart, extractionColouring, extractionSummaryItems, soluteLine,
} from './extractionCharts.js';
import { escapeXml } from './svg.js';
import { LIVE_IDS, liveControls, liveData } from './liveReport.js';
import { CONTACTOR_COLUMNS, SAFETY_NOTES } from './text.js';
import { group as groupBy, max as maxOf, min as minOf } from 'd3-array';

export interface ReportOptions {
  drawing?: ChipDrawingOptions;
  /**
   * The chip drawing already drawn with these options (`chipDrawing(solved, drawing)`, with the
   * extraction's colours where there is one), so that a command that writes the drawing as a
   * file too does not draw it twice (3–4 s at 16 384 contactors).
   */
  drawingSvg?: string;
  /** The extraction of a solute on this solved chip: adds its section, warnings and drawing colours. */
  extraction?: ExtractionResult;
  /**
   * Makes the report live: the page script (dist/page/live.js) as base64, the layout file as read
   * and the solution as `solve --json` writes it.
   */
  live?: { scriptBase64: string; layout: unknown; solution: unknown };
  /**
   * The analysis the report belongs to (`tune`, `tolerance`, `extract --report`): its heading,
   * its text as the command prints it, its charts, and a sentence on how it relates to the live
   * part. Shown before the operating point.
   */
  analysis?: { title: string; text: string; charts?: Array<{ id: string; svg: string; caption?: string }>; note?: string };
}

const STYLE = `
body { font-family: sans-serif; font-size: 14px; color: #1a1a1a; margin: 24px auto; max-width: 1200px; padding: 0 16px; line-height: 1.4; }
h1 { font-size: 22px; margin-bottom: 4px; }
h2 { font-size: 17px; margin-top: 28px; border-bottom: 1px solid #cccccc; padding-bottom: 2px; }
.status { font-weight: bold; }
.bad { color: #1a1a1a; background: #f0e442; padding: 1px 4px; }
.cautions { border: 2px solid #333333; padding: 8px 16px; background: #f7f7f7; }
.cautions h2 { margin-top: 4px; border: none; }
dl.summary { display: grid; grid-template-columns: max-content auto; gap: 2px 16px; }
dl.summary dt { font-weight: bold; }
dl.summary dd { margin: 0; }
ul.warnings li { margin-bottom: 2px; }
.drawing { overflow: auto; border: 1px solid #cccccc; }
.drawing svg { display: block; }
figure { margin: 16px 0; }
.charts { display: grid; grid-template-columns: repeat(auto-fill, minmax(540px, 1fr)); gap: 8px 24px; }
figure.chart svg, figure.overview svg { max-width: 100%; height: auto; display: block; }
figure.overview a rect:hover { stroke: #000000; stroke-width: 1; }
figcaption { font-style: italic; margin-top: 4px; }
table { border-collapse: collapse; font-size: 12px; margin: 8px 0; }
th, td { border: 1px solid #cccccc; padding: 2px 6px; text-align: right; white-space: nowrap; }
th { background: #eeeeee; }
td.text, th.text { text-align: left; }
tr.leaking td { background: #fdf6c3; font-weight: bold; }
.table-wrap { overflow: auto; max-height: 80vh; }
.table-wrap.long { content-visibility: auto; contain-intrinsic-size: auto 80vh; }
details { margin: 8px 0; }
summary { cursor: pointer; font-weight: bold; }
pre.analysis { font-size: 12px; background: #f7f7f7; padding: 8px; overflow: auto; max-height: 60vh; }
section.live { border: 1px solid #cccccc; padding: 4px 16px 8px; margin-top: 16px; }
table.settings input[type=number] { width: 9em; }
table.settings input.set { background: #fdf6c3; }
.live-status { font-style: italic; }
@media print { .drawing, .table-wrap { overflow: visible; max-height: none; } .table-wrap.long { content-visibility: visible; } }
`;

/**
 * Starts the page script kept as base64 in the element LIVE_IDS.script: decodes it as UTF-8 and
 * runs it. Written without < or & so that the page stays well-formed XML.
 */
const PAGE_LOADER =
  `(function(){var t=document.getElementById("${LIVE_IDS.script}").textContent.trim();` +
  'new Function(new TextDecoder().decode(Uint8Array.from(atob(t),function(c){return c.charCodeAt(0)})))()})();';

/** Tables of more rows than this are laid out by the browser only when seen. */
const LONG_TABLE = 256;

/** Warnings listed in full before the rest are folded away. */
const SHOWN_WARNINGS = 12;

const esc = escapeXml;
const flow = (q: number) => fmt(q * DISPLAY.flow.factor);
const kPa = (p: number) => fmt(p * DISPLAY.pressure.factor);
const mm = (x: number | undefined) => (x === undefined ? '–' : fmt(x * DISPLAY.lengthMm.factor));
const um = (x: number) => fmt(x * DISPLAY.length.factor);
const deg = (rad: number) => fmt((rad * 180) / Math.PI);

function table(header: string[], rows: string[][], options: { textColumns?: number[]; rowClass?: (i: number) => string | undefined } = {}): string {
  const text = new Set(options.textColumns ?? []);
  const cell = (tag: 'th' | 'td', c: string, j: number) => `<${tag}${text.has(j) ? ' class="text"' : ''}>${esc(c)}</${tag}>`;
  const head = `<tr>${header.map((h, j) => cell('th', h, j)).join('')}</tr>`;
  const body = rows.map((r, i) => {
    const cls = options.rowClass?.(i);
    return `<tr${cls ? ` class="${esc(cls)}"` : ''}>${r.map((c, j) => cell('td', c, j)).join('')}</tr>`;
  });
  // A long table is laid out only when it comes into view, so a live page redrawn after a change
  // does not wait for rows nobody sees (a full-page screenshot leaves it blank where unseen).
  const long = rows.length > LONG_TABLE ? ' long' : '';
  return `<div class="table-wrap${long}"><table><thead>${head}</thead><tbody>${body.join('\n')}</tbody></table></div>`;
}

function definitionList(items: Array<[string, string]>): string {
  return `<dl class="summary">${items.map(([k, v]) => `<dt>${esc(k)}</dt><dd>${esc(v)}</dd>`).join('\n')}</dl>`;
}

function nodeSetting(n: ChipNode): string {
  switch (n.kind) {
    case 'inlet':
      return `phase ${n.phase}; ${n.pressure !== undefined ? `${kPa(n.pressure)} kPa` : `${flow(n.flow!)} µL/min`}${n.head ? ` (reservoir head ${kPa(n.head)} kPa)` : ''}`;
    case 'outlet':
      return `${kPa(n.pressure)} kPa${n.phase ? `; collects ${n.phase}` : ''}`;
    case 'merge':
      return `inlets ${n.inlets.join(', ')} (near first)`;
    case 'split':
      return `outlets ${n.outlets.join(', ')} (near first)${n.window ? `; window ${fmt(n.window[0])} … ${fmt(n.window[1])} Pa` : ''}`;
    case 'junction':
      return '';
  }
}

function sectionText(s: ChipSegment): string[] {
  const sec = s.section;
  switch (sec.shape) {
    case 'rect':
      return ['rect', um(sec.width), um(sec.depth), sec.orientation];
    case 'tube':
      return ['tube', um(sec.diameter), '–', '–'];
    case 'etched':
      return ['etched', `${um(sec.maskWidth)} mask`, um(sec.depth), 'side'];
    case 'trapezoid':
      return ['trapezoid', `${um(sec.bottomWidth)} bottom`, um(sec.depth), 'side'];
  }
}

/**
 * More rows than this in the node or segment list and the report lists them by kind and by group
 * instead (the layout file holds every one): 16 384 contactors have 147 456 segments, 34 MB of
 * table that no reader scrolls and a browser lays out slowly.
 */
const FULL_INPUT_ROWS = 10_000;

/** Smallest … largest of some values (non-finite ones left out) in a unit, the one value where they agree, or – where there is none. */
function rangeText(values: readonly number[], format: (v: number) => string): string {
  const low = minOf(values.filter(Number.isFinite));
  const high = maxOf(values.filter(Number.isFinite));
  if (low === undefined || high === undefined) return '–';
  return format(low) === format(high) ? format(low) : `${format(low)} … ${format(high)}`;
}

/** A section's width (a tube's diameter, an etched channel's mask width, a trapezoid's bottom) and depth (NaN for a tube), m. */
function sectionSize(s: ChipSegment): { width: number; depth: number } {
  const sec = s.section;
  switch (sec.shape) {
    case 'rect':
      return { width: sec.width, depth: sec.depth };
    case 'tube':
      return { width: sec.diameter, depth: Number.NaN };
    case 'etched':
      return { width: sec.maskWidth, depth: sec.depth };
    case 'trapezoid':
      return { width: sec.bottomWidth, depth: sec.depth };
  }
}

/** The nodes and segments as read: every one, or for a large chip a table by node kind and by segment group, the ports in full. */
export function inputTables(chip: SolvedChip['chip']): string[] {
  const out: string[] = [];
  const nodeRow = (n: ChipNode) => [n.id, n.kind, mm(n.x), mm(n.y), nodeSetting(n), n.note ?? ''];
  const nodeHeader = ['node', 'kind', 'x mm', 'y mm', 'setting', 'note'];
  out.push(`<details><summary>Nodes (${chip.nodes.length})</summary>`);
  if (chip.nodes.length <= FULL_INPUT_ROWS) {
    out.push(table(nodeHeader, chip.nodes.map(nodeRow), { textColumns: [0, 1, 4, 5] }));
  } else {
    const kinds = groupBy(chip.nodes, (n) => n.kind);
    out.push(`<p>${chip.nodes.length} nodes, more than ${FULL_INPUT_ROWS} to list: by kind here, every one in the layout file.</p>`);
    out.push(table(['kind', 'nodes'], [...kinds].map(([kind, list]) => [kind, String(list.length)]), { textColumns: [0] }));
    out.push('<p>Inlets and outlets:</p>');
    out.push(table(nodeHeader, chip.nodes.filter((n) => n.kind === 'inlet' || n.kind === 'outlet').map(nodeRow), { textColumns: [0, 1, 4, 5] }));
  }
  out.push('</details>');
  out.push(`<details><summary>Segments (${chip.segments.length})</summary>`);
  if (chip.segments.length <= FULL_INPUT_ROWS) {
    out.push(
      table(
        ['segment', 'from', 'to', 'shape', 'width or diameter µm', 'depth µm', 'layers', 'length mm', 'group', 'note'],
        chip.segments.map((s) => [s.id, s.from, s.to, ...sectionText(s), mm(s.length), s.group ?? '', s.note ?? '']),
        { textColumns: [0, 1, 2, 3, 6, 8, 9] },
      ),
    );
  } else {
    const groups = groupBy(chip.segments, (s) => `${s.group ?? '(no group)'}\u0000${s.section.shape}`);
    out.push(`<p>${chip.segments.length} segments, more than ${FULL_INPUT_ROWS} to list: by group and shape here, every one in the layout file.</p>`);
    out.push(
      table(
        ['group', 'shape', 'segments', 'width, diameter, mask or bottom µm', 'depth µm', 'length mm'],
        [...groups].map(([key, list]) => {
          const [group, shape] = key.split('\u0000') as [string, string];
          const sizes = list.map(sectionSize);
          return [
            group, shape, String(list.length), rangeText(sizes.map((z) => z.width), um), rangeText(sizes.map((z) => z.depth), um), rangeText(list.map((x) => x.length), mm),
          ];
        }),
        { textColumns: [0, 1, 3, 4] },
      ),
    );
  }
  out.push('</details>');
  return out;
}


/** The section of the analysis a report belongs to: its text as printed, its charts and its note. */
function analysisSection(analysis: NonNullable<ReportOptions['analysis']>): string[] {
  const out = [`<h2>${esc(analysis.title)}</h2>`];
  if (analysis.note) out.push(`<p>${esc(analysis.note)}</p>`);
  out.push(`<pre class="analysis">${esc(analysis.text)}</pre>`);
  if (analysis.charts && analysis.charts.length > 0) {
    out.push('<div class="charts">');
    for (const chart of analysis.charts) out.push(`<figure class="chart" id="analysis-${esc(chart.id)}">${chart.caption ? `<figcaption>${esc(chart.caption)}</figcaption>` : ''}${chart.svg}</figure>`);
    out.push('</div>');
  }
  return out;
}

/** The extraction section: solute, chip figures, model, per-contactor table and the two charts. */
function extractionSection(extraction: ExtractionResult): string[] {
  const out: string[] = [];
  out.push('<h2>Extraction</h2>');
  out.push(`<p>${esc(soluteLine(extraction))}.</p>`);
  const accuracy = `every figure converged to ${extraction.tolerance.toExponential(0)} of the feed${extraction.summary.converged ? '' : ', EXCEPT where warned'}`;
  out.push(`<p>Concentrations in mol/m³ (= mM); ${esc(accuracy)}.</p>`);
  out.push(definitionList(extractionSummaryItems(extraction)));
  out.push('<p>The transport model takes:</p>');
  out.push(`<ul>${EXTRACTION_MODEL_NOTES.map((note) => `<li>${esc(note)}</li>`).join('\n')}</ul>`);
  out.push(
    table(
      EXTRACTION_COLUMNS.map((c) => c.title),
      extraction.contactors.map((r) => EXTRACTION_COLUMNS.map((c) => c.value(r))),
      { textColumns: [1] },
    ),
  );
  if (extraction.skippedContactors.length > 0) {
    out.push(`<p>Not analysed: ${esc(extraction.skippedContactors.map((s) => `${s.id} (${s.reason})`).join('; '))}.</p>`);
  }
  out.push('<div class="charts">');
  out.push(`<figure class="chart" id="chart-extraction-along">${extractionAlongChart(extraction)}</figure>`);
  out.push(`<figure class="chart" id="chart-extraction-per-contactor">${contactorExtractionChart(extraction)}</figure>`);
  out.push('</div>');
  return out;
}

/**
 * The part of the report that follows the operating point: status, summary, warnings, the
 * overview, the drawing, the charts, the per-contactor and split tables and the extraction.
 * `manifolds`: the manifold pressure profiles of the solved chip (analyses/manifolds.ts `findManifolds`).
 */
export function reportResults(solved: SolvedChip, manifolds: Manifold[], options: ReportOptions = {}): string {
  const { chip, result } = solved;
  const { extraction } = options;
  const warnings = [...result.warnings, ...(extraction?.warnings ?? []).map((w) => `extraction: ${w}`)];
  const drawing: ChipDrawingOptions | undefined = extraction ? { ...options.drawing, extraction: extractionColouring(extraction) } : options.drawing;
  const { summary } = result;
  const sp = summary.spread;
  const out: string[] = [];
  const status = result.converged
    ? `Solved in ${result.iterations} Newton steps (mass residual ${result.residual.toExponential(1)} of throughput).`
    : `NOT CONVERGED after ${result.iterations} steps: ${result.message ?? ''}. The figures below are from the last iterate.`;
  out.push(`<p class="status${result.converged ? '' : ' bad'}">${esc(status)}</p>`);

  out.push('<h2>Summary</h2>');
  const pinned = result.splits.filter((s) => s.state === 'pinned').length;
  const items: Array<[string, string]> = [
    ['contactors', String(result.contactors.length)],
    [`throughput A (${chip.phases.A.label})`, `${flow(summary.throughputA)} µL/min`],
    [`throughput B (${chip.phases.B.label})`, `${flow(summary.throughputB)} µL/min`],
  ];
  if (result.contactors.length > 0) {
    items.push(
      ['total flow per contactor', `${flow(sp.total.min)} … ${flow(sp.total.max)} µL/min; max/min ${fmt(sp.total.ratio)}, CV ${(100 * sp.total.cv).toFixed(3)} %`],
      ['flow of A per contactor', `max/min ${fmt(sp.flowA.ratio)}, CV ${(100 * sp.flowA.cv).toFixed(3)} %`],
      ['flow of B per contactor', `max/min ${fmt(sp.flowB.ratio)}, CV ${(100 * sp.flowB.cv).toFixed(3)} %`],
      ['holdup of A', `${fmt(sp.holdup.min, 5)} … ${fmt(sp.holdup.max, 5)}, CV ${(100 * sp.holdup.cv).toFixed(3)} %`],
    );
  }
  for (const i of summary.inlets) items.push([`inlet ${i.id} (${i.phase})`, `${kPa(i.pressure)} kPa, ${flow(i.flow)} µL/min`]);
  for (const o of summary.outlets) items.push([`outlet ${o.id}`, `${kPa(o.pressure)} kPa; A ${flow(o.flowA)} µL/min, B ${flow(o.flowB)} µL/min`]);
  items.push(['outlet splits', `${pinned} of ${result.splits.length} pinned${result.splits.length ? `; smallest window margin ${fmtResolved(minOf(result.splits.map((s) => s.margin)) ?? Infinity, result.summary.pressureResolution)} Pa` : ''}`]);
  items.push(['highest pressure', `${kPa(summary.maxPressure)} kPa${chip.maxPressure !== undefined ? ` (rating ${kPa(chip.maxPressure)} kPa)` : ''}`]);
  out.push(definitionList(items));

  out.push(`<h2>Warnings (${warnings.length})</h2>`);
  const item = (w: string) => `<li>${esc(w)}</li>`;
  if (warnings.length === 0) out.push('<p>None.</p>');
  else out.push(`<ul class="warnings">${warnings.slice(0, SHOWN_WARNINGS).map(item).join('\n')}</ul>`);
  if (warnings.length > SHOWN_WARNINGS) {
    out.push(`<details><summary>${warnings.length - SHOWN_WARNINGS} more warnings</summary><ul class="warnings">${warnings.slice(SHOWN_WARNINGS).map(item).join('\n')}</ul></details>`);
  }

  if (result.contactors.length > 0) {
    out.push('<h2>Every contactor</h2>');
    out.push(`<figure class="overview">${overviewStrip(solved)}</figure>`);
  }

  out.push('<h2>Chip drawing</h2>');
  out.push(`<figure><div class="drawing">${options.drawingSvg ?? chipDrawing(solved, drawing)}</div>`);
  const colouredBy = extraction ? ' The contactors are coloured by their approach to equilibrium (see Extraction).' : '';
  out.push(`<figcaption>The solved chip in plan view; scale, width factor and conventions are stated under the drawing.${colouredBy}</figcaption></figure>`);

  out.push('<h2>Charts</h2>');
  out.push('<div class="charts">');
  for (const chart of chipCharts(solved, manifolds)) out.push(`<figure class="chart" id="chart-${esc(chart.id)}">${chart.svg}</figure>`);
  out.push('</div>');

  out.push('<h2>Per-contactor table</h2>');
  out.push(
    table(
      CONTACTOR_COLUMNS.map((c) => c.title),
      result.contactors.map((r) => CONTACTOR_COLUMNS.map((c) => c.value(r))),
      { textColumns: [1, 11], rowClass: (i) => (result.contactors[i]!.state.startsWith('leaking') ? 'leaking' : undefined) },
    ),
  );
  if (result.splits.length > 0) {
    const resolution = result.summary.pressureResolution;
    out.push('<h2>Outlet splits</h2>');
    out.push(
      table(
        ['split', 'contactor', 'state', 'p_B − p_A Pa', 'window Pa', 'margin Pa', 'leak µL/min', 'near outlet pure %', 'far outlet pure %'],
        result.splits.map((s) => [
          s.id, s.contactor, s.state, fmt(s.pressureDifference), `${fmt(s.window[0])} … ${fmt(s.window[1])}`, fmtResolved(s.margin, resolution), flow(s.leak),
          (100 * s.purityNear).toFixed(2), (100 * s.purityFar).toFixed(2),
        ]),
        { textColumns: [0, 1, 2], rowClass: (i) => (result.splits[i]!.state !== 'pinned' ? 'leaking' : undefined) },
      ),
    );
  }

  if (extraction) out.push(...extractionSection(extraction));

  return out.join('\n');
}

/** `manifolds`: the manifold pressure profiles of the solved chip (analyses/manifolds.ts `findManifolds`), drawn among the charts. */
export function chipReport(solved: SolvedChip, manifolds: Manifold[], options: ReportOptions = {}): string {
  const { chip } = solved;
  const { live } = options;
  const out: string[] = [];
  out.push('<!DOCTYPE html>');
  out.push('<html lang="en"><head><meta charset="utf-8" />');
  out.push('<meta name="viewport" content="width=device-width, initial-scale=1" />');
  out.push(`<title>${esc(chip.name)} — stratiflow report</title>`);
  out.push(`<style>${STYLE}</style></head><body>`);

  out.push(`<h1>${esc(chip.name)}</h1>`);
  out.push(`<p>Layout: ${esc(chip.source)}${chip.note ? ` — ${esc(chip.note)}` : ''}</p>`);
  out.push('<section class="cautions"><h2>Cautions</h2><ul>');
  for (const note of SAFETY_NOTES) out.push(`<li>${esc(note)}</li>`);
  out.push('</ul></section>');
  if (options.analysis) out.push(...analysisSection(options.analysis));
  if (live) out.push(liveControls(solved));
  out.push(`<div id="${LIVE_IDS.results}">${reportResults(solved, manifolds, options)}</div>`);

  out.push('<h2>Inputs as read</h2>');
  const inputs: Array<[string, string]> = [];
  for (const p of ['A', 'B'] as const) {
    const ph = chip.phases[p];
    inputs.push([`phase ${p}`, `${ph.label}: viscosity ${show(ph.viscosity, DISPLAY.viscosity)}, density ${fmt(ph.density)} kg/m³${ph.diffusivity !== undefined ? `, diffusivity ${fmt(ph.diffusivity)} m²/s` : ''}`]);
  }
  inputs.push(['interfacial tension', chip.interfacialTension !== undefined ? show(chip.interfacialTension, DISPLAY.tension) : 'not given']);
  inputs.push(['contact angle of A', chip.contactAngle ? `advancing ${deg(chip.contactAngle.advancing)}°, receding ${deg(chip.contactAngle.receding)}°` : 'not given']);
  inputs.push(['split window (p_B − p_A)', chip.splitWindow ? `${fmt(chip.splitWindow[0])} … ${fmt(chip.splitWindow[1])} Pa` : 'from the Young–Laplace estimate']);
  inputs.push(['pressure rating', chip.maxPressure !== undefined ? `${kPa(chip.maxPressure)} kPa` : 'not given']);
  if (chip.solute) inputs.push(['solute', `${chip.solute.label}: partition ${fmt(chip.solute.partition)}, fed in ${chip.solute.feedPhase} at ${fmt(chip.solute.feedConcentration)}`]);
  inputs.push(['nodes, segments', `${chip.nodes.length}, ${chip.segments.length}`]);
  out.push(definitionList(inputs));
  out.push(...inputTables(chip));
  out.push('<p><small>Made by stratiflow. Model predictions for planning; check them against the running chip.</small></p>');
  if (live) {
    out.push(liveData(solved, live.layout, live.solution));
    out.push(`<script type="text/plain" id="${LIVE_IDS.script}">${live.scriptBase64}</script>`);
    out.push(`<script>${PAGE_LOADER}</script>`);
  }
  out.push('</body></html>');
  return out.join('\n') + '\n';
}

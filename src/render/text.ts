/**
 * Plain-text and CSV renderings of a solved chip: the per-contactor table (a contactor's state is
 * its split's, or `starved of A|B` when a phase does not enter it), the summary, the operating
 * verdict when one is given (src/analyses/verdict.ts) and the warnings, plus the usual safety
 * cautions; with the hold tolerances (src/analyses/hold.ts), how far each setting may move with
 * every split pinned. An unconverged solution is headed NOT CONVERGED. Exports `chipText`,
 * `holdLines`, `contactorCsv`, `SAFETY_NOTES`, `textTable`. Pure: data in, string out.
 */
import type { ChipSolution, ContactorResult } from '../analyses/chip.js';
import type { HoldLimit, HoldResult, HoldTolerance } from '../analyses/hold.js';
import { settingName } from '../analyses/settings.js';
import { starvedPhase, type OperatingProblem } from '../analyses/verdict.js';
import { DISPLAY, fmt, fmtResolved, show } from '../units/format.js';
import { max as maxOf, min as minOf } from 'd3-array';

export const SAFETY_NOTES = [
  'Pressurised chips, fittings and tubing can fail suddenly: stay below the rating of the weakest part, ramp pressures up slowly, and wear eye protection near a pressurised chip.',
  'Organic solvents and aqueous two-phase components may be flammable, toxic or irritant: handle them in a fume hood as their safety data sheets require.',
  'These figures are model predictions for planning; they do not replace your lab safety rules, local codes, or the judgement of a qualified person.',
];

/** Left-aligned first column, right-aligned others, padded to the widest cell. */
export function textTable(header: string[], rows: string[][]): string {
  const widths = header.map((h, i) => Math.max(h.length, maxOf(rows, (r) => (r[i] ?? '').length) ?? 0));
  const line = (cells: string[]) => cells.map((c, i) => (i === 0 ? c.padEnd(widths[i]!) : c.padStart(widths[i]!))).join('  ');
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

const flow = (q: number) => fmt(q * DISPLAY.flow.factor);
const percent = (v: number | null) => (v === null ? '–' : `${(100 * v).toFixed(2)}`);

export const CONTACTOR_COLUMNS: Array<{ title: string; csv: string; value: (r: ContactorResult) => string }> = [
  { title: '#', csv: 'index', value: (r) => String(r.index) },
  { title: 'contactor', csv: 'contactor', value: (r) => r.id },
  { title: 'A µL/min', csv: 'flowA_uL_min', value: (r) => flow(r.flowA) },
  { title: 'B µL/min', csv: 'flowB_uL_min', value: (r) => flow(r.flowB) },
  { title: 'A/B', csv: 'flowRatio', value: (r) => fmt(r.flowRatio) },
  { title: 'holdup A', csv: 'holdupA', value: (r) => fmt(r.holdupA, 5) },
  { title: 'vA mm/s', csv: 'velocityA_mm_s', value: (r) => fmt(r.velocityA * DISPLAY.velocity.factor) },
  { title: 'vB mm/s', csv: 'velocityB_mm_s', value: (r) => fmt(r.velocityB * DISPLAY.velocity.factor) },
  { title: 'tA s', csv: 'residenceA_s', value: (r) => fmt(r.residenceA) },
  { title: 'tB s', csv: 'residenceB_s', value: (r) => fmt(r.residenceB) },
  { title: 'Δp kPa', csv: 'pressureDrop_kPa', value: (r) => fmt(r.pressureDrop * DISPLAY.pressure.factor) },
  { title: 'state', csv: 'state', value: contactorState },
  { title: 'pure A %', csv: 'purityA_percent', value: (r) => percent(r.purityA) },
  { title: 'pure B %', csv: 'purityB_percent', value: (r) => percent(r.purityB) },
];

/** With a curved interface: the flat interface's holdup, the shift against it and the arc's curvature. */
export const CURVED_COLUMNS: typeof CONTACTOR_COLUMNS = [
  { title: 'flat holdup A', csv: 'holdupFlatA', value: (r) => fmt(r.holdupFlatA!, 5) },
  { title: 'shift', csv: 'holdupShiftA', value: (r) => signed(r.holdupShiftA!) },
  { title: 'κ 1/mm', csv: 'curvature_per_mm', value: (r) => fmt(r.interfaceCurvature! / 1000) },
];

const signed = (v: number) => (v > 0 ? '+' : v < 0 ? '−' : '') + fmt(Math.abs(v), 3);

/** The contactor columns of a solution: CURVED_COLUMNS added where the interface is curved. */
export function contactorColumns(s: ChipSolution): typeof CONTACTOR_COLUMNS {
  return s.summary.curvedInterface ? [...CONTACTOR_COLUMNS, ...CURVED_COLUMNS] : CONTACTOR_COLUMNS;
}

/** The split's state, unless a phase does not enter the contactor at all. */
function contactorState(r: ContactorResult): string {
  const starved = starvedPhase(r);
  return starved ? `starved of ${starved}` : r.state;
}

function csvCell(s: string): string {
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A CSV table (RFC 4180 quoting) of `rows` with one column per entry of `columns`. */
export function columnsCsv<T>(columns: ReadonlyArray<{ csv: string; value: (row: T) => string }>, rows: readonly T[]): string {
  const lines = rows.map((r) => columns.map((c) => csvCell(c.value(r))).join(','));
  return [columns.map((c) => c.csv).join(','), ...lines].join('\n') + '\n';
}

export function contactorCsv(solution: ChipSolution): string {
  return columnsCsv(contactorColumns(solution), solution.contactors);
}

/**
 * The readable report of a solution. With `problems` (the operating verdict) it says whether the
 * chip works at these settings and, if not, why, element by element.
 */
export function chipText(name: string, s: ChipSolution, problems?: readonly OperatingProblem[], hold?: HoldResult): string {
  const out: string[] = [];
  out.push(`${name}: ${s.contactors.length} contactors — ${s.converged ? `solved in ${s.iterations} Newton steps (mass residual ${s.residual.toExponential(1)} of throughput)` : `NOT CONVERGED: ${s.message ?? ''}`}`);
  out.push('');
  const columns = contactorColumns(s);
  out.push(textTable(columns.map((c) => c.title), s.contactors.map((r) => columns.map((c) => c.value(r)))));
  out.push('');
  const { summary } = s;
  const sp = summary.spread;
  out.push('summary');
  out.push(`  throughput A, B        ${flow(summary.throughputA)}, ${flow(summary.throughputB)} µL/min (ratio A/B ${fmt(summary.throughputA / summary.throughputB)})`);
  out.push(`  total flow per contactor  min ${flow(sp.total.min)}, max ${flow(sp.total.max)} µL/min; max/min ${fmt(sp.total.ratio)}, CV ${(100 * sp.total.cv).toFixed(3)}%`);
  out.push(`  flow A per contactor      max/min ${fmt(sp.flowA.ratio)}, CV ${(100 * sp.flowA.cv).toFixed(3)}%`);
  out.push(`  flow B per contactor      max/min ${fmt(sp.flowB.ratio)}, CV ${(100 * sp.flowB.cv).toFixed(3)}%`);
  out.push(`  holdup A                  ${fmt(sp.holdup.min, 5)} … ${fmt(sp.holdup.max, 5)}, CV ${(100 * sp.holdup.cv).toFixed(3)}%`);
  for (const inlet of summary.inlets) out.push(`  inlet ${inlet.id} (${inlet.phase})  ${show(inlet.pressure, DISPLAY.pressure)}, ${flow(inlet.flow)} µL/min`);
  for (const outlet of summary.outlets) out.push(`  outlet ${outlet.id}  ${show(outlet.pressure, DISPLAY.pressure)}, A ${flow(outlet.flowA)} µL/min, B ${flow(outlet.flowB)} µL/min`);
  const pinned = s.splits.filter((x) => x.state === 'pinned').length;
  out.push(`  outlet splits             ${pinned} of ${s.splits.length} pinned${s.splits.length ? `; smallest window margin ${fmtResolved(minOf(s.splits.map((x) => x.margin)) ?? Infinity, s.summary.pressureResolution)} Pa` : ''}`);
  const curved = summary.curvedInterface;
  if (curved) {
    const largest = curved.largestShift;
    const shift = largest ? `largest holdup shift against the flat interface ${signed(largest.shift)} (${largest.contactor})` : 'no contactors';
    const how = curved.method === 'newton' ? 'Δ coupled into the Newton solve after the flat one' : `${curved.rounds} round${curved.rounds === 1 ? '' : 's'} of the fixed point on the curvatures after the flat solve`;
    out.push(`  curved interface          ${shift}; ${how}, ${curved.settled ? 'settled' : 'NOT settled'}`);
  }
  out.push('');
  if (hold) out.push(...holdLines(hold), '');
  if (problems) {
    out.push(problems.length === 0 ? 'verdict: the chip works at these settings (splits pinned, contactors fed, no backflow, outlets pure, within the rating)' : `verdict: the chip does NOT work at these settings (${problems.length} problem${problems.length > 1 ? 's' : ''})`);
    for (const p of problems) out.push(`  - ${p.element}: ${p.reason}`);
    out.push('');
  }
  out.push(...warningsLines(s.warnings), '', ...cautionLines());
  return out.join('\n') + '\n';
}

/** The warnings block of a text report: a heading and one line each, or "warnings: none". */
export function warningsLines(warnings: readonly string[]): string[] {
  return [warnings.length ? 'warnings' : 'warnings: none', ...warnings.map((w) => `  - ${w}`)];
}

/** The cautions that close every text report: `extra` ones first, then SAFETY_NOTES. */
export function cautionLines(extra: readonly string[] = []): string[] {
  return ['cautions', ...[...extra, ...SAFETY_NOTES].map((note) => `  - ${note}`)];
}

/** A setting's value or excursion in its display unit: Pa for pressures (excursions are small), µL/min for flows. */
function amount(h: HoldTolerance, value: number): string {
  if (!Number.isFinite(value)) return 'any';
  return h.setting.quantity === 'pressure' ? `${fmt(value * DISPLAY.pressureDifference.factor)} Pa` : `${fmt(value * DISPLAY.flow.factor)} µL/min`;
}

const limitText = (l: HoldLimit | undefined) => (l ? `${l.split} ${l.limit}` : '–');

function excursion(h: HoldTolerance): string {
  const relative = h.setting.quantity === 'flow' && h.value > 0 ? ` (${fmt((100 * Math.min(h.down, h.up)) / h.value, 3)} %)` : '';
  return `−${amount(h, h.down)} … +${amount(h, h.up)}${relative}`;
}

function head(h: HoldTolerance): string {
  if (h.headDown === undefined || h.headUp === undefined) return '–';
  const mm = (x: number) => (Number.isFinite(x) ? fmt(x * DISPLAY.lengthMm.factor, 3) : 'any');
  return `−${mm(h.headDown)} … +${mm(h.headUp)} mm of ${h.liquid}`;
}

/**
 * The hold tolerance block of `solve` and `tune`: a heading, one row per setting (how far it may
 * fall and rise with every split pinned, the split and limit that bounds it, the head of a
 * pressure excursion, the excursion within the flow ratio tolerance), then a warning for every
 * excursion below what its controller resolves.
 */
export function holdLines(hold: HoldResult): string[] {
  const out = [`hold tolerances (each setting alone, the others held; first order in the settings)${hold.allPinned ? '' : ': not every split is pinned at this point, so no excursion keeps them all pinned'}`];
  const ratio = `flow ratio ±${fmt(100 * hold.ratioTolerance, 3)} %`;
  const rows = hold.settings.map((h) => [settingName(h.setting), amount(h, h.value), excursion(h), `${limitText(h.downLimit)} / ${limitText(h.upLimit)}`, head(h), Number.isFinite(h.ratioExcursion) ? `±${amount(h, h.ratioExcursion)}` : 'any']);
  out.push(...textTable(['setting', 'value', 'every split pinned', 'bound by (− / +)', 'as reservoir head', ratio], rows).split('\n').map((line) => `  ${line}`));
  for (const h of hold.settings) {
    if (!h.belowResolution || !hold.allPinned) continue;
    const what = h.setting.quantity === 'pressure' ? `the ${amount(h, h.resolution)} a pressure controller holds` : `the ${fmt(100 * (h.resolution / h.value), 3)} % a pump holds`;
    out.push(`  ! ${settingName(h.setting)} may move less than ${what} (layout key controlResolution; the default is common practice): hold it tighter or widen the window`);
  }
  return out;
}

/**
 * Plain-text and CSV renderings of a tolerance study (src/analyses/tolerance.ts): the readable
 * summary with every first-order figure beside its sampled one, and one CSV row per realisation.
 * Exports `toleranceText`, `toleranceCsv`, `describeVariation`. Pure: data in, string out.
 */
import type { Quantity, ToleranceResult, Variation } from '../analyses/tolerance.js';
import { cautionLines, textTable } from './text.js';
import { DISPLAY, fmt, fmtResolved } from '../units/format.js';
import { RELATIVE_FLOW_RESOLUTION } from '../analyses/resolution.js';
import { min as minOf } from 'd3-array';

const UNIT: Record<Quantity, { symbol: string; factor: number }> = {
  depth: DISPLAY.length,
  width: DISPLAY.length,
  'viscosity A': DISPLAY.viscosity,
  'viscosity B': DISPLAY.viscosity,
  'interfacial tension': DISPLAY.tension,
  'contact angle': { symbol: 'deg', factor: 180 / Math.PI },
};

/** "normal, sd 2 %", "uniform, ±0.5 µm". */
export function describeVariation(v: Variation, quantity: Quantity): string {
  const size = v.relative ? `${fmt(100 * v.size, 3)} %` : `${fmt(v.size * UNIT[quantity].factor, 3)} ${UNIT[quantity].symbol}`;
  return v.distribution === 'normal' ? `normal, sd ${size}` : `uniform, ±${size}`;
}

const percent = (v: number | null | undefined, digits = 3) => (v === null || v === undefined || !Number.isFinite(v) ? '–' : `${fmt(100 * v, digits)} %`);
/** A share of variance in % with one decimal (sampled shares within their noise arrive as 0). */
const share = (v: number | null) => (v === null || !Number.isFinite(v) ? '–' : `${(100 * v).toFixed(1).replace(/^-0\.0$/, '0.0')} %`);
const yesNo = (v: boolean | null) => (v === null ? '–' : v ? 'yes' : 'NO');

/** A spread in its display form: CVs in %, max/min ratios as numbers; below what the flows resolve, 0. */
function spreadValue(key: string, v: number | null | undefined, digits = 5): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–';
  return key.endsWith('.cv') ? `${fmtResolved(100 * v, 100 * RELATIVE_FLOW_RESOLUTION, 3)} %` : fmtResolved(v, RELATIVE_FLOW_RESOLUTION, digits);
}

export interface RunInfo {
  workers: number;
  seconds: number;
}

export function toleranceText(r: ToleranceResult, info: RunInfo): string {
  const out: string[] = [];
  const fo = r.firstOrder;
  out.push(`${r.chip}: tolerance study, ${r.samples} realisations (seed ${r.seed}) on ${info.workers} thread${info.workers === 1 ? '' : 's'}, ${info.seconds.toFixed(1)} s`);
  if (r.sampled) out.push(`  solved ${r.solved} of ${r.samples}${r.notSolved.length ? `; NOT SOLVED: ${r.notSolved.length} (samples ${r.notSolved.slice(0, 8).map((s) => s.index).join(', ')}${r.notSolved.length > 8 ? ', …' : ''})` : ''}`);
  else out.push('  realisations drawn for the first-order model only, not solved');
  if (fo) out.push(`  first-order estimate from ${fo.solves} difference solves${fo.available ? '' : ' — NOT AVAILABLE (see notes)'}`);
  out.push('');

  out.push(textTable(['tolerance', 'distribution', 'parameters'], r.sources.map((s) => [s.label, describeVariation(s.variation, s.quantity), String(s.parameters)])));
  out.push('');

  out.push('every split pinned');
  if (r.pinned === null && r.nominal.allPinned === null) out.push('  the chip has no splits');
  else {
    if (r.pinned) out.push(`  sampled       ${percent(r.pinned.value, 4)} (95 % interval ${percent(r.pinned.low, 3)} to ${percent(r.pinned.high, 3)}, ${r.pinned.count} of ${r.pinned.of})`);
    out.push(`  first order   ${percent(r.firstOrderPinned, 4)}`);
    const margin = minOf(r.contactors.flatMap((c) => (c.nominalMargin === null ? [] : [c.nominalMargin]))) ?? Infinity;
    out.push(`  nominal       ${r.nominal.allPinned ? 'every split pinned' : `${r.nominal.leaking.length} splits leak`}; smallest window margin ${fmtResolved(margin, r.nominal.pressureResolution)} Pa`);
  }
  out.push('');

  out.push('spread between contactors');
  out.push(
    textTable(
      ['', 'nominal', 'sampled mean', 'sampled sd', '± (95 %)', 'first-order mean', 'first-order sd', 'agree'],
      r.spreads.map((s) => [
        `  ${s.label}`,
        spreadValue(s.key, s.nominal),
        spreadValue(s.key, s.sampled?.mean),
        spreadValue(s.key, s.sampled?.sd, 3),
        s.sampled ? spreadValue(s.key, 1.96 * s.sampled.sdError, 2) : '–',
        spreadValue(s.key, s.firstOrder?.mean),
        spreadValue(s.key, s.firstOrder?.sd, 3),
        yesNo(s.agrees),
      ]),
    ),
  );
  if (r.spreads.some((s) => s.agrees === false)) {
    out.push('  NO: over these tolerances the spread is not linear in them (a first-order model cannot follow it); trust the sampled figures');
  }
  const judged = r.contactors.filter((c) => c.flowSd.agrees !== null);
  if (judged.length) {
    out.push(`  flow of each contactor: the first-order sd agrees with the sampled sd (within 1.96 standard errors) for ${judged.filter((c) => c.flowSd.agrees).length} of ${judged.length} contactors; about 95 % are expected to`);
  }
  out.push('');

  const leaking = r.contactors.filter((c) => c.split !== null);
  if (leaking.length) {
    const ranked = [...leaking].sort((a, b) => b.leaks - a.leaks || (b.firstOrderLeakProbability ?? 0) - (a.firstOrderLeakProbability ?? 0) || (a.nominalMargin ?? 0) - (b.nominalMargin ?? 0)).slice(0, 10);
    out.push(`contactors whose splits leak most often (${Math.min(10, leaking.length)} of ${leaking.length})`);
    out.push(
      textTable(
        ['  #', 'contactor', 'split', 'margin Pa', 'leaks', 'sampled', 'first order', 'flow sd sampled', 'flow sd first order'],
        ranked.map((c) => [`  ${c.index}`, c.id, c.split!, fmtResolved(c.nominalMargin, r.nominal.pressureResolution), String(c.leaks), percent(c.leakProbability), percent(c.firstOrderLeakProbability), percent(c.flowSd.sampled), percent(c.flowSd.firstOrder)]),
      ),
    );
    out.push('');
  }

  out.push('which tolerance matters most (share of variance, first order, with the share measured on the samples)');
  out.push(
    textTable(
      ['  tolerance', 'contactor flow', 'sampled', 'flow sd', 'split window', 'sampled'],
      r.sources.map((s) => [`  ${s.label}`, share(s.flowShare), share(s.flowShareSampled), percent(s.flowSd, 3), share(s.windowShare), share(s.windowShareSampled)]),
    ),
  );
  out.push('  contactor flow: variance of each contactor\'s flow relative to its nominal flow, averaged; flow sd: what this tolerance alone gives');
  if (r.sampled) {
    const followed = [r.followed.flow === null ? '' : `${share(r.followed.flow)} of the sampled contactor-flow variance`, r.followed.window === null ? '' : `${share(r.followed.window)} of the split-window variance`].filter(Boolean);
    out.push(`  sampled shares: each tolerance's part of what the first-order terms follow on the samples; they add up to 100 % (a share within the sampling noise shows as 0.0 %)${followed.length ? `; those terms follow ${followed.join(' and ')}` : ''}`);
  }
  out.push('  split window: variance of where p_B − p_A sits in its window (−1 at the low limit, +1 at the high), averaged over splits');
  out.push('');

  if (r.sweep.length > 1 || r.firstOrderCurve.length) {
    out.push('failure against tolerance (some split leaks)');
    const rows = r.sweep.map((p) => [
      `  ${fmt(p.scale)}×`,
      p.pinned ? percent(1 - p.pinned.value) : '–',
      p.pinned ? `${percent(1 - p.pinned.high)} to ${percent(1 - p.pinned.low)}` : '–',
      percent(p.firstOrderPinned === null ? null : 1 - p.firstOrderPinned),
      p.notSolved ? String(p.notSolved) : '',
    ]);
    out.push(textTable(['  tolerances', 'sampled', '95 % interval', 'first order', 'not solved'], rows));
    out.push('');
  }

  out.push(r.notes.length ? 'notes' : 'notes: none');
  for (const note of r.notes) out.push(`  - ${note}`);
  out.push('');
  out.push(...cautionLines(['Realisations are drawn from the tolerances given; a chip outside them (a bad wafer, a blocked channel) is not covered.']));
  return out.join('\n') + '\n';
}

function csvCell(s: string): string {
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A column name from a source label: `offset_depth_all_channels`. */
function columnName(label: string): string {
  return label.replace(/[^A-Za-z0-9]+/g, '_').replace(/^_|_$/g, '');
}

/** One row per realisation: state, spreads, drawn properties and offsets, and every contactor's flow. */
export function toleranceCsv(r: ToleranceResult, contactorIds: string[]): string {
  const offsets = r.sources.filter((s) => s.scope === 'offset');
  const header = [
    'sample', 'solved', 'problem', 'cold_start', 'all_pinned', 'leaking_count', 'leaking',
    'cv_total', 'ratio_total', 'cv_A', 'ratio_A', 'cv_B', 'ratio_B', 'cv_holdup', 'ratio_holdup',
    'viscosityA_mPa_s', 'viscosityB_mPa_s', 'tension_mN_m', 'angle_advancing_deg', 'angle_receding_deg',
    ...offsets.map((s) => `${columnName(s.label)}${s.variation.relative ? '_fraction' : '_um'}`),
    ...contactorIds.map((id) => `flow_${id}_uL_min`),
  ];
  const n = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? '' : String(Number(v.toPrecision(10))));
  const lines = r.rows.map((row) => {
    const s = row.spreads;
    return [
      String(row.index), row.solved ? 'yes' : 'no', row.problem ?? '', row.cold ? 'yes' : 'no', row.allPinned === null ? '' : row.allPinned ? 'yes' : 'no',
      String(row.leaking.length), row.leaking.join(' '),
      ...(s ? [s['total.cv'], s['total.ratio'], s['flowA.cv'], s['flowA.ratio'], s['flowB.cv'], s['flowB.ratio'], s['holdup.cv'], s['holdup.ratio']].map(n) : Array<string>(8).fill('')),
      n(row.viscosityA * DISPLAY.viscosity.factor), n(row.viscosityB * DISPLAY.viscosity.factor),
      n(row.interfacialTension === null ? null : row.interfacialTension * DISPLAY.tension.factor),
      n(row.contactAngle ? (row.contactAngle.advancing * 180) / Math.PI : null), n(row.contactAngle ? (row.contactAngle.receding * 180) / Math.PI : null),
      ...offsets.map((o) => n(o.variation.relative ? row.offsets[o.label] : row.offsets[o.label]! * DISPLAY.length.factor)),
      ...contactorIds.map((_, c) => n(row.flows[c] === undefined ? null : row.flows[c]! * DISPLAY.flow.factor)),
    ].map(csvCell).join(',');
  });
  return [header.join(','), ...lines].join('\n') + '\n';
}

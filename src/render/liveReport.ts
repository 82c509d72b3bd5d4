/**
 * The live part of the HTML report: the operating-point controls (a number field and a slider per
 * inlet and outlet setting, each carrying `data-setting="node.pressure"` or `"node.flow"`, a reset
 * and a download button, a status line and a box for a contactor's values) and the data the page
 * script needs (the layout as read, the solution as `solve --json` writes it, and the warm start
 * of the solver). Exports `liveControls`, `liveData`, `settingToField`, `FIELD_UNITS`, `LIVE_IDS`
 * and the `LiveData` type. Pure: solved chip and layout in, HTML text out; the script itself is
 * src/page/live.ts.
 */
import type { SolvedChip } from '../analyses/chip.js';
import { settingValue, type Setting } from '../analyses/settings.js';
import { DISPLAY, jsonNumbers, type DisplayUnit } from '../units/format.js';
import { escapeXml } from './svg.js';

/** The ids the page script finds its parts by. */
export const LIVE_IDS = {
  data: 'stratiflow-live-data',
  script: 'stratiflow-page',
  results: 'live-results',
  status: 'live-status',
  reset: 'live-reset',
  download: 'live-download',
  info: 'live-contactor',
} as const;

/** Units of the setting fields: pressures in Pa (a step of a few Pa matters at a split), flows in µL/min. */
export const FIELD_UNITS: Record<Setting['quantity'], DisplayUnit> = { pressure: DISPLAY.pressureDifference, flow: DISPLAY.flow };

export interface LiveData {
  /** The layout file as read (its own units), and where it came from. */
  layout: unknown;
  source: string;
  /** The solution as `solve --json` writes it. */
  solution: unknown;
  /** The solver's state at that solution, for a warm start. */
  warm: { pressure: number[]; holdup: number[]; leak: number[]; crossover: number[]; composition: number[]; splitStates: string[]; feedStates: string[] };
}


/** The settings of a chip: both quantities of every inlet (the one its layout sets first), the pressure of every outlet. */
function settingsOf(solved: SolvedChip): Array<{ setting: Setting; given: boolean }> {
  return solved.chip.nodes.flatMap((n) => {
    if (n.kind === 'outlet') return [{ setting: { node: n.id, quantity: 'pressure' as const }, given: true }];
    if (n.kind !== 'inlet') return [];
    const byPressure = n.pressure !== undefined;
    return [
      { setting: { node: n.id, quantity: 'pressure' as const }, given: byPressure },
      { setting: { node: n.id, quantity: 'flow' as const }, given: !byPressure },
    ];
  });
}

/** A setting's value at the solved state, as a field writes it (in FIELD_UNITS, to 0.01 Pa or 1e-6 µL/min). */
export function settingToField(solved: SolvedChip, name: string): string {
  const [node, quantity] = name.split('.') as [string, Setting['quantity']];
  const value = settingValue(solved, { node, quantity }) * FIELD_UNITS[quantity].factor;
  return String(Number(value.toFixed(quantity === 'pressure' ? 2 : 6)));
}

/** The controls section of the live report. */
export function liveControls(solved: SolvedChip): string {
  const rows = settingsOf(solved).map(({ setting, given }) => {
    const name = `${setting.node}.${setting.quantity}`;
    const value = settingToField(solved, name);
    const v = Number(value);
    const span = setting.quantity === 'pressure' ? Math.max(2 * Math.abs(v), Math.abs(v) + 1000) : Math.max(2 * Math.abs(v), 1e-3);
    const n = escapeXml(name);
    const unit = FIELD_UNITS[setting.quantity].symbol;
    return (
      `<tr><td class="text"><label for="field-${n}">${n}</label></td>` +
      `<td><input id="field-${n}" type="number" step="any" data-setting="${n}" value="${value}"${given ? ' class="given"' : ''} /></td><td class="text">${escapeXml(unit)}</td>` +
      `<td><input type="range" aria-label="${n} slider" data-setting-slider="${n}" min="0" max="${span}" step="${span / 1000}" value="${value}" /></td>` +
      `<td class="text" data-setting-note="${n}">${given ? 'set in the layout' : 'solved (type a value to set it instead)'}</td></tr>`
    );
  });
  return [
    '<section class="live"><h2>Operating point (live)</h2>',
    '<p>Change a setting and the chip is solved again here in the page, starting from the point shown; everything below is redrawn. ' +
      'Setting an inlet\'s pressure frees its flow, and the other way round.</p>',
    `<table class="settings"><thead><tr><th class="text">setting</th><th>value</th><th class="text">unit</th><th>slider</th><th class="text">now</th></tr></thead><tbody>${rows.join('')}</tbody></table>`,
    `<p><button type="button" id="${LIVE_IDS.reset}">Back to the layout's settings</button> <button type="button" id="${LIVE_IDS.download}">Download the layout with these settings (YAML)</button></p>`,
    `<p id="${LIVE_IDS.status}" class="live-status">The page script has not run (scripts blocked?): the figures are those of the layout's settings.</p>`,
    `<p class="live-contactor">Contactor under the pointer: <span id="${LIVE_IDS.info}">point at or tap a contactor in the drawing</span></p>`,
    '</section>',
  ].join('\n');
}

/** The data block of the page: JSON in a script element, with every `<` escaped so that no text can end the element. */
export function liveData(solved: SolvedChip, layout: unknown, solution: unknown): string {
  const { raw } = solved;
  const data: LiveData = {
    layout,
    source: solved.chip.source,
    solution,
    warm: {
      pressure: Array.from(raw.pressure), holdup: Array.from(raw.holdup), leak: Array.from(raw.leak), crossover: Array.from(raw.crossover),
      composition: Array.from(raw.composition), splitStates: [...raw.splitStates], feedStates: [...raw.feedStates],
    },
  };
  const json = JSON.stringify(data, jsonNumbers).replace(/</g, '\\u003c').replace(/&/g, '\\u0026');
  return `<script type="application/json" id="${LIVE_IDS.data}">${json}</script>`;
}

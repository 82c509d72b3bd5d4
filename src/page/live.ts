/**
 * The script of a live report (bundled by vite.page.config.ts into dist/page/live.js, and
 * inlined by the CLI into report.html): reads the layout, the solution and its warm start that
 * the page carries (render/liveReport.ts writes them), and whenever a setting field or slider
 * changes, solves the chip again from the current point and redraws the results part of the
 * page with the same renderers as the report itself. It also resets the settings, downloads the
 * layout with the new settings as YAML, shows a contactor's values where the pointer rests,
 * moves the live point of a window map in the page (`window --report`) to the current settings,
 * and exposes the current solution as `globalThis.stratiflowSolution` (the object of `solve --json`).
 * The page's edge, like a command of src/cli: it parses the fields, calls the library and
 * writes the DOM; it computes no physics.
 */
import { stringify } from 'yaml';
import { layoutToChip } from '../layout/load.js';
import { solveChip, warmStartFrom, type SolvedChip } from '../analyses/chip.js';
import { findManifolds } from '../analyses/manifolds.js';
import { parseSetting, settingValue, withSettings, type Setting } from '../analyses/settings.js';
import { analyseExtraction, soluteSetup, type ExtractionResult } from '../analyses/extraction.js';
import type { WarmStart } from '../solver/newton.js';
import { reportResults } from '../render/report.js';
import { useDomMarkup } from '../render/svg.js';
import { liveMapPoint, type LiveMapData } from '../render/windowMap.js';
import { FIELD_UNITS, LIVE_IDS, settingToField, type LiveData } from '../render/liveReport.js';
import type { Chip } from '../network/model.js';
import { jsonNumbers } from '../units/format.js';
import { StratiflowError } from '../errors.js';

declare global {
  // eslint-disable-next-line no-var
  var stratiflowSolution: unknown;
}


/** A field's text as a setting in SI units, or one line saying what is wrong with it. */
function settingFromField(chip: Chip, name: string, text: string): { setting: Setting; value: number } | string {
  let setting: Setting;
  try {
    setting = parseSetting(name, chip);
  } catch (error) {
    return error instanceof StratiflowError ? error.message : String(error);
  }
  const value = Number(text);
  if (text.trim() === '' || !Number.isFinite(value)) return `${name}: "${text}" is not a number`;
  if (setting.quantity === 'flow' && value < 0) return `${name}: a flow into the chip is not negative`;
  return { setting, value: value / FIELD_UNITS[setting.quantity].factor };
}

function readData(): LiveData {
  const text = document.getElementById(LIVE_IDS.data)!.textContent ?? '';
  return JSON.parse(text) as LiveData;
}

function warmOf(data: LiveData['warm']): WarmStart {
  return {
    pressure: Float64Array.from(data.pressure), holdup: Float64Array.from(data.holdup), leak: Float64Array.from(data.leak),
    crossover: Float64Array.from(data.crossover), composition: Float64Array.from(data.composition),
    splitStates: data.splitStates as WarmStart['splitStates'], feedStates: data.feedStates as WarmStart['feedStates'],
  };
}

function extractionOf(solved: SolvedChip): ExtractionResult | undefined {
  if (!solved.chip.solute || !solved.result.converged) return undefined;
  try {
    return analyseExtraction(solved, soluteSetup(solved.chip));
  } catch {
    return undefined;
  }
}

function start(): void {
  // The redrawn results go straight back into this page: the browser's own serialiser will do.
  useDomMarkup();
  const data = readData();
  const base = layoutToChip(data.layout, data.source);
  const results = document.getElementById(LIVE_IDS.results)!;
  const status = document.getElementById(LIVE_IDS.status)!;
  const fields = [...document.querySelectorAll<HTMLInputElement>('input[data-setting]')];
  const sliders = new Map([...document.querySelectorAll<HTMLInputElement>('input[data-setting-slider]')].map((s) => [s.dataset.settingSlider!, s]));
  let warm = warmOf(data.warm);
  let solves = 0;
  globalThis.stratiflowSolution = data.solution;
  /** The settings the user has set: node → its quantity and SI value (others as in the file). */
  const set = new Map<string, { setting: Setting; value: number }>();
  const initial = new Map(fields.map((f) => [f.dataset.setting!, f.value]));
  const notes = [...document.querySelectorAll<HTMLElement>('[data-setting-note]')];
  const initialNotes = new Map(notes.map((n) => [n.dataset.settingNote!, n.textContent ?? '']));
  /** Says of every setting whether it is set here, solved because its node is set here the other way, or as in the layout. */
  const markSettings = () => {
    for (const note of notes) {
      const name = note.dataset.settingNote!;
      const [node] = name.split('.');
      const mine = set.get(node!);
      note.textContent = !mine ? initialNotes.get(name)! : `${mine.setting.node}.${mine.setting.quantity}` === name ? 'set here' : 'solved';
    }
    for (const f of fields) {
      const mine = set.get(f.dataset.setting!.split('.')[0]!);
      f.classList.toggle('set', mine !== undefined && `${mine.setting.node}.${mine.setting.quantity}` === f.dataset.setting);
    }
  };

  // The live points of window maps on the page, outside the redrawn results: each follows its two
  // settings, and is hidden while a setting of any other node differs from the layout (the map
  // holds those as in the layout, so it does not describe that chip).
  const mapPoints = [...document.querySelectorAll<SVGGElement>('g.movable-point[data-x-setting]')];
  const placeMapPoints = (solved: SolvedChip) => {
    for (const g of mapPoints) {
      const data = g.dataset as LiveMapData;
      const axes = [parseSetting(data.xSetting!, solved.chip), parseSetting(data.ySetting!, solved.chip)];
      const onMap = solved.result.converged && [...set.keys()].every((node) => axes.some((a) => a.node === node));
      const at = onMap ? liveMapPoint(data, [settingValue(solved, axes[0]!), settingValue(solved, axes[1]!)]) : undefined;
      if (at) g.setAttribute('transform', at);
      g.setAttribute('visibility', at ? 'visible' : 'hidden');
    }
  };

  const setStatus = (text: string, bad = false) => {
    status.textContent = text;
    status.className = bad ? 'live-status bad' : 'live-status';
  };

  const resolve = () => {
    const started = performance.now();
    let chip;
    try {
      chip = withSettings(base, [...set.values()].map((s) => [s.setting, s.value] as const));
    } catch (error) {
      setStatus(error instanceof StratiflowError ? error.message : String(error), true);
      return;
    }
    const solved = solveChip(chip, {}, warm);
    const extraction = extractionOf(solved);
    const solvedAt = performance.now();
    if (solved.result.converged) warm = warmStartFrom(solved);
    const html = reportResults(solved, findManifolds(solved), { extraction });
    const renderedAt = performance.now();
    results.innerHTML = html;
    placeMapPoints(solved);
    globalThis.stratiflowSolution = JSON.parse(JSON.stringify(extraction ? { ...solved.result, extraction } : solved.result, jsonNumbers));
    for (const f of fields) {
      const name = f.dataset.setting!;
      const [node] = name.split('.');
      if (set.has(node!) && `${node}.${set.get(node!)!.setting.quantity}` === name) continue;
      f.value = settingToField(solved, name);
      const slider = sliders.get(name);
      if (slider) slider.value = f.value;
    }
    const done = performance.now();
    solves++;
    document.body.dataset.solves = String(solves);
    document.body.dataset.solveMs = (solvedAt - started).toFixed(1);
    document.body.dataset.redrawMs = (done - solvedAt).toFixed(1);
    document.body.dataset.renderMs = (renderedAt - solvedAt).toFixed(1);
    // When the browser has laid out and painted the new results: the next frame, once it is drawn.
    const count = solves;
    requestAnimationFrame(() => setTimeout(() => {
      document.body.dataset.paintedMs = (performance.now() - started).toFixed(1);
      document.body.dataset.painted = String(count);
    }, 0));
    setStatus(solved.result.converged
      ? `Solved again in ${(done - started).toFixed(0)} ms (${solved.result.iterations} Newton steps from the previous point).`
      : `NOT CONVERGED: ${solved.result.message ?? ''}; the figures are from the last iterate.`, !solved.result.converged);
  };

  let pending = false;
  const schedule = () => {
    if (pending) return;
    pending = true;
    requestAnimationFrame(() => {
      pending = false;
      resolve();
    });
  };

  const take = (field: HTMLInputElement) => {
    const name = field.dataset.setting!;
    const parsed = settingFromField(base, name, field.value);
    if (typeof parsed === 'string') {
      setStatus(parsed, true);
      return;
    }
    set.set(parsed.setting.node, parsed);
    markSettings();
    schedule();
  };
  for (const f of fields) f.addEventListener('change', () => take(f));
  for (const [name, slider] of sliders) {
    slider.addEventListener('input', () => {
      const field = fields.find((f) => f.dataset.setting === name)!;
      field.value = slider.value;
      take(field);
    });
  }
  document.getElementById(LIVE_IDS.reset)!.addEventListener('click', () => {
    set.clear();
    markSettings();
    for (const f of fields) {
      f.value = initial.get(f.dataset.setting!)!;
      const slider = sliders.get(f.dataset.setting!);
      if (slider) slider.value = f.value;
    }
    schedule();
  });
  document.getElementById(LIVE_IDS.download)!.addEventListener('click', () => {
    const layout = structuredClone(data.layout) as { nodes: Array<Record<string, unknown>> };
    for (const { setting, value } of set.values()) {
      const node = layout.nodes.find((n) => n.id === setting.node)!;
      if (setting.quantity === 'pressure') {
        delete node.flow;
        node.pressure = value;
      } else {
        delete node.pressure;
        node.flow = value;
      }
    }
    const text = `# ${data.source} with the settings of its live report (SI units)\n${stringify(layout)}`;
    const link = document.createElement('a');
    link.href = URL.createObjectURL(new Blob([text], { type: 'application/yaml' }));
    link.download = data.source.replace(/^.*[\\/]/, '').replace(/\.(ya?ml|json)$/i, '') + '-live.yaml';
    link.click();
    URL.revokeObjectURL(link.href);
  });
  // A contactor's values where the pointer rests or a finger taps: its tooltip text, in a box that stays.
  const info = document.getElementById(LIVE_IDS.info)!;
  const show = (event: Event) => {
    const g = (event.target as Element).closest?.('g.contactor');
    if (!g) return;
    info.textContent = g.querySelector('title')?.textContent ?? '';
  };
  results.addEventListener('mouseover', show);
  results.addEventListener('click', show);
  setStatus('Live: change a setting and the chip is solved again in the page.');
}

start();

/**
 * Timing of the distribution design (src/analyses/design.ts): the bundled 8-contactor dye chip
 * (feeds and outlet arms tapered one width per segment, the B outlet's back-pressure free, to a
 * CV of 0.2 %), and the same channels on the generator's ladder numbered up to 16 and 32
 * contactors (an invented demo: the 8-contactor chip's back-pressure, so that most splits leak
 * and some feeds starve at the start; to a CV of 1 %). Reports time, steps and solves, and
 * whether the design met its targets. Exports `benchDesign` and `dyeLadder`.
 */
import { ladderLayout } from '../src/layout/generate.js';
import { layoutToChip, loadLayout } from '../src/layout/load.js';
import { designChip } from '../src/analyses/design.js';
import { designVariables, parseDesignVariable, DESIGN_DEFAULTS } from '../src/analyses/designSpec.js';
import type { Chip } from '../src/network/model.js';
import type { Row } from './report.js';

const um = 1e-6;
const uLmin = 1e-9 / 60;

/** The bundled dye chip's channels and back-pressure on the generator's ladder of `contactors` (also a test case). */
export function dyeLadder(contactors: number): Chip {
  const layout = ladderLayout({
    contactors,
    pitch: 1.5e-3,
    manifold: { width: 1500 * um, depth: 60 * um },
    contactor: { width: 300 * um, depth: 60 * um, length: 40e-3, orientation: 'side' },
    feed: { width: 120 * um, depth: 60 * um, length: 6e-3 },
    drain: { width: 120 * um, depth: 60 * um, length: 6e-3 },
    phaseA: { label: '1-octanol', viscosity: 7.29e-3, density: 824 },
    phaseB: { label: 'water', viscosity: 0.89e-3, density: 997 },
    interfacialTension: 8.5e-3,
    drive: { A: { flow: 2 * contactors * uLmin }, B: { flow: 4 * contactors * uLmin } },
    outletPressure: { A: 0, B: 772 },
  });
  return layoutToChip(layout, `dye geometry, ${contactors} contactors`);
}

function timed(name: string, chip: Chip, flowCv: number): Row[] {
  const begin = performance.now();
  const result = designChip(chip, {
    variables: designVariables(chip, ['feed.widths', 'drain.widths'].map(parseDesignVariable), DESIGN_DEFAULTS),
    settings: [{ setting: { node: 'outB', quantity: 'pressure' } }],
    flowCv,
    margin: { fraction: 0.1 },
  });
  const seconds = (performance.now() - begin) / 1000;
  const cv = (v: { A: number; B: number }) => `A ${(100 * v.A).toPrecision(2)} %, B ${(100 * v.B).toPrecision(2)} %`;
  return [
    { name: `design, ${name}: ${result.met ? 'met' : 'NOT met'}; CV ${cv(result.flowCv.before)} → ${cv(result.flowCv.after)}`, value: seconds, unit: 's' },
    { name: '  steps', value: result.iterations, unit: '' },
    { name: '  chip solves', value: result.solves, unit: '' },
  ];
}

export function benchDesign(): Row[] {
  const dye = loadLayout(new URL('../layouts/dye-octanol-8.yaml', import.meta.url).pathname);
  return [...timed('bundled dye chip, 8 contactors', dye, 0.002), ...timed('dye geometry, 16 contactors', dyeLadder(16), 0.01), ...timed('dye geometry, 32 contactors', dyeLadder(32), 0.01)];
}

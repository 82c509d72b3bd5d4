/**
 * Timing of the extraction analysis (src/analyses/extraction.ts): the solute transport in every
 * contactor of a 256-contactor chip (a bifurcating tree of 8 levels, so that every contactor
 * carries both phases), plus the even-chip reference, after the flow solve (not timed here).
 * Every contactor is solved on its own: nothing is shared between contactors of equal geometry.
 * Also one contactor alone. Exports `benchExtraction`. The chip and solute are invented demo
 * values: generator defaults, K = 4 fed in phase B, diffusivities 0.6 and 1.2 × 10⁻⁹ m²/s.
 */
import { treeLayout } from '../src/layout/generate.js';
import { layoutToChip } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import { analyseExtraction, type SoluteSetup } from '../src/analyses/extraction.js';
import { medianSecondsPerCall, type Row } from './report.js';

const LEVELS = 8;
const CONTACTORS = 2 ** LEVELS;
/** The bound for the whole chip: extraction for all 256 contactors. */
const CHIP_TARGET_S = 5;

const SOLUTE: SoluteSetup = { label: 'demo solute', partition: 4, feedPhase: 'B', feedConcentration: 1, diffusivityA: 0.6e-9, diffusivityB: 1.2e-9 };

export function benchExtraction(): Row[] {
  const solved = solveChip(layoutToChip(treeLayout({ levels: LEVELS }), 'bench: 256-contactor tree'));
  if (!solved.result.converged) throw new Error(`the flow solve of the bench chip did not converge: ${solved.result.message ?? ''}`);

  let last = analyseExtraction(solved, SOLUTE);
  const chip = medianSecondsPerCall(() => (last = analyseExtraction(solved, SOLUTE)).summary.yield, { warmupCalls: 1, samples: 3, minBatchMs: 0 });
  const levels = last.contactors.map((r) => r.cells);
  const single = { ...solved, result: { ...solved.result, contactors: solved.result.contactors.slice(0, 1) }, network: { ...solved.network, contactors: solved.network.contactors.slice(0, 1) } };
  const one = medianSecondsPerCall(() => analyseExtraction(single, SOLUTE).summary.yield, { warmupCalls: 3, samples: 9, minBatchMs: 20 });
  return [
    { name: `extraction, ${last.contactors.length} of ${CONTACTORS} contactors + even-chip reference`, value: chip, unit: 's', target: CHIP_TARGET_S },
    { name: `extraction, one contactor + its even reference (cells across: ${Math.min(...levels)}–${Math.max(...levels)})`, value: one * 1e3, unit: 'ms' },
  ];
}

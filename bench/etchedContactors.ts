/**
 * Etched contactors in the network solve: the lane interpolant of an etched contactor (the
 * HoldupTable of the shape at the viscosity ratio, section.ts) — its build time with every
 * stretch built, one lane evaluation, and its largest error against the direct spectral solve —
 * and the 256-contactor ladder of bench/network.ts with every channel etched (contactors 100 µm
 * mask × 50 µm deep) against its rectangular twin (after one solve of each, medians of three
 * solves): a first solve from no kept strip condensation (as in a fresh process: the
 * conductances and the tables built inside it, a table only in the stretches the solve asks
 * for), and a solve with the tables already built. Exports `benchEtchedContactors`. Fluids as in bench/network.ts.
 */
import { forgetShapedSolves, shapedFlows, type ShapedSection } from '../src/physics/shapedSection.js';
import { SectionTables } from '../src/solver/sectionTables.js';
import { SolverWorkspace } from '../src/solver/newton.js';
import { solveChip } from '../src/analyses/chip.js';
import { etchedTwin, timeOnce } from './shapedSection.js';
import { medianSecondsPerCall, type Row } from './report.js';

/** Targets of the issue: a table in at most 1 s, the etched chip within 2× the time of its rectangular twin. */
const TABLE_BUILD_TARGET_MS = 1000;
const TWIN_RATIO_TARGET = 2;
const MILLI = 1e3;
const MICRO = 1e6;

export function benchEtchedContactors(): Row[] {
  const rows: Row[] = [];
  const { rect, etched } = etchedTwin(256, true);
  const contactor = etched.segments.find((s) => s.group === 'contactor')!.section as ShapedSection;
  const [muA, muB] = [etched.phases.A.viscosity, etched.phases.B.viscosity];
  const tables = new SectionTables();
  forgetShapedSolves();
  const build = timeOnce(() => tables.shaped(contactor, muA / muB).complete());
  rows.push({ name: 'lane interpolant build, etched contactor 100 × 50 µm (one HoldupTable, every stretch)', value: build * MILLI, unit: 'ms', target: TABLE_BUILD_TARGET_MS });
  const lanes = tables.lanes(contactor, muA, muB);
  let shift = 0;
  const evaluation = medianSecondsPerCall(() => lanes.conductances(0.3 + 1e-7 * (shift++ % 1000), muA, muB, false).kNear);
  rows.push({ name: 'lane conductances from the interpolant, one call', value: evaluation * MICRO, unit: 'µs' });
  let worst = 0;
  for (const alpha of [0.002, 0.03, 0.12, 0.3, 0.5, 0.7, 0.88, 0.97, 0.998]) {
    const direct = shapedFlows(contactor, alpha, muA, muB);
    const k = lanes.conductances(alpha, muA, muB, false);
    worst = Math.max(worst, Math.max(Math.abs(k.kNear - direct.kA), Math.abs(k.kFar - direct.kB)) / (direct.kA + direct.kB));
  }
  rows.push({ name: 'lane interpolant error against the direct solve (largest of 9 holdups, 0.002 to 0.998, share of the total flow)', value: worst, unit: 'relative' });

  // One solve of each before timing, so that neither pays for compiling the solver; then the
  // median of three solves of each (every etched first solve from no kept condensation, in a
  // new workspace), since one solve on this shared machine varies by up to 2×.
  solveChip(rect);
  solveChip(etched);
  const three = { warmupCalls: 0, samples: 3, minBatchMs: 0 };
  const rectSeconds = medianSecondsPerCall(() => solveChip(rect).result.iterations, three);
  let workspace = new SolverWorkspace();
  const firstSeconds = medianSecondsPerCall(() => {
    forgetShapedSolves();
    workspace = new SolverWorkspace();
    return solveChip(etched, {}, undefined, workspace).result.iterations;
  }, three);
  const first = solveChip(etched, {}, undefined, workspace).result;
  const warmSeconds = medianSecondsPerCall(() => solveChip(etched, {}, undefined, workspace).result.iterations, three);
  const built = workspace.tables.holdup(contactor, muA, muB).stretches!;
  rows.push({ name: '256-contactor ladder, rectangular: solve', value: rectSeconds * MILLI, unit: 'ms' });
  rows.push({
    name: `the same etched throughout: first solve, from no kept condensation, tables built inside (${first.converged ? 'converged' : 'NOT converged'}, ${first.iterations} steps; ${built.built} of ${built.count} stretches of the contactors' table built)`,
    value: firstSeconds * MILLI,
    unit: 'ms',
  });
  rows.push({ name: 'the same etched throughout: solve with the tables built', value: warmSeconds * MILLI, unit: 'ms' });
  rows.push({ name: 'etched / rectangular solve time, 256 contactors, tables built', value: warmSeconds / rectSeconds, unit: '×', target: TWIN_RATIO_TARGET });
  rows.push({ name: 'etched / rectangular solve time, 256 contactors, first solve', value: firstSeconds / rectSeconds, unit: '×', target: TWIN_RATIO_TARGET });
  return rows;
}

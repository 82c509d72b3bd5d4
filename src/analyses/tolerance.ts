/**
 * Fabrication tolerance and property uncertainty of a whole chip: draw many realisations —
 * channel depths and widths varying channel to channel and by a common offset per chip, phase
 * viscosities, interfacial tension and contact angle — solve each, and set the sampled spread
 * beside a first-order estimate from derivatives of the nominal solution.
 *
 * Derivatives are forward differences in each standard deviate, each a full solve warm-started
 * from the nominal solution (one Newton step from there is the linearised response, so these
 * are cheap); a single-phase channel's width and depth share one solve (see `planDifferences`). Every solve is a job that depends only on (seed, sample index) or on the slot it
 * differences, so the numbers are the same whatever the number of worker threads.
 *
 * Exports `runTolerance`, its option type and the worker message types, and re-exports the
 * spec and result types. The model lives in ./toleranceModel.ts, the statistics in ./toleranceSummary.ts.
 * No file I/O; the caller formats and writes.
 */
import { SolverWorkspace } from '../solver/newton.js';
import type { Worker } from 'node:worker_threads';
import { runPool, startWorkerBeside } from './workers.js';
import { solveChip, warmStartFrom } from './chip.js';
import { observableLayout, observe, planTolerance, runJob, type Job, type JobContext, type Outcome, type Slot, type TolerancePlan, type ToleranceSpec } from './toleranceModel.js';
import { summariseTolerance, type SummaryInput, type ToleranceResult } from './toleranceSummary.js';
import { conductance, nominalSize, type RectSection } from '../physics/section.js';
import { isContactor } from '../network/topology.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip } from '../network/model.js';
import { StratiflowError } from '../errors.js';

export type * from './toleranceModel.js';
export type * from './toleranceSummary.js';
export type * from './sampleStatistics.js';

// ---------------------------------------------------------------------------------------------
// Running jobs in this thread or in worker threads

export interface WorkerBatch {
  id: number;
  jobs: Job[];
}

export type WorkerReply = { kind: 'done'; id: number; outcomes: Outcome[] } | { kind: 'error'; message: string };

function startWorker(context: JobContext): Worker {
  return startWorkerBeside(import.meta.url, 'toleranceWorker', context);
}

/** Runs every job; outcomes come back in job order whatever the number of threads. */
async function runJobs(context: JobContext, jobs: Job[], workers: number, progress: (done: number) => void): Promise<Outcome[]> {
  const outcomes = new Array<Outcome>(jobs.length);
  const count = Math.min(workers, Math.ceil(jobs.length / 4));
  if (count <= 1) {
    const workspace = new SolverWorkspace();
    for (const [i, job] of jobs.entries()) {
      outcomes[i] = runJob(context, job, workspace);
      progress(i + 1);
      // Let timers (a progress bar's redraw) run now and then.
      if (i % 32 === 31) await new Promise((resolve) => setImmediate(resolve));
    }
    return outcomes;
  }
  const batchSize = Math.max(1, Math.min(16, Math.floor(jobs.length / (count * 8))));
  const batches: Array<{ start: number; jobs: Job[] }> = [];
  for (let start = 0; start < jobs.length; start += batchSize) batches.push({ start, jobs: jobs.slice(start, start + batchSize) });
  const workerPool = Array.from({ length: count }, () => startWorker(context));
  let done = 0;
  await runPool<WorkerBatch, WorkerReply>(
    workerPool,
    (pool) => batches.forEach((batch, id) => pool.submit({ id, jobs: batch.jobs })),
    (reply, pool) => {
      if (reply.kind === 'error') {
        pool.finish(new Error(`worker thread: ${reply.message}`));
        return false;
      }
      const { start } = batches[reply.id]!;
      reply.outcomes.forEach((o, k) => (outcomes[start + k] = o));
      done += reply.outcomes.length;
      progress(done);
      if (done === jobs.length) pool.finish();
      return true;
    },
  );
  return outcomes;
}

// ---------------------------------------------------------------------------------------------
// The study

export interface ToleranceOptions {
  /** Realisations at the given tolerances. */
  samples: number;
  seed: number;
  /** Worker threads; 1 (default) runs everything in this thread. */
  workers?: number;
  /**
   * Multiples of every tolerance at which to sample as well, for the failure curve; each
   * solves `samples` more realisations (the same deviates, scaled). 1 is always sampled.
   */
  scales?: number[];
  /** The first-order estimate (a solve per parameter, one per single-phase channel for both its sizes); default true. */
  firstOrder?: boolean;
  /** Solve the realisations; false draws them for the first-order model only. Default true. */
  solveSamples?: boolean;
  solver?: SolverOptions;
  /** Called after every finished solve with the count done and the total. */
  onProgress?: (done: number, total: number) => void;
}

/**
 * Relative change of the quantities a slot moves in one difference step. With the network solved
 * to a mass residual of 1e-12 of the throughput, this leaves ~1e-6 relative noise and ~1e-6
 * relative truncation error in each derivative.
 */
const DIFFERENCE_STEP = 1e-6;

/** The step in z that moves the quantities of a slot by about DIFFERENCE_STEP of their size. */
function differenceStep(chip: Chip, slot: Slot): number {
  const v = slot.variation;
  if (v.relative) return DIFFERENCE_STEP / v.size;
  let nominal: number;
  if (slot.target === 'viscosityA') nominal = chip.phases.A.viscosity;
  else if (slot.target === 'viscosityB') nominal = chip.phases.B.viscosity;
  else if (slot.target === 'tension') nominal = chip.interfacialTension!;
  else if (slot.target === 'angle') nominal = 1;
  else {
    nominal = Math.min(
      ...slot.segments.map((i) => {
        const s = chip.segments[i]!.section;
        const size = nominalSize(s, slot.target as 'width' | 'depth');
        return size > 0 ? size : Infinity;
      }),
    );
  }
  return (DIFFERENCE_STEP * nominal) / v.size;
}

/**
 * A plain (single-phase) segment enters the network only through its conductance k(w, h), as
 * its resistance L/k per unit viscosity (src/network/assemble.ts), so its width and depth move
 * every output along one direction: ∂y/∂z = (∂y/∂ln k)·(∂ln k/∂ln θ)·(dθ/dz)/θ. One difference
 * solve then serves both, the width slot's derivative being the depth slot's times
 *   factor = [∂ln k/∂ln w · (dw/dz)/w] / [∂ln k/∂ln h · (dh/dz)/h],
 * with ∂ln k/∂ln θ from central differences of the closed-form conductance. The first such
 * segment of every group is differenced both ways as a check (`checks`).
 */
interface DifferencePlan {
  /** Slots solved for. */
  differenced: number[];
  /** Width slots derived from the depth slot of the same segment. */
  derived: Array<{ slot: number; from: number; factor: number }>;
  checks: Array<{ slot: number; from: number; factor: number }>;
}

function planDifferences(chip: Chip, plan: TolerancePlan): DifferencePlan {
  const contactors = new Set(chip.segments.flatMap((s, i) => (isContactor(chip, s) ? [i] : [])));
  const eachSlot = new Map<string, number>();
  plan.slots.forEach((slot, k) => {
    if (slot.variation.size > 0 && plan.sources[slot.source]!.scope === 'each') eachSlot.set(`${slot.target} ${slot.segments[0]}`, k);
  });
  const derived: DifferencePlan['derived'] = [];
  const checks: DifferencePlan['checks'] = [];
  const checkedGroups = new Set<string | undefined>();
  for (const [i, segment] of chip.segments.entries()) {
    const section = segment.section;
    const widthSlot = eachSlot.get(`width ${i}`);
    const depthSlot = eachSlot.get(`depth ${i}`);
    if (section.shape !== 'rect' || contactors.has(i) || widthSlot === undefined || depthSlot === undefined) continue;
    const h = 1e-5;
    const slope = (at: (f: number) => RectSection) => (Math.log(conductance(at(1 + h), 1)) - Math.log(conductance(at(1 - h), 1))) / (2 * h);
    const byWidth = slope((f) => ({ ...section, width: section.width * f }));
    const byDepth = slope((f) => ({ ...section, depth: section.depth * f }));
    const perZ = (slot: number, nominal: number) => {
      const v = plan.slots[slot]!.variation;
      return v.size * (v.relative ? 1 : 1 / nominal);
    };
    const entry = { slot: widthSlot, from: depthSlot, factor: (byWidth * perZ(widthSlot, section.width)) / (byDepth * perZ(depthSlot, section.depth)) };
    if (checkedGroups.has(segment.group)) derived.push(entry);
    else {
      checkedGroups.add(segment.group);
      checks.push(entry);
    }
  }
  const skipped = new Set(derived.map((d) => d.slot));
  const differenced = plan.slots.flatMap((slot, k) => (slot.variation.size > 0 && !skipped.has(k) ? [k] : []));
  return { differenced, derived, checks };
}

/** (y − y₀)/step per differenced slot; failures and split-state changes by slot name. */
function differenceQuotients(chip: Chip, plan: TolerancePlan, slots: number[], outcomes: Outcome[], y0: Float64Array, states0: Uint8Array, into: FirstOrder): void {
  slots.forEach((slot, j) => {
    const outcome = outcomes[j]!;
    into.solves++;
    if (!outcome.values) {
      into.failed.push(`${plan.slots[slot]!.name}: ${outcome.problem}`);
      return;
    }
    const step = differenceStep(chip, plan.slots[slot]!);
    const g = new Float64Array(y0.length);
    for (let o = 0; o < y0.length; o++) g[o] = (outcome.values[o]! - y0[o]!) / step;
    into.gradient[slot] = g;
    if (outcome.states.some((st, i) => st !== states0[i])) into.stateChanges.push(plan.slots[slot]!.name);
  });
}

/** Whether every checked pair agrees with its derived form to 1e-4 of its largest component. */
function checksHold(checks: DifferencePlan['checks'], gradient: Array<Float64Array | null>): boolean {
  return checks.every(({ slot, from, factor }) => {
    const direct = gradient[slot];
    const base = gradient[from];
    if (!direct || !base) return true;
    let largest = 0;
    let worst = 0;
    for (let o = 0; o < direct.length; o++) {
      largest = Math.max(largest, Math.abs(direct[o]!));
      worst = Math.max(worst, Math.abs(direct[o]! - factor * base[o]!));
    }
    return worst <= 1e-4 * largest;
  });
}

type FirstOrder = NonNullable<SummaryInput['firstOrder']>;

export async function runTolerance(chip: Chip, spec: ToleranceSpec, options: ToleranceOptions): Promise<ToleranceResult> {
  const { samples, seed } = options;
  if (!Number.isSafeInteger(samples) || samples < 0) throw new StratiflowError('bad-option', `samples: ${samples} is not a whole number ≥ 0`);
  if (!Number.isSafeInteger(seed) || seed < 0) throw new StratiflowError('bad-option', `seed: ${seed} is not a whole number from 0 to 2^53`);
  const workers = options.workers ?? 1;
  if (!Number.isInteger(workers) || workers < 1) throw new StratiflowError('bad-option', `workers: ${workers} is not a whole number ≥ 1`);
  const extraScales = [...new Set(options.scales ?? [])].filter((s) => s !== 1);
  if (extraScales.some((s) => !(Number.isFinite(s) && s >= 0))) throw new StratiflowError('bad-option', 'scales must be finite numbers ≥ 0');
  const scales = [1, ...extraScales.sort((a, b) => a - b)];
  const solver = options.solver ?? {};

  const plan = planTolerance(chip, spec);
  const nominal = solveChip(chip, solver);
  if (!nominal.result.converged) {
    throw new StratiflowError('no-convergence', `the nominal chip does not solve (${nominal.result.message ?? 'no reason given'}), so there is nothing to vary around`, { file: chip.source });
  }
  const layout = observableLayout(nominal.result);
  const context: JobContext = { chip, plan, seed, warm: warmStartFrom(nominal), solver, layout };
  const { values: y0, states: states0 } = observe(nominal.result, layout);

  const firstOrder = options.firstOrder !== false;
  const differences = firstOrder ? planDifferences(chip, plan) : { differenced: [], derived: [], checks: [] };
  const differenceJob = (slot: number): Job => ({ kind: 'derivative', slot, step: differenceStep(chip, plan.slots[slot]!) });
  const jobs: Job[] = differences.differenced.map(differenceJob);
  const solveSamples = options.solveSamples !== false;
  if (solveSamples) for (const scale of scales) for (let index = 0; index < samples; index++) jobs.push({ kind: 'sample', index, scale });
  // A second pass, only when a check fails, differences the derived slots too.
  let total = jobs.length;
  const outcomes = await runJobs(context, jobs, workers, (done) => options.onProgress?.(done, total));

  const gradients: FirstOrder = { gradient: plan.slots.map(() => null), solves: 0, failed: [], stateChanges: [], notes: [] };
  differenceQuotients(chip, plan, differences.differenced, outcomes, y0, states0, gradients);
  if (checksHold(differences.checks, gradients.gradient)) {
    for (const { slot, from, factor } of differences.derived) {
      const base = gradients.gradient[from];
      gradients.gradient[slot] = base ? base.map((g) => factor * g) : null;
    }
  } else {
    gradients.notes.push('the width of a single-phase channel did not act through its conductance alone, so every width was differenced on its own');
    const rest = differences.derived.map((d) => d.slot);
    const done = total;
    total += rest.length;
    const more = await runJobs(context, rest.map(differenceJob), workers, (k) => options.onProgress?.(done + k, total));
    differenceQuotients(chip, plan, rest, more, y0, states0, gradients);
  }

  const sampled = scales.map((scale, s) => ({
    scale,
    outcomes: solveSamples ? outcomes.slice(differences.differenced.length + s * samples, differences.differenced.length + (s + 1) * samples) : null,
  }));
  return summariseTolerance({ chip, plan, seed, samples, nominal: nominal.result, layout, firstOrder: firstOrder ? gradients : null, sampled });
}

/**
 * The model of a tolerance study: what may vary (the spec), the standard deviates that a
 * realisation draws (the plan's slots), the realised chip, and what is recorded of each solve.
 *
 * A tolerance is a `Variation` of a quantity: a standard deviation (normal) or the half-width of
 * a range (uniform), absolute (SI) or relative to the nominal value. A realisation is a vector z
 * of standard deviates, one per slot, drawn from a stream that depends only on (seed, sample
 * index); a quantity becomes nominal + Σ size·z·(nominal if relative, else 1).
 *
 * Exports the spec types, `planTolerance`, `standardDeviates`, `realiseChip` (and
 * `realisedProperties`, its quantities before any section is built), the recorded layout
 * (`observableLayout`, `observe`) and `runJob`, one solve as a worker thread runs it.
 * No I/O, no threads; ./tolerance.ts runs the study.
 */
import { solveCurvedInterface } from '../solver/curvedInterface.js';
import { summariseContactors, type ContactorSummary } from './chip.js';
import { assembleNetwork, restampNetwork, type Network } from '../network/assemble.js';
import { primeWorkspace, solveNetwork } from '../solver/newton.js';
import { sampleStream, standardNormal, standardUniform } from './random.js';
import { SolverWorkspace, type WarmStart } from '../solver/newton.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip, ChipSegment } from '../network/model.js';
import { StratiflowError } from '../errors.js';
import { nominalSize, shiftedSection } from '../physics/section.js';

// ---------------------------------------------------------------------------------------------
// Spec and plan

export type Distribution = 'normal' | 'uniform';

export interface Variation {
  distribution: Distribution;
  /** Normal: the standard deviation; uniform: the half-width (the value lies in nominal ± size). */
  size: number;
  /** Size as a fraction of the nominal value; otherwise in SI units (rad for angles). */
  relative: boolean;
}

export interface DimensionTolerance {
  /** Drawn for every channel on its own. */
  each?: Variation;
  /** Drawn once per chip and shared by all channels the rule covers (wafer to wafer). */
  offset?: Variation;
}

/**
 * Channel tolerances for the segments of one `group` (as the layout names them: contactor,
 * manifold, feed, drain, tubing, …) or, without a group, for every segment no other rule names.
 * A tube's one size, its inner diameter, takes the `width` tolerance.
 */
export interface ChannelTolerance {
  group?: string;
  depth?: DimensionTolerance;
  width?: DimensionTolerance;
}

export interface ToleranceSpec {
  channels?: ChannelTolerance[];
  viscosityA?: Variation;
  viscosityB?: Variation;
  interfacialTension?: Variation;
  /** Shifts the advancing and receding angles together. */
  contactAngle?: Variation;
}

export type Quantity = 'depth' | 'width' | 'viscosity A' | 'viscosity B' | 'interfacial tension' | 'contact angle';

/** One tolerance as the user gave it, and the parameters (slots) it draws. */
export interface ToleranceSource {
  label: string;
  quantity: Quantity;
  scope: 'each' | 'offset' | 'property';
  group: string | null;
  variation: Variation;
  /** Segments covered (channel tolerances). */
  segments: number;
  /** Independent standard deviates drawn per realisation. */
  parameters: number;
}

type Target = 'viscosityA' | 'viscosityB' | 'tension' | 'angle' | 'depth' | 'width';

/** One standard deviate of a realisation and what it moves. */
export interface Slot {
  source: number;
  variation: Variation;
  target: Target;
  /** Segment indices moved (depth, width). */
  segments: number[];
  /** A short name for messages: `depth of k12`, `width offset (manifold)`. */
  name: string;
}

export interface TolerancePlan {
  sources: ToleranceSource[];
  slots: Slot[];
  notes: string[];
}

function checkVariation(v: Variation, what: string): void {
  if (!(Number.isFinite(v.size) && v.size >= 0)) throw new StratiflowError('bad-option', `${what}: the tolerance must be a finite number ≥ 0`);
}

/** Validates a spec against the chip and lays out the slots. Errors name the group or quantity. */
export function planTolerance(chip: Chip, spec: ToleranceSpec): TolerancePlan {
  const sources: ToleranceSource[] = [];
  const slots: Slot[] = [];
  const notes: string[] = [];
  const explicitWindows = chip.splitWindow !== undefined || chip.nodes.some((n) => n.kind === 'split' && n.window !== undefined);

  const property = (variation: Variation | undefined, quantity: Quantity, target: Target) => {
    if (!variation) return;
    checkVariation(variation, quantity);
    sources.push({ label: quantity, quantity, scope: 'property', group: null, variation, segments: 0, parameters: 1 });
    slots.push({ source: sources.length - 1, variation, target, segments: [], name: quantity });
  };
  property(spec.viscosityA, 'viscosity A', 'viscosityA');
  property(spec.viscosityB, 'viscosity B', 'viscosityB');
  if (spec.interfacialTension) {
    if (chip.interfacialTension === undefined) throw new StratiflowError('bad-option', 'interfacial tension: the layout gives none to vary', { file: chip.source });
    if (explicitWindows) notes.push('the layout gives split windows explicitly, so the interfacial tension does not move them');
  }
  property(spec.interfacialTension, 'interfacial tension', 'tension');
  if (spec.contactAngle) {
    if (!chip.contactAngle) throw new StratiflowError('bad-option', 'contact angle: the layout gives none to vary', { file: chip.source });
    if (explicitWindows) notes.push('the layout gives split windows explicitly, so the contact angle does not move them');
  }
  property(spec.contactAngle, 'contact angle', 'angle');

  const rules = spec.channels ?? [];
  const groups = new Set(chip.segments.map((s) => s.group).filter((g): g is string => g !== undefined));
  const named = new Map<string, ChannelTolerance>();
  let fallback: ChannelTolerance | undefined;
  for (const rule of rules) {
    if (rule.group === undefined) {
      if (fallback) throw new StratiflowError('bad-option', 'channel tolerances: more than one rule without a group');
      fallback = rule;
    } else {
      if (named.has(rule.group)) throw new StratiflowError('bad-option', `channel tolerances: group "${rule.group}" has more than one rule`);
      if (!groups.has(rule.group)) {
        const known = [...groups].sort().join(', ') || 'none';
        throw new StratiflowError('bad-option', `channel tolerances: no segment has group "${rule.group}" (groups in this layout: ${known})`, { file: chip.source });
      }
      named.set(rule.group, rule);
    }
  }
  for (const rule of rules) {
    const covered = chip.segments.flatMap((s, i) => ((s.group !== undefined && named.get(s.group) === rule) || (rule === fallback && (s.group === undefined || !named.has(s.group))) ? [i] : []));
    const scope = rule.group !== undefined ? rule.group : named.size > 0 ? 'other channels' : 'all channels';
    if (covered.length === 0) {
      notes.push(`the channel rule for ${scope} covers no segment`);
      continue;
    }
    for (const dimension of ['depth', 'width'] as const) {
      const tolerance = rule[dimension];
      if (!tolerance) continue;
      // A tube has no depth; its diameter follows the width tolerance (an etched or trapezoidal
      // section's mask or bottom width, see nominalSize).
      const moved = dimension === 'depth' ? covered.filter((i) => chip.segments[i]!.section.shape !== 'tube') : covered;
      if (moved.length === 0) continue;
      if (tolerance.each) {
        checkVariation(tolerance.each, `${dimension} of each channel (${scope})`);
        sources.push({ label: `${dimension}, each channel [${scope}]`, quantity: dimension, scope: 'each', group: rule.group ?? null, variation: tolerance.each, segments: moved.length, parameters: moved.length });
        for (const i of moved) slots.push({ source: sources.length - 1, variation: tolerance.each, target: dimension, segments: [i], name: `${dimension} of ${chip.segments[i]!.id}` });
      }
      if (tolerance.offset) {
        checkVariation(tolerance.offset, `${dimension} offset (${scope})`);
        sources.push({ label: `${dimension}, offset per chip [${scope}]`, quantity: dimension, scope: 'offset', group: rule.group ?? null, variation: tolerance.offset, segments: moved.length, parameters: 1 });
        slots.push({ source: sources.length - 1, variation: tolerance.offset, target: dimension, segments: moved, name: `${dimension} offset (${scope})` });
      }
    }
  }
  return { sources, slots, notes };
}

// ---------------------------------------------------------------------------------------------
// Realisations

/** The standard deviates of realisation `index`: N(0, 1) or U(−1, 1) per slot, as its variation says. */
export function standardDeviates(plan: TolerancePlan, seed: number, index: number): Float64Array {
  const rng = sampleStream(seed, index);
  const z = new Float64Array(plan.slots.length);
  plan.slots.forEach((slot, k) => (z[k] = slot.variation.distribution === 'normal' ? standardNormal(rng) : standardUniform(rng)));
  return z;
}

/** Var(z) of a standard deviate: 1 for N(0, 1), 1/3 for U(−1, 1). */
export function deviateVariance(v: Variation): number {
  return v.distribution === 'normal' ? 1 : 1 / 3;
}

export type Realisation = { chip: Chip; problem?: undefined } | { chip?: undefined; problem: string };

function shift(v: Variation, nominal: number, z: number): number {
  return v.size * z * (v.relative ? nominal : 1);
}

/** The fluid and interface properties of a realisation, and the size changes of every segment (SI). */
export interface RealisedProperties {
  viscosityA: number;
  viscosityB: number;
  interfacialTension: number | undefined;
  contactAngle: Chip['contactAngle'];
  depth: Float64Array;
  width: Float64Array;
}

/** Every quantity moved by its slots' deviates times `scale`, before any check or any section is built. */
export function realisedProperties(chip: Chip, plan: TolerancePlan, z: ArrayLike<number>, scale = 1): RealisedProperties {
  const depth = new Float64Array(chip.segments.length);
  const width = new Float64Array(chip.segments.length);
  let { viscosity: muA } = chip.phases.A;
  let { viscosity: muB } = chip.phases.B;
  let tension = chip.interfacialTension;
  let angle = chip.contactAngle;
  plan.slots.forEach((slot, k) => {
    const zk = scale * z[k]!;
    if (zk === 0) return;
    const v = slot.variation;
    if (slot.target === 'viscosityA') muA += shift(v, chip.phases.A.viscosity, zk);
    else if (slot.target === 'viscosityB') muB += shift(v, chip.phases.B.viscosity, zk);
    else if (slot.target === 'tension') tension = tension! + shift(v, chip.interfacialTension!, zk);
    else if (slot.target === 'angle') {
      const { advancing, receding } = chip.contactAngle!;
      angle = { advancing: clampAngle(advancing + shift(v, advancing, zk)), receding: clampAngle(receding + shift(v, receding, zk)) };
    } else {
      const into = slot.target === 'depth' ? depth : width;
      for (const i of slot.segments) {
        const s = chip.segments[i]!.section;
        const nominal = nominalSize(s, slot.target as 'width' | 'depth');
        into[i] += shift(v, nominal, zk);
      }
    }
  });
  return { viscosityA: muA, viscosityB: muB, interfacialTension: tension, contactAngle: angle, depth, width };
}

/** The chip with every quantity moved by its slots' deviates times `scale`; a non-physical draw is a problem, not an error. */
export function realiseChip(chip: Chip, plan: TolerancePlan, z: ArrayLike<number>, scale = 1): Realisation {
  const { viscosityA: muA, viscosityB: muB, interfacialTension: tension, contactAngle: angle, depth, width } = realisedProperties(chip, plan, z, scale);
  if (!(muA > 0)) return { problem: `viscosity of A drawn ≤ 0` };
  if (!(muB > 0)) return { problem: `viscosity of B drawn ≤ 0` };
  if (tension !== undefined && !(tension > 0)) return { problem: 'interfacial tension drawn ≤ 0' };
  const segments: ChipSegment[] = [];
  for (const [i, segment] of chip.segments.entries()) {
    if (depth[i] === 0 && width[i] === 0) {
      segments.push(segment);
      continue;
    }
    const { section, positive } = shiftedSection(segment.section, width[i]!, depth[i]!);
    if (!positive) return { problem: `a size of segment ${segment.id} drawn ≤ 0` };
    segments.push({ ...segment, section });
  }
  return {
    chip: {
      ...chip,
      phases: { A: { ...chip.phases.A, viscosity: muA }, B: { ...chip.phases.B, viscosity: muB } },
      interfacialTension: tension,
      contactAngle: angle,
      segments,
    },
  };
}

function clampAngle(theta: number): number {
  return Math.min(Math.PI, Math.max(0, theta));
}

// ---------------------------------------------------------------------------------------------
// What is recorded of each solve

export const SPREAD_KEYS = ['total.cv', 'total.ratio', 'flowA.cv', 'flowA.ratio', 'flowB.cv', 'flowB.ratio', 'holdup.cv', 'holdup.ratio'] as const;
export type SpreadKey = (typeof SPREAD_KEYS)[number];

/**
 * Positions in the recorded vector: the eight spreads, then per contactor total flow, flow A,
 * flow B and holdup of A, then per split p_B − p_A and the window limits.
 */
export interface ObservableLayout {
  contactors: number;
  splits: number;
  size: number;
}

export const CONTACTOR_BASE = SPREAD_KEYS.length;
/** Where contactor c's four values start; they follow the spreads, whatever the size of the chip. */
export const contactorAt = (c: number) => CONTACTOR_BASE + 4 * c;
export const splitAt = (layout: ObservableLayout, s: number) => CONTACTOR_BASE + 4 * layout.contactors + 3 * s;

export function observableLayout(solution: ContactorSummary): ObservableLayout {
  const contactors = solution.contactors.length;
  const splits = solution.splits.length;
  return { contactors, splits, size: CONTACTOR_BASE + 4 * contactors + 3 * splits };
}

/** Split states as small numbers: 0 pinned, 1 leaking A to B, 2 leaking B to A. */
export const STATE_CODES = ['pinned', 'leaking-A-to-B', 'leaking-B-to-A'] as const;

export function observe(solution: ContactorSummary, layout: ObservableLayout): { values: Float64Array; states: Uint8Array } {
  const values = new Float64Array(layout.size);
  const { spread } = solution.summary;
  values.set([spread.total.cv, spread.total.ratio, spread.flowA.cv, spread.flowA.ratio, spread.flowB.cv, spread.flowB.ratio, spread.holdup.cv, spread.holdup.ratio]);
  solution.contactors.forEach((c, i) => values.set([c.flowA + c.flowB, c.flowA, c.flowB, c.holdupA], contactorAt(i)));
  const states = new Uint8Array(layout.splits);
  solution.splits.forEach((s, i) => {
    values.set([s.pressureDifference, s.window[0], s.window[1]], splitAt(layout, i));
    states[i] = STATE_CODES.indexOf(s.state);
  });
  return { values, states };
}

// ---------------------------------------------------------------------------------------------
// Jobs: one solve each, the same whichever thread runs it

export interface JobContext {
  chip: Chip;
  plan: TolerancePlan;
  seed: number;
  warm: WarmStart;
  solver: SolverOptions;
  layout: ObservableLayout;
}

export type Job = { kind: 'sample'; index: number; scale: number } | { kind: 'derivative'; slot: number; step: number };

export type Outcome =
  | { values: Float64Array; states: Uint8Array; /** Solved only from a cold start. */ cold: boolean; problem?: undefined }
  | { problem: string; values?: undefined; states?: undefined; cold?: undefined };

/** The nominal chip's network, assembled once per context (per thread) and restamped for every realisation. */
const nominalNetworks = new WeakMap<JobContext, Network>();

function nominalNetwork(context: JobContext): Network {
  let network = nominalNetworks.get(context);
  if (!network) {
    network = assembleNetwork(context.chip);
    nominalNetworks.set(context, network);
  }
  return network;
}

/** Workspaces primed at the nominal solution (solver/newton.ts `primeWorkspace`), with the context they were primed for. */
const primed = new WeakMap<SolverWorkspace, JobContext>();

/**
 * Warm start from the nominal solution (the solver itself falls back to a cold start when that
 * does not settle). `workspace` is shared by the jobs of one thread: the realisations have the
 * nominal chip's pattern, so one symbolic analysis serves them all, and every solve starts from
 * the pivots of the nominal Jacobians (primed on the workspace's first job; numeric factors are
 * never carried from one solve to the next, so the outcome does not depend on the job order). The
 * network is the nominal one restamped with the realised sizes and fluids, and only the
 * contactors are summarised: the same numbers as `solveChip`, without its fixed costs.
 */
export function runJob(context: JobContext, job: Job, workspace = new SolverWorkspace()): Outcome {
  let z: Float64Array;
  let scale = 1;
  if (job.kind === 'sample') {
    z = standardDeviates(context.plan, context.seed, job.index);
    scale = job.scale;
  } else {
    z = new Float64Array(context.plan.slots.length);
    z[job.slot] = job.step;
  }
  const realised = realiseChip(context.chip, context.plan, z, scale);
  if (!realised.chip) return { problem: realised.problem };
  try {
    if (primed.get(workspace) !== context) {
      primeWorkspace(nominalNetwork(context), context.warm, workspace);
      primed.set(workspace, context);
    }
    const network = restampNetwork(nominalNetwork(context), realised.chip);
    const chip = realised.chip;
    const raw = chip.interface === 'curved' ? solveCurvedInterface(network, chip.interfacialTension!, context.solver, context.warm, workspace).raw : solveNetwork(network, context.solver, context.warm, workspace);
    if (!raw.converged) return { problem: `did not converge: ${raw.message ?? 'no reason given'}` };
    const summary = summariseContactors(network, raw);
    if (summary.contactors.length !== context.layout.contactors || summary.splits.length !== context.layout.splits) {
      return { problem: 'the solution has a different set of contactors or splits than the nominal one' };
    }
    return { ...observe(summary, context.layout), cold: raw.restartedCold };
  } catch (error) {
    return { problem: error instanceof Error ? error.message : String(error) };
  }
}

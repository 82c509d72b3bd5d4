/**
 * Design of a chip's distribution: widths and lengths of chosen segment groups (and, where
 * allowed, the inlet and outlet settings) such that every contactor gets an even share of each
 * phase, every split stays pinned with a margin, the throughput and phase ratio stay at their
 * targets, and the fabrication rules hold. Exports `designChip`, `designTangents` and the types. No I/O, no units.
 *
 * Problem (y: ln-factors of the varied sizes, designSpec.ts, and scaled free settings):
 *   minimise ½‖r(y)‖², r = f_c,φ / mean_φ(f) − 1 over contactors c and phases φ, f the flow that
 *   the feed of phase φ brings to contactor c (negative where the network pushes the other phase
 *   back into it: a starved feed, so that starvation is a smooth part of the measure);
 *   subject to (t_s − low_s − m_s)/w_s ≥ 0 and (high_s − m_s − t_s)/w_s ≥ 0 for every split s
 *   (t_s = Δ_s + ℓ_s/κ_s, the split law's own trial value: Δ while pinned, and past a window
 *   limit by how much the leak ℓ pushes, so a leaking split is driven back inside; w_s its
 *   window, m_s the margin), throughput and ratio at their targets, inlets below the rating,
 *   and the bounds of the rules.
 * Method: a Gauss–Newton SQP on the ℓ∞ exact penalty function (Sℓ∞QP: Fletcher, Practical
 * Methods of Optimization, 1987, §12.3–12.4; Yuan, 1995, Math. Programming 69:49): each step
 * minimises the model ½‖r + R·d‖² + μ·(largest violation of the linearised rows) within the
 * rules' bounds (elasticQp.ts), with a Levenberg–Marquardt term λ‖d‖² as its trust region
 * (Moré, 1978, "The Levenberg–Marquardt algorithm: implementation and theory", Numerical
 * Analysis, Springer, pp. 105–116); the step is taken where the merit ½‖r‖² + μ·(largest
 * violation) falls by at least a tenth of what the model predicted, λ falls or rises with that
 * ratio, μ is steered up while violations remain, and a second-order correction follows a step
 * refused because the rows curve. Gauss–Newton because the residual is small at a good design,
 * where its Hessian term vanishes.
 * Sensitivities: forward, dv/dy = −J⁻¹·∂F/∂y with the factored Jacobian of the converged solve
 * (solver/sensitivity.ts), one linear solve per variable, not finite differences of whole solves:
 * the variables (a few groups, or one per segment of a taper) are fewer than the outputs (two
 * flows per contactor and a split each), so forward beats adjoint. A width enters through its
 * segment's conductance, d ln g/d y = d ln k/d ln w (a central difference of the section's
 * conductance in ln w, error about 1e-9 relative), a length as d ln g/d y = −1.
 */
import { conductance, nominalSize } from '../physics/section.js';
import { NetworkTangents, plainOutflow, type Tangent } from '../solver/sensitivity.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip, PhaseName } from '../network/model.js';
import { StratiflowError } from '../errors.js';
import { solveChip, spreadOf, warmStartFrom, type SolvedChip } from './chip.js';
import { applyDesign, sizeOf, withWidth, type DesignVariable } from './designSpec.js';
import { elasticStep, type LinearRow } from './elasticQp.js';
import { centreSplits } from './centring.js';
import { settingName, withSettings, type Setting } from './settings.js';
import type { Freedom } from './tuneSpec.js';

export interface DesignSpec {
  variables: DesignVariable[];
  /** Settings the design may change (with optional bounds, SI). */
  settings: Freedom[];
  /** The coefficient of variation asked of each phase's flow per contactor. */
  flowCv: number;
  /** Margin every split keeps from both window limits: Pa, or a fraction of the window. */
  margin: { pressure?: number; fraction?: number };
  /** Targets, m³/s and A/B; undefined: as the layout solves when a setting is free, else not held. */
  throughput?: number;
  ratio?: number;
  maxIterations?: number;
  solver?: SolverOptions;
}

export type RowKind = 'split-low' | 'split-high' | 'throughput' | 'ratio' | 'rating';

export interface DesignedVariable {
  variable: DesignVariable;
  /** The factor on the segments' sizes as laid out, and its bounds. */
  factor: number;
  bounds: [number, number];
  /** Each segment's size before and after, m. */
  sizes: Array<{ segment: string; before: number; after: number }>;
  active: 'lower' | 'upper' | null;
}

export interface DesignedSetting {
  setting: Setting;
  before: number;
  after: number;
  bounds: [number, number];
  active: 'lower' | 'upper' | null;
}

export interface DesignResult {
  /** Whether every target and rule is met at the designed chip (checked by its own solve). */
  met: boolean;
  chip: Chip;
  before: SolvedChip;
  after: SolvedChip;
  variables: DesignedVariable[];
  settings: DesignedSetting[];
  flowCv: { target: number; before: { A: number; B: number }; after: { A: number; B: number } };
  /** The targets held (undefined: not held). */
  targets: { throughput?: number; ratio?: number };
  /** Each split's margin, Pa, as asked. */
  margins: number[];
  /** What stops the design going further: bounds reached and rows not met, one line each. */
  binding: string[];
  iterations: number;
  solves: number;
}

/** Relative miss of a throughput or ratio target that counts as met (far below what pumps or controllers hold). */
const TARGET_TOLERANCE = 1e-6;
/** A row met to this fraction of its window counts as met (rounding of the solve, not physics). */
const ROW_TOLERANCE = 1e-9;
/** A row within this fraction of its window of its limit is reported as binding. */
const ACTIVE_ROW = 1e-4;
/**
 * The Levenberg–Marquardt weight λ of a step, relative to the largest curvature of the model: it
 * starts at a tenth (a step a little shorter than Gauss–Newton's), falls fourfold after a step
 * the merit confirms well and rises fourfold after one it refuses; past the largest, no step
 * is short enough to help.
 */
const FIRST_WEIGHT = 0.1;
const SMALLEST_WEIGHT = 1e-12;
const LARGEST_WEIGHT = 1e8;
const FIRST_PENALTY = 10;
const LARGEST_PENALTY = 1e8;
/** ln-step of the central difference of a section's conductance in its width. */
const WIDTH_STEP = 1e-4;
const DEFAULT_ITERATIONS = 80;
const TRIAL_ITERATIONS = 60;

interface Row {
  kind: RowKind;
  id: string;
  value: number;
  gradient: Float64Array;
  equality: boolean;
}

interface Measured {
  solved: SolvedChip;
  residual: Float64Array;
  /** dr/dy, one array per variable. */
  slopes: Float64Array[];
  rows: Row[];
  cv: { A: number; B: number };
}

export function designChip(base: Chip, spec: DesignSpec): DesignResult {
  const { variables, settings } = spec;
  if (variables.length === 0) throw new StratiflowError('bad-option', 'say what may change: --vary group.width, group.widths, group.length …', { field: '--vary' });
  const before = solveChip(base, spec.solver);
  if (!before.raw.converged) throw new StratiflowError('no-convergence', `the layout as given does not solve: ${before.result.message ?? 'no steady state found'}`);
  const net = before.network;
  if (net.contactors.length < 2) throw new StratiflowError('bad-option', 'a design evens the flow between contactors; this chip has fewer than two');

  const contactorPorts = net.contactors.flatMap((el) => [el.nearIn, el.farIn]);
  const phaseOfPort = (port: number): PhaseName => (net.ports[port]!.nominal >= 0.5 ? 'A' : 'B');
  const margins = net.splits.map((sp) => {
    const width = sp.window[1] - sp.window[0];
    const m = spec.margin.pressure ?? (spec.margin.fraction ?? 0) * width;
    if (!(2 * m < width)) throw new StratiflowError('bad-option', `split ${sp.node.id}: a margin of ${m} Pa from both limits does not fit in its window of ${width} Pa`, { field: '--margin' });
    return m;
  });

  // Free settings on a scale of their own: pressures on the highest pressure of the chip as
  // solved (an outlet's back-pressure may be 0 and a pump-fed chip sets no inlet pressure),
  // flows on their value.
  const settingScale = (f: Freedom) => {
    const node = base.nodes.find((x) => x.id === f.setting.node)!;
    if (f.setting.quantity === 'flow') return node.kind === 'inlet' && node.flow ? node.flow : 1e-12;
    return Math.max(1, before.result.summary.maxPressure);
  };
  const settingBase = settings.map((f) => settingOf(base, f.setting));
  const scales = settings.map(settingScale);
  const settingBounds = settings.map((f): [number, number] => f.bounds ?? (f.setting.quantity === 'pressure' ? [0, base.maxPressure ?? Infinity] : [0, Infinity]));
  const n = variables.length + settings.length;
  const lower = [...variables.map((v) => v.bounds[0]), ...settings.map((_, k) => (settingBounds[k]![0] - settingBase[k]!) / scales[k]!)];
  const upper = [...variables.map((v) => v.bounds[1]), ...settings.map((_, k) => (settingBounds[k]![1] - settingBase[k]!) / scales[k]!)];

  const settingsHeld = settings.length > 0;
  const start = inletFlows(before);
  const targets = {
    throughput: spec.throughput ?? (settingsHeld ? start.A + start.B : undefined),
    ratio: spec.ratio ?? (settingsHeld ? start.A / start.B : undefined),
  };

  const chipAt = (y: ArrayLike<number>): Chip => {
    const designed = applyDesign(base, variables, y);
    return settings.length === 0 ? designed : withSettings(designed, settings.map((f, k) => [f.setting, settingBase[k]! + scales[k]! * y[variables.length + k]!] as const));
  };

  let solves = 1;
  const measure = (solved: SolvedChip): Measured => {
    const tangents = new NetworkTangents(solved.network, solved.raw, solved.workspace);
    const along: Tangent[] = [
      ...designTangents(solved, variables, tangents),
      ...settings.map((f, k) => scaledTangent(tangents.tangent({ port: solved.network.portsOf.get(f.setting.node)![0]!, quantity: f.setting.quantity }), scales[k]!)),
    ];
    return measured(solved, along, { contactorPorts, phaseOfPort, margins, targets });
  };

  // A trial design is solved from the design it steps from, one attempt of a few dozen steps: a
  // trial that does not settle so is a step too long, and a shorter one is cheaper than the
  // solver's cold starts (the merit's ratio test then refuses it as it would a bad one).
  const trialSolver: SolverOptions = { ...spec.solver };
  let y = new Float64Array(n);
  let current: Measured;
  if (settings.length > 0 && before.result.splits.some((sp) => sp.state !== 'pinned')) {
    // Splits leak at the start: first centre them with the free settings alone (centring.ts),
    // then design from there. Their widths' sensitivities say little while most splits leak
    // (measured: the default 16-contactor ladder, every split leaking, was not designed in 80
    // steps from the layout's back-pressure, and was in 37 from a centred one).
    const centred = centreSplits(base, settings.map((f) => f.setting), settingBase, settingBounds, spec.solver, before);
    solves += centred.solves;
    centred.values.forEach((v, k) => (y[variables.length + k] = (v - settingBase[k]!) / scales[k]!));
    current = measure(centred.solved);
  } else {
    current = measure(before);
  }
  let penalty = FIRST_PENALTY;
  let weight = FIRST_WEIGHT;
  let iterations = 0;
  const limit = spec.maxIterations ?? DEFAULT_ITERATIONS;
  for (; iterations < limit; iterations++) {
    if (meets(current, spec.flowCv)) break;
    // Steering the penalty (Byrd, Nocedal & Waltz, 2008, SIAM J. Optim. 19:351, from memory):
    // while the rows are violated, a step must remove a tenth of the violation its model can
    // remove, else μ grows tenfold, up to a point past which the rows cannot be helped.
    let step = stepFrom(current, y, lower, upper, weight, penalty);
    const violated = violationOf(current.rows, zeros(n));
    while (violated > 0 && penalty < LARGEST_PENALTY && violated - violationOf(current.rows, step.d) < 0.1 * violated) {
      penalty *= 10;
      step = stepFrom(current, y, lower, upper, weight, penalty);
    }
    const merit = meritOf(current, penalty);
    const predicted = merit - modelAt(current, step.d, penalty);
    if (!(predicted > 1e-15 * Math.max(1, merit))) break;
    const trialY = y.map((v, k) => v + step.d[k]!);
    const trial = solveChip(chipAt(trialY), trialSolver, warmStartFrom(current.solved), current.solved.workspace);
    solves++;
    if (!trial.raw.converged) {
      weight *= 4;
      if (weight > LARGEST_WEIGHT) break;
      continue;
    }
    let next = measure(trial);
    let ratio = (merit - meritOf(next, penalty)) / predicted;
    let taken = trialY;
    if (ratio <= 0.1 && violationOf(next.rows, []) > violationOf(current.rows, step.d)) {
      // Second-order correction (Fletcher, 1987, §14.4; Nocedal & Wright, 2006, §18.5,
      // from memory): the rows curve, so a step along them is refused by the ℓ∞ merit
      // (the Maratos effect); shift each linearised row by its miss at the trial point and
      // step again from here.
      const rows = current.rows.map((row, r) => {
        let linear = 0;
        for (let k = 0; k < n; k++) linear += row.gradient[k]! * step.d[k]!;
        return { ...row, value: next.rows[r]!.value - linear };
      });
      const corrected = stepFrom({ ...current, rows }, y, lower, upper, weight, penalty);
      const correctedY = y.map((v, k) => v + corrected.d[k]!);
      const second = solveChip(chipAt(correctedY), trialSolver, warmStartFrom(current.solved), current.solved.workspace);
      solves++;
      if (second.raw.converged) {
        const measuredSecond = measure(second);
        const ratioSecond = (merit - meritOf(measuredSecond, penalty)) / predicted;
        if (ratioSecond > ratio) [next, ratio, taken] = [measuredSecond, ratioSecond, correctedY];
      }
    }
    if (ratio > 0.1) {
      y = taken;
      current = next;
      if (ratio > 0.75) weight = Math.max(SMALLEST_WEIGHT, weight / 4);
    } else {
      weight *= 4;
      if (weight > LARGEST_WEIGHT) break;
    }
  }

  const after = current.solved;
  const met = meets(current, spec.flowCv);
  return {
    met,
    chip: after.chip,
    before,
    after,
    variables: variables.map((v, k) => ({
      variable: v,
      factor: Math.exp(y[k]!),
      bounds: [Math.exp(v.bounds[0]), Math.exp(v.bounds[1])],
      sizes: v.segments.map((i) => ({ segment: base.segments[i]!.id, before: sizeOf(base.segments[i]!, v.quantity), after: sizeOf(after.chip.segments[i]!, v.quantity) })),
      active: activeBound(y[k]!, v.bounds[0], v.bounds[1]),
    })),
    settings: settings.map((f, k) => ({
      setting: f.setting,
      before: settingBase[k]!,
      after: settingBase[k]! + scales[k]! * y[variables.length + k]!,
      bounds: settingBounds[k]!,
      active: activeBound(y[variables.length + k]!, lower[variables.length + k]!, upper[variables.length + k]!),
    })),
    flowCv: { target: spec.flowCv, before: cvOf(before, contactorPorts, phaseOfPort), after: current.cv },
    targets,
    margins,
    binding: met ? [] : bindingRules(current, variables, settings, y, lower, upper, spec.flowCv),
    iterations,
    solves,
  };
}

/**
 * The tangent of a solved chip along each geometric variable (per unit of its ln-factor), with
 * the factored Jacobian of `tangents` (one linear solve each).
 */
export function designTangents(solved: SolvedChip, variables: DesignVariable[], tangents = new NetworkTangents(solved.network, solved.raw, solved.workspace)): Tangent[] {
  const plainOf = new Map(solved.network.plains.map((el, e) => [el.segment.id, e]));
  return variables.map((v) =>
    tangents.conductanceTangent(v.segments.map((i) => ({ plain: plainOf.get(solved.chip.segments[i]!.id)!, logSlope: v.quantity === 'length' ? -1 : widthLogSlope(solved.chip, i) }))),
  );
}

function settingOf(chip: Chip, setting: Setting): number {
  const node = chip.nodes.find((x) => x.id === setting.node)!;
  if (node.kind === 'outlet') return node.pressure - node.head;
  if (node.kind !== 'inlet') throw new StratiflowError('bad-option', `node "${setting.node}" has no setting`);
  const value = setting.quantity === 'pressure' ? (node.pressure === undefined ? undefined : node.pressure - node.head) : node.flow;
  if (value === undefined) throw new StratiflowError('bad-option', `inlet "${setting.node}" is set by its ${setting.quantity === 'pressure' ? 'flow' : 'pressure'}; vary ${settingName({ node: setting.node, quantity: setting.quantity === 'pressure' ? 'flow' : 'pressure' })}`, { field: '--vary' });
  return value;
}

/** d ln k/d ln w of segment i's section, by a central difference in ln w. */
function widthLogSlope(chip: Chip, i: number): number {
  const section = chip.segments[i]!.section;
  const w = nominalSize(section, 'width');
  const at = (factor: number) => Math.log(conductance(withWidth(section, w * factor), 1));
  return (at(Math.exp(WIDTH_STEP)) - at(Math.exp(-WIDTH_STEP))) / (2 * WIDTH_STEP);
}

/** A tangent per SI unit of a setting, as one per unit of its scaled variable. */
function scaledTangent(t: Tangent, scale: number): Tangent {
  const times = (a: Float64Array) => a.map((v) => v * scale);
  return { pressure: times(t.pressure), holdup: times(t.holdup), leak: times(t.leak), plainFlow: times(t.plainFlow), laneFlow: times(t.laneFlow), outflow: times(t.outflow), splitDelta: times(t.splitDelta) };
}

/** What the inlets of each phase deliver (a pressure-set inlet its port's net outflow). */
function inletFlows(solved: SolvedChip): { A: number; B: number } {
  const outflow = plainOutflow(solved.network, solved.raw.plainFlow);
  const sum = { A: 0, B: 0 };
  solved.network.ports.forEach((p, i) => {
    if (p.node.kind === 'inlet') sum[p.node.phase] += outflow[i]!;
  });
  return sum;
}

/** The coefficient of variation of each phase's feed flow into the contactors (as the design measures it). */
function cvOf(solved: SolvedChip, ports: number[], phaseOfPort: (port: number) => PhaseName): { A: number; B: number } {
  const outflow = plainOutflow(solved.network, solved.raw.plainFlow);
  const byPhase = { A: [] as number[], B: [] as number[] };
  for (const port of ports) byPhase[phaseOfPort(port)].push(-outflow[port]!);
  return { A: spreadOf(byPhase.A).cv, B: spreadOf(byPhase.B).cv };
}

interface MeasureContext {
  contactorPorts: number[];
  phaseOfPort: (port: number) => PhaseName;
  margins: number[];
  targets: { throughput?: number; ratio?: number };
}

/** The residual, its slopes and the rows at a solved chip, from the tangents along every variable. */
function measured(solved: SolvedChip, along: Tangent[], ctx: MeasureContext): Measured {
  const { network: net, raw, result } = solved;
  const n = along.length;
  const outflow = plainOutflow(net, raw.plainFlow);
  const ports = ctx.contactorPorts;
  // Feed flows into the contactors and their means by phase.
  const f = ports.map((port) => -outflow[port]!);
  const df = along.map((t) => ports.map((port) => -t.outflow[port]!));
  const count = { A: 0, B: 0 };
  const mean = { A: 0, B: 0 };
  ports.forEach((port, i) => {
    count[ctx.phaseOfPort(port)]++;
    mean[ctx.phaseOfPort(port)] += f[i]!;
  });
  mean.A /= Math.max(1, count.A);
  mean.B /= Math.max(1, count.B);
  const residual = Float64Array.from(ports, (port, i) => f[i]! / mean[ctx.phaseOfPort(port)] - 1);
  const slopes = df.map((d) => {
    const dMean = { A: 0, B: 0 };
    ports.forEach((port, i) => (dMean[ctx.phaseOfPort(port)] += d[i]!));
    dMean.A /= Math.max(1, count.A);
    dMean.B /= Math.max(1, count.B);
    return Float64Array.from(ports, (port, i) => {
      const phase = ctx.phaseOfPort(port);
      return (d[i]! - (f[i]! / mean[phase]) * dMean[phase]) / mean[phase];
    });
  });
  const cv = { A: 0, B: 0 };
  ports.forEach((port, i) => (cv[ctx.phaseOfPort(port)] += residual[i]! ** 2));
  cv.A = Math.sqrt(cv.A / Math.max(1, count.A));
  cv.B = Math.sqrt(cv.B / Math.max(1, count.B));

  const rows: Row[] = [];
  const gradient = (g: (t: Tangent) => number) => Float64Array.from(along, g);
  net.splits.forEach((sp, s) => {
    const [low, high] = sp.window;
    const width = high - low;
    const sign = sp.nearPhase === 'A' ? 1 : -1;
    const kappa = sp.contactor.scale;
    const trial = result.splits[s]!.pressureDifference + (sign * raw.leak[s]!) / kappa;
    const dTrial = gradient((t) => t.splitDelta[s]! + (sign * t.leak[s]!) / kappa);
    const m = ctx.margins[s]!;
    rows.push({ kind: 'split-low', id: sp.node.id, value: (trial - low - m) / width, gradient: dTrial.map((v) => v / width), equality: false });
    rows.push({ kind: 'split-high', id: sp.node.id, value: (high - m - trial) / width, gradient: dTrial.map((v) => -v / width), equality: false });
  });
  const delivered = { A: 0, B: 0 };
  const dDelivered = { A: new Float64Array(n), B: new Float64Array(n) };
  net.ports.forEach((p, i) => {
    if (p.node.kind !== 'inlet') return;
    const phase = p.node.phase;
    delivered[phase] += outflow[i]!;
    along.forEach((t, k) => (dDelivered[phase][k] += t.outflow[i]!));
    if (net.chip.maxPressure !== undefined) {
      const rating = net.chip.maxPressure;
      rows.push({ kind: 'rating', id: p.node.id, value: (rating - raw.pressure[i]!) / rating, gradient: gradient((t) => -t.pressure[i]! / rating), equality: false });
    }
  });
  const { throughput, ratio } = ctx.targets;
  if (throughput !== undefined) {
    rows.push({ kind: 'throughput', id: 'throughput', value: (delivered.A + delivered.B - throughput) / throughput, gradient: Float64Array.from(dDelivered.A, (a, k) => (a + dDelivered.B[k]!) / throughput), equality: true });
  }
  if (ratio !== undefined) {
    const scale = ratio * Math.abs(delivered.B);
    rows.push({ kind: 'ratio', id: 'ratio', value: (delivered.A - ratio * delivered.B) / scale, gradient: Float64Array.from(dDelivered.A, (a, k) => (a - ratio * dDelivered.B[k]!) / scale), equality: true });
  }
  return { solved, residual, slopes, rows, cv };
}

function rowViolation(row: Row, value: number): number {
  const miss = row.equality ? Math.abs(value) : Math.max(0, -value);
  return miss > toleranceOf(row) ? miss : 0;
}

function meets(m: Measured, flowCv: number): boolean {
  const { result } = m.solved;
  return (
    m.solved.raw.converged &&
    m.cv.A <= flowCv &&
    m.cv.B <= flowCv &&
    m.rows.every((row) => rowViolation(row, row.value) === 0) &&
    result.splits.every((s) => s.state === 'pinned') &&
    m.solved.raw.feedStates.every((state) => state === 'open')
  );
}

function zeros(n: number): Float64Array {
  return new Float64Array(n);
}

/**
 * The largest violation of the rows linearised at step d (d = 0: the rows themselves), each
 * beyond its tolerance only: a row met to rounding counts nothing, or its noise times a large μ
 * would swamp the merit's decrease near a good design.
 */
function violationOf(rows: Row[], d: ArrayLike<number>): number {
  let violation = 0;
  for (const row of rows) {
    let v = row.value;
    for (let k = 0; k < d.length; k++) v += row.gradient[k]! * d[k]!;
    violation = Math.max(violation, (row.equality ? Math.abs(v) : -v) - toleranceOf(row));
  }
  return violation;
}

function toleranceOf(row: Row): number {
  return row.kind === 'throughput' || row.kind === 'ratio' ? TARGET_TOLERANCE : ROW_TOLERANCE;
}

function meritOf(m: Measured, penalty: number): number {
  let sum = 0;
  for (const r of m.residual) sum += r * r;
  return 0.5 * sum + penalty * violationOf(m.rows, []);
}

/** The model of the merit at step d: ½‖r + R·d‖² + μ·(largest violation of the linearised rows). */
function modelAt(m: Measured, d: ArrayLike<number>, penalty: number): number {
  let sum = 0;
  for (let i = 0; i < m.residual.length; i++) {
    let r = m.residual[i]!;
    for (let k = 0; k < d.length; k++) r += m.slopes[k]![i]! * d[k]!;
    sum += r * r;
  }
  return 0.5 * sum + penalty * violationOf(m.rows, d);
}

/** The step of the model with its Hessian H + λ·max(diag H)·I, within the rules' bounds. */
function stepFrom(m: Measured, y: Float64Array, lower: number[], upper: number[], weight: number, penalty: number) {
  const n = y.length;
  const hessian: number[][] = [];
  const gradient = new Float64Array(n);
  for (let a = 0; a < n; a++) {
    hessian.push(new Array<number>(n).fill(0));
    let g = 0;
    for (let i = 0; i < m.residual.length; i++) g += m.slopes[a]![i]! * m.residual[i]!;
    gradient[a] = g;
  }
  for (let a = 0; a < n; a++) {
    for (let b = a; b < n; b++) {
      let h = 0;
      for (let i = 0; i < m.residual.length; i++) h += m.slopes[a]![i]! * m.slopes[b]![i]!;
      hessian[a]![b] = h;
      hessian[b]![a] = h;
    }
  }
  let largest = 0;
  for (let a = 0; a < n; a++) largest = Math.max(largest, hessian[a]![a]!);
  for (let a = 0; a < n; a++) hessian[a]![a] += weight * Math.max(largest, 1e-300);
  const rows: LinearRow[] = m.rows.map((row) => ({ a: row.gradient, b: -row.value, equality: row.equality }));
  return elasticStep({
    hessian,
    gradient,
    rows,
    lower: Array.from(y, (v, k) => lower[k]! - v),
    upper: Array.from(y, (v, k) => upper[k]! - v),
    penalty,
  });
}

function activeBound(y: number, low: number, high: number): 'lower' | 'upper' | null {
  const near = 1e-9 * Math.max(1, Math.abs(y));
  if (y - low <= near) return 'lower';
  if (high - y <= near) return 'upper';
  return null;
}

/** What keeps the design from its targets, one line each: bounds that are reached, rows not met, the evenness left. */
function bindingRules(m: Measured, variables: DesignVariable[], settings: Freedom[], y: Float64Array, lower: number[], upper: number[], flowCv: number): string[] {
  const lines: string[] = [];
  variables.forEach((v, k) => {
    const active = activeBound(y[k]!, lower[k]!, upper[k]!);
    if (active) lines.push(`${v.name} is at its ${active === 'lower' ? 'smallest' : 'largest'} allowed ${v.quantity}`);
  });
  settings.forEach((f, k) => {
    const active = activeBound(y[variables.length + k]!, lower[variables.length + k]!, upper[variables.length + k]!);
    if (active) lines.push(`${settingName(f.setting)} is at its ${active === 'lower' ? 'lower' : 'upper'} bound`);
  });
  for (const row of m.rows) {
    if (rowViolation(row, row.value) === 0) {
      // A row that holds with no room to spare binds as much as one that is missed.
      if (!row.equality && row.value < ACTIVE_ROW) lines.push(row.kind === 'rating' ? `inlet ${row.id} is at the pressure rating` : `split ${row.id} sits at the margin asked from its ${row.kind === 'split-low' ? 'low' : 'high'} limit`);
      continue;
    }
    const what =
      row.kind === 'split-low' || row.kind === 'split-high'
        ? `split ${row.id} is not held ${row.kind === 'split-low' ? 'above its low' : 'below its high'} limit with the margin asked`
        : row.kind === 'rating'
          ? `inlet ${row.id} would pass the pressure rating`
          : `the ${row.kind} target is missed by ${(100 * Math.abs(row.value)).toPrecision(2)} %`;
    lines.push(what);
  }
  if (m.cv.A > flowCv || m.cv.B > flowCv) lines.push(`the flow per contactor varies by ${(100 * m.cv.A).toPrecision(3)} % (A) and ${(100 * m.cv.B).toPrecision(3)} % (B) against ${(100 * flowCv).toPrecision(3)} % asked`);
  const starved = m.solved.raw.feedStates.filter((s) => s !== 'open').length;
  if (starved > 0) lines.push(`${starved} contactors still starve of one phase`);
  return lines;
}

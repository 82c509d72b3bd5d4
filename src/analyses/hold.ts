/**
 * Hold tolerances of a solved chip: how far each setting (every inlet's set pressure or flow,
 * every outlet's pressure) may move, the others held, before a split leaves its window, and
 * before the flow ratio A/B leaves a stated tolerance; the liquid head that a pressure
 * excursion is (a reservoir's height moves its pressure by ρ·g·Δh); whether an excursion is
 * below what a controller of that setting resolves. Exports `holdTolerances`,
 * `CONTROL_RESOLUTION` and the types. No I/O, no units.
 *
 * First order: with the sensitivities dΔ_s/dθ of every split's p_B − p_A (solver/sensitivity.ts
 * `settingResponse`, one solve with the factored Jacobian per setting), a split s allows θ to rise by
 * (high_s − Δ_s)/(dΔ_s/dθ) when dΔ_s/dθ > 0 and by (Δ_s − low_s)/(−dΔ_s/dθ) when it is
 * negative (and falls likewise); the setting's excursion is the smallest over the splits. On a
 * chip whose splits are all pinned Δ is linear in the settings but for the holdups' response,
 * so the first-order excursion is close to the exact one wherever the holdups move little
 * across it (checked against full re-solves in test/hold.test.ts).
 */
import { NetworkTangents, plainOutflow, type PortSetting } from '../solver/sensitivity.js';
import { GRAVITY } from '../physics/constants.js';
import type { SolvedChip } from './chip.js';
import type { Setting } from './settings.js';
import type { PhaseName } from '../network/model.js';

/**
 * What ordinary controllers resolve, when the layout does not say (common practice, no
 * published source): pressure controllers for microfluidics hold a set pressure to about
 * 10 Pa (0.1 mbar); syringe pumps deliver a set flow to about 1 % of it.
 */
export const CONTROL_RESOLUTION = { pressure: 10, flowFraction: 0.01 } as const;

/** The flow ratio tolerance when none is given: ±2 % of A/B (common practice for a phase ratio set by pumps). */
export const RATIO_TOLERANCE = 0.02;

/** What bounds an excursion: a split reaching one of its window limits. */
export interface HoldLimit {
  split: string;
  limit: 'low' | 'high';
}

export interface HoldTolerance {
  setting: Setting;
  /** The setting's value as solved, SI (a pressure without the reservoir head, as in the layout). */
  value: number;
  /** How far the setting may fall and rise with every split pinned, SI (≥ 0; Infinity when no split bounds it). */
  down: number;
  up: number;
  downLimit?: HoldLimit;
  upLimit?: HoldLimit;
  /** How far it may move either way with the flow ratio A/B within the tolerance, SI. */
  ratioExcursion: number;
  /** The liquid column of the excursions of a pressure setting, m (Pa/(ρ·g) of the node's liquid). */
  headDown?: number;
  headUp?: number;
  /** The phase whose density turns pressure into head. */
  liquid?: PhaseName;
  /** The smaller excursion is below what a controller resolves (`resolution`, SI). */
  belowResolution: boolean;
  resolution: number;
  /** Per SI unit of the setting. */
  sensitivity: { throughputA: number; throughputB: number; flowRatio: number; splitDelta: number[] };
}

export interface HoldResult {
  settings: HoldTolerance[];
  /** The flow ratio tolerance used, relative. */
  ratioTolerance: number;
  /** Every split was pinned at the solved point (otherwise the split excursions are 0). */
  allPinned: boolean;
}

export interface HoldOptions {
  ratioTolerance?: number;
  /** Controller resolution: Pa, and a fraction of the set flow (default: the layout's, else CONTROL_RESOLUTION). */
  resolution?: { pressure?: number; flowFraction?: number };
}

/** The largest e ≥ 0 with value + sign·e·slope ≤ room, for room ≥ 0 (Infinity when the value does not move toward it). */
function reach(room: number, slope: number): number {
  return slope > 0 ? Math.max(0, room) / slope : Infinity;
}

/** The hold tolerances of every setting of a converged solve. */
export function holdTolerances(solved: SolvedChip, options: HoldOptions = {}): HoldResult {
  const { chip, network: net, raw, result } = solved;
  if (!raw.converged) throw new RangeError('hold tolerances need a converged solve');
  const ratioTolerance = options.ratioTolerance ?? RATIO_TOLERANCE;
  const pressureResolution = options.resolution?.pressure ?? chip.controlResolution?.pressure ?? CONTROL_RESOLUTION.pressure;
  const flowFraction = options.resolution?.flowFraction ?? chip.controlResolution?.flowFraction ?? CONTROL_RESOLUTION.flowFraction;
  const tangents = new NetworkTangents(net, raw, solved.workspace);
  const outflow = plainOutflow(net, raw.plainFlow);
  const splits = result.splits;
  const allPinned = splits.every((s) => s.state === 'pinned');
  const { throughputA: qA, throughputB: qB } = result.summary;
  const ratio = qA / qB;

  const settings: HoldTolerance[] = [];
  const inlets = net.ports.flatMap((p, i) => (p.node.kind === 'inlet' ? [i] : []));
  for (const [port, { node, fixed, injection }] of net.ports.entries()) {
    if (node.kind !== 'inlet' && node.kind !== 'outlet') continue;
    const portSetting: PortSetting = { port, quantity: fixed !== undefined ? 'pressure' : 'flow' };
    const t = tangents.settingResponse(portSetting, inlets);
    const splitDelta = Array.from(t.splitDelta);

    // What the inlets deliver and its change (a pressure-set inlet delivers its port's net outflow).
    const delivered = { A: 0, B: 0 };
    inlets.forEach((i, k) => {
      const p = net.ports[i]!;
      if (p.node.kind !== 'inlet') return;
      const flow = p.fixed === undefined ? p.injection : outflow[i]!;
      const slope = p.fixed === undefined ? (i === port ? 1 : 0) : t.outflow[k]!;
      if (flow > 0) delivered[p.node.phase] += slope;
    });
    const dRatio = (delivered.A - ratio * delivered.B) / qB;

    let down = Infinity;
    let up = Infinity;
    let downLimit: HoldLimit | undefined;
    let upLimit: HoldLimit | undefined;
    net.splits.forEach((sp, s) => {
      const split = splits[s]!;
      const d = splitDelta[s]!;
      const [low, high] = sp.window;
      const delta = split.pressureDifference;
      // Rising θ moves Δ by +d: toward high when d > 0, toward low when d < 0; falling, the reverse.
      const pinned = split.state === 'pinned';
      const rise = pinned ? Math.min(reach(high - delta, d), reach(delta - low, -d)) : 0;
      const fall = pinned ? Math.min(reach(high - delta, -d), reach(delta - low, d)) : 0;
      const riseLimit: HoldLimit = { split: split.id, limit: d > 0 ? 'high' : 'low' };
      const fallLimit: HoldLimit = { split: split.id, limit: d > 0 ? 'low' : 'high' };
      if (rise < up) [up, upLimit] = [rise, riseLimit];
      if (fall < down) [down, downLimit] = [fall, fallLimit];
    });
    // |dRatio·e| ≤ tolerance·ratio, either way.
    const ratioExcursion = dRatio !== 0 ? (ratioTolerance * ratio) / Math.abs(dRatio) : Infinity;
    const value = node.kind === 'inlet' && fixed === undefined ? injection : fixed! - node.head;
    const resolution = portSetting.quantity === 'pressure' ? pressureResolution : flowFraction * Math.abs(value);
    const liquid = node.kind === 'inlet' ? node.phase : outletLiquid(solved, node.id, node.phase);
    const rhoG = liquid ? chip.phases[liquid].density * GRAVITY : NaN;
    const head = portSetting.quantity === 'pressure' && rhoG > 0;
    settings.push({
      setting: { node: node.id, quantity: portSetting.quantity },
      value,
      down,
      up,
      downLimit,
      upLimit,
      ratioExcursion,
      headDown: head ? down / rhoG : undefined,
      headUp: head ? up / rhoG : undefined,
      liquid: head ? liquid : undefined,
      belowResolution: Math.min(down, up) < resolution,
      resolution,
      sensitivity: { throughputA: delivered.A, throughputB: delivered.B, flowRatio: dRatio, splitDelta },
    });
  }
  return { settings, ratioTolerance, allPinned };
}

/** The liquid an outlet collects: its stated phase, else the phase of most of its flow. */
function outletLiquid(solved: SolvedChip, id: string, phase: PhaseName | undefined): PhaseName | undefined {
  if (phase) return phase;
  const outlet = solved.result.summary.outlets.find((o) => o.id === id);
  if (!outlet) return undefined;
  return Math.abs(outlet.flowA) >= Math.abs(outlet.flowB) ? 'A' : 'B';
}

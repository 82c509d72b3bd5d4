/**
 * Sensitivities of a settled network to its settings: how every port pressure, holdup, leak and
 * flow moves per unit change of one fixed pressure or one injected flow. Exports
 * `NetworkTangents`, `plainOutflow` and the types. Knows the equations (assembly.ts) and the numbering; nothing
 * of chips, splits' windows or units.
 *
 * At a solution F(v; θ) = 0 the implicit function theorem gives dv/dθ = −J⁻¹·∂F/∂θ, one solve
 * with the factored Jacobian per setting (e.g. Nocedal & Wright, Numerical Optimization, 2006,
 * §A.2, from memory). The Jacobian is that of the piece of the nonsmooth system the solution sits
 * on: every split keeps its state (pinned, or leaking at a window limit) and every feed its own
 * (open or starved), so the tangent holds as long as no state changes.
 */
import type { Network } from '../network/assemble.js';
import { NetworkEquations, type EvaluateOptions } from './assembly.js';
import { factorize, type LinearFactor } from './linear.js';
import { COMPOSITION_PULL, unknownsOf, type SolverWorkspace, type WarmStart } from './newton.js';
import { SectionTables } from './sectionTables.js';
import { UnknownMap } from './unknowns.js';

/** A setting of the network: the fixed pressure or the injected flow of one port. */
export interface PortSetting {
  port: number;
  quantity: 'pressure' | 'flow';
}

/** d(value)/dθ of one setting θ, in SI per SI unit of θ. */
export interface Tangent {
  /** Every port's pressure (a fixed port moves only with its own setting). */
  pressure: Float64Array;
  holdup: Float64Array;
  leak: Float64Array;
  /** As NetworkSolution.plainFlow and laneFlow. */
  plainFlow: Float64Array;
  laneFlow: Float64Array;
  /** Each port's net outflow through plain elements (a pressure-set inlet's delivery). */
  outflow: Float64Array;
  /** Each split's p_B − p_A. */
  splitDelta: Float64Array;
}

/** The net flow out of every port through the plain elements, from their flows (or flow tangents). */
export function plainOutflow(net: Network, plainFlow: ArrayLike<number>): Float64Array {
  const out = new Float64Array(net.ports.length);
  net.plains.forEach((el, e) => {
    out[el.from] += plainFlow[e]!;
    out[el.to] -= plainFlow[e]!;
  });
  return out;
}

/**
 * Relative size of the difference step in θ. F is linear in a fixed pressure and in an injected
 * flow at fixed unknowns (every element law is linear in its end pressures; an injection enters
 * its balance as a source), so the step can be large, and a forward difference from F at the
 * solution is as exact as a central one but for rounding, ε·|p|/h of F's terms (the two agree
 * to 3e-14 relative in every sensitivity of the bundled chips and the 16-contactor ladder,
 * measured). That rounding matters: where wide tubing feeds a manifold, the manifold's pressure
 * follows the inlet's to 1 − 2e-6 (the 16-contactor well-designed ladder of the tests), and the
 * tubing's flow tangent is that small difference; at a step of 1e-6 of the pressure range it
 * came out 1.3e-5 off, at 1e-3 within 1e-8 of Newton's method on θ ± h.
 * A step this size crosses no piece of F unless a flow at the set port itself reverses within
 * 1e-3 of the range.
 */
const STEP = 1e-3;

export class NetworkTangents {
  private readonly eq: NetworkEquations;
  private readonly x: Float64Array<ArrayBuffer>;
  private readonly options: EvaluateOptions;
  private readonly factor: LinearFactor;
  private readonly flowScale: number;
  /** Each plain element's flow at the solution. */
  private readonly plainFlowAt: Float64Array;
  /** F at the solution, with the options of the differences. */
  private readonly atSolution: Float64Array;
  /** Each plain element's upstream composition at the solution. */
  private readonly plainCompositionAt: Float64Array;
  /** Ports that a contactor or a split touches (their rows are not those of plain elements alone). */
  private touched: Set<number> | undefined;

  /**
   * Factors the Jacobian at `solution` (a settled solve of `net`). With the workspace of that
   * solve, its holdup tables and the symbolic analysis of the Jacobian's pattern are reused
   * (the ordering was 16 % of the hold tolerances of a 4096-contactor chip, measured).
   */
  constructor(net: Network, solution: WarmStart, workspace?: SolverWorkspace) {
    const map = new UnknownMap(net);
    this.eq = new NetworkEquations(net, map, workspace?.tables ?? new SectionTables(), workspace?.builderFor(map.size));
    const { x, withComposition } = unknownsOf(this.eq, solution);
    this.x = x;
    // The equations the solve settled: full viscosity coupling, no frozen holdups, the
    // composition pull of its last stage (anchored at the solution itself). The pull scales
    // with the flows, so with compositions the flows are evaluated first; without, the pull is
    // not read and one evaluation gives both.
    this.eq.evaluate(x, { jacobian: !withComposition, freezeHoldup: false, withComposition, anchor: x, compositionPull: 0 });
    this.flowScale = this.eq.flowReference();
    this.options = { jacobian: true, freezeHoldup: false, withComposition, anchor: x.slice(), compositionPull: COMPOSITION_PULL * this.flowScale };
    if (withComposition) this.eq.evaluate(x, this.options);
    this.atSolution = this.eq.F.slice();
    this.plainFlowAt = this.eq.plainFlow.slice();
    this.plainCompositionAt = this.eq.plainComposition.slice();
    const jacobian = this.eq.builder.toCsc();
    this.factor = workspace ? workspace.factors.factor(jacobian) : factorize(jacobian, 'sparse');
    this.options = { ...this.options, jacobian: false };
  }

  /** The tangent of the solution along one setting. */
  tangent(setting: PortSetting): Tangent {
    const port = this.eq.net.ports[setting.port]!;
    if (setting.quantity === 'pressure' && port.fixed === undefined) throw new RangeError(`port ${setting.port} has no fixed pressure`);
    const fixedPort = setting.quantity === 'pressure' ? setting.port : undefined;
    const exact = this.settingSlope(setting);
    if (exact) return this.along(() => exact, 1, fixedPort, true);
    const h = STEP * (setting.quantity === 'pressure' ? this.eq.pressureScale : Math.max(Math.abs(port.injection), this.flowScale));
    return this.along(() => this.evaluateAt(this.x, setting, h).F, h, fixedPort);
  }

  /**
   * Along one setting: the change of every split's p_B − p_A, and of the net outflow through the
   * plain elements at each of `ports`, per SI unit of the setting. What the hold tolerances
   * need, at one linear solve per setting: `tangent` also evaluates the whole chip for the
   * flow of every element. Falls back to `tangent` where the setting or one of `ports` is a
   * contactor's or a split's port.
   */
  settingResponse(setting: PortSetting, ports: ReadonlyArray<number>): { splitDelta: Float64Array; outflow: Float64Array } {
    const slope = this.settingSlope(setting);
    if (!slope || ports.some((p) => this.touchedPorts().has(p))) {
      const t = this.tangent(setting);
      return { splitDelta: t.splitDelta, outflow: Float64Array.from(ports, (p) => t.outflow[p]!) };
    }
    const { net, map } = this.eq;
    const dx = this.factor.solve(slope.map((v) => -v));
    const fixedPort = setting.quantity === 'pressure' ? setting.port : undefined;
    const dPressure = (i: number) => (map.unknownOf[i]! >= 0 ? dx[map.unknownOf[i]!]! : i === fixedPort ? 1 : 0);
    const dComposition = (i: number) => (this.options.withComposition && map.unknownOf[i]! >= 0 ? dx[map.compAt + map.unknownOf[i]!]! : 0);
    const muA = net.chip.phases.A.viscosity;
    const muB = net.chip.phases.B.viscosity;
    const at = new Map(ports.map((p, k) => [p, k]));
    const outflow = new Float64Array(ports.length);
    net.plains.forEach((el, e) => {
      const from = at.get(el.from);
      const to = at.get(el.to);
      if (from === undefined && to === undefined) return;
      // The plain law's slopes (elements.ts plainLaw): g in the end pressures, −Q·(μA − μB)/μ in the upstream composition.
      const x = this.plainCompositionAt[e]!;
      const mu = x * muA + (1 - x) * muB;
      const q = this.plainFlowAt[e]!;
      const up = q >= 0 ? el.from : el.to;
      const dq = (dPressure(el.from) - dPressure(el.to)) / (el.r0 * mu) - ((q * (muA - muB)) / mu) * dComposition(up);
      if (from !== undefined) outflow[from] += dq;
      if (to !== undefined) outflow[to] -= dq;
    });
    const splitDelta = Float64Array.from(net.splits, (sp) => (sp.nearPhase === 'A' ? 1 : -1) * (dPressure(sp.far) - dPressure(sp.near)));
    return { splitDelta, outflow };
  }

  private touchedPorts(): Set<number> {
    const { net } = this.eq;
    return (this.touched ??= new Set([...net.contactors.flatMap((c) => [c.nearIn, c.nearOut, c.farIn, c.farOut]), ...net.splits.flatMap((s) => [s.near, s.far])]));
  }

  /**
   * ∂F/∂θ of a setting θ at the solution, from the element laws, or undefined where a contactor
   * or a split touches the port (then by the difference of `tangent`). An injected flow enters
   * its port's balances as a source (1 into the volume row, the supplied fraction of A into the
   * phase-A row). A set pressure p enters only the plain elements at its port, each carrying
   * Q = g·(p_from − p_to) with g = 1/(r0·μ(x_up)) (elements.ts plainLaw), so the rows at each
   * element's other end gain g and g·x_up per unit p. Exact, where the difference quotient
   * cost one evaluation of the whole chip per setting.
   */
  private settingSlope(setting: PortSetting): Float64Array | undefined {
    const { eq } = this;
    const { net, map } = eq;
    if (this.touchedPorts().has(setting.port)) return undefined;
    const slope = new Float64Array(this.x.length);
    const withComposition = this.options.withComposition;
    const add = (port: number, volume: number, phaseA: number) => {
      const u = map.unknownOf[port]!;
      if (u < 0) return;
      slope[u] += volume;
      if (withComposition) slope[map.compAt + u] += phaseA;
    };
    if (setting.quantity === 'flow') {
      const port = net.ports[setting.port]!;
      add(setting.port, 1, port.supplies ?? 1);
      return slope;
    }
    const muA = net.chip.phases.A.viscosity;
    const muB = net.chip.phases.B.viscosity;
    net.plains.forEach((el, e) => {
      if (el.from !== setting.port && el.to !== setting.port) return;
      const x = this.plainCompositionAt[e]!;
      const g = 1 / (el.r0 * (x * muA + (1 - x) * muB));
      add(el.from === setting.port ? el.to : el.from, g, g * x);
    });
    return slope;
  }

  /**
   * The tangent of the solution along a change of plain elements' conductances: element
   * `plain` has its conductance 1/r0 scaled by 1 + t·logSlope (d ln g/dt = logSlope), for a
   * design variable t that widens or lengthens its segments. F is linear in a plain element's
   * conductance at fixed unknowns (Q = g·Δp/μ), so the forward difference is exact but for
   * rounding, as for a setting. The flows along the tangent include the direct change
   * g·logSlope·(Δp/μ)·… of the changed elements themselves (Q·logSlope).
   */
  conductanceTangent(changes: ReadonlyArray<{ plain: number; logSlope: number }>): Tangent {
    const h = STEP;
    const plains = this.eq.net.plains;
    const tangent = this.along(() => {
      const saved = changes.map((c) => plains[c.plain]!.r0);
      try {
        for (const c of changes) plains[c.plain]!.r0 /= 1 + h * c.logSlope;
        this.eq.evaluate(this.x, this.options);
      } finally {
        changes.forEach((c, i) => (plains[c.plain]!.r0 = saved[i]!));
      }
      return this.eq.F;
    }, h);
    for (const c of changes) tangent.plainFlow[c.plain] += this.plainFlowAt[c.plain]! * c.logSlope;
    tangent.outflow = plainOutflow(this.eq.net, tangent.plainFlow);
    return tangent;
  }

  /**
   * dv = −J⁻¹·∂F/∂θ, with ∂F/∂θ from F evaluated with θ moved by h (`moved`), or given by
   * `moved` itself when `slope`, and the tangent it gives.
   */
  private along(moved: () => Float64Array, h: number, fixedPort?: number, slope = false): Tangent {
    const { eq, x } = this;
    // ∂F/∂θ by a forward difference in θ at fixed unknowns (exact for these linear entries).
    const plus = moved();
    const rhs = new Float64Array(x.length);
    for (let i = 0; i < rhs.length; i++) rhs[i] = slope ? -plus[i]! : -(plus[i]! - this.atSolution[i]!) / h;
    const dx = this.factor.solve(rhs);

    // The flows along the tangent, from the element laws' own slopes (a difference of flows
    // would lose digits: a manifold's flow is a small difference of large pressures).
    eq.evaluate(x, { ...this.options, direction: { dv: dx, fixedPort } });
    const { alphaAt, leakAt, unknownOf } = eq.map;
    const pressure = Float64Array.from(unknownOf, (u, i) => (u >= 0 ? dx[u]! : i === fixedPort ? 1 : 0));
    const plainFlow = eq.flowTangent.plain.slice();
    return {
      pressure,
      holdup: Float64Array.from(eq.net.contactors, (_, c) => (eq.feedStates[c] === 'open' ? dx[alphaAt + c]! : 0)),
      leak: dx.slice(leakAt, leakAt + eq.net.splits.length),
      plainFlow,
      laneFlow: eq.flowTangent.lane.slice(),
      outflow: plainOutflow(eq.net, plainFlow),
      splitDelta: Float64Array.from(eq.net.splits, (sp) => (sp.nearPhase === 'A' ? 1 : -1) * (pressure[sp.far]! - pressure[sp.near]!)),
    };
  }

  /**
   * Evaluates the equations at v with the setting moved by dθ, and puts the setting back: the
   * network's port is changed in place for the evaluation (a copy of the network would rebuild
   * the equations and their pressure scale, which scales the merge unknowns).
   */
  private evaluateAt(v: Float64Array, setting: PortSetting, dTheta: number): NetworkEquations {
    const port = this.eq.net.ports[setting.port]!;
    const saved = setting.quantity === 'pressure' ? port.fixed! : port.injection;
    try {
      if (setting.quantity === 'pressure') port.fixed = saved + dTheta;
      else port.injection = saved + dTheta;
      this.eq.evaluate(v, this.options);
    } finally {
      if (setting.quantity === 'pressure') port.fixed = saved;
      else port.injection = saved;
    }
    return this.eq;
  }
}

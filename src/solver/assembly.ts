/**
 * Residual and Jacobian of the two-phase network at one iterate: every free port conserves
 * volume and (with compositions on) phase A; every contactor's two lanes feel one pressure
 * gradient; every split and merge obeys its complementarity (elements.ts). Exports
 * `NetworkEquations`. Knows the numbering (unknowns.ts) and the element laws; knows nothing of
 * iteration, convergence or linear algebra beyond collecting triplets.
 *
 * Besides F it records, per row, the rounding floor ε·g·(|p_i| + |p_j|) that no iterate can
 * go below, and the signed weight D_i of the row's pseudo-time term (added as D_i/τ to the
 * diagonal, with the sign that strengthens it): the throughflow conductance of a port (its
 * compliance on the local time scale), the throughflow of a port's phase-A balance, the flow a
 * contactor's lanes exchange per unit holdup (interface relaxation), and a unit relaxation of
 * every split leak and merge crossover (without it, a complementarity row on pressures alone
 * would force its flow to jump as τ → 0).
 */
import { laneConductances, type LaneConductances } from '../physics/lanes.js';
import { curvedLaneConductances, type CurvedLaneConductances } from '../physics/curvedLanes.js';
import { SectionTables } from './sectionTables.js';
import { StratiflowError } from '../errors.js';
import type { ContactorElement, Network } from '../network/assemble.js';
import { TripletBuilder } from './sparseMatrix.js';
import { laneLaw, mergeState, plainLaw, splitLaw, type FeedBranch, type SplitBranch } from './elements.js';
import type { UnknownMap } from './unknowns.js';

/** Below this share of the applied pressure a contactor's drops count as stagnant. */
const STAGNANT_DROP = 1e-12;
/** Flow scale of the merge complementarity, as a share of a contactor's flow at the full drive. */
const MERGE_KAPPA = 1e-3;

export interface EvaluateOptions {
  jacobian: boolean;
  /**
   * Replace each lane constraint by α = const (the linear first step of a cold start): `true`
   * for every contactor, `open` only for contactors that both phases enter (a starved
   * contactor's crossover stays an unknown).
   */
  freezeHoldup: boolean | 'open';
  /** Phase-A balances and compositions as unknowns; otherwise compositions stay nominal. */
  withComposition: boolean;
  /** The iterate that stagnant holdups and compositions are pulled toward. */
  anchor: Float64Array;
  /** Pull of stagnant compositions toward the anchor, m³/s per unit composition. */
  compositionPull: number;
  /** How far compositions change the viscosities the flows see, 0 to 1 (default 1). */
  coupling?: number;
  /**
   * Width of the smoothed complementarities (elements.ts `smoothMid`), as a share of each
   * split's window and in z for each merge; 0 or absent: the exact semismooth rows.
   */
  smoothing?: number;
  /**
   * A direction in which to differentiate the element flows (into `flowTangent`): the change
   * dv of the unknowns, and the fixed port whose pressure moves by 1 along it, if any.
   */
  direction?: { dv: Float64Array; fixedPort?: number };
}

/** d(flow)/dt of every element along EvaluateOptions.direction, m³/s per unit t. */
export interface FlowTangent {
  plain: Float64Array;
  /** [near0, far0, near1, far1, …] */
  lane: Float64Array;
  crossover: Float64Array;
}

export class NetworkEquations {
  readonly net: Network;
  readonly map: UnknownMap;
  readonly F: Float64Array;
  /** Rounding floor of each row, in the row's units. */
  readonly noise: Float64Array;
  /** Signed weight of each row's pseudo-time term, added as D_i/τ to the diagonal. */
  readonly dynamic: Float64Array;
  readonly builder: TripletBuilder;
  readonly plainFlow: Float64Array;
  readonly plainComposition: Float64Array;
  /** [near0, far0, near1, far1, …] */
  readonly laneFlow: Float64Array;
  readonly laneComposition: Float64Array;
  /** Crossover of every merge, near → far port, m³/s. */
  readonly crossover: Float64Array;
  /** The flows' derivatives along the last evaluation's `direction` (zero without one). */
  readonly flowTangent: FlowTangent;
  readonly splitStates: SplitBranch[];
  readonly feedStates: FeedBranch[];
  /** The piece whose slopes each merge's Jacobian column takes (an active-set prediction), or undefined. */
  readonly mergeBranch: Array<FeedBranch | undefined>;
  /** A branch imposed on each split for the next Jacobian (an active-set prediction), or undefined. */
  readonly splitBranch: Array<SplitBranch | undefined>;
  /**
   * The pressure range of the chip, Pa (at least 1 Pa): the applied pressure differences, and
   * once an iterate is known (`rescale`), the range of its port pressures, which is what counts
   * on a chip driven by set flows. It scales the merge complementarity and the stagnation test,
   * never the solution.
   */
  pressureScale: number;
  /** Mean of the fixed pressures, Pa: where a cold start puts every free port. */
  readonly fixedMean: number;
  private readonly muA: number;
  private readonly muB: number;
  private readonly rowTarget: Int32Array;
  private readonly rowFactor: Float64Array;
  private readonly laneMemo: Array<{ alpha: number; muN: number; muF: number; curvature: number; slopes: boolean; k: LaneConductances | CurvedLaneConductances } | undefined>;

  private readonly tables: SectionTables;

  /** `builder` (of the system's size) may be one that earlier solves used: it keeps the compressions of their patterns (sparseMatrix.ts). */
  constructor(net: Network, map: UnknownMap, tables = new SectionTables(), builder = new TripletBuilder(map.size)) {
    this.net = net;
    this.tables = tables;
    this.map = map;
    const n = map.size;
    if (builder.n !== n) throw new RangeError(`the triplet builder is ${builder.n}×${builder.n}, the system ${n}×${n}`);
    this.F = new Float64Array(n);
    this.noise = new Float64Array(n);
    this.dynamic = new Float64Array(n);
    this.builder = builder;
    this.plainFlow = new Float64Array(net.plains.length);
    this.plainComposition = new Float64Array(net.plains.length);
    this.laneFlow = new Float64Array(2 * net.contactors.length);
    this.laneComposition = new Float64Array(2 * net.contactors.length);
    this.crossover = new Float64Array(net.contactors.length);
    this.flowTangent = { plain: new Float64Array(net.plains.length), lane: new Float64Array(2 * net.contactors.length), crossover: new Float64Array(net.contactors.length) };
    this.splitStates = net.splits.map(() => 'pinned');
    this.feedStates = net.contactors.map(() => 'open');
    this.splitBranch = net.splits.map(() => undefined);
    this.mergeBranch = net.contactors.map(() => undefined);
    this.muA = net.chip.phases.A.viscosity;
    this.muB = net.chip.phases.B.viscosity;
    this.laneMemo = new Array(net.contactors.length);
    this.rowTarget = Int32Array.from({ length: map.freePorts }, (_, u) => map.compAt + u);
    this.rowFactor = new Float64Array(map.freePorts);

    let lo = Infinity;
    let hi = -Infinity;
    let sum = 0;
    let count = 0;
    for (const p of net.ports) {
      if (p.fixed === undefined) continue;
      lo = Math.min(lo, p.fixed);
      hi = Math.max(hi, p.fixed);
      sum += p.fixed;
      count++;
    }
    this.pressureScale = count > 0 ? Math.max(1, hi - lo) : 1;
    this.fixedMean = count > 0 ? sum / count : 0;
  }

  pressureOf(v: Float64Array, port: number): number {
    const u = this.map.unknownOf[port]!;
    return u >= 0 ? v[u]! : this.net.ports[port]!.fixed!;
  }

  compositionOf(v: Float64Array, port: number): number {
    const u = this.map.unknownOf[port]!;
    const p = this.net.ports[port]!;
    return u >= 0 ? v[this.map.compAt + u]! : (p.supplies ?? p.nominal);
  }

  /** Widens the pressure scale to the range of iterate v's port pressures. */
  rescale(v: Float64Array): void {
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = 0; i < this.net.ports.length; i++) {
      const p = this.pressureOf(v, i);
      lo = Math.min(lo, p);
      hi = Math.max(hi, p);
    }
    if (hi > lo) this.pressureScale = Math.max(this.pressureScale, hi - lo);
  }

  /** Flow scale of a contactor's merge complementarity, m³/s. */
  mergeKappa(el: ContactorElement): number {
    return MERGE_KAPPA * el.scale * this.pressureScale;
  }

  /**
   * Lane conductances of contactor c, remembered for its last arguments: a starved contactor,
   * or a step that leaves a holdup alone, asks again for the same ones, and thin layers are the
   * dear end of the series.
   */
  lanes(c: number, alpha: number, muN: number, muF: number, slopes: boolean, curvature: number): LaneConductances | CurvedLaneConductances {
    const el = this.net.contactors[c]!;
    const memo = this.laneMemo[c];
    if (memo && memo.alpha === alpha && memo.muN === muN && memo.muF === muF && memo.curvature === curvature && (memo.slopes || !slopes)) return memo.k;
    const section = el.section;
    const flat =
      section.shape === 'rect'
        ? laneConductances(el.across, el.along, alpha, muN, muF, slopes)
        : this.tables.lanes(section, this.muA, this.muB).conductances(alpha, muN, muF, slopes);
    // A curved interface: the flat lanes times the arc's factor, at the phases' own viscosities.
    const nearIsA = this.net.ports[el.nearIn]!.nominal >= 0.5;
    const coupled = this.net.curvedTension !== undefined;
    const k = curvature === 0 && !coupled ? flat : this.curvedLanes(el, flat, nearIsA, alpha, curvature);
    this.laneMemo[c] = { alpha, muN, muF, curvature, slopes, k };
    return k;
  }

  /** The lanes with the arc; a state the curved strips cannot map is the user's one line naming the contactor (exit 6). */
  private curvedLanes(el: ContactorElement, flat: LaneConductances, nearIsA: boolean, alpha: number, curvature: number): CurvedLaneConductances {
    try {
      return curvedLaneConductances(flat, this.tables.curved(el.section, nearIsA ? this.muA : this.muB, nearIsA ? this.muB : this.muA), alpha, curvature);
    } catch (error) {
      if (!(error instanceof RangeError)) throw error;
      throw new StratiflowError('out-of-model', `interface: curved cannot represent this contactor's arc (${error.message}); solve it with the flat interface or a lower curvature`, { file: this.net.chip.source, element: el.segment.id });
    }
  }

  evaluate(v: Float64Array, o: EvaluateOptions): void {
    const { net, map, F, noise, dynamic, builder, muA, muB } = this;
    const { ports, plains, contactors, splits } = net;
    const { unknownOf, alphaAt, leakAt, compAt, freePorts } = map;
    const withX = o.withComposition;
    F.fill(0);
    noise.fill(0);
    dynamic.fill(0);
    if (o.jacobian) builder.clear();
    const J = (row: number, col: number, value: number) => {
      if (o.jacobian && row >= 0 && col >= 0) builder.add(row, col, value);
    };
    const massRow = (port: number) => unknownOf[port]!;
    const aRow = (port: number) => (withX && unknownOf[port]! >= 0 ? compAt + unknownOf[port]! : -1);
    const xCol = aRow;
    const mix = (x: number) => x * muA + (1 - x) * muB;
    // Homotopy in the viscosity coupling: flows see nominal + s·(x − nominal) of each
    // composition, while the phase balances carry x itself.
    const s = o.coupling ?? 1;
    const smoothing = o.smoothing ?? 0;
    const seen = (port: number, x: number) => {
      const nominal = this.net.ports[port]!.nominal;
      return nominal + s * (x - nominal);
    };

    /** dQ/d(col) = d into the volume rows and dA into the phase-A rows of both ends. */
    const partial = (rf: number, rt: number, af: number, at: number, col: number, d: number, dA: number) => {
      if (col < 0) return;
      J(rf, col, -d);
      J(rt, col, d);
      J(af, col, -dA);
      J(at, col, dA);
    };
    const dir = o.direction;
    const dPressure = (port: number) => (unknownOf[port]! >= 0 ? dir!.dv[unknownOf[port]!]! : port === dir!.fixedPort ? 1 : 0);
    const dComposition = (port: number) => (withX && unknownOf[port]! >= 0 ? dir!.dv[compAt + unknownOf[port]!]! : 0);
    /**
     * A flow q from → to carrying the composition of port `up`, with conductance g (dQ/dp_from),
     * dExtra its slope in unknown `extra`, dxUp its slope in the upstream composition; a lane
     * also feels the other lane's composition (slope `otherDx`, the other lane running from
     * `otherFrom` to `otherTo` with upstream port `otherUp`; −1 for none) through the shared
     * interface. Plain arguments rather than an object or arrays: this runs for every element
     * at every evaluation, and the allocations cost 12 % of a tolerance realisation (measured).
     * Returns dq along `o.direction` (0 without one), from the same slopes.
     */
    const stamp = (from: number, to: number, q: number, up: number, g: number, extra: number, dExtra: number, dxUp: number, otherFrom = -1, otherTo = -1, otherUp = -1, otherDx = 0): number => {
      const tangent = dir
        ? g * (dPressure(from) - dPressure(to)) + (extra >= 0 ? dExtra * dir.dv[extra]! : 0) + dxUp * dComposition(up) + (otherUp >= 0 ? otherDx * dComposition(otherUp) : 0)
        : 0;
      const xu = this.compositionOf(v, up);
      const rf = massRow(from);
      const rt = massRow(to);
      const af = aRow(from);
      const at = aRow(to);
      if (rf >= 0) F[rf] -= q;
      if (rt >= 0) F[rt] += q;
      if (af >= 0) F[af] -= q * xu;
      if (at >= 0) F[at] += q * xu;
      // Rounding of p_from − p_to: what no iteration can remove from these rows.
      const rounding = g * (Math.abs(this.pressureOf(v, from)) + Math.abs(this.pressureOf(v, to))) * Number.EPSILON;
      const through = Math.abs(q);
      if (rf >= 0) {
        noise[rf] += rounding;
        dynamic[rf] -= g;
      }
      if (rt >= 0) {
        noise[rt] += rounding;
        dynamic[rt] -= g;
      }
      if (af >= 0) {
        noise[af] += rounding * xu;
        dynamic[af] -= through;
      }
      if (at >= 0) {
        noise[at] += rounding * xu;
        dynamic[at] -= through;
      }
      if (!o.jacobian) return tangent;
      partial(rf, rt, af, at, massRow(from), g, g * xu);
      partial(rf, rt, af, at, massRow(to), -g, -g * xu);
      if (extra >= 0) partial(rf, rt, af, at, extra, dExtra, dExtra * xu);
      // Both ends' composition columns are stamped (one with 0) so the pattern does not depend
      // on the flow direction and the symbolic factorisation can be reused.
      if (!withX) return tangent;
      partial(rf, rt, af, at, xCol(from), up === from ? dxUp : 0, up === from ? q + xu * dxUp : 0);
      partial(rf, rt, af, at, xCol(to), up === to ? dxUp : 0, up === to ? q + xu * dxUp : 0);
      if (otherUp >= 0) {
        partial(rf, rt, af, at, xCol(otherFrom), otherUp === otherFrom ? otherDx : 0, otherUp === otherFrom ? xu * otherDx : 0);
        partial(rf, rt, af, at, xCol(otherTo), otherUp === otherTo ? otherDx : 0, otherUp === otherTo ? xu * otherDx : 0);
      }
      return tangent;
    };

    for (let i = 0; i < ports.length; i++) {
      const p = ports[i]!;
      if (p.injection === 0) continue;
      const r = massRow(i);
      if (r >= 0) F[r] += p.injection;
      const ar = aRow(i);
      if (ar >= 0) {
        F[ar] += p.injection * (p.supplies ?? 1);
        dynamic[ar] -= Math.abs(p.injection);
      }
    }
    for (let e = 0; e < plains.length; e++) {
      const el = plains[e]!;
      const dp = this.pressureOf(v, el.from) - this.pressureOf(v, el.to);
      const up = dp >= 0 ? el.from : el.to;
      const xu = this.compositionOf(v, up);
      const law = plainLaw(dp, el.r0, seen(up, xu), muA, muB);
      this.plainFlow[e] = law.q;
      this.plainComposition[e] = xu;
      this.flowTangent.plain[e] = stamp(el.from, el.to, law.q, up, law.g, -1, 0, s * law.dqDx);
    }
    const stagnantDrop = STAGNANT_DROP * this.pressureScale;
    for (let c = 0; c < contactors.length; c++) {
      const el = contactors[c]!;
      const col = alphaAt + c;
      // One unknown z carries the holdup and the merge crossover (elements.ts `mergeState`).
      const merge = mergeState(v[col]!, this.mergeKappa(el), this.mergeBranch[c], smoothing);
      this.feedStates[c] = merge.branch;
      const alpha = merge.alpha;
      const dn = this.pressureOf(v, el.nearIn) - this.pressureOf(v, el.nearOut);
      const df = this.pressureOf(v, el.farIn) - this.pressureOf(v, el.farOut);
      const upNear = dn >= 0 ? el.nearIn : el.nearOut;
      const upFar = df >= 0 ? el.farIn : el.farOut;
      const xn = this.compositionOf(v, upNear);
      const xf = this.compositionOf(v, upFar);
      // Curved interface with Newton coupling: κ = Δ/γ of this iterate, Δ = p_far − p_near (the
      // same at both ends of a settled contactor; the mean of the two ends meanwhile).
      const tension = net.curvedTension;
      const curvature =
        tension !== undefined
          ? (0.5 * (this.pressureOf(v, el.farIn) - this.pressureOf(v, el.nearIn) + this.pressureOf(v, el.farOut) - this.pressureOf(v, el.nearOut))) / tension
          : el.curvature;
      const k = this.lanes(c, alpha, mix(seen(upNear, xn)), mix(seen(upFar, xf)), withX && (o.jacobian || dir !== undefined), curvature);
      const law = laneLaw(dn, df, el.segment.length, k, muA, muB);
      this.laneFlow[2 * c] = law.qNear;
      this.laneFlow[2 * c + 1] = law.qFar;
      this.laneComposition[2 * c] = xn;
      this.laneComposition[2 * c + 1] = xf;
      this.crossover[c] = merge.cross;
      const dNear = law.dNearDAlpha * merge.dAlpha;
      const dFar = law.dFarDAlpha * merge.dAlpha;
      const tangent = this.flowTangent;
      tangent.lane[2 * c] = stamp(el.nearIn, el.nearOut, law.qNear, upNear, law.gNear, col, dNear, s * law.dNearDxNear, el.farIn, el.farOut, upFar, s * law.dNearDxFar);
      tangent.lane[2 * c + 1] = stamp(el.farIn, el.farOut, law.qFar, upFar, law.gFar, col, dFar, s * law.dFarDxFar, el.nearIn, el.nearOut, upNear, s * law.dFarDxNear);
      tangent.crossover[c] = stamp(el.nearIn, el.farIn, merge.cross, merge.cross >= 0 ? el.nearIn : el.farIn, 0, col, merge.dCross, 0);
      if (tension !== undefined) {
        // ∂q/∂p of each lane through κ: q = d·k(κ)/L, ∂κ/∂p = ±1/(2γ) at the far (+) and near (−) ports of both ends.
        const curved = k as CurvedLaneConductances;
        const ends = [el.farIn, el.farOut, el.nearIn, el.nearOut];
        const lanes: Array<[number, number, number, number, number]> = [
          [2 * c, el.nearIn, el.nearOut, upNear, (dn * curved.dkNearDCurvature) / el.segment.length / (2 * tension)],
          [2 * c + 1, el.farIn, el.farOut, upFar, (df * curved.dkFarDCurvature) / el.segment.length / (2 * tension)],
        ];
        for (const [lane, from, to, up, g] of lanes) {
          if (dir) tangent.lane[lane]! += g * (dPressure(el.farIn) + dPressure(el.farOut) - dPressure(el.nearIn) - dPressure(el.nearOut));
          if (!o.jacobian) continue;
          const xu = this.compositionOf(v, up);
          ends.forEach((port, i) => {
            const d = i < 2 ? g : -g;
            partial(massRow(from), massRow(to), aRow(from), aRow(to), massRow(port), d, d * xu);
          });
        }
      }

      // Lane constraint: both lanes feel one gradient, d_near = d_far. An open contactor whose
      // drops are lost in rounding carries no flow worth resolving: there the constraint gives
      // way to a tiny pull of z toward the anchor, which leaves every converged value alone.
      const w = el.scale;
      const pull = 1e-12 * w * this.pressureScale;
      if (o.freezeHoldup === true || (o.freezeHoldup === 'open' && merge.branch === 'open')) {
        F[col] = 0;
        J(col, col, w);
        J(col, massRow(el.nearIn), 0);
        J(col, massRow(el.nearOut), 0);
        J(col, massRow(el.farIn), 0);
        J(col, massRow(el.farOut), 0);
        continue;
      }
      const stagnant = merge.openSlopes && Math.max(Math.abs(dn), Math.abs(df)) < stagnantDrop;
      const ww = stagnant ? 0 : w;
      F[col] = ww * (dn - df) - pull * (v[col]! - o.anchor[col]!);
      noise[col] = w * Number.EPSILON * (Math.abs(this.pressureOf(v, el.nearIn)) + Math.abs(this.pressureOf(v, el.nearOut)) + Math.abs(this.pressureOf(v, el.farIn)) + Math.abs(this.pressureOf(v, el.farOut)));
      dynamic[col] = -(Math.abs(dNear) + Math.abs(dFar) + merge.dCross + 1e-9 * w * this.pressureScale);
      J(col, massRow(el.nearIn), ww);
      J(col, massRow(el.nearOut), -ww);
      J(col, massRow(el.farIn), -ww);
      J(col, massRow(el.farOut), ww);
      J(col, col, -pull);
    }
    for (let s = 0; s < splits.length; s++) {
      const sp = splits[s]!;
      const col = leakAt + s;
      const leak = v[col]!;
      stamp(sp.far, sp.near, leak, leak >= 0 ? sp.far : sp.near, 0, col, 1, 0);
      const sign = sp.nearPhase === 'A' ? 1 : -1;
      const kappa = sp.contactor.scale;
      const delta = sign * (this.pressureOf(v, sp.far) - this.pressureOf(v, sp.near));
      const row = splitLaw(delta, sign * leak, kappa, sp.window[0], sp.window[1], this.splitBranch[s], smoothing * Math.min(sp.window[1] - sp.window[0], this.pressureScale));
      this.splitStates[s] = row.branch;
      F[col] = row.F;
      dynamic[col] = -sign;
      J(col, massRow(sp.far), sign * row.dBounded);
      J(col, massRow(sp.near), -sign * row.dBounded);
      J(col, col, sign * row.dFlow);
    }
    if (withX) {
      // Each phase-A balance less x times its port's volume balance: Σ q_in·(x_in − x) = 0,
      // the transport form, whose x stays a mean of what flows in even while the volume
      // balance is not yet met (an iterate then never asks for x outside [0, 1]).
      for (let u = 0; u < freePorts; u++) {
        const xu = v[compAt + u]!;
        F[compAt + u] -= xu * F[u]!;
        noise[compAt + u] += xu * noise[u]!;
        this.rowFactor[u] = -xu;
      }
      if (o.jacobian) {
        builder.addScaledRows(this.rowTarget, this.rowFactor);
        for (let u = 0; u < freePorts; u++) J(compAt + u, compAt + u, -F[u]!);
      }
    }
    for (let u = 0; u < freePorts; u++) {
      const row = compAt + u;
      if (withX) {
        // A stagnant port has no composition of its own: a tiny pull toward the anchor keeps it defined.
        F[row] -= o.compositionPull * (v[row]! - o.anchor[row]!);
        J(row, row, -o.compositionPull);
      } else {
        F[row] = 0;
        J(row, row, 1);
      }
    }
  }

  /** What the inlets deliver of each phase, m³/s (after `evaluate`); the smaller sets the tolerance. */
  flowReference(): number {
    const { ports, plains } = this.net;
    const delivered = { A: 0, B: 0 };
    const outflow = new Float64Array(ports.length);
    for (const [e, el] of plains.entries()) {
      outflow[el.from] += this.plainFlow[e]!;
      outflow[el.to] -= this.plainFlow[e]!;
    }
    for (const [i, p] of ports.entries()) {
      if (p.node.kind === 'inlet') delivered[p.node.phase] += Math.max(0, p.fixed !== undefined ? outflow[i]! : p.injection);
    }
    const positive = [delivered.A, delivered.B].filter((q) => q > 0);
    return positive.length ? Math.min(...positive) : 1e-300;
  }
}

/**
 * Phase compositions carried along the actual flow of a solved iterate: each port's outflow is
 * the flow-weighted mix of its inflows (boundary ports supply their own liquid). Exports
 * `propagatedCompositions`, used to start the composition unknowns once the nominal
 * compositions no longer hold (a split leaks, a feed is starved).
 */
import type { Network } from '../network/assemble.js';

export interface CarriedFlows {
  /** Pressure of every port, Pa. */
  pressure: (port: number) => number;
  plainFlow: Float64Array;
  laneFlow: Float64Array;
  /** Leak of every split, far → near port, m³/s. */
  leak: Float64Array;
  /** Crossover of every merge, near → far port, m³/s. */
  crossover: Float64Array;
}

/** Sweeps ports from high to low pressure until nothing changes (at most once per port). */
export function propagatedCompositions(net: Network, flows: CarriedFlows): Float64Array {
  const { ports, plains, contactors, splits } = net;
  const composition = Float64Array.from(ports, (p) => p.nominal);
  const order = ports.map((_, i) => i).sort((a, b) => flows.pressure(b) - flows.pressure(a));
  const inflow: Array<Array<[number, number]>> = ports.map(() => []); // [upstream port, flow]
  const link = (from: number, to: number, q: number) => {
    if (q > 0) inflow[to]!.push([from, q]);
    else if (q < 0) inflow[from]!.push([to, -q]);
  };
  plains.forEach((el, e) => link(el.from, el.to, flows.plainFlow[e]!));
  contactors.forEach((el, c) => {
    link(el.nearIn, el.nearOut, flows.laneFlow[2 * c]!);
    link(el.farIn, el.farOut, flows.laneFlow[2 * c + 1]!);
    link(el.nearIn, el.farIn, flows.crossover[c]!);
  });
  splits.forEach((sp, s) => link(sp.far, sp.near, flows.leak[s]!));
  for (let sweep = 0; sweep < ports.length + 1; sweep++) {
    let changed = false;
    for (const i of order) {
      const port = ports[i]!;
      let value: number;
      if (port.fixed !== undefined) value = port.supplies ?? port.nominal;
      else {
        let q = 0;
        let qa = 0;
        if (port.injection > 0) {
          q += port.injection;
          qa += port.injection * (port.supplies ?? 1);
        }
        for (const [from, f] of inflow[i]!) {
          q += f;
          qa += f * composition[from]!;
        }
        value = q > 0 ? qa / q : composition[i]!;
      }
      if (Math.abs(value - composition[i]!) > 1e-15) {
        composition[i] = value;
        changed = true;
      }
    }
    if (!changed) break;
  }
  return composition;
}

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

/**
 * Sweeps ports from high to low pressure until nothing changes (at most once per port). The
 * inflows of each port are kept in compressed rows, in the order the links are met, so that a
 * port sums them in that order.
 */
export function propagatedCompositions(net: Network, flows: CarriedFlows): Float64Array {
  const { ports, plains, contactors, splits } = net;
  const composition = Float64Array.from(ports, (p) => p.nominal);
  const pressure = Float64Array.from(ports, (_, i) => flows.pressure(i));
  const order = ports.map((_, i) => i).sort((a, b) => pressure[b]! - pressure[a]!);
  // Links as (upstream port, downstream port, flow), then grouped by downstream port.
  const links = plains.length + 3 * contactors.length + splits.length;
  const up = new Int32Array(links);
  const down = new Int32Array(links);
  const flow = new Float64Array(links);
  let count = 0;
  const link = (from: number, to: number, q: number) => {
    if (q > 0) {
      up[count] = from;
      down[count] = to;
      flow[count++] = q;
    } else if (q < 0) {
      up[count] = to;
      down[count] = from;
      flow[count++] = -q;
    }
  };
  plains.forEach((el, e) => link(el.from, el.to, flows.plainFlow[e]!));
  contactors.forEach((el, c) => {
    link(el.nearIn, el.nearOut, flows.laneFlow[2 * c]!);
    link(el.farIn, el.farOut, flows.laneFlow[2 * c + 1]!);
    link(el.nearIn, el.farIn, flows.crossover[c]!);
  });
  splits.forEach((sp, s) => link(sp.far, sp.near, flows.leak[s]!));
  const start = new Int32Array(ports.length + 1);
  for (let l = 0; l < count; l++) start[down[l]! + 1]++;
  for (let i = 0; i < ports.length; i++) start[i + 1] += start[i]!;
  const next = start.slice(0, ports.length);
  const inPort = new Int32Array(count);
  const inFlow = new Float64Array(count);
  for (let l = 0; l < count; l++) {
    const at = next[down[l]!]!++;
    inPort[at] = up[l]!;
    inFlow[at] = flow[l]!;
  }
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
        for (let k = start[i]!; k < start[i + 1]!; k++) {
          q += inFlow[k]!;
          qa += inFlow[k]! * composition[inPort[k]!]!;
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

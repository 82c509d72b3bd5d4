/**
 * The numbering of the network solver's unknowns and the way back from an equation index to
 * the element a user knows by name. Exports `UnknownMap`. Depends only on the network's
 * topology, so a warm start carries over between chips of the same topology.
 *
 * Order: free port pressures | contactor states z (holdup and merge crossover in one unknown,
 * elements.ts `mergeState`) | split leaks | free port compositions. Row i of the system is the
 * equation that "belongs" to unknown i: the mass balance of a port, the lane constraint of a
 * contactor, the complementarity of a split, the phase-A balance of a port.
 */
import type { Network } from '../network/assemble.js';

export class UnknownMap {
  /** Unknown (and mass row) of each port, −1 for a port at a fixed pressure. */
  readonly unknownOf: Int32Array;
  /** Port of each free-port unknown. */
  readonly portOf: Int32Array;
  readonly freePorts: number;
  readonly alphaAt: number;
  readonly leakAt: number;
  readonly compAt: number;
  readonly size: number;
  private readonly net: Network;

  constructor(net: Network) {
    this.net = net;
    this.unknownOf = new Int32Array(net.ports.length).fill(-1);
    const portOf: number[] = [];
    for (const [i, p] of net.ports.entries()) {
      if (p.fixed !== undefined) continue;
      this.unknownOf[i] = portOf.length;
      portOf.push(i);
    }
    this.portOf = Int32Array.from(portOf);
    this.freePorts = portOf.length;
    this.alphaAt = this.freePorts;
    this.leakAt = this.alphaAt + net.contactors.length;
    this.compAt = this.leakAt + net.splits.length;
    this.size = this.compAt + this.freePorts;
  }

  /** What equation (or unknown) `index` is about, in the user's terms: "node m3", "split s3", "contactor k3". */
  describe(index: number): string {
    const { net } = this;
    if (index >= this.compAt) return `node ${net.ports[this.portOf[index - this.compAt]!]?.node.id}`;
    if (index >= this.leakAt) return `split ${net.splits[index - this.leakAt]?.node.id}`;
    if (index >= this.alphaAt) return `contactor ${net.contactors[index - this.alphaAt]?.segment.id}`;
    return `node ${net.ports[this.portOf[index]!]?.node.id}`;
  }
}

/**
 * Tests of src/network/topology.ts and src/network/assemble.ts: the split window (explicit or
 * Young–Laplace), and the network the solver sees (ports, elements, nominal phases).
 */
import { describe, expect, it } from 'vitest';
import { layoutToChip } from '../../src/layout/load.js';
import { assembleNetwork, restampNetwork, type Network } from '../../src/network/assemble.js';
import { splitWindowOf, spannedDimension } from '../../src/network/topology.js';
import type { SplitNode } from '../../src/network/model.js';
import { rectConductance } from '../../src/physics/singlePhase.js';
import { singleContactorLayout, wellDesignedLadder } from '../support/layouts.js';

const deg = Math.PI / 180;

/** A single contactor whose split window comes from the interface (no explicit window). */
function capillaryChip(orientation: 'side' | 'stacked') {
  const layout = singleContactorLayout({ contactor: { width: 200e-6, depth: 50e-6, length: 20e-3, orientation } });
  layout.nodes = layout.nodes.map((n) => (n.type === 'split' ? { id: n.id, type: 'split', outlets: n.outlets } : n));
  return layoutToChip({ ...layout, interfacialTension: 8.5e-3, contactAngleA: { advancing: 150, receding: 110 } }, 'capillary');
}

describe('splitWindowOf', () => {
  it('gives the Young–Laplace range [2γ cos θ_adv / d, 2γ cos θ_rec / d] over the dimension the interface spans', () => {
    // Slot meniscus pinned between the receding and advancing angles (de Gennes, Brochard-Wyart &
    // Quéré, Capillarity and Wetting Phenomena, 2004, §1.2 and §3.1).
    for (const [orientation, d] of [['side', 50e-6], ['stacked', 200e-6]] as const) {
      const chip = capillaryChip(orientation);
      const split = chip.nodes.find((n) => n.kind === 'split') as SplitNode;
      const contactor = chip.segments.find((s) => s.id === 'k')!;
      expect(spannedDimension(contactor)).toBe(d);
      const [low, high] = splitWindowOf(chip, split, d)!;
      expect(low).toBeCloseTo((2 * 8.5e-3 * Math.cos(150 * deg)) / d, 9);
      expect(high).toBeCloseTo((2 * 8.5e-3 * Math.cos(110 * deg)) / d, 9);
      expect(assembleNetwork(chip).splits[0]!.window).toEqual([low, high]);
    }
  });

  it('prefers the split’s own window, then the chip’s, over the Young–Laplace estimate', () => {
    const chip = capillaryChip('side');
    const split = chip.nodes.find((n) => n.kind === 'split') as SplitNode;
    const withChip = { ...chip, splitWindow: [-7, 7] as [number, number] };
    expect(splitWindowOf(withChip, split, 50e-6)).toEqual([-7, 7]);
    expect(splitWindowOf(withChip, { ...split, window: [-3, 4] }, 50e-6)).toEqual([-3, 4]);
  });
});

describe('assembleNetwork', () => {
  const chip = layoutToChip(singleContactorLayout(), 'one');
  const net = assembleNetwork(chip);

  it('gives merges and splits a near and a far port and every other node one', () => {
    for (const node of chip.nodes) {
      expect(net.portsOf.get(node.id), node.id).toHaveLength(node.kind === 'merge' || node.kind === 'split' ? 2 : 1);
    }
    expect(net.ports).toHaveLength(8);
  });

  it('makes the segment leaving a merge a contactor and every other segment a plain element', () => {
    expect(net.contactors.map((c) => c.segment.id)).toEqual(['k']);
    expect(net.plains.map((p) => p.segment.id)).toEqual(['fA', 'fB', 'oA', 'oB']);
    expect(net.splits.map((s) => s.node.id)).toEqual(['s']);
    expect(net.splits[0]!.nearPhase).toBe('A');
  });

  it('stores each plain element’s resistance per unit viscosity, r0 = L / k(μ = 1)', () => {
    const fA = net.plains.find((p) => p.segment.id === 'fA')!;
    expect(Math.abs(fA.r0 * rectConductance(100e-6, 50e-6, 1) / 5e-3 - 1)).toBeLessThan(1e-14);
  });

  it('fixes inlet and outlet pressures and gives every port its nominal phase', () => {
    const port = (id: string, side = 0) => net.ports[net.portsOf.get(id)![side]!]!;
    expect(port('inA').fixed).toBe(10e3);
    expect(port('outB').fixed).toBe(0);
    expect(port('m', 0).nominal).toBe(1);
    expect(port('m', 1).nominal).toBe(0);
    expect(port('s', 0).nominal).toBe(1);
    expect(port('s', 1).nominal).toBe(0);
    expect(port('outA').supplies).toBe(1);
    expect(port('outB').supplies).toBe(0);
  });

  it('numbers ports by topology only, so a chip with other sizes and pressures gets the same numbering', () => {
    const a = assembleNetwork(layoutToChip(wellDesignedLadder(3), 'a'));
    const b = assembleNetwork(layoutToChip(wellDesignedLadder(3, { manifold: { width: 1e-3, depth: 1e-4 }, drive: { A: { pressure: 1e3 }, B: { pressure: 2e3 } } }), 'b'));
    expect([...b.portsOf.entries()]).toEqual([...a.portsOf.entries()]);
  });
});

describe('restampNetwork', () => {
  /** Every number the solver reads from a network, by element. */
  const numbers = (net: Network) => ({
    ports: net.ports.map((p) => [p.fixed, p.injection, p.supplies, p.nominal]),
    plains: net.plains.map((e) => [e.segment.id, e.from, e.to, e.r0]),
    contactors: net.contactors.map((c) => [c.segment.id, c.section, c.across, c.along, c.nearIn, c.farIn, c.nearOut, c.farOut, c.scale, c.split?.node.id]),
    splits: net.splits.map((s) => [s.node.id, s.contactor.segment.id, s.near, s.far, s.window, s.nearPhase]),
  });

  it('gives the network that assembleNetwork gives for a chip of the same topology with other sizes and fluids', () => {
    const nominal = capillaryChip('side');
    const template = assembleNetwork(nominal);
    const realised = {
      ...nominal,
      phases: { A: { ...nominal.phases.A, viscosity: 2 * nominal.phases.A.viscosity }, B: nominal.phases.B },
      interfacialTension: 0.9 * nominal.interfacialTension!,
      segments: nominal.segments.map((s) => (s.section.shape === 'rect' ? { ...s, length: 1.1 * s.length, section: { ...s.section, width: 1.05 * s.section.width } } : s)),
    };
    const restamped = restampNetwork(template, realised);
    expect(numbers(restamped)).toEqual(numbers(assembleNetwork(realised)));
    expect(restamped.ports).toBe(template.ports);
    expect(restamped.splits[0]!.window).not.toEqual(template.splits[0]!.window);
    expect(restamped.plains[0]!.r0).not.toBe(template.plains[0]!.r0);
  });

  it('assembles afresh a chip of another topology', () => {
    const ladder = layoutToChip(wellDesignedLadder(3), 'a');
    const other = layoutToChip(wellDesignedLadder(4), 'b');
    expect(numbers(restampNetwork(assembleNetwork(ladder), other))).toEqual(numbers(assembleNetwork(other)));
  });
});

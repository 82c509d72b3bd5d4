/**
 * Small layout builders for the network, layout and CLI tests: plain layout-file objects (SI
 * numbers), validated like any file when they are loaded. Exports the demo fluids, channel
 * builders, `singleContactorLayout`, `wellDesignedLadder`, `mirroredLayout`, `phaseSwappedLayout`,
 * `randomSinglePhaseLayout`, the seeded generator `randomGenerator` and `resistanceOf`.
 * All fluid and channel values are invented demo data.
 */
import type { LayoutFile, LayoutNode, LayoutSegment } from '../../src/layout/schema.js';
import { ladderLayout, type LadderOptions } from '../../src/layout/generate.js';
import { rectConductance, tubeConductance } from '../../src/physics/singlePhase.js';

/** Invented demo fluids: a viscous phase A and a thin phase B. */
export const DEMO_PHASES = {
  A: { label: 'demo phase A', viscosity: 6.5e-3, density: 850 },
  B: { label: 'demo phase B', viscosity: 1.9e-3, density: 1000 },
} as const;

export type RectSegment = LayoutSegment & { shape: 'rect'; width: number; depth: number; length: number };
export type TubeSegment = LayoutSegment & { shape: 'tube'; diameter: number; length: number };

export function rect(id: string, from: string, to: string, width: number, depth: number, length: number, extra: Partial<LayoutSegment> = {}): RectSegment {
  return { id, from, to, shape: 'rect', width, depth, length, ...extra } as RectSegment;
}

export function tube(id: string, from: string, to: string, diameter: number, length: number): TubeSegment {
  return { id, from, to, shape: 'tube', diameter, length };
}

/** A layout with the demo phases around the given nodes and segments. */
export function layoutOf(name: string, nodes: LayoutNode[], segments: LayoutSegment[], extra: Partial<LayoutFile> = {}): LayoutFile {
  return { name, phases: { A: { ...DEMO_PHASES.A }, B: { ...DEMO_PHASES.B } }, nodes, segments, ...extra };
}

/**
 * Resistance of a single-phase segment written in SI numbers, Pa·s/m³: R = L/k with k from the
 * rectangular-duct series or Hagen–Poiseuille (src/physics/singlePhase.ts).
 */
export function resistanceOf(segment: LayoutSegment, viscosity: number): number {
  const length = segment.length as number;
  if (segment.shape === 'rect') return length / rectConductance(segment.width as number, segment.depth as number, viscosity);
  return length / tubeConductance(segment.diameter as number, viscosity);
}

export interface SingleContactorOptions {
  /** Inlet pressures, Pa. */
  inletPressure: { A: number; B: number };
  outletPressure: { A: number; B: number };
  /** p_B − p_A allowed at the split, Pa. */
  window: { low: number; high: number };
  contactor: { width: number; depth: number; length: number; orientation: 'side' | 'stacked' };
  feed: { width: number; depth: number; length: number };
  drain: { width: number; depth: number; length: number };
}

export const SINGLE_CONTACTOR_DEFAULTS: SingleContactorOptions = {
  inletPressure: { A: 10e3, B: 10e3 },
  outletPressure: { A: 0, B: 0 },
  window: { low: -200, high: 200 },
  contactor: { width: 200e-6, depth: 50e-6, length: 20e-3, orientation: 'side' },
  feed: { width: 100e-6, depth: 50e-6, length: 5e-3 },
  drain: { width: 100e-6, depth: 50e-6, length: 5e-3 },
};

/**
 * One contactor: inlets inA, inB → feeds fA, fB → merge m (A on the near side) → contactor k →
 * split s → outlet arms oA, oB → outlets outA, outB. The window is given on the split.
 */
export function singleContactorLayout(options: Partial<SingleContactorOptions> = {}): LayoutFile {
  const o = { ...SINGLE_CONTACTOR_DEFAULTS, ...options };
  const c = o.contactor;
  return layoutOf(
    'single contactor',
    [
      { id: 'inA', type: 'inlet', phase: 'A', pressure: o.inletPressure.A, x: 0, y: 0.002 },
      { id: 'inB', type: 'inlet', phase: 'B', pressure: o.inletPressure.B, x: 0.002, y: 0.002 },
      { id: 'm', type: 'merge', inlets: ['fA', 'fB'], x: 0.001, y: 0 },
      { id: 's', type: 'split', outlets: ['oA', 'oB'], window: o.window, x: 0.001, y: -c.length },
      { id: 'outA', type: 'outlet', phase: 'A', pressure: o.outletPressure.A, x: 0, y: -c.length - 0.002 },
      { id: 'outB', type: 'outlet', phase: 'B', pressure: o.outletPressure.B, x: 0.002, y: -c.length - 0.002 },
    ],
    [
      rect('fA', 'inA', 'm', o.feed.width, o.feed.depth, o.feed.length),
      rect('fB', 'inB', 'm', o.feed.width, o.feed.depth, o.feed.length),
      rect('k', 'm', 's', c.width, c.depth, c.length, { orientation: c.orientation }),
      rect('oA', 's', 'outA', o.drain.width, o.drain.depth, o.drain.length),
      rect('oB', 's', 'outB', o.drain.width, o.drain.depth, o.drain.length),
    ],
  );
}

/**
 * A well-designed ladder: deep, wide manifolds (3 mm × 1 mm) next to long, narrow contactors
 * (100 µm × 50 µm × 40 mm), both phases driven at the same pressure into outlets at the same
 * pressure, and a chip-wide split window of ±500 Pa, so every contactor carries nearly the same
 * flow and every split stays pinned.
 */
export function wellDesignedLadder(contactors: number, options: Partial<LadderOptions> = {}): LayoutFile {
  return {
    ...ladderLayout({
      contactors,
      manifold: { width: 3e-3, depth: 1e-3 },
      contactor: { width: 100e-6, depth: 50e-6, length: 40e-3, orientation: 'side' },
      drive: { A: { pressure: 20e3 }, B: { pressure: 20e3 } },
      outletPressure: { A: 0, B: 0 },
      ...options,
    }),
    splitWindow: { low: -500, high: 500 },
  };
}

const clone = <T>(value: T): T => structuredClone(value);

/**
 * The mirror image of a chip: left and right exchanged, so every merge and split lists its two
 * sides the other way round and every x changes sign; the node and segment lists are also
 * reversed (a file written in the other order). Physically the same chip.
 */
export function mirroredLayout(layout: LayoutFile): LayoutFile {
  const out = clone(layout);
  out.nodes = out.nodes.reverse().map((n) => {
    const m = { ...n } as LayoutNode & { x?: unknown };
    if (typeof m.x === 'number') m.x = m.x === 0 ? 0 : -m.x;
    if (m.type === 'merge') m.inlets = [m.inlets[1], m.inlets[0]];
    if (m.type === 'split') m.outlets = [m.outlets[1], m.outlets[0]];
    return m;
  });
  out.segments = out.segments.reverse();
  return out;
}

/**
 * The same chip with the names A and B exchanged: phases, inlet and outlet phases, and the split
 * windows (which bound p_B − p_A, so they change sign and swap ends).
 */
export function phaseSwappedLayout(layout: LayoutFile): LayoutFile {
  const out = clone(layout);
  out.phases = { A: out.phases.B, B: out.phases.A };
  const swapWindow = (w: { low: number | string; high: number | string }) => ({ low: -(w.high as number), high: -(w.low as number) });
  if (out.splitWindow) out.splitWindow = swapWindow(out.splitWindow);
  out.nodes = out.nodes.map((n) => {
    const m = { ...n };
    if ((m.type === 'inlet' || m.type === 'outlet') && m.phase) m.phase = m.phase === 'A' ? 'B' : 'A';
    if (m.type === 'split' && m.window) m.window = swapWindow(m.window);
    return m;
  });
  return out;
}

/** A small seeded generator (mulberry32, common practice): uniform numbers in [0, 1). */
export function randomGenerator(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * A random connected single-phase network of `junctions` junctions: a random spanning tree plus
 * `extraSegments` chords (so it has loops), segments oriented at random, rectangular or tube
 * sections of random size; `pressureInlets` inlets of phase A at set pressures, `flowInlets` at
 * set flows and `outlets` outlets, each attached to a random junction.
 */
export function randomSinglePhaseLayout(seed: number, counts = { junctions: 24, extraSegments: 16, pressureInlets: 2, flowInlets: 2, outlets: 3 }): LayoutFile {
  const random = randomGenerator(seed);
  const pick = (n: number) => Math.floor(random() * n);
  const nodes: LayoutNode[] = [];
  const segments: LayoutSegment[] = [];
  const section = (id: string, a: string, b: string): LayoutSegment => {
    const [from, to] = random() < 0.5 ? [a, b] : [b, a];
    const length = 1e-3 * (1 + 20 * random());
    if (random() < 0.25) return tube(id, from, to, 100e-6 + 400e-6 * random(), length);
    return rect(id, from, to, 50e-6 + 500e-6 * random(), 20e-6 + 80e-6 * random(), length);
  };
  for (let i = 0; i < counts.junctions; i++) {
    nodes.push({ id: `j${i}`, type: 'junction' });
    if (i > 0) segments.push(section(`t${i}`, `j${pick(i)}`, `j${i}`));
  }
  for (let e = 0; e < counts.extraSegments; e++) {
    const a = pick(counts.junctions);
    let b = pick(counts.junctions - 1);
    if (b >= a) b++;
    segments.push(section(`x${e}`, `j${a}`, `j${b}`));
  }
  const attach = (id: string) => segments.push(section(`s_${id}`, id, `j${pick(counts.junctions)}`));
  for (let i = 0; i < counts.pressureInlets; i++) {
    nodes.push({ id: `pin${i}`, type: 'inlet', phase: 'A', pressure: 20e3 + 20e3 * random() });
    attach(`pin${i}`);
  }
  for (let i = 0; i < counts.flowInlets; i++) {
    nodes.push({ id: `qin${i}`, type: 'inlet', phase: 'A', flow: 1e-11 * (1 + 9 * random()) });
    attach(`qin${i}`);
  }
  for (let i = 0; i < counts.outlets; i++) {
    nodes.push({ id: `out${i}`, type: 'outlet', phase: 'A', pressure: 5e3 * random() });
    attach(`out${i}`);
  }
  return layoutOf(`random network ${seed}`, nodes, segments);
}

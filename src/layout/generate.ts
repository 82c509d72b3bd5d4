/**
 * Layout generators for the two usual ways of numbering up contactors: a ladder (a row of N
 * contactors between two distribution and two collection manifolds) and a bifurcating tree
 * (2^k contactors fed and drained by binary trees). Exports `ladderLayout`, `treeLayout` and
 * their option types with defaults. Output is a layout file (plain data, SI numbers) with
 * drawing coordinates filled in; it is validated like any file when loaded.
 */
import type { LayoutFile, LayoutNode, LayoutSegment } from './schema.js';

export interface ChannelSize {
  width: number;
  depth: number;
}

export interface CommonOptions {
  name: string;
  phaseA: { label: string; viscosity: number; density: number };
  phaseB: { label: string; viscosity: number; density: number };
  interfacialTension: number;
  contactAngle: { advancing: number; receding: number };
  maxPressure?: number;
  /** Inlet drive: pressures (Pa) or total flows (m³/s) per phase; by default DEFAULT_FLOW_PER_CONTACTOR for each contactor. */
  drive?: { A: { pressure: number } | { flow: number }; B: { pressure: number } | { flow: number } };
  outletPressure: { A: number; B: number };
  contactor: ChannelSize & { length: number; orientation: 'side' | 'stacked' };
  feed: ChannelSize & { length: number };
  drain: ChannelSize & { length: number };
  /** Optional tubing between each inlet or outlet port and the chip. */
  tubing?: { diameter: number; length: number };
}

export interface LadderOptions extends CommonOptions {
  contactors: number;
  pitch: number;
  manifold: ChannelSize;
  /** Where the inlets join the distribution manifolds. */
  inletAt: 'end' | 'middle';
  /** Where the outlets leave the collection manifolds: same end as the inlets, the opposite end, or the middle. */
  outletAt: 'same' | 'opposite' | 'middle';
}

export interface TreeOptions extends CommonOptions {
  levels: number;
  pitch: number;
  /** Channel size of the tree branches at the root; each level down scales width by `branchScale`. */
  branch: ChannelSize & { length: number };
  branchScale: number;
}

const deg = Math.PI / 180;

/** Flow of each phase per contactor when no drive is given: 2 µL/min. */
export const DEFAULT_FLOW_PER_CONTACTOR = 2e-9 / 60;

export const COMMON_DEFAULTS: CommonOptions = {
  name: 'generated chip',
  phaseA: { label: 'organic phase', viscosity: 7.3e-3, density: 824 },
  phaseB: { label: 'aqueous phase', viscosity: 1.0e-3, density: 998 },
  interfacialTension: 8.5e-3,
  contactAngle: { advancing: 150 * deg, receding: 110 * deg },
  maxPressure: 300e3,
  outletPressure: { A: 0, B: 0 },
  contactor: { width: 200e-6, depth: 50e-6, length: 20e-3, orientation: 'side' },
  feed: { width: 100e-6, depth: 50e-6, length: 5e-3 },
  drain: { width: 100e-6, depth: 50e-6, length: 5e-3 },
};

export const LADDER_DEFAULTS: LadderOptions = {
  ...COMMON_DEFAULTS,
  contactors: 16,
  pitch: 1e-3,
  manifold: { width: 1000e-6, depth: 50e-6 },
  inletAt: 'end',
  outletAt: 'opposite',
};

export const TREE_DEFAULTS: TreeOptions = {
  ...COMMON_DEFAULTS,
  levels: 4,
  pitch: 1e-3,
  branch: { width: 400e-6, depth: 50e-6, length: 4e-3 },
  branchScale: 0.8,
};

const round = (v: number) => Number(v.toPrecision(12));

function header(o: CommonOptions): Omit<LayoutFile, 'nodes' | 'segments'> {
  return {
    name: o.name,
    phases: {
      A: { label: o.phaseA.label, viscosity: o.phaseA.viscosity, density: o.phaseA.density },
      B: { label: o.phaseB.label, viscosity: o.phaseB.viscosity, density: o.phaseB.density },
    },
    interfacialTension: o.interfacialTension,
    contactAngleA: { advancing: `${round(o.contactAngle.advancing / deg)} deg`, receding: `${round(o.contactAngle.receding / deg)} deg` },
    ...(o.maxPressure !== undefined ? { maxPressure: o.maxPressure } : {}),
  };
}

class Builder {
  nodes: LayoutNode[] = [];
  segments: LayoutSegment[] = [];
  node(n: LayoutNode): string {
    this.nodes.push(n);
    return n.id;
  }
  rect(id: string, from: string, to: string, size: ChannelSize, length: number, group: string, orientation?: 'side' | 'stacked'): string {
    this.segments.push({ id, from, to, shape: 'rect', width: round(size.width), depth: round(size.depth), length: round(length), group, ...(orientation ? { orientation } : {}) });
    return id;
  }
  tube(id: string, from: string, to: string, diameter: number, length: number): string {
    this.segments.push({ id, from, to, shape: 'tube', diameter: round(diameter), length: round(length), group: 'tubing' });
    return id;
  }
}

/** An inlet (with optional tubing) that delivers phase `phase` to node `to` at (x, y). */
function addInlet(b: Builder, o: CommonOptions, phase: 'A' | 'B', x: number, y: number, contactors: number): string {
  const drive = o.drive?.[phase] ?? { flow: round(contactors * DEFAULT_FLOW_PER_CONTACTOR) };
  const id = `in${phase}`;
  b.node({ id, type: 'inlet', phase, ...drive, x: round(x), y: round(y) });
  if (!o.tubing) return id;
  const port = b.node({ id: `port${phase}`, type: 'junction', x: round(x), y: round(y) });
  b.tube(`tubeIn${phase}`, id, port, o.tubing.diameter, o.tubing.length);
  return port;
}

function addOutlet(b: Builder, o: CommonOptions, phase: 'A' | 'B', x: number, y: number): string {
  const id = `out${phase}`;
  b.node({ id, type: 'outlet', pressure: o.outletPressure[phase], phase, x: round(x), y: round(y) });
  if (!o.tubing) return id;
  const port = b.node({ id: `portOut${phase}`, type: 'junction', x: round(x), y: round(y) });
  b.tube(`tubeOut${phase}`, port, id, o.tubing.diameter, o.tubing.length);
  return port;
}

/**
 * Ladder: contactor i runs from its merge at (x_i, 0) down to its split at (x_i, −L). The A and B
 * distribution manifolds lie above the merges (A nearer), the collection manifolds below the
 * splits (A nearer); in a real chip the two manifolds of a pair lie in separate layers.
 */
export function ladderLayout(options: Partial<LadderOptions> = {}): LayoutFile {
  const o: LadderOptions = { ...LADDER_DEFAULTS, ...options };
  const b = new Builder();
  const N = o.contactors;
  const L = o.contactor.length;
  const x = (i: number) => i * o.pitch;
  const yFeed = { A: o.feed.length * 0.6, B: o.feed.length };
  const yDrain = { A: -L - o.drain.length * 0.6, B: -L - o.drain.length };
  const middle = (N - 1) / 2;
  const entryIndex = o.inletAt === 'middle' ? Math.floor(middle) : 0;
  const exitIndex = o.outletAt === 'middle' ? Math.floor(middle) : o.outletAt === 'same' ? entryIndex : N - 1;

  for (const phase of ['A', 'B'] as const) {
    for (let i = 0; i < N; i++) b.node({ id: `d${phase}${i + 1}`, type: 'junction', x: round(x(i)), y: round(yFeed[phase]) });
    for (let i = 0; i < N; i++) b.node({ id: `c${phase}${i + 1}`, type: 'junction', x: round(x(i)), y: round(yDrain[phase]) });
  }
  for (let i = 0; i < N; i++) {
    const k = i + 1;
    b.node({ id: `m${k}`, type: 'merge', inlets: [`fA${k}`, `fB${k}`], x: round(x(i)), y: 0 });
    b.node({ id: `s${k}`, type: 'split', outlets: [`oA${k}`, `oB${k}`], x: round(x(i)), y: round(-L) });
    b.rect(`fA${k}`, `dA${k}`, `m${k}`, o.feed, o.feed.length, 'feed');
    b.rect(`fB${k}`, `dB${k}`, `m${k}`, o.feed, o.feed.length, 'feed');
    b.rect(`k${k}`, `m${k}`, `s${k}`, o.contactor, L, 'contactor', o.contactor.orientation);
    b.rect(`oA${k}`, `s${k}`, `cA${k}`, o.drain, o.drain.length, 'drain');
    b.rect(`oB${k}`, `s${k}`, `cB${k}`, o.drain, o.drain.length, 'drain');
  }
  for (const phase of ['A', 'B'] as const) {
    // Distribution manifolds carry flow away from the entry, collection manifolds toward the exit.
    for (let i = 0; i + 1 < N; i++) {
      const [from, to] = i < entryIndex ? [i + 2, i + 1] : [i + 1, i + 2];
      b.rect(`md${phase}${i + 1}`, `d${phase}${from}`, `d${phase}${to}`, o.manifold, o.pitch, 'manifold');
    }
    for (let i = 0; i + 1 < N; i++) {
      const [from, to] = i < exitIndex ? [i + 1, i + 2] : [i + 2, i + 1];
      b.rect(`mc${phase}${i + 1}`, `c${phase}${from}`, `c${phase}${to}`, o.manifold, o.pitch, 'manifold');
    }
    const offset = phase === 'A' ? -0.5 : -1;
    const entryX = o.inletAt === 'middle' ? x(entryIndex) : x(entryIndex) + offset * o.pitch;
    // A middle port of phase A stands between the two manifolds, not on phase B's (the drawing would lay one over the other).
    const portRise = { A: 0.2, B: 0.4 }[phase] * o.feed.length;
    const inlet = addInlet(b, o, phase, entryX, yFeed[phase] + (o.inletAt === 'middle' ? portRise : 0), N);
    b.rect(`entry${phase}`, inlet, `d${phase}${entryIndex + 1}`, o.manifold, o.inletAt === 'middle' ? o.feed.length * 0.4 : o.pitch * Math.abs(offset), 'manifold');
    const exitX = o.outletAt === 'middle' ? x(exitIndex) : exitIndex === 0 ? x(0) + offset * o.pitch : x(exitIndex) - offset * o.pitch;
    const outlet = addOutlet(b, o, phase, exitX, yDrain[phase] - (o.outletAt === 'middle' ? { A: 0.2, B: 0.4 }[phase] * o.drain.length : 0));
    b.rect(`exit${phase}`, `c${phase}${exitIndex + 1}`, outlet, o.manifold, o.outletAt === 'middle' ? o.drain.length * 0.4 : o.pitch * Math.abs(offset), 'manifold');
  }
  return { ...header(o), nodes: b.nodes, segments: b.segments };
}

/**
 * Tree: 2^levels contactors at pitch spacing; each phase is distributed by a binary tree whose
 * branch at depth l (root l = 0) has width branch.width·branchScale^l and length
 * branch.length·2^(−l) (so the leaves meet the contactor row), and collected by the mirror tree.
 */
export function treeLayout(options: Partial<TreeOptions> = {}): LayoutFile {
  const o: TreeOptions = { ...TREE_DEFAULTS, ...options };
  const b = new Builder();
  const N = 2 ** o.levels;
  const L = o.contactor.length;
  const x = (i: number) => i * o.pitch;
  const gap = { A: o.feed.length * 0.5, B: o.feed.length };
  const levelHeight = o.branch.length / (o.levels + 1);

  for (let i = 0; i < N; i++) {
    const k = i + 1;
    b.node({ id: `m${k}`, type: 'merge', inlets: [`fA${k}`, `fB${k}`], x: round(x(i)), y: 0 });
    b.node({ id: `s${k}`, type: 'split', outlets: [`oA${k}`, `oB${k}`], x: round(x(i)), y: round(-L) });
    b.rect(`k${k}`, `m${k}`, `s${k}`, o.contactor, L, 'contactor', o.contactor.orientation);
  }
  for (const phase of ['A', 'B'] as const) {
    const side = phase === 'A' ? 1 : 1;
    const base = { feed: gap[phase] * side, drain: -L - gap[phase] };
    const sign = { feed: 1, drain: -1 };
    for (const kind of ['feed', 'drain'] as const) {
      // Leaves (level = levels) sit at the contactors; the root (level 0) above/below the middle.
      const idOf = (level: number, j: number) => `${kind === 'feed' ? 't' : 'u'}${phase}${level}_${j}`;
      const yOf = (level: number) => base[kind] + sign[kind] * (o.levels - level) * levelHeight * (phase === 'A' ? 0.5 : 1);
      for (let level = o.levels; level >= 0; level--) {
        const count = 2 ** level;
        const span = N / count;
        for (let j = 0; j < count; j++) {
          const cx = x(j * span + (span - 1) / 2);
          b.node({ id: idOf(level, j), type: 'junction', x: round(cx), y: round(yOf(level)) });
          if (level < o.levels) {
            const size = { width: o.branch.width * o.branchScale ** level, depth: o.branch.depth };
            for (const child of [2 * j, 2 * j + 1]) {
              const length = o.branch.length * 2 ** -level / 2;
              const segId = `${kind === 'feed' ? 'bt' : 'bu'}${phase}${level + 1}_${child}`;
              if (kind === 'feed') b.rect(segId, idOf(level, j), idOf(level + 1, child), size, length, 'manifold');
              else b.rect(segId, idOf(level + 1, child), idOf(level, j), size, length, 'manifold');
            }
          }
        }
      }
      for (let i = 0; i < N; i++) {
        const k = i + 1;
        if (kind === 'feed') b.rect(`f${phase}${k}`, idOf(o.levels, i), `m${k}`, o.feed, o.feed.length, 'feed');
        else b.rect(`o${phase}${k}`, `s${k}`, idOf(o.levels, i), o.drain, o.drain.length, 'drain');
      }
      const root = idOf(0, 0);
      const rootX = x((N - 1) / 2) + (phase === 'A' ? -0.25 : 0.25) * o.pitch;
      if (kind === 'feed') {
        const inlet = addInlet(b, o, phase, rootX, yOf(0) + levelHeight, N);
        b.rect(`entry${phase}`, inlet, root, { width: o.branch.width, depth: o.branch.depth }, levelHeight, 'manifold');
      } else {
        const outlet = addOutlet(b, o, phase, rootX, yOf(0) - levelHeight);
        b.rect(`exit${phase}`, root, outlet, { width: o.branch.width, depth: o.branch.depth }, levelHeight, 'manifold');
      }
    }
  }
  return { ...header(o), nodes: b.nodes, segments: b.segments };
}

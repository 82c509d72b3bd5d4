/**
 * The validated chip model in SI units: what the network assembly and every analysis read.
 * Exports the model types only. Built by src/layout/load.ts (from files) or by generators.
 */
import type { Section } from '../physics/section.js';

export type PhaseName = 'A' | 'B';

export interface Phase {
  label: string;
  /** Pa·s */
  viscosity: number;
  /** kg/m³ */
  density: number;
  /** m²/s, for extraction; undefined when not given. */
  diffusivity?: number;
}

export interface NodeBase {
  id: string;
  /** Drawing position, m; undefined when the layout gives none. */
  x?: number;
  y?: number;
  note?: string;
}

export interface InletNode extends NodeBase {
  kind: 'inlet';
  phase: PhaseName;
  /** Set pressure (gauge, Pa) including the reservoir head, or set flow (m³/s): exactly one. */
  pressure?: number;
  flow?: number;
  /** ρ·g·h of the reservoir liquid, Pa (already included in `pressure`). */
  head: number;
}

export interface JunctionNode extends NodeBase {
  kind: 'junction';
}

export interface MergeNode extends NodeBase {
  kind: 'merge';
  /** Segment ids: [near, far]. */
  inlets: [string, string];
}

export interface SplitNode extends NodeBase {
  kind: 'split';
  /** Segment ids: [near, far]. */
  outlets: [string, string];
  /** Allowed p_B − p_A, Pa, when given for this split. */
  window?: [number, number];
}

export interface OutletNode extends NodeBase {
  kind: 'outlet';
  pressure: number;
  head: number;
  phase?: PhaseName;
}

export type ChipNode = InletNode | JunctionNode | MergeNode | SplitNode | OutletNode;

export interface ChipSegment {
  id: string;
  from: string;
  to: string;
  section: Section;
  length: number;
  group?: string;
  note?: string;
}

export interface Solute {
  label: string;
  partition: number;
  feedPhase: PhaseName;
  /** mol/m³ (or any consistent unit: results are relative). */
  feedConcentration: number;
}

export interface Chip {
  name: string;
  note?: string;
  /** Where the chip came from (file path), for messages. */
  source: string;
  phases: Record<PhaseName, Phase>;
  /** N/m; undefined when not given (then the split window must be given). */
  interfacialTension?: number;
  /**
   * The side-by-side interface in each contactor: `flat`, or `curved` (the Young–Laplace arc of
   * curvature Δ/γ from the solved phase pressure difference; needs interfacialTension). Absent: flat.
   */
  interface?: 'flat' | 'curved';
  /** Contact angles of phase A on the wall through A, rad. */
  contactAngle?: { advancing: number; receding: number };
  /** Chip-wide allowed p_B − p_A at splits, Pa. */
  splitWindow?: [number, number];
  maxPressure?: number;
  /** What the controllers resolve, when the layout says: Pa, and a fraction of a set flow. */
  controlResolution?: { pressure?: number; flowFraction?: number };
  solute?: Solute;
  nodes: ChipNode[];
  segments: ChipSegment[];
  /** What the loader found legal but suspicious, one line each (src/layout/phases.ts). */
  warnings?: string[];
}

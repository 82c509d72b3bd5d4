/**
 * What a design may change and within which fabrication rules: segment groups (or single
 * segments) whose width or length varies, as one factor for the whole group or one per segment
 * (a tapered manifold), the settings left free, and the bounds each implies. Exports
 * `parseDesignVariable`, `designVariables`, `applyDesign`, `sizeOf`, `withWidth`, `DESIGN_DEFAULTS` and the
 * types. No solving here; SI units.
 *
 * A geometric variable is the natural logarithm of a factor on its segments' sizes as laid out
 * (0 at the start): widths of channels that differ by orders of magnitude move on one scale, and
 * a group keeps its segments in proportion.
 */
import type { Chip, ChipSegment, PhaseName } from '../network/model.js';
import { nominalSize, shiftedSection, type Section } from '../physics/section.js';
import { StratiflowError } from '../errors.js';
import { assembleNetwork } from '../network/assemble.js';

export type DesignQuantity = 'width' | 'length';

/** A selector as the user writes it: `group.width`, `group:A.widths`, `segmentId.length`, … */
export interface DesignSelector {
  /** A group name or a segment id. */
  target: string;
  phase?: PhaseName;
  quantity: DesignQuantity;
  /** One variable per segment rather than one for the whole group. */
  each: boolean;
}

export interface DesignVariable {
  /** How reports name it: `manifold:A.width`, or `mdA3.width` for one segment of a taper. */
  name: string;
  quantity: DesignQuantity;
  /** Indices into chip.segments. */
  segments: number[];
  /** ln of the factor's bounds, from the fabrication rules and each segment's size. */
  bounds: [number, number];
}

export interface DesignRules {
  /** Smallest and largest feature width, m. */
  minWidth: number;
  maxWidth: number;
  /** Longest a varied segment may be, m; a varied length never falls below its length as laid out (a restrictor is a meander). */
  maxLengthFactor: number;
}

/**
 * Fabrication rules when none are given (common practice, no published source): features
 * narrower than about 10 µm are not reliably wet-etched or moulded; channels wider than 1 mm at
 * microchannel depths sag or collapse in bonding; a meander may lengthen a segment up to 10×.
 */
export const DESIGN_DEFAULTS: DesignRules = { minWidth: 10e-6, maxWidth: 1e-3, maxLengthFactor: 10 };

/** Reads `target[:A|:B].width|widths|length|lengths`. */
export function parseDesignVariable(text: string): DesignSelector {
  const match = /^([^:]+?)(?::(A|B))?\.(width|widths|length|lengths)$/.exec(text.trim());
  if (!match) throw new StratiflowError('bad-option', `"${text}" is not a design variable: write group.width, group.widths (one per segment), group.length or group.lengths, optionally group:A.… for one phase's segments`, { field: '--vary' });
  const [, target, phase, what] = match as unknown as [string, string, PhaseName | undefined, string];
  return { target, phase, quantity: what.startsWith('width') ? 'width' : 'length', each: what.endsWith('s') };
}

/** The size a variable scales: a segment's width (mask width, bottom width, diameter) or length. */
export function sizeOf(segment: ChipSegment, quantity: DesignQuantity): number {
  return quantity === 'length' ? segment.length : nominalSize(segment.section, 'width');
}

/** The section with its width (mask width, bottom width, diameter) set to `width`, its depth kept. */
export function withWidth(section: Section, width: number): Section {
  return shiftedSection(section, width - nominalSize(section, 'width'), 0).section;
}

/**
 * The variables of the selectors on `chip`, with their bounds. A phase filter keeps the plain
 * segments that carry that phase by design (the network's nominal composition); contactors
 * may not vary: their size is the extraction's, not the distribution's.
 */
export function designVariables(chip: Chip, selectors: DesignSelector[], rules: DesignRules): DesignVariable[] {
  const net = assembleNetwork(chip);
  const plainBySegment = new Map(net.plains.map((el) => [el.segment.id, el]));
  const isContactor = (i: number) => !plainBySegment.has(chip.segments[i]!.id);
  const phaseOf = (i: number): PhaseName | undefined => {
    const el = plainBySegment.get(chip.segments[i]!.id);
    return el ? (net.ports[el.from]!.nominal >= 0.5 ? 'A' : 'B') : undefined;
  };
  const variables: DesignVariable[] = [];
  const taken = new Map<string, string>();
  for (const sel of selectors) {
    const inGroup = chip.segments.flatMap((s, i) => (s.group === sel.target ? [i] : []));
    const picked = (inGroup.length > 0 ? inGroup : chip.segments.flatMap((s, i) => (s.id === sel.target ? [i] : []))).filter((i) => sel.phase === undefined || phaseOf(i) === sel.phase);
    const label = `${sel.target}${sel.phase ? `:${sel.phase}` : ''}`;
    if (picked.length === 0) throw new StratiflowError('bad-option', `no segment group or segment "${label}" in the layout`, { field: '--vary' });
    const contactor = picked.find(isContactor);
    if (contactor !== undefined) throw new StratiflowError('bad-option', `"${label}" holds contactor ${chip.segments[contactor]!.id}; a contactor's size is the extraction's: vary the manifolds, feeds, outlet arms or collectors`, { field: '--vary' });
    for (const i of picked) {
      const key = `${i}.${sel.quantity}`;
      const before = taken.get(key);
      if (before) throw new StratiflowError('bad-option', `segment ${chip.segments[i]!.id}'s ${sel.quantity} is varied twice (${before} and ${label})`, { field: '--vary' });
      taken.set(key, label);
    }
    const groups = sel.each ? picked.map((i) => [i]) : [picked];
    for (const segments of groups) {
      const name = sel.each ? `${chip.segments[segments[0]!]!.id}.${sel.quantity}` : `${label}.${sel.quantity}`;
      variables.push({ name, quantity: sel.quantity, segments, bounds: boundsOf(chip, segments, sel.quantity, rules, name) });
    }
  }
  return variables;
}

/** ln-factor bounds that keep every segment of the variable within the rules. */
function boundsOf(chip: Chip, segments: number[], quantity: DesignQuantity, rules: DesignRules, name: string): [number, number] {
  let low = -Infinity;
  let high = Infinity;
  for (const i of segments) {
    const segment = chip.segments[i]!;
    const size = sizeOf(segment, quantity);
    if (quantity === 'length') {
      low = Math.max(low, 0);
      high = Math.min(high, Math.log(rules.maxLengthFactor));
    } else {
      if (!(size > 0)) throw new StratiflowError('bad-option', `segment ${segment.id} has no width to scale (a half-disc or V-groove)`, { field: '--vary' });
      low = Math.max(low, Math.log(rules.minWidth / size));
      high = Math.min(high, Math.log(rules.maxWidth / size));
    }
  }
  if (!(low <= 0 && high >= 0)) throw new StratiflowError('bad-option', `${name}: the layout's own size is outside the fabrication rules (widths ${rules.minWidth * 1e6} to ${rules.maxWidth * 1e6} um): give --min-width and --max-width that admit it`, { field: '--vary' });
  return [low, high];
}

/** The chip with every variable's factor e^y applied to its segments (y[k] for variables[k]). */
export function applyDesign(chip: Chip, variables: DesignVariable[], y: ArrayLike<number>): Chip {
  const segments = chip.segments.slice();
  variables.forEach((v, k) => {
    const factor = Math.exp(y[k]!);
    for (const i of v.segments) {
      const s = segments[i]!;
      const base = chip.segments[i]!;
      segments[i] = v.quantity === 'length' ? { ...s, length: base.length * factor } : { ...s, section: withWidth(s.section, nominalSize(base.section, 'width') * factor) };
    }
  });
  return { ...chip, segments };
}

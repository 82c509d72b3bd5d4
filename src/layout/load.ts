/**
 * Reading a layout file into the validated chip model. Exports `loadLayout(path)`,
 * `parseLayout(text, source)`, `layoutToChip(raw, source)` and `MAX_LAYOUT_BYTES`. Collects
 * every problem it can find (schema, units, plausible ranges, topology, the phases of the
 * streams) with the element id and field, then fails with all of them. The warnings of a layout
 * that loads (./phases.ts) go into `chip.warnings`.
 */
import { GRAVITY } from '../physics/constants.js';
import { parseDataText, readTextFile } from '../files.js';
import { layoutSchema, type LayoutFile, type LayoutNode } from './schema.js';
import { parseQuantity, type Dimension } from '../units/quantity.js';
import { StratiflowError, StratiflowErrors } from '../errors.js';
import { findFluid } from '../physics/fluids.js';
import type { Chip, ChipNode, ChipSegment, Phase, PhaseName } from '../network/model.js';
import type { Section } from '../physics/section.js';
import { SILICON_WALL_ANGLE } from '../physics/shapedSection.js';
import { checkTopology } from '../network/topology.js';
import { implausible, mustBePositive, PLAUSIBLE, type PlausibleKind } from './plausibility.js';
import { checkPhases } from './phases.js';


/**
 * The largest layout file read, bytes. A 1000-contactor ladder takes about 2 MB of YAML; parsing
 * a YAML file of some 90 MB exhausts the memory of a default Node process. JSON goes through
 * JSON.parse at a small fraction of that memory: a 16 384-contactor ladder is 25 MB of JSON,
 * read in about 0.3 s (measured).
 */
export const MAX_LAYOUT_BYTES = 16 * 2 ** 20;

/**
 * Density of a phase the file gives none for, kg/m³: about that of water (common practice). It
 * enters only the Reynolds and Bond numbers; a reservoir height, whose head it would set, is
 * refused without a density.
 */
const ASSUMED_DENSITY = 1000;
export const MAX_JSON_LAYOUT_BYTES = 64 * 2 ** 20;

/** The size keys each segment shape takes (the layout schema's keys; README, "Layout files"). */
const SHAPE_KEYS = {
  rect: ['width', 'depth', 'orientation'],
  tube: ['diameter'],
  etched: ['maskWidth', 'depth', 'orientation'],
  trapezoid: ['bottomWidth', 'depth', 'wallAngle', 'orientation'],
} as const satisfies Record<string, readonly string[]>;
const SHAPE_KEYS_ALL = ['width', 'depth', 'diameter', 'maskWidth', 'bottomWidth', 'wallAngle'] as const;
const withArticle = (shape: string) => `${/^[aeiou]/.test(shape) ? 'an' : 'a'} ${shape}`;

export function loadLayout(path: string): Chip {
  return parseLayout(readLayoutText(path), path);
}

/** The text of a layout file, within the size limit of its format. */
export function readLayoutText(path: string): string {
  return readTextFile(path, 'layout file', /\.json$/i.test(path) ? MAX_JSON_LAYOUT_BYTES : MAX_LAYOUT_BYTES);
}

export function parseLayout(text: string, source: string): Chip {
  return layoutToChip(parseDataText(text, source, 'layout file'), source);
}

/** Names the element of a schema path: the id of a node or segment when it has one. */
function describePath(data: unknown, path: PropertyKey[]): { element?: string; field?: string } {
  const [head, index, ...rest] = path;
  if ((head === 'nodes' || head === 'segments') && typeof index === 'number') {
    const list = (data as Record<string, unknown[]>)[head as string];
    const item = Array.isArray(list) ? (list[index] as { id?: unknown } | undefined) : undefined;
    const kind = head === 'nodes' ? 'node' : 'segment';
    const element = typeof item?.id === 'string' && item.id !== '' ? `${kind} ${item.id}` : `${kind} #${index + 1}`;
    return { element, field: rest.length ? rest.join('.') : undefined };
  }
  return { field: path.length ? path.map(String).join('.') : undefined };
}

/** What the top of a file holds when it is not a mapping, in words. */
function kindOfValue(data: unknown): string {
  if (Array.isArray(data)) return 'a list';
  return typeof data === 'string' ? 'a line of text' : `a ${typeof data}`;
}

/**
 * Names JavaScript objects already carry (`__proto__`, `constructor`, `toString`, …): an id
 * of that name would collide with them wherever ids become keys.
 */
const RESERVED_NAMES = new Set(Object.getOwnPropertyNames(Object.prototype));

function reservedNames(raw: LayoutFile, source: string): StratiflowError[] {
  const problems: StratiflowError[] = [];
  const check = (name: string | undefined, element: string, field: string) => {
    if (name !== undefined && RESERVED_NAMES.has(name)) problems.push(new StratiflowError('bad-layout', `"${name}" is a reserved name; choose another`, { file: source, element, field }));
  };
  for (const [i, n] of raw.nodes.entries()) check(n.id, `node #${i + 1}`, 'id');
  const groups = new Set<string>();
  for (const [i, s] of raw.segments.entries()) {
    check(s.id, `segment #${i + 1}`, 'id');
    // A group is named once, at its first segment.
    if (s.group !== undefined && !groups.has(s.group)) check(s.group, `segment ${s.id}`, 'group');
    if (s.group !== undefined) groups.add(s.group);
  }
  return problems;
}

export function layoutToChip(data: unknown, source: string): Chip {
  if (data === null || data === undefined) throw new StratiflowError('bad-file', 'the file is empty (a layout gives name, phases, nodes and segments)', { file: source });
  if (typeof data !== 'object' || Array.isArray(data)) {
    throw new StratiflowError('bad-file', `holds ${kindOfValue(data)}, not a layout (a mapping of name, phases, nodes and segments)`, { file: source });
  }
  const parsed = layoutSchema.safeParse(data);
  if (!parsed.success) {
    const problems = parsed.error.issues.map((issue) => {
      const place = describePath(data, issue.path);
      return new StratiflowError('bad-layout', describeIssue(issue, valueAt(data, issue.path)), { file: source, ...place });
    });
    throw new StratiflowErrors(problems);
  }
  const reserved = reservedNames(parsed.data, source);
  if (reserved.length > 0) throw new StratiflowErrors(reserved);
  const { chip, problems } = convert(parsed.data, source);
  try {
    const phases = checkPhases(chip, checkTopology(chip));
    problems.push(...phases.problems);
    chip.warnings = [...(chip.warnings ?? []), ...phases.warnings];
  } catch (error) {
    if (error instanceof StratiflowErrors) problems.push(...error.problems);
    else throw error;
  }
  if (problems.length > 0) throw new StratiflowErrors(problems);
  return chip;
}

function valueAt(data: unknown, path: PropertyKey[]): unknown {
  let value = data;
  for (const key of path) {
    if (value === null || typeof value !== 'object') return undefined;
    value = (value as Record<PropertyKey, unknown>)[key];
  }
  return value;
}

/** A schema problem in words a layout author reads: missing, unknown, or the form expected. */
function describeIssue(issue: { code: string; message: string; keys?: string[] }, value: unknown): string {
  if (issue.code === 'unrecognized_keys') {
    const keys = issue.keys ?? [];
    return `unknown key${keys.length > 1 ? 's' : ''} ${keys.map((k) => `"${k}"`).join(', ')}`;
  }
  if (value === undefined) return 'missing (required)';
  if (issue.code === 'too_small' && value === '') return 'must not be empty';
  if (issue.code === 'too_small' && Array.isArray(value)) return 'needs at least one entry';
  if (issue.code === 'invalid_union' && (typeof value === 'boolean' || typeof value === 'object')) {
    return `${JSON.stringify(value)} is not a number or a quantity with a unit (such as "200 um")`;
  }
  return issue.message;
}

function convert(raw: LayoutFile, source: string): { chip: Chip; problems: StratiflowError[] } {
  const problems: StratiflowError[] = [];
  const units = raw.units ?? {};
  const unitOf: Partial<Record<Dimension, string | undefined>> = {
    length: units.length,
    pressure: units.pressure,
    flow: units.flow,
    viscosity: units.viscosity,
    tension: units.tension,
    density: units.density,
  };
  const unreadable = new Set<Dimension>();
  for (const [dimension, unit] of Object.entries(unitOf) as [Dimension, string | undefined][]) {
    if (unit === undefined) continue;
    try {
      parseQuantity(`1 ${unit}`, dimension);
    } catch {
      unreadable.add(dimension);
      problems.push(new StratiflowError('bad-unit', `"${unit}" is not a unit of ${dimension}`, { file: source, element: 'units', field: dimension }));
    }
  }
  const read = (value: unknown, dimension: Dimension, element: string | undefined, field: string): number => {
    // Plain numbers in a unit the units block got wrong are named once, there.
    if (typeof value === 'number' && unreadable.has(dimension)) return NaN;
    const place = { file: source, element, field };
    try {
      const fileUnit = unitOf[dimension];
      const withUnit = typeof value === 'number' && fileUnit ? `${value} ${fileUnit}` : value;
      const si = parseQuantity(withUnit, dimension, place, { angleNumbersInDegrees: true });
      if (Number.isFinite(si)) return si;
      problems.push(new StratiflowError('bad-unit', `${typeof value === 'number' ? value : `"${String(value)}"`} is too large a number once converted to SI`, place));
    } catch (error) {
      if (error instanceof StratiflowError) problems.push(error);
    }
    return NaN;
  };
  /** Reads a value of `kind` and checks it lies in its plausible range (./plausibility.ts). */
  const quantity = (value: unknown, kind: PlausibleKind, element: string | undefined, field: string, name = field): number => {
    const si = read(value, PLAUSIBLE[kind].dimension, element, field);
    if (Number.isNaN(si)) return si;
    const fileUnit = unitOf[PLAUSIBLE[kind].dimension];
    const written = typeof value === 'number' && fileUnit ? `${value} ${fileUnit}` : value;
    const message = mustBePositive(kind) && !(si > 0) ? `${name} must be positive` : implausible(kind, si, written);
    if (message) problems.push(new StratiflowError('bad-layout', message, { file: source, element, field }));
    return si;
  };
  const optional = (value: unknown, kind: PlausibleKind, element: string | undefined, field: string) =>
    value === undefined ? undefined : quantity(value, kind, element, field);

  const phases = {} as Record<PhaseName, Phase>;
  const densityGiven = {} as Record<PhaseName, boolean>;
  for (const name of ['A', 'B'] as const) {
    const p = raw.phases[name];
    const element = `phase ${name}`;
    const fluid = p.fluid !== undefined ? findFluid(p.fluid) : undefined;
    if (p.fluid !== undefined && !fluid) problems.push(new StratiflowError('bad-layout', `unknown fluid "${p.fluid}" (see stratiflow fluids)`, { file: source, element, field: 'fluid' }));
    const viscosity = optional(p.viscosity, 'viscosity', element, 'viscosity') ?? fluid?.viscosity;
    const density = optional(p.density, 'density', element, 'density') ?? fluid?.density;
    if (viscosity === undefined) problems.push(new StratiflowError('bad-layout', 'missing (give viscosity or a known fluid)', { file: source, element, field: 'viscosity' }));
    densityGiven[name] = density !== undefined;
    phases[name] = {
      label: p.label ?? fluid?.label ?? `phase ${name}`,
      viscosity: viscosity ?? NaN,
      density: density ?? ASSUMED_DENSITY,
      diffusivity: optional(p.diffusivity, 'diffusivity', element, 'diffusivity'),
    };
  }

  /** ρ·g·h of a reservoir of `phase`, Pa; a height needs the phase and its density given. */
  const reservoirHead = (phase: PhaseName | undefined, height: number, element: string): number => {
    if (height === 0) return 0;
    if (phase === undefined) {
      problems.push(new StratiflowError('bad-layout', 'give the phase of the outlet: its reservoir head ρgh needs the density of the liquid in it', { file: source, element, field: 'phase' }));
      return 0;
    }
    if (!densityGiven[phase]) {
      problems.push(new StratiflowError('bad-layout', `the reservoir head ρgh needs the density of phase ${phase}: give phases.${phase}.density or a known fluid`, { file: source, element, field: 'reservoirHeight' }));
      return 0;
    }
    return phases[phase].density * GRAVITY * height;
  };
  const warnings = (['A', 'B'] as const)
    .filter((name) => !densityGiven[name])
    .map((name) => `phase ${name}: no density given; ${ASSUMED_DENSITY} kg/m³ (about water) assumed, which enters only the Reynolds and Bond numbers`);

  const tension = raw.interfacialTension === undefined ? undefined : quantity(raw.interfacialTension, 'tension', undefined, 'interfacialTension', 'interfacial tension');
  let contactAngle: Chip['contactAngle'];
  if (raw.contactAngleA) {
    const c = raw.contactAngleA;
    if ('advancing' in c) {
      contactAngle = { advancing: read(c.advancing, 'angle', 'contactAngleA', 'advancing'), receding: read(c.receding, 'angle', 'contactAngleA', 'receding') };
    } else {
      const angle = read(c.angle, 'angle', 'contactAngleA', 'angle');
      const hysteresis = c.hysteresis === undefined ? 0 : read(c.hysteresis, 'angle', 'contactAngleA', 'hysteresis');
      contactAngle = { advancing: angle + hysteresis / 2, receding: angle - hysteresis / 2 };
    }
    if (contactAngle.advancing < contactAngle.receding) problems.push(new StratiflowError('bad-layout', 'the advancing angle must not be smaller than the receding angle', { file: source, element: 'contactAngleA' }));
    for (const [key, v] of Object.entries(contactAngle)) {
      if (Number.isFinite(v) && !(v >= 0 && v <= Math.PI)) problems.push(new StratiflowError('bad-layout', 'must lie between 0 and 180 deg', { file: source, element: 'contactAngleA', field: key }));
    }
  }
  const readWindow = (w: { low: unknown; high: unknown } | undefined, element: string | undefined, field: string): [number, number] | undefined => {
    if (!w) return undefined;
    const low = quantity(w.low, 'window', element, `${field}.low`);
    const high = quantity(w.high, 'window', element, `${field}.high`);
    if (low > high) problems.push(new StratiflowError('bad-layout', 'low must not exceed high', { file: source, element, field }));
    return [low, high];
  };
  const splitWindow = readWindow(raw.splitWindow, undefined, 'splitWindow');
  const maxPressure = raw.maxPressure === undefined ? undefined : quantity(raw.maxPressure, 'rating', undefined, 'maxPressure', 'the pressure rating');
  const controlResolution = raw.controlResolution && {
    pressure: raw.controlResolution.pressure === undefined ? undefined : quantity(raw.controlResolution.pressure, 'resolution', undefined, 'controlResolution.pressure'),
    flowFraction: raw.controlResolution.flow,
  };

  const nodes: ChipNode[] = raw.nodes.map((n: LayoutNode) => {
    const element = `node ${n.id}`;
    const base = { id: n.id, note: n.note, x: optional(n.x, 'position', element, 'x'), y: optional(n.y, 'position', element, 'y') };
    switch (n.type) {
      case 'inlet': {
        if ((n.pressure === undefined) === (n.flow === undefined)) {
          problems.push(new StratiflowError('bad-layout', 'give exactly one of pressure and flow', { file: source, element, field: 'pressure' }));
        }
        const height = optional(n.reservoirHeight, 'height', element, 'reservoirHeight') ?? 0;
        const head = reservoirHead(n.phase, height, element);
        const pressure = optional(n.pressure, 'pressure', element, 'pressure');
        const flow = n.flow === undefined ? undefined : quantity(n.flow, 'flow', element, 'flow', 'an inlet flow');
        return { ...base, kind: 'inlet', phase: n.phase, pressure: pressure === undefined ? undefined : pressure + head, flow, head };
      }
      case 'outlet': {
        const height = optional(n.reservoirHeight, 'height', element, 'reservoirHeight') ?? 0;
        const head = reservoirHead(n.phase, height, element);
        return { ...base, kind: 'outlet', pressure: quantity(n.pressure, 'pressure', element, 'pressure') + head, head, phase: n.phase };
      }
      case 'junction':
        return { ...base, kind: 'junction' };
      case 'merge':
        return { ...base, kind: 'merge', inlets: n.inlets };
      case 'split':
        return { ...base, kind: 'split', outlets: n.outlets, window: readWindow(n.window, element, 'window') };
    }
  });

  const segments: ChipSegment[] = raw.segments.map((s) => {
    const element = `segment ${s.id}`;
    const need = (value: unknown, field: string, kind: PlausibleKind) => {
      if (value === undefined) {
        problems.push(new StratiflowError('bad-layout', `missing (${withArticle(s.shape)} segment needs it)`, { file: source, element, field }));
        return NaN;
      }
      return quantity(value, kind, element, field);
    };
    for (const key of SHAPE_KEYS_ALL) {
      if (s[key] !== undefined && !(SHAPE_KEYS[s.shape] as readonly string[]).includes(key)) {
        problems.push(new StratiflowError('bad-layout', `not a key of ${withArticle(s.shape)} segment (it takes ${SHAPE_KEYS[s.shape].join(', ')})`, { file: source, element, field: key }));
      }
    }
    let section: Section;
    switch (s.shape) {
      case 'rect':
        section = { shape: 'rect', width: need(s.width, 'width', 'channel'), depth: need(s.depth, 'depth', 'channel'), orientation: s.orientation ?? 'side' };
        break;
      case 'tube':
        section = { shape: 'tube', diameter: need(s.diameter, 'diameter', 'diameter') };
        break;
      case 'etched':
        section = { shape: 'etched', maskWidth: need(s.maskWidth, 'maskWidth', 'bottomWidth'), depth: need(s.depth, 'depth', 'channel') };
        break;
      case 'trapezoid':
        section = {
          shape: 'trapezoid',
          bottomWidth: need(s.bottomWidth, 'bottomWidth', 'bottomWidth'),
          depth: need(s.depth, 'depth', 'channel'),
          // A plain number is in degrees (as every angle of a layout), and is named so in a message.
          wallAngle: s.wallAngle === undefined ? SILICON_WALL_ANGLE : Math.min(Math.PI / 2, quantity(typeof s.wallAngle === 'number' ? `${s.wallAngle} deg` : s.wallAngle, 'wallAngle', element, 'wallAngle')),
        };
        break;
    }
    if (s.orientation === 'stacked' && s.shape !== 'rect') {
      problems.push(new StratiflowError('bad-layout', `layers in ${withArticle(s.shape)} channel lie side by side only`, { file: source, element, field: 'orientation' }));
    }
    const length = quantity(s.length, 'length', element, 'length');
    return { id: s.id, from: s.from, to: s.to, section, length, group: s.group, note: s.note };
  });

  let solute: Chip['solute'];
  if (raw.solute) {
    solute = {
      label: raw.solute.label ?? 'solute',
      partition: quantity(raw.solute.partition, 'partition', 'solute', 'partition', 'partition coefficient'),
      feedPhase: raw.solute.feedPhase,
      feedConcentration: quantity(raw.solute.feedConcentration, 'concentration', 'solute', 'feedConcentration', 'feed concentration'),
    };
  }

  if (raw.interface === 'curved' && raw.interfacialTension === undefined) {
    problems.push(new StratiflowError('bad-layout', 'a curved interface needs interfacialTension: its curvature is Δ/γ', { file: source, element: 'interface', field: 'interfacialTension' }));
  }
  const chip: Chip = { name: raw.name, note: raw.note, source, phases, interfacialTension: tension, interface: raw.interface ?? 'flat', contactAngle, splitWindow, maxPressure, controlResolution, solute, nodes, segments, warnings };
  return { chip, problems };
}

/**
 * Reading a layout file into the validated chip model. Exports `loadLayout(path)`,
 * `parseLayout(text, source)` and `layoutToChip(raw, source)`. Collects every problem it can
 * find (schema, units, topology) with the element id and field, then fails with all of them.
 */
import { readFileSync } from 'node:fs';
import { parse as parseYaml, YAMLParseError } from 'yaml';
import { layoutSchema, type LayoutFile, type LayoutNode } from './schema.js';
import { parseQuantity, type Dimension } from '../units/quantity.js';
import { StratiflowError, StratiflowErrors } from '../errors.js';
import { findFluid } from '../physics/fluids.js';
import type { Chip, ChipNode, ChipSegment, Phase, PhaseName } from '../network/model.js';
import type { Section } from '../physics/section.js';
import { checkTopology } from '../network/topology.js';

/** Standard gravity, m/s² (CGPM 1901, exact by definition). */
const GRAVITY = 9.80665;

export function loadLayout(path: string): Chip {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (error) {
    const reason = (error as NodeJS.ErrnoException).code === 'ENOENT' ? 'file not found' : 'cannot be read';
    throw new StratiflowError('bad-file', reason, { file: path });
  }
  return parseLayout(text, path);
}

export function parseLayout(text: string, source: string): Chip {
  let data: unknown;
  try {
    data = parseYaml(text, { prettyErrors: true });
  } catch (error) {
    const where = error instanceof YAMLParseError && error.linePos ? `line ${error.linePos[0].line}` : undefined;
    const message = error instanceof Error ? error.message.split('\n')[0]!.replace(/ at line \d+, column \d+:?$/, '') : String(error);
    throw new StratiflowError('bad-file', `not valid YAML or JSON: ${message}`, { file: source, element: where });
  }
  return layoutToChip(data, source);
}

/** Names the element of a schema path: the id of a node or segment when it has one. */
function describePath(data: unknown, path: PropertyKey[]): { element?: string; field?: string } {
  const [head, index, ...rest] = path;
  if ((head === 'nodes' || head === 'segments') && typeof index === 'number') {
    const list = (data as Record<string, unknown[]>)[head as string];
    const item = Array.isArray(list) ? (list[index] as { id?: unknown } | undefined) : undefined;
    const kind = head === 'nodes' ? 'node' : 'segment';
    const element = typeof item?.id === 'string' ? `${kind} ${item.id}` : `${kind} #${index + 1}`;
    return { element, field: rest.length ? rest.join('.') : undefined };
  }
  return { field: path.length ? path.map(String).join('.') : undefined };
}

export function layoutToChip(data: unknown, source: string): Chip {
  const parsed = layoutSchema.safeParse(data);
  if (!parsed.success) {
    const problems = parsed.error.issues.map((issue) => {
      const place = describePath(data, issue.path);
      return new StratiflowError('bad-layout', describeIssue(issue, valueAt(data, issue.path)), { file: source, ...place });
    });
    throw new StratiflowErrors(problems);
  }
  const { chip, problems } = convert(parsed.data, source);
  try {
    checkTopology(chip);
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
  const read = (value: unknown, dimension: Dimension, element: string | undefined, field: string): number => {
    try {
      const fileUnit = unitOf[dimension];
      const withUnit = typeof value === 'number' && fileUnit ? `${value} ${fileUnit}` : value;
      return parseQuantity(withUnit, dimension, { file: source, element, field }, { angleNumbersInDegrees: true });
    } catch (error) {
      if (error instanceof StratiflowError) problems.push(error);
      return NaN;
    }
  };
  const optional = (value: unknown, dimension: Dimension, element: string | undefined, field: string) =>
    value === undefined ? undefined : read(value, dimension, element, field);
  const positive = (value: number, element: string | undefined, field: string, what: string) => {
    if (Number.isFinite(value) && !(value > 0)) problems.push(new StratiflowError('bad-layout', `${what} must be positive`, { file: source, element, field }));
    return value;
  };

  const phases = {} as Record<PhaseName, Phase>;
  for (const name of ['A', 'B'] as const) {
    const p = raw.phases[name];
    const element = `phase ${name}`;
    const fluid = p.fluid !== undefined ? findFluid(p.fluid) : undefined;
    if (p.fluid !== undefined && !fluid) problems.push(new StratiflowError('bad-layout', `unknown fluid "${p.fluid}" (see stratiflow fluids)`, { file: source, element, field: 'fluid' }));
    const viscosity = p.viscosity !== undefined ? read(p.viscosity, 'viscosity', element, 'viscosity') : fluid?.viscosity;
    const density = p.density !== undefined ? read(p.density, 'density', element, 'density') : fluid?.density;
    if (viscosity === undefined) problems.push(new StratiflowError('bad-layout', 'missing (give viscosity or a known fluid)', { file: source, element, field: 'viscosity' }));
    positive(viscosity ?? NaN, element, 'viscosity', 'viscosity');
    positive(density ?? 1000, element, 'density', 'density');
    phases[name] = {
      label: p.label ?? fluid?.label ?? `phase ${name}`,
      viscosity: viscosity ?? NaN,
      density: density ?? 1000,
      diffusivity: optional(p.diffusivity, 'diffusivity', element, 'diffusivity'),
    };
  }

  const tension = optional(raw.interfacialTension, 'tension', undefined, 'interfacialTension');
  if (tension !== undefined) positive(tension, undefined, 'interfacialTension', 'interfacial tension');
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
    const low = read(w.low, 'pressure', element, `${field}.low`);
    const high = read(w.high, 'pressure', element, `${field}.high`);
    if (low > high) problems.push(new StratiflowError('bad-layout', 'low must not exceed high', { file: source, element, field }));
    return [low, high];
  };
  const splitWindow = readWindow(raw.splitWindow, undefined, 'splitWindow');
  const maxPressure = optional(raw.maxPressure, 'pressure', undefined, 'maxPressure');

  const nodes: ChipNode[] = raw.nodes.map((n: LayoutNode) => {
    const element = `node ${n.id}`;
    const base = { id: n.id, note: n.note, x: optional(n.x, 'length', element, 'x'), y: optional(n.y, 'length', element, 'y') };
    switch (n.type) {
      case 'inlet': {
        if ((n.pressure === undefined) === (n.flow === undefined)) {
          problems.push(new StratiflowError('bad-layout', 'give exactly one of pressure and flow', { file: source, element, field: 'pressure' }));
        }
        const height = optional(n.reservoirHeight, 'length', element, 'reservoirHeight') ?? 0;
        const head = phases[n.phase].density * GRAVITY * height;
        const pressure = optional(n.pressure, 'pressure', element, 'pressure');
        const flow = optional(n.flow, 'flow', element, 'flow');
        return { ...base, kind: 'inlet', phase: n.phase, pressure: pressure === undefined ? undefined : pressure + head, flow, head };
      }
      case 'outlet': {
        const height = optional(n.reservoirHeight, 'length', element, 'reservoirHeight') ?? 0;
        const head = phases[n.phase ?? 'A'].density * GRAVITY * height;
        return { ...base, kind: 'outlet', pressure: read(n.pressure, 'pressure', element, 'pressure') + head, head, phase: n.phase };
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
    const need = (value: unknown, field: string) => {
      if (value === undefined) {
        problems.push(new StratiflowError('bad-layout', `missing (a ${s.shape} segment needs it)`, { file: source, element, field }));
        return NaN;
      }
      return positive(read(value, 'length', element, field), element, field, field);
    };
    let section: Section;
    if (s.shape === 'rect') {
      section = { shape: 'rect', width: need(s.width, 'width'), depth: need(s.depth, 'depth'), orientation: s.orientation ?? 'side' };
    } else {
      section = { shape: 'tube', diameter: need(s.diameter, 'diameter') };
    }
    const length = positive(read(s.length, 'length', element, 'length'), element, 'length', 'length');
    return { id: s.id, from: s.from, to: s.to, section, length, group: s.group, note: s.note };
  });

  let solute: Chip['solute'];
  if (raw.solute) {
    solute = {
      label: raw.solute.label ?? 'solute',
      partition: positive(read(raw.solute.partition, 'dimensionless', 'solute', 'partition'), 'solute', 'partition', 'partition coefficient'),
      feedPhase: raw.solute.feedPhase,
      feedConcentration: positive(read(raw.solute.feedConcentration, 'concentration', 'solute', 'feedConcentration'), 'solute', 'feedConcentration', 'feed concentration'),
    };
  }

  const chip: Chip = { name: raw.name, note: raw.note, source, phases, interfacialTension: tension, contactAngle, splitWindow, maxPressure, solute, nodes, segments };
  return { chip, problems };
}

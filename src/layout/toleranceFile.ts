/**
 * Tolerances as users write them: one value ("2%", "0.5 um" for one standard deviation, "±2%"
 * for the half-width of a uniform range), a tolerance file (YAML or JSON, checked against its
 * schema), and tolerances laid over a file's (`overlayTolerances`). Exports `parseTolerance`,
 * `readToleranceFile`, `overlayTolerances`, `hasTolerances`, `MAX_SAMPLES` and the types. The
 * places in messages are given by the caller (a file field, or a command-line option).
 */
import { z } from 'zod';
import { parseDataText, readTextFile } from '../files.js';
import type { ChannelTolerance, DimensionTolerance, ToleranceSpec, Variation } from '../analyses/tolerance.js';
import { parseQuantity, type Dimension } from '../units/quantity.js';
import { StratiflowError, StratiflowErrors, type ErrorPlace } from '../errors.js';

/**
 * At most this many realisations: enough to put the chance that every split stays pinned within
 * ±0.3 % (95 %: 1.96·√(0.25/n) for n = 1e5, the binomial standard error), and few enough that the
 * rows kept for the CSV fit in memory.
 */
export const MAX_SAMPLES = 100_000;
/** A tolerance file is a few lines; anything near this size is not one. */
const MAX_TOLERANCE_FILE_BYTES = 2 ** 20;

/** Relative tolerances go up to this share of the value: a 100 % spread already draws channels of no size. */
const MAX_RELATIVE = 1;

/** A unit to suggest in messages, per dimension a tolerance can have. */
const EXAMPLE_UNIT: Partial<Record<Dimension, string>> = { length: 'um', viscosity: 'mPa.s', tension: 'mN/m', angle: 'deg' };

/**
 * A tolerance as written: "2%" (relative sd), "0.5 um" (absolute sd), "±2%" or "+-0.5um"
 * (uniform range). A plain number is refused, in a file as on the command line, since "2" could
 * mean 2 %, 2 µm or 2 deg.
 */
export function parseTolerance(value: unknown, dimension: Dimension, place: ErrorPlace): Variation {
  const fail = (message: string) => new StratiflowError('bad-option', message, place);
  const unit = EXAMPLE_UNIT[dimension] ?? 'unit';
  const text = String(value).trim();
  if (typeof value === 'number' || /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text)) throw fail(`"${text}" needs % or a unit, e.g. "${text}%" or "${text} ${unit}"`);
  if (typeof value !== 'string' || text === '') throw fail(`expected a tolerance such as "2%", "±2%" or "0.5 ${unit}"`);
  const uniform = /^(±|\+-|\+\/-)\s*/.exec(text);
  const body = uniform ? text.slice(uniform[0].length) : text;
  const distribution = uniform ? 'uniform' : 'normal';
  const percent = /^(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*%$/.exec(body);
  if (percent) {
    const size = Number(body.slice(0, -1)) / 100;
    if (size > MAX_RELATIVE) throw fail(`"${text}" is more than ${100 * MAX_RELATIVE} % of the value: such a chip or liquid is not the one in the layout`);
    return { distribution, size, relative: true };
  }
  const size = parseQuantity(body, dimension, place);
  if (!(size >= 0)) throw fail(`"${text}" is not a tolerance ≥ 0`);
  return { distribution, size, relative: false };
}

const tolerance = z.union([z.number(), z.string()]).describe('"2%" or "0.5 um" is one standard deviation; "±2%" or "±0.5 um" the half-width of a uniform range');
const dimension = z.strictObject({
  each: tolerance.optional().describe('every channel on its own'),
  offset: tolerance.optional().describe('one offset per chip, shared by the channels of this rule (wafer to wafer)'),
});
const toleranceFileSchema = z.strictObject({
  samples: z.number().int().min(1).max(MAX_SAMPLES).optional(),
  seed: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER).optional(),
  channels: z
    .array(z.strictObject({ group: z.string().min(1).optional(), depth: dimension.optional(), width: dimension.optional() }))
    .optional()
    .describe('one rule per segment group; a rule without a group covers every segment no other rule names; a tube diameter follows width'),
  viscosityA: tolerance.optional(),
  viscosityB: tolerance.optional(),
  interfacialTension: tolerance.optional(),
  contactAngle: tolerance.optional().describe('shifts the advancing and receding angles together'),
});

export interface ToleranceFile {
  spec: ToleranceSpec;
  samples?: number;
  seed?: number;
}

/** Reads and checks a tolerance file; every problem found is reported with its field. */
export function readToleranceFile(path: string): ToleranceFile {
  const raw = parseDataText(readTextFile(path, 'tolerance file', MAX_TOLERANCE_FILE_BYTES), path, 'tolerance file');
  const parsed = toleranceFileSchema.safeParse(raw);
  if (!parsed.success) {
    throw new StratiflowErrors(parsed.error.issues.map((issue) => new StratiflowError('bad-file', issue.message, { file: path, field: issue.path.join('.') || undefined })));
  }
  const f = parsed.data;
  const problems: StratiflowError[] = [];
  const read = (value: unknown, dim: Dimension, field: string): Variation | undefined => {
    if (value === undefined) return undefined;
    try {
      return parseTolerance(value, dim, { file: path, field });
    } catch (error) {
      if (error instanceof StratiflowError) problems.push(new StratiflowError('bad-file', error.message, error.place));
      return undefined;
    }
  };
  const readDimension = (d: z.infer<typeof dimension> | undefined, field: string): DimensionTolerance | undefined =>
    d && { each: read(d.each, 'length', `${field}.each`), offset: read(d.offset, 'length', `${field}.offset`) };
  const spec: ToleranceSpec = {
    channels: f.channels?.map((c, i) => ({ group: c.group, depth: readDimension(c.depth, `channels.${i}.depth`), width: readDimension(c.width, `channels.${i}.width`) })),
    viscosityA: read(f.viscosityA, 'viscosity', 'viscosityA'),
    viscosityB: read(f.viscosityB, 'viscosity', 'viscosityB'),
    interfacialTension: read(f.interfacialTension, 'tension', 'interfacialTension'),
    contactAngle: read(f.contactAngle, 'angle', 'contactAngle'),
  };
  if (problems.length) throw new StratiflowErrors(problems);
  return { spec, samples: f.samples, seed: f.seed };
}

/** Tolerances given one by one (already read, e.g. from command-line options), to lay over a spec. */
export interface ToleranceOverrides {
  depth?: Variation;
  depthOffset?: Variation;
  width?: Variation;
  widthOffset?: Variation;
  viscosityA?: Variation;
  viscosityB?: Variation;
  interfacialTension?: Variation;
  contactAngle?: Variation;
}

/** The spec with the overrides laid over it; dimension overrides act on the rule without a group. */
export function overlayTolerances(fromFile: ToleranceSpec | undefined, o: ToleranceOverrides): ToleranceSpec {
  const spec: ToleranceSpec = { ...fromFile, channels: [...(fromFile?.channels ?? [])] };
  if (o.depth || o.depthOffset || o.width || o.widthOffset) {
    const at = spec.channels!.findIndex((c) => c.group === undefined);
    const base: ChannelTolerance = at >= 0 ? spec.channels![at]! : {};
    const rule: ChannelTolerance = {
      ...base,
      depth: { ...base.depth, ...(o.depth ? { each: o.depth } : {}), ...(o.depthOffset ? { offset: o.depthOffset } : {}) },
      width: { ...base.width, ...(o.width ? { each: o.width } : {}), ...(o.widthOffset ? { offset: o.widthOffset } : {}) },
    };
    if (at >= 0) spec.channels![at] = rule;
    else spec.channels!.push(rule);
  }
  spec.viscosityA = o.viscosityA ?? spec.viscosityA;
  spec.viscosityB = o.viscosityB ?? spec.viscosityB;
  spec.interfacialTension = o.interfacialTension ?? spec.interfacialTension;
  spec.contactAngle = o.contactAngle ?? spec.contactAngle;
  return spec;
}

/** Whether the spec gives any tolerance at all. */
export function hasTolerances(spec: ToleranceSpec): boolean {
  return [spec.viscosityA, spec.viscosityB, spec.interfacialTension, spec.contactAngle].some(Boolean) || (spec.channels ?? []).some((c) => c.depth?.each || c.depth?.offset || c.width?.each || c.width?.offset);
}

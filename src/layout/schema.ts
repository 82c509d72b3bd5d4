/**
 * The layout-file schema: what a chip file may contain, checked by zod. Exports `layoutSchema`,
 * the raw `LayoutFile` type, and `layoutJsonSchema()` for editors. Values stay as written here
 * (numbers or strings with units); ./load.ts converts them to SI.
 */
import { z } from 'zod';

const quantity = z.union([z.number(), z.string()]).describe('a number in SI units, or a string with a unit such as "200 um"');
const id = z.string().min(1).describe('a unique name');
const note = z.string().optional().describe('free text, shown in reports');
const position = { x: quantity.optional().describe('drawing position'), y: quantity.optional().describe('drawing position') };

const phase = z
  .strictObject({
    label: z.string().optional(),
    fluid: z.string().optional().describe('a fluid from the built-in table (stratiflow fluids) to take missing values from'),
    viscosity: quantity.optional(),
    density: quantity.optional(),
    diffusivity: quantity.optional().describe('solute diffusivity in this phase (extraction)'),
  })
  .describe('one liquid phase');

const contactAngle = z.union([
  z.strictObject({ advancing: quantity, receding: quantity }),
  z.strictObject({ angle: quantity, hysteresis: quantity.optional() }),
]);

const window = z.strictObject({ low: quantity, high: quantity }).describe('allowed p_B − p_A at a split, overriding the Young–Laplace estimate');

const inlet = z.strictObject({
  id,
  type: z.literal('inlet'),
  phase: z.enum(['A', 'B']),
  pressure: quantity.optional(),
  flow: quantity.optional(),
  reservoirHeight: quantity.optional().describe('liquid height in the reservoir above the chip; adds ρ·g·h to the pressure'),
  note,
  ...position,
});
const junction = z.strictObject({ id, type: z.literal('junction'), note, ...position });
const merge = z.strictObject({
  id,
  type: z.literal('merge'),
  inlets: z.tuple([z.string(), z.string()]).describe('the two feeding segments; the first lies on the near side of the contactor'),
  note,
  ...position,
});
const split = z.strictObject({
  id,
  type: z.literal('split'),
  outlets: z.tuple([z.string(), z.string()]).describe('the two leaving segments; the first takes the near side'),
  window: window.optional(),
  note,
  ...position,
});
const outlet = z.strictObject({
  id,
  type: z.literal('outlet'),
  pressure: quantity,
  reservoirHeight: quantity.optional(),
  phase: z.enum(['A', 'B']).optional().describe('the phase this outlet collects (used if flow ever runs back out of it)'),
  note,
  ...position,
});

const segment = z.strictObject({
  id,
  from: z.string(),
  to: z.string(),
  shape: z.enum(['rect', 'tube', 'etched', 'trapezoid']).describe('rect (width, depth), tube (diameter), etched (maskWidth, depth: flat bottom, quarter-round walls of radius depth), trapezoid (bottomWidth, depth, wallAngle)'),
  width: quantity.optional().describe('rect: channel width'),
  depth: quantity.optional().describe('rect, etched, trapezoid: channel depth (for etched, also the radius of the round side walls)'),
  diameter: quantity.optional().describe('tube: inner diameter'),
  maskWidth: quantity.optional().describe('etched: width of the mask opening = flat bottom; top width maskWidth + 2·depth; 0 gives a half-disc'),
  bottomWidth: quantity.optional().describe('trapezoid: width of the flat bottom; 0 gives a V-groove'),
  wallAngle: quantity.optional().describe('trapezoid: angle between side wall and bottom (a plain number is in degrees), default 54.74 deg as in anisotropically etched silicon'),
  length: quantity,
  orientation: z.enum(['side', 'stacked']).optional().describe('for rect contactors: layers side by side (default) or one above the other; etched and trapezoid channels take side only'),
  group: z.string().optional().describe('a class of segments for tolerance studies, e.g. contactor, manifold, tubing'),
  note,
});

const solute = z.strictObject({
  label: z.string().optional(),
  partition: quantity.describe('K = c_B / c_A at equilibrium'),
  feedPhase: z.enum(['A', 'B']).default('A'),
  feedConcentration: quantity,
});

const units = z
  .strictObject({
    length: z.string().optional(),
    pressure: z.string().optional(),
    flow: z.string().optional(),
    viscosity: z.string().optional(),
    tension: z.string().optional(),
    density: z.string().optional(),
  })
  .describe('units in which plain numbers of this file are read (SI when absent)');

const controlResolution = z
  .strictObject({
    pressure: quantity.optional().describe('the smallest pressure step the pressure controllers hold (default 10 Pa, common practice)'),
    flow: z.number().positive().max(1).optional().describe('the relative flow error of the pumps, as a fraction of the set flow (default 0.01, common practice)'),
  })
  .describe('what the controllers of the settings resolve: hold tolerances below it are warned about');

export const layoutSchema = z.strictObject({
  name: z.string(),
  note,
  units: units.optional(),
  phases: z.strictObject({ A: phase, B: phase }),
  interfacialTension: quantity.optional(),
  interface: z
    .enum(['flat', 'curved'])
    .optional()
    .describe('the side-by-side interface in each contactor: flat (default), or curved, the Young–Laplace arc of curvature Δ/γ set by the solved phase pressure difference (needs interfacialTension)'),
  contactAngleA: contactAngle.optional().describe('contact angle of phase A on the wall, measured through A'),
  splitWindow: window.optional(),
  maxPressure: quantity.optional(),
  controlResolution: controlResolution.optional(),
  solute: solute.optional(),
  nodes: z.array(z.discriminatedUnion('type', [inlet, junction, merge, split, outlet])).min(1),
  segments: z.array(segment).min(1),
});

export type LayoutFile = z.infer<typeof layoutSchema>;
export type LayoutNode = LayoutFile['nodes'][number];
export type LayoutSegment = LayoutFile['segments'][number];

export function layoutJsonSchema(): object {
  return z.toJSONSchema(layoutSchema, { io: 'input' });
}

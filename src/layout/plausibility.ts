/**
 * Plausible ranges of the quantities a layout file gives, for microchannel chips and the tubing
 * around them, and the check the loader applies to each value after it is read in SI. Exports
 * `PLAUSIBLE` (the table, also shown in README.md), `mustBePositive(kind)` and
 * `implausible(kind, value, written)`, which returns the message for a value outside its range
 * or undefined (the loader words a value that must be positive but is not on its own). A plain number outside
 * its range is usually a number written in a unit the file does not say; the message then names
 * the unit that brings it nearest the usual size. Nothing here reads files or throws.
 *
 * Every range is common practice for microfluidic chips, chosen wide enough that no real chip
 * falls outside it and narrow enough to catch a forgotten unit (200 read as metres instead of
 * micrometres, 8.5 read as N/m instead of mN/m).
 */
import type { Dimension } from '../units/quantity.js';

export interface PlausibleRange {
  dimension: Dimension;
  /** Inclusive SI limits. */
  low: number;
  high: number;
  /** A usual value, SI: the suggested unit is the one that brings a plain number nearest it. */
  usual: number;
  /** What the value is, in the message: "a channel width or depth". */
  what: string;
  /** The limits in words, as in README.md. */
  limits: string;
}

/**
 * Why each limit (common practice unless a source is named):
 * - channels: etched or moulded microchannels run from about 1 µm to millimetre manifolds;
 *   10 mm is wider than any channel a chip closes over.
 * - a mask opening (etched) or flat bottom (trapezoid) may be 0 (a half-disc or a V-groove).
 * - wall angles of etched trapezoids: 5° (shallower is no longer a channel wall) to 90°
 *   (vertical walls; anisotropic etches of silicon give 54.74°).
 * - tubes: capillary tubing from 10 µm inner diameter up to 10 mm hose.
 * - lengths: 1 µm (a constriction) up to 10 m (a long tubing run).
 * - reservoir heights: a bench set-up fits inside ±10 m; drawing positions within ±100 m (a
 *   16 384-contactor ladder at 2 mm pitch is 33 m long as drawn).
 * - viscosity: 10 µPa·s lies below every liquid at room temperature (water 0.89 mPa·s, from
 *   memory) and 10 Pa·s above glycerol (1.4 Pa·s at 20 °C, from memory).
 * - density: 100 kg/m³ to 25 000 kg/m³ brackets every liquid (mercury 13 530 kg/m³, from memory).
 * - interfacial tension: aqueous two-phase systems go down to about 1 µN/m, liquid pairs up to
 *   about 50 mN/m (values from memory); 0.1 N/m is above both.
 * - pressures are gauge: nothing sits below vacuum (−101.325 kPa, the standard atmosphere,
 *   ISO 2533:1975) and 10 MPa (100 bar) is above what pumps and fittings of chip set-ups hold.
 * - a split window bounds p_B − p_A, so it is a pressure difference of either sign.
 * - a pressure rating below 1 kPa holds no chip; 100 MPa is above the strongest glass chips.
 * - a controller resolution: 1 mPa is far finer than any pressure controller, 100 kPa coarser
 *   than any that sets a chip's pressures.
 * - flows: 1e-15 m³/s (0.06 nL/min) to 1e-3 m³/s (60 L/min).
 * - diffusivity: 1e-14 m²/s (large assemblies in viscous liquids) to 1e-7 m²/s (above any
 *   solute in a liquid, about 1e-9 m²/s for small molecules in water, from memory).
 * - partition coefficient: 1e-6 to 1e6 spans any extraction worth modelling.
 * - feed concentration: at most 1e5 mol/m³ (pure water is 55 500 mol/m³, from its molar mass).
 */
/** 90° converted from degrees may land an ulp or two above π/2; the loader then takes π/2. */
export const RIGHT_ANGLE_ROUNDING = 1e-12;

export const PLAUSIBLE = {
  channel: { dimension: 'length', low: 1e-6, high: 10e-3, usual: 100e-6, what: 'a channel width or depth', limits: '1 um to 10 mm' },
  bottomWidth: { dimension: 'length', low: 0, high: 10e-3, usual: 100e-6, what: 'a mask opening or bottom width', limits: '0 to 10 mm' },
  wallAngle: { dimension: 'angle', low: (5 * Math.PI) / 180, high: Math.PI / 2 + RIGHT_ANGLE_ROUNDING, usual: 0.9553166181245093, what: 'a wall angle', limits: '5 deg to 90 deg' },
  diameter: { dimension: 'length', low: 10e-6, high: 10e-3, usual: 250e-6, what: 'a tube diameter', limits: '10 um to 10 mm' },
  length: { dimension: 'length', low: 1e-6, high: 10, usual: 10e-3, what: 'a segment length', limits: '1 um to 10 m' },
  position: { dimension: 'length', low: -100, high: 100, usual: 10e-3, what: 'a drawing position', limits: '-100 m to 100 m' },
  height: { dimension: 'length', low: -10, high: 10, usual: 0.1, what: 'a reservoir height', limits: '-10 m to 10 m' },
  viscosity: { dimension: 'viscosity', low: 1e-5, high: 10, usual: 1e-3, what: 'a liquid viscosity', limits: '0.01 mPa.s to 10 Pa.s' },
  density: { dimension: 'density', low: 100, high: 25e3, usual: 1000, what: 'a liquid density', limits: '100 kg/m3 to 25000 kg/m3' },
  tension: { dimension: 'tension', low: 1e-7, high: 0.1, usual: 10e-3, what: 'an interfacial tension', limits: '0.1 uN/m to 0.1 N/m' },
  pressure: { dimension: 'pressure', low: -101_325, high: 10e6, usual: 10e3, what: 'a gauge pressure', limits: '-101.325 kPa (vacuum) to 10 MPa' },
  window: { dimension: 'pressure', low: -10e6, high: 10e6, usual: 100, what: 'a pressure difference', limits: '-10 MPa to 10 MPa' },
  resolution: { dimension: 'pressure', low: 1e-3, high: 100e3, usual: 10, what: 'a controller resolution', limits: '1 mPa to 100 kPa' },
  rating: { dimension: 'pressure', low: 1e3, high: 100e6, usual: 500e3, what: 'a pressure rating', limits: '1 kPa to 100 MPa' },
  flow: { dimension: 'flow', low: 1e-15, high: 1e-3, usual: 1e-10, what: 'a flow', limits: '1e-15 m3/s (0.06 nL/min) to 1e-3 m3/s (60 L/min)' },
  diffusivity: { dimension: 'diffusivity', low: 1e-14, high: 1e-7, usual: 1e-9, what: 'a diffusivity', limits: '1e-14 m2/s to 1e-7 m2/s' },
  partition: { dimension: 'dimensionless', low: 1e-6, high: 1e6, usual: 1, what: 'a partition coefficient', limits: '1e-6 to 1e6' },
  concentration: { dimension: 'concentration', low: Number.MIN_VALUE, high: 1e5, usual: 1, what: 'a concentration', limits: 'above 0, at most 1e5 mol/m3' },
} as const satisfies Record<string, PlausibleRange>;

export type PlausibleKind = keyof typeof PLAUSIBLE;

/** The SI unit a plain number is read in, as the messages write it. */
const SI_UNIT: Record<Dimension, string> = {
  length: 'm',
  flow: 'm3/s',
  pressure: 'Pa',
  viscosity: 'Pa.s',
  tension: 'N/m',
  angle: 'rad',
  density: 'kg/m3',
  diffusivity: 'm2/s',
  concentration: 'mol/m3',
  dimensionless: '',
};

/** Units a plain number may have been meant in, with their SI factors (exact by definition). */
const MEANT: Partial<Record<Dimension, [string, number][]>> = {
  length: [['um', 1e-6], ['mm', 1e-3], ['cm', 1e-2]],
  pressure: [['kPa', 1e3], ['mbar', 100], ['bar', 1e5]],
  flow: [['uL/min', 1e-9 / 60], ['nL/min', 1e-12 / 60], ['mL/h', 1e-6 / 3600], ['uL/s', 1e-9]],
  viscosity: [['mPa.s', 1e-3]],
  tension: [['mN/m', 1e-3]],
  density: [['g/cm3', 1e3]],
  diffusivity: [['um2/s', 1e-12], ['cm2/s', 1e-4]],
};

/** Whether values of `kind` must be positive (the loader then says so for zero or less). */
export function mustBePositive(kind: PlausibleKind): boolean {
  return PLAUSIBLE[kind].low > 0;
}

const inside = (range: PlausibleRange, value: number) => value >= range.low && value <= range.high;

/**
 * The message for `value` (SI) outside the range of `kind`, or undefined when it lies inside.
 * `written` is the value as the file gives it; a plain number (read in SI) gets a suggestion.
 */
export function implausible(kind: PlausibleKind, value: number, written: unknown): string | undefined {
  const range: PlausibleRange = PLAUSIBLE[kind];
  if (inside(range, value)) return undefined;
  const unit = SI_UNIT[range.dimension];
  const shown = typeof written === 'number' ? `${written}${unit ? ` ${unit}` : ''}` : `"${String(written)}"`;
  const message = `${shown} is outside the range of ${range.what} (${range.limits})`;
  if (typeof written !== 'number') return message;
  const distance = (si: number) => Math.abs(Math.log(Math.abs(si) / range.usual));
  const candidates = (MEANT[range.dimension] ?? []).filter(([, factor]) => inside(range, written * factor));
  const best = candidates.sort((a, b) => distance(written * a[1]) - distance(written * b[1]))[0];
  return best ? `${message}; did you mean ${written} ${best[0]}?` : message;
}

/**
 * A small table of liquids used in extraction, with viscosity and density at a stated temperature
 * and interfacial tension against water. Exports `FLUIDS` and `findFluid`. Users can always give
 * their own values; these are for quick estimates. SI units.
 *
 * Sources: values marked "CRC" are from the CRC Handbook of Chemistry and Physics (Haynes, ed.,
 * 97th ed., 2016), tables "Viscosity of liquids" and "Density of solvents", quoted from memory
 * to three digits; interfacial tensions against water are typical literature values quoted from
 * memory (they depend strongly on purity and mutual saturation). Aqueous two-phase phases are
 * illustrative of a PEG/phosphate system and vary with composition: measure your own.
 */

export interface Fluid {
  id: string;
  label: string;
  temperatureC: number;
  /** Pa·s */
  viscosity: number;
  /** kg/m³ */
  density: number;
  /** Interfacial tension against water, N/m (undefined for water itself and for aqueous phases). */
  tensionAgainstWater?: number;
  source: string;
}

export const FLUIDS: readonly Fluid[] = [
  { id: 'water', label: 'water', temperatureC: 20, viscosity: 1.002e-3, density: 998.2, source: 'CRC (from memory); IAPWS 2008 gives 1.0016 mPa·s' },
  { id: 'water-25', label: 'water', temperatureC: 25, viscosity: 0.890e-3, density: 997.0, source: 'CRC (from memory)' },
  { id: 'octanol', label: '1-octanol', temperatureC: 25, viscosity: 7.29e-3, density: 824, tensionAgainstWater: 8.5e-3, source: 'CRC viscosity and density (from memory); tension typical literature value (from memory)' },
  { id: 'butanol', label: '1-butanol', temperatureC: 25, viscosity: 2.54e-3, density: 806, tensionAgainstWater: 1.8e-3, source: 'CRC (from memory); tension (from memory)' },
  { id: 'toluene', label: 'toluene', temperatureC: 25, viscosity: 0.560e-3, density: 862, tensionAgainstWater: 36e-3, source: 'CRC (from memory); tension (from memory)' },
  { id: 'hexane', label: 'n-hexane', temperatureC: 25, viscosity: 0.300e-3, density: 655, tensionAgainstWater: 50e-3, source: 'CRC (from memory); tension (from memory)' },
  { id: 'ethyl-acetate', label: 'ethyl acetate', temperatureC: 25, viscosity: 0.423e-3, density: 894, tensionAgainstWater: 6.8e-3, source: 'CRC (from memory); tension (from memory)' },
  { id: 'dichloromethane', label: 'dichloromethane', temperatureC: 25, viscosity: 0.413e-3, density: 1326, tensionAgainstWater: 28e-3, source: 'CRC (from memory); tension (from memory)' },
  { id: 'peg-rich', label: 'PEG-rich phase (PEG/phosphate, illustrative)', temperatureC: 22, viscosity: 6.5e-3, density: 1080, source: 'illustrative order of magnitude (from memory); ATPS phase tension against the salt-rich phase is ~0.01–0.1 mN/m' },
  { id: 'salt-rich', label: 'salt-rich phase (PEG/phosphate, illustrative)', temperatureC: 22, viscosity: 1.9e-3, density: 1180, source: 'illustrative order of magnitude (from memory)' },
];

export function findFluid(id: string): Fluid | undefined {
  return FLUIDS.find((f) => f.id === id.toLowerCase());
}

/**
 * The holdup tables a sequence of solves shares, by contactor geometry and fluids: for a
 * rectangle by width, depth, orientation and both viscosities (the Picard sweeps' inversions);
 * for an etched or trapezoidal section by shape and viscosity ratio μ_near/μ_far alone, built at
 * (ratio, 1) (the holdup depends on the ratio only, and k scales as 1/μ), so one table answers
 * both the Picard inversions and the lane conductances (physics/lanes.ts). Exports
 * `SectionTables`. Builds tables; solves nothing.
 */
import { HoldupTable, type ShapedSection, type TwoLayerSection } from '../physics/section.js';

export class SectionTables {
  private readonly tables = new Map<string, HoldupTable>();
  private static readonly LIMIT = 256;

  /** The table that inverts flow fraction → holdup for this section and lane viscosities. */
  holdup(section: TwoLayerSection, muNear: number, muFar: number): HoldupTable {
    if (section.shape !== 'rect') return this.shaped(section, muNear / muFar);
    return this.remembered(`${section.width}|${section.depth}|${section.orientation}|${muNear}|${muFar}`, () => new HoldupTable(section, muNear, muFar));
  }

  /** A shaped section's table at viscosities (ratio, 1). */
  shaped(section: ShapedSection, ratio: number): HoldupTable {
    const key = section.shape === 'etched' ? `etched|${section.maskWidth}|${section.depth}|${ratio}` : `trapezoid|${section.bottomWidth}|${section.depth}|${section.wallAngle}|${ratio}`;
    return this.remembered(key, () => new HoldupTable(section, ratio, 1));
  }

  private remembered(key: string, build: () => HoldupTable): HoldupTable {
    let table = this.tables.get(key);
    if (!table) {
      table = build();
      if (this.tables.size >= SectionTables.LIMIT) this.tables.clear();
      this.tables.set(key, table);
    }
    return table;
  }
}

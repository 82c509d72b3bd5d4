/**
 * The holdup tables a sequence of solves shares, by contactor geometry and fluids: for a
 * rectangle by width, depth, orientation and both viscosities (the Picard sweeps' inversions);
 * for an etched or trapezoidal section by shape and viscosity ratio μ_near/μ_far alone, built at
 * (ratio, 1) (the holdup depends on the ratio only, and k scales as 1/μ), and the lanes of such
 * a contactor (physics/lanes.ts ShapedLanes, which read those tables), and the tables of a
 * curved interface by section and phase viscosities (physics/curvedTable.ts). Exports `SectionTables`.
 * Builds tables; solves nothing.
 */
import { HoldupTable, type ShapedSection, type TwoLayerSection } from '../physics/section.js';
import { ShapedLanes } from '../physics/lanes.js';
import { CurvedTable } from '../physics/curvedTable.js';

const shapeKey = (s: ShapedSection) => (s.shape === 'etched' ? `etched|${s.maskWidth}|${s.depth}` : `trapezoid|${s.bottomWidth}|${s.depth}|${s.wallAngle}`);

export class SectionTables {
  private readonly tables = new Map<string, HoldupTable>();
  /** The ratios of the shaped tables built, by shape. */
  private readonly ratios = new Map<string, number[]>();
  private readonly lanesByShape = new Map<string, ShapedLanes>();
  private readonly curvedTables = new Map<string, CurvedTable>();
  private static readonly LIMIT = 256;

  /**
   * The table that inverts flow fraction → holdup for this section and lane viscosities. For a
   * shaped section whose ratio has no table yet (a lane of mixed composition), the built table
   * nearest in log ratio stands in (the Picard start's inversions only; the lanes interpolate
   * in the ratio): building one costs tenths of a second for a new shape, and mixed lanes ask
   * for a new ratio at nearly every sweep.
   */
  holdup(section: TwoLayerSection, muNear: number, muFar: number): HoldupTable {
    if (section.shape !== 'rect') {
      const ratio = muNear / muFar;
      const built = this.ratios.get(shapeKey(section));
      if (!built || built.includes(ratio)) return this.shaped(section, ratio);
      const nearest = built.reduce((best, r) => (Math.abs(Math.log(r / ratio)) < Math.abs(Math.log(best / ratio)) ? r : best));
      return this.shaped(section, nearest);
    }
    return this.remembered(`${section.width}|${section.depth}|${section.orientation}|${muNear}|${muFar}`, () => new HoldupTable(section, muNear, muFar));
  }

  /** A shaped section's table at viscosities (ratio, 1). */
  shaped(section: ShapedSection, ratio: number): HoldupTable {
    const key = shapeKey(section);
    return this.remembered(`${key}|${ratio}`, () => {
      const list = this.ratios.get(key) ?? [];
      list.push(ratio);
      this.ratios.set(key, list);
      return new HoldupTable(section, ratio, 1);
    });
  }

  /** The lanes of a shaped contactor on a chip with phase viscosities μ_A, μ_B. */
  lanes(section: ShapedSection, muA: number, muB: number): ShapedLanes {
    const key = `${shapeKey(section)}|${muA}|${muB}`;
    let lanes = this.lanesByShape.get(key);
    if (!lanes) {
      lanes = new ShapedLanes((ratio) => this.shaped(section, ratio), muA, muB);
      this.lanesByShape.set(key, lanes);
    }
    return lanes;
  }

  /** The curved-interface table of a section with the near lane's phase of viscosity μ_near (built by stretches as asked). */
  curved(section: TwoLayerSection, muNear: number, muFar: number): CurvedTable {
    const key = `${section.shape === 'rect' ? `rect|${section.width}|${section.depth}|${section.orientation}` : shapeKey(section)}|${muNear}|${muFar}`;
    let table = this.curvedTables.get(key);
    if (!table) {
      table = new CurvedTable(section, muNear, muFar);
      this.curvedTables.set(key, table);
    }
    return table;
  }

  private remembered(key: string, build: () => HoldupTable): HoldupTable {
    let table = this.tables.get(key);
    if (!table) {
      table = build();
      if (this.tables.size >= SectionTables.LIMIT) {
        this.tables.clear();
        this.ratios.clear();
        this.lanesByShape.clear();
      }
      this.tables.set(key, table);
    }
    return table;
  }
}

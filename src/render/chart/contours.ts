/**
 * Isolines of sampled values on a grid: the segments of one level by marching squares, and their
 * chaining into polylines. Exports `isoSegments` and `joinSegments`. Pure data steps: numbers in,
 * points out; nothing is drawn here.
 */
import type { Grid, Point } from './spec.js';

/**
 * Segments of the isoline value = level through samples on an integer grid (x = i, y = j), by
 * marching squares, the two-dimensional case of marching cubes (Lorensen & Cline, 1987,
 * Computer Graphics 21(4), 163–169). Crossings are linearly interpolated along cell edges; a
 * saddle cell is resolved by the mean of its corners. Cells with a non-finite corner are skipped.
 * Written here rather than taken from d3-contour: its contours are filled polygons of the
 * region above a threshold, closed along the grid border, while these maps need open isolines
 * with labels, and cells with missing (failed) points left out.
 */
export function isoSegments(values: Grid, level: number): [Point, Point][] {
  const segments: [Point, Point][] = [];
  const at = (a: number, b: number) => (level - a) / (b - a);
  for (let j = 0; j + 1 < values.length; j++) {
    const row = values[j];
    const next = values[j + 1];
    for (let i = 0; i + 1 < Math.min(row.length, next.length); i++) {
      const v00 = row[i];
      const v10 = row[i + 1];
      const v01 = next[i];
      const v11 = next[i + 1];
      if (![v00, v10, v01, v11].every(Number.isFinite)) continue;
      const h00 = v00 >= level;
      const h10 = v10 >= level;
      const h01 = v01 >= level;
      const h11 = v11 >= level;
      const bottom: Point = [i + at(v00, v10), j];
      const right: Point = [i + 1, j + at(v10, v11)];
      const top: Point = [i + at(v01, v11), j + 1];
      const left: Point = [i, j + at(v00, v01)];
      const crossed = [h00 !== h10 && bottom, h10 !== h11 && right, h01 !== h11 && top, h00 !== h01 && left].filter((p): p is Point => p !== false);
      if (crossed.length === 2) segments.push([crossed[0], crossed[1]]);
      else if (crossed.length === 4) {
        const centreHigh = (v00 + v10 + v01 + v11) / 4 >= level;
        if (centreHigh === h00) segments.push([bottom, right], [top, left]);
        else segments.push([bottom, left], [right, top]);
      }
    }
  }
  return segments;
}

/**
 * Segments chained into polylines through shared end points (neighbouring cells compute a shared
 * crossing from the same two samples, so the points match exactly), so dashes run on unbroken.
 */
export function joinSegments(segments: readonly (readonly [Point, Point])[]): Point[][] {
  const key = (p: Point) => `${p[0]},${p[1]}`;
  const ends = new Map<string, number[]>();
  segments.forEach(([a, b], s) => {
    for (const p of [a, b]) ends.set(key(p), [...(ends.get(key(p)) ?? []), s]);
  });
  const used = new Array<boolean>(segments.length).fill(false);
  /** Follows unused segments from `from`, appending their far ends to `path`. */
  const extend = (path: Point[], from: Point) => {
    for (let at = from; ; ) {
      const s = (ends.get(key(at)) ?? []).find((t) => !used[t]);
      if (s === undefined) return;
      used[s] = true;
      const [a, b] = segments[s];
      at = key(a) === key(at) ? b : a;
      path.push(at);
    }
  };
  const polylines: Point[][] = [];
  segments.forEach(([a, b], s) => {
    if (used[s]) return;
    used[s] = true;
    const forward: Point[] = [b];
    extend(forward, b);
    const backward: Point[] = [];
    extend(backward, a);
    polylines.push([...backward.reverse(), a, ...forward]);
  });
  return polylines;
}

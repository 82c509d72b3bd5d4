/**
 * A small linear-programme solver for tune's margin steps. Exports `simplexMaximise`. Pure
 * arithmetic on dense arrays.
 */

/**
 * Maximise c·x subject to A·x ≤ b, x ≥ 0, with b ≥ 0 (so x = 0 is feasible): the simplex
 * method on a dense tableau with Bland's rule against cycling (Chvátal, Linear Programming,
 * 1983, ch. 2–3, from memory). Returns null when the objective is unbounded. Written here: the
 * programs are tiny (two unknowns per setting, a few rows per split), and a library would add
 * more code than this; its result is checked by re-solving the chip at the tuned settings.
 */
export function simplexMaximise(c: readonly number[], A: readonly (readonly number[])[], b: readonly number[]): number[] | null {
  const m = A.length;
  const n = c.length;
  const width = n + m + 1;
  const T = A.map((row, i) => {
    const r = new Array<number>(width).fill(0);
    row.forEach((v, j) => (r[j] = v));
    r[n + i] = 1;
    r[width - 1] = b[i]!;
    return r;
  });
  const z = new Array<number>(width).fill(0);
  c.forEach((v, j) => (z[j] = -v));
  const basis = Array.from({ length: m }, (_, i) => n + i);
  const EPS = 1e-12;
  for (let iteration = 0; iteration < 50 * (n + m); iteration++) {
    const enter = z.slice(0, width - 1).findIndex((v) => v < -EPS);
    if (enter < 0) break;
    let leave = -1;
    let best = Infinity;
    for (let i = 0; i < m; i++) {
      const a = T[i]![enter]!;
      if (a <= EPS) continue;
      const ratio = T[i]![width - 1]! / a;
      if (ratio < best - EPS || (Math.abs(ratio - best) <= EPS && basis[i]! < basis[leave]!)) {
        best = ratio;
        leave = i;
      }
    }
    if (leave < 0) return null;
    const pivotRow = T[leave]!;
    const p = pivotRow[enter]!;
    for (let j = 0; j < width; j++) pivotRow[j]! /= p;
    for (const row of [...T, z]) {
      if (row === pivotRow) continue;
      const f = row[enter]!;
      if (f !== 0) for (let j = 0; j < width; j++) row[j]! -= f * pivotRow[j]!;
    }
    basis[leave] = enter;
  }
  const x = new Array<number>(n).fill(0);
  basis.forEach((v, i) => {
    if (v < n) x[v] = T[i]![width - 1]!;
  });
  return x;
}

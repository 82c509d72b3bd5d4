/**
 * Habits of the codebase that keep it working at scale, checked over the source tree.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const SRC = fileURLToPath(new URL('../src', import.meta.url));

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? sources(join(dir, e.name)) : e.name.endsWith('.ts') ? [join(dir, e.name)] : []));
}

describe('the source tree', () => {
  // Spreading an array into Math.max/Math.min passes one argument per element, and V8 throws
  // "Maximum call stack size exceeded" past some 10⁵ of them: a 16 384-contactor chip has more
  // ports than that. The few lists that do not grow with the chip are named here: fixed pressures,
  // positive phase flows (two), axis labels and ticks, the scales of a tolerance sweep, the
  // tuned settings and the heading lines of a drawing.
  const SMALL_LISTS = ['fixedPressures', 'positive', 'yLabels.map', 'bar.ticks.map', 'r.sweep.map', 'coefficients.map', 'heads.map'];

  it('spreads no array into Math.max or Math.min, except lists whose length does not grow with the chip', () => {
    const offenders: string[] = [];
    for (const file of sources(SRC)) {
      readFileSync(file, 'utf8').split('\n').forEach((line, i) => {
        // A spread in any argument position counts: Math.max(0, ...list.map(f)) overflowed too.
        for (const m of line.matchAll(/Math\.(?:max|min)\([^;]*?\.\.\.([\w.]+)/g)) {
          const name = m[1]!;
          if (!SMALL_LISTS.includes(name)) offenders.push(`${file}:${i + 1}: ...${name}`);
        }
      });
    }
    expect(offenders).toEqual([]);
  });
});

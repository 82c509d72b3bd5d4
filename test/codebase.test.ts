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
  // ports than that. The few lists that do not grow with the chip are named here.
  const SMALL_LISTS = ['fixedPressures', 'positive'];

  it('spreads no array into Math.max or Math.min, except lists whose length does not grow with the chip', () => {
    const offenders: string[] = [];
    for (const file of sources(SRC)) {
      readFileSync(file, 'utf8').split('\n').forEach((line, i) => {
        for (const m of line.matchAll(/Math\.(?:max|min)\(\.\.\.(\w+)/g)) if (!SMALL_LISTS.includes(m[1]!)) offenders.push(`${file}:${i + 1}`);
        if (/Math\.(?:max|min)\(\.\.\.\w+\./.test(line)) offenders.push(`${file}:${i + 1}`);
      });
    }
    expect(offenders).toEqual([]);
  });
});

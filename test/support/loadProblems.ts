/**
 * The problems the loader refuses a layout with, each as the one line the CLI prints after
 * `stratiflow: `; [] when the layout loads. Exports `problemsOf` for the layout tests.
 */
import { layoutToChip } from '../../src/layout/load.js';
import { StratiflowErrors } from '../../src/errors.js';
import type { LayoutFile } from '../../src/layout/schema.js';

export function problemsOf(layout: LayoutFile, source = 'chip.yaml'): string[] {
  try {
    layoutToChip(layout, source);
    return [];
  } catch (error) {
    if (error instanceof StratiflowErrors) return error.problems.map((p) => p.format());
    throw error;
  }
}

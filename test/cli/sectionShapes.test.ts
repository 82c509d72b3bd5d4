/**
 * `stratiflow section --shape etched|trapezoid`: the same JSON fields as for rectangles, charts
 * with the section in its true shape, and one line with exit status 2 for options that do not
 * fit the shape.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLValidator } from 'fast-xml-parser';
import { runCli } from '../support/cli.js';

const FLUIDS = ['--mu-a', '1mPa.s', '--mu-b', '1mPa.s'];
const ETCHED = ['section', '--shape', 'etched', '--mask-width', '100um', '--depth', '40um'];

describe('stratiflow section --shape', () => {
  it('prints the same JSON fields for an etched section as for a rectangle', async () => {
    const rect = await runCli(['section', '--width', '100um', '--depth', '40um', ...FLUIDS, '--holdup', '0.3', '--json']);
    const etched = await runCli([...ETCHED, ...FLUIDS, '--holdup', '0.3', '--json']);
    expect(etched.code).toBe(0);
    const keys = (o: object): string[] => Object.entries(o).flatMap(([k, v]) => (v !== null && typeof v === 'object' ? keys(v).map((s) => `${k}.${s}`) : [k])).sort();
    expect(keys(JSON.parse(etched.out))).toEqual(keys(JSON.parse(rect.out)));
    expect(etched.out).not.toMatch(/NaN|Infinity/);
  });

  it('splits the flow equally at holdup 0.5 with equal viscosities, the etched section being symmetric', async () => {
    // Mirror symmetry of the section about its centre line; the strips of the solver are mirror
    // images too, so the tolerance is rounding (1e-12).
    const { out } = await runCli([...ETCHED, ...FLUIDS, '--holdup', '0.5', '--json']);
    expect(Math.abs(JSON.parse(out).flowFraction - 0.5)).toBeLessThan(1e-12);
  });

  it('gives a trapezoid with 90° walls (a plain angle is in degrees) the flow fraction of the rectangle', async () => {
    // The rectangle's exact series (White, 2006, §3-3.3, two layers); tolerance 1e-8, the spectral
    // solver's accuracy on rectangles.
    const args = [...FLUIDS.slice(0, 1), '3mPa.s', ...FLUIDS.slice(2), '--holdup', '0.4', '--json'];
    const trapezoid = await runCli(['section', '--shape', 'trapezoid', '--bottom-width', '100um', '--depth', '40um', '--wall-angle', '90', ...args]);
    const rect = await runCli(['section', '--width', '100um', '--depth', '40um', ...args]);
    expect(trapezoid.code).toBe(0);
    expect(Math.abs(JSON.parse(trapezoid.out).flowFraction / JSON.parse(rect.out).flowFraction - 1)).toBeLessThan(1e-8);
  });

  it('draws the etched section in its own outline, with the interface and the velocity inside it', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'sf-shape-'));
    const { code } = await runCli([...ETCHED, '--mu-a', '5mPa.s', '--mu-b', '1mPa.s', '--flow-fraction', '0.5', '--plot', join(dir, 'p.svg'), '--field', join(dir, 'f.svg')]);
    expect(code).toBe(0);
    const plot = readFileSync(join(dir, 'p.svg'), 'utf8');
    const field = readFileSync(join(dir, 'f.svg'), 'utf8');
    for (const svg of [plot, field]) expect(XMLValidator.validate(svg)).toBe(true);
    expect(plot).toMatch(/this etched channel/);
    expect(plot).toMatch(/rectangle as wide as its bottom/);
    expect(field).toMatch(/wall/);
    expect(field).toMatch(/interface/);
  });

  const bad: Array<[string, string[], RegExp]> = [
    ['a width for an etched section', [...ETCHED, '--width', '100um'], /^stratiflow: --width: is not an option of --shape etched \(it takes --mask-width, --depth\)$/],
    ['a missing mask width', ['section', '--shape', 'etched', '--depth', '40um'], /^stratiflow: --mask-width: is required$/],
    ['a negative mask width', ['section', '--shape', 'etched', '--mask-width', '-1um', '--depth', '40um'], /^stratiflow: --mask-width: must be a length of at least 0$/],
    ['stacked layers in a trapezoid', ['section', '--shape', 'trapezoid', '--bottom-width', '60um', '--depth', '40um', '--orientation', 'stacked'], /^stratiflow: --orientation: layers in --shape trapezoid lie side by side only$/],
    ['a wall angle above 90°', ['section', '--shape', 'trapezoid', '--bottom-width', '60um', '--depth', '40um', '--wall-angle', '120'], /^stratiflow: --wall-angle: must lie above 0 and at most 90°$/],
  ];
  for (const [what, args, message] of bad) {
    it(`rejects ${what} with one line and exit status 2`, async () => {
      const { code, out, err } = await runCli([...args, ...FLUIDS, '--holdup', '0.5']);
      expect(code).toBe(2);
      expect(out).toBe('');
      expect(err.trim().split('\n')).toHaveLength(1);
      expect(err.trim()).toMatch(message);
    });
  }
});

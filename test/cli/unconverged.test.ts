/**
 * Results that did not converge are not saved (tracker issue 11, item 8): `solve` prints its
 * table under a NOT CONVERGED banner, writes none of the files asked for, and exits with status 4;
 * `draw` draws nothing. The solver is made to report no convergence, whatever the chip, so the
 * test does not depend on finding a chip the solver cannot settle.
 */
import { afterAll, describe, expect, it, vi } from 'vitest';
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { runCli } from '../support/cli.js';
import { singleContactorLayout } from '../support/layouts.js';

vi.mock('../../src/analyses/chip.js', async (original) => {
  const chip = await original<typeof import('../../src/analyses/chip.js')>();
  return {
    ...chip,
    solveChip: (...args: Parameters<typeof chip.solveChip>) => {
      const solved = chip.solveChip(...args);
      return { ...solved, result: { ...solved.result, converged: false, message: 'no convergence after 50 Newton steps' } };
    },
  };
});

const dir = mkdtempSync(join(tmpdir(), 'stratiflow-unconverged-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const layout = join(dir, 'chip.yaml');
writeFileSync(layout, stringify(singleContactorLayout()));

describe('a solve that does not converge', () => {
  it('writes neither --out nor --csv, prints the table under NOT CONVERGED, and exits with status 4', async () => {
    const out = join(dir, 'result');
    const csv = join(dir, 'contactors.csv');
    const run = await runCli(['solve', layout, '--out', out, '--csv', csv]);
    expect(run.code).toBe(4);
    expect(run.out).toMatch(/NOT CONVERGED: no convergence after 50 Newton steps/);
    expect(run.err).toBe(`stratiflow: ${layout}: no convergence after 50 Newton steps; no files written (results that did not converge are not saved)\n`);
    expect(existsSync(out)).toBe(false);
    expect(existsSync(csv)).toBe(false);
  });

  it('draws nothing', async () => {
    const svg = join(dir, 'chip.svg');
    const run = await runCli(['draw', layout, '--out', svg]);
    expect(run.code).toBe(4);
    expect(readdirSync(dir)).not.toContain('chip.svg');
  });
});

/**
 * What `stratiflow tune` and `solve` call success (tracker issue 11, item 1): the shared operating
 * verdict of src/analyses/verdict.ts — every split pinned, no starved feed, no backflow, pure
 * outlets, within the rating — and a per-contactor table that shows a starved contactor as
 * starved. The chip is the generated 16-contactor ladder with both outlets at the same end.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli } from '../support/cli.js';
import { ladderLayout } from '../../src/layout/generate.js';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip, type ChipSolution } from '../../src/analyses/chip.js';
import { operatingVerdict, starvedPhase } from '../../src/analyses/verdict.js';
import { chipText, contactorCsv } from '../../src/render/text.js';
import { wellDesignedLadder } from '../support/layouts.js';

const dir = mkdtempSync(join(tmpdir(), 'stratiflow-verdict-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('stratiflow tune', () => {
  it('does not report success where a contactor is starved and outlets are contaminated', async () => {
    const layout = join(dir, 'l.yaml');
    expect((await runCli(['make', 'ladder', '--outlets', 'same', '--out', layout])).code).toBe(0);
    const run = await runCli(['tune', layout, '--flow-a', '32uL/min', '--flow-b', '32uL/min', '--vary', 'inA.pressure', '--vary', 'inB.pressure', '--vary', 'outB.pressure']);
    // Whatever state the solver settles in, "every split pinned" alone is not success.
    if (run.code === 0) {
      expect(run.out).toMatch(/verdict: the chip works/);
      expect(run.out).not.toMatch(/starved of/);
      return;
    }
    expect(run.code).toBe(3);
    expect(run.out).toBe('');
    const lines = run.err.split('\n').filter((l) => l !== '');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/but the chip does not work there: /);
    expect(lines[0]).toMatch(/contactor k\d+: no phase [AB] enters|segment \w+: phase [AB] flows back|split s\d+: the [AB] outlet carries phase [AB]/);
    expect(existsSync(join(dir, 'l-tuned.yaml'))).toBe(false);
  });
});

describe('operatingVerdict', () => {
  it('finds nothing wrong with a well-designed ladder that solves with every split pinned', () => {
    const solved = solveChip(layoutToChip(wellDesignedLadder(4), 'ladder-4'));
    expect(solved.result.splits.every((s) => s.state === 'pinned')).toBe(true);
    expect(operatingVerdict(solved)).toEqual([]);
  });

  it('names every split that leaks, with the state, and every impure outlet', () => {
    const layout = ladderLayout({ contactors: 2, outletPressure: { A: 0, B: 5e3 } });
    const solved = solveChip(layoutToChip(layout, 'leaking'));
    const leaking = solved.result.splits.filter((s) => s.state !== 'pinned').map((s) => `split ${s.id}`);
    expect(leaking.length).toBeGreaterThan(0);
    const problems = operatingVerdict(solved);
    expect(problems.filter((p) => p.kind === 'leaking').map((p) => p.element)).toEqual(leaking);
    expect(problems.some((p) => p.kind === 'impure')).toBe(true);
  });

  it('names the pressure rating when the chip is driven above it', () => {
    const chip = { ...layoutToChip(wellDesignedLadder(2), 'rated'), maxPressure: 1e3 };
    const problems = operatingVerdict(solveChip(chip));
    expect(problems.some((p) => p.kind === 'over-rating' && p.element.startsWith('node '))).toBe(true);
  });
});

describe('the per-contactor table', () => {
  /** A solution of a pinned ladder whose first contactor is made to carry no B (a starved feed). */
  function starvedSolution(): ChipSolution {
    const { result } = solveChip(layoutToChip(wellDesignedLadder(2), 'ladder-2'));
    const [first, ...rest] = result.contactors;
    return { ...result, contactors: [{ ...first!, flowB: 0, holdupA: 1, state: 'pinned' }, ...rest] };
  }

  it('reads a contactor that carries none of one phase as starved of that phase', () => {
    expect(starvedPhase({ flowA: 1e-12, flowB: 0 })).toBe('B');
    expect(starvedPhase({ flowA: 0, flowB: 1e-12 })).toBe('A');
    expect(starvedPhase({ flowA: 1e-12, flowB: 1e-12 })).toBeNull();
  });

  it('shows a starved contactor as "starved of B", not as pinned, in the text and the CSV', () => {
    const s = starvedSolution();
    const row = chipText('chip', s).split('\n').find((l) => / k1 /.test(l))!;
    expect(row).toMatch(/starved of B/);
    expect(row).not.toMatch(/pinned/);
    const csv = contactorCsv(s).split('\n');
    expect(csv[0]).toMatch(/,state,/);
    expect(csv[1]).toMatch(/,starved of B,/);
  });

  it('prints the verdict under the summary when one is given', () => {
    const s = starvedSolution();
    expect(chipText('chip', s, [])).toMatch(/^verdict: the chip works at these settings/m);
    const text = chipText('chip', s, [{ kind: 'starved', element: 'contactor k1', id: 'k1', reason: 'no phase B enters' }]);
    expect(text).toMatch(/^verdict: the chip does NOT work at these settings \(1 problem\)\n {2}- contactor k1: no phase B enters$/m);
  });
});

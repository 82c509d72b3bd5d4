/**
 * `stratiflow design` as a user runs it: the designed layout it writes, loaded and solved again,
 * divides each phase as evenly as asked with every split pinned (measured by the solve, not by
 * design.ts); a design that falls short prints what binds, writes nothing and ends with exit
 * status 3; bad variables end with one line and exit status 2. The chip is the bundled
 * dye-extraction demo (an invented scenario).
 */
import { describe, expect, it } from 'vitest';
import { copyFileSync, existsSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadLayout } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';
import { runCli } from '../support/cli.js';

const DYE = fileURLToPath(new URL('../../layouts/dye-octanol-8.yaml', import.meta.url));

describe('stratiflow design', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-design-'));
  const file = join(dir, 'dye.yaml');
  copyFileSync(DYE, file);

  it('writes a designed layout that, loaded and solved, is as even as asked with every split pinned, and prints the cautions', async () => {
    const { code, out, err } = await runCli(['design', file, '--vary', 'feed.widths', '--vary', 'drain.widths', '--vary', 'outB.pressure', '--flow-cv', '0.2%']);
    expect(err).toBe('');
    expect(code).toBe(0);
    expect(out).toMatch(/design meets every target/);
    expect(out).toMatch(/designed layout written to .*dye-designed\.yaml/);
    expect(out).toMatch(/lab safety rules/);
    const designed = loadLayout(join(dir, 'dye-designed.yaml'));
    const { result } = solveChip(designed);
    expect(result.summary.spread.flowA.cv).toBeLessThanOrEqual(0.002);
    expect(result.summary.spread.flowB.cv).toBeLessThanOrEqual(0.002);
    expect(result.splits.every((s) => s.state === 'pinned')).toBe(true);
    // Each changed segment says so in its note.
    expect(designed.segments.find((s) => s.id === 'fA1')!.note).toMatch(/^designed: width 120 → [\d.]+ um$/);
  });

  it('writes with --report a self-contained page with the design, the chip before and after, the flows and widths, and the live operating point', async () => {
    const report = join(dir, 'design.html');
    const { code } = await runCli(['design', file, '--vary', 'feed.widths', '--vary', 'drain.widths', '--vary', 'outB.pressure', '--flow-cv', '0.2%', '--out', join(dir, 'reported.yaml'), '--report', report]);
    expect(code).toBe(0);
    const html = readFileSync(report, 'utf8');
    for (const id of ['analysis-before', 'analysis-after', 'analysis-flows', 'analysis-widths']) expect(html).toContain(`id="${id}"`);
    expect(html).toContain('data-setting="outB.pressure"');
    expect(html).not.toMatch(/<script[^>]+src=/);
  });

  it('prints what binds, writes nothing and ends with exit status 3 when the design falls short', async () => {
    const out = join(dir, 'short.yaml');
    const run = await runCli(['design', file, '--vary', 'feed.widths', '--vary', 'outB.pressure', '--flow-cv', '0.2%', '--out', out]);
    expect(run.code).toBe(3);
    expect(run.out).toMatch(/what binds:\n {2}split s\d sits at the margin asked/);
    expect(run.err.trim().split('\n')).toHaveLength(1);
    expect(run.err).toMatch(/^stratiflow: .*dye\.yaml: no design meets the targets: split s\d sits at the margin asked/);
    expect(existsSync(out)).toBe(false);
  });

  it('ends a bad variable, a contactor group or a width outside the rules with one line and exit status 2', async () => {
    for (const [vary, message] of [
      ['feed.depth', /--vary: "feed.depth" is not a design variable/],
      ['contactor.width', /a contactor's size is the extraction's/],
      ['manifold.width', /give --min-width and --max-width that admit it/],
    ] as const) {
      const run = await runCli(['design', file, '--vary', vary]);
      expect(run.code, vary).toBe(2);
      expect(run.err.trim().split('\n')).toHaveLength(1);
      expect(run.err).toMatch(message);
    }
    const wide = await runCli(['design', file, '--vary', 'feed.widths', '--margin', '60%']);
    expect(wide.code).toBe(2);
    expect(wide.err).toMatch(/--margin: split s1: a margin of .* Pa from both limits does not fit in its window/);
    const none = await runCli(['design', file, '--vary', 'outB.pressure']);
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/say which segments may change/);
  });
});

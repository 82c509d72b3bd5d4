import { afterAll, describe, expect, it } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { chromium } from 'playwright-core';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip, type ChipSolution } from '../../src/analyses/chip.js';
import { parseSetting, withSettings } from '../../src/analyses/settings.js';
import { jsonNumbers } from '../../src/cli/context.js';
import { pageScript } from '../../src/cli/pageScript.js';
import { runCli } from '../support/cli.js';
import { watchProblems } from '../support/pageProblems.js';
import { singleContactor } from '../support/handWindow.js';

/**
 * `window --report` as a user opens it: Debian's chromium through playwright-core (the reference
 * browser, as in test/render/liveReport.test.ts), on the hand-worked single contactor of
 * test/support/handWindow.ts. The page shows the map, answers a changed setting by solving the
 * chip again, as the library does, and moves its live point on the map to the new settings. Needs the built page script (`npm run build`), which the
 * command inlines; screenshots go to out/ for a person to look at.
 */
const CHROMIUM = '/usr/bin/chromium';
const ready = existsSync(CHROMIUM) && pageScript() !== undefined;
if (!ready) console.warn('window report test skipped: it needs /usr/bin/chromium and the built page script (npm run build)');

describe.skipIf(!ready)('the report of stratiflow window in headless chromium', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-window-report-'));
  const profile = mkdtempSync(join(tmpdir(), 'stratiflow-chromium-'));
  afterAll(() => {
    rmSync(dir, { recursive: true, force: true });
    rmSync(profile, { recursive: true, force: true });
  });

  it('shows the map and solves the chip again when inA.pressure is raised by 10 Pa, as the library does, and marks the new point on the map', async () => {
    const layout = singleContactor();
    const file = join(dir, 'one.yaml');
    writeFileSync(file, stringify(layout));
    const report = join(dir, 'window.html');
    const { code } = await runCli(['window', file, '--x-range', '6:9kPa', '--x-steps', '7', '--y-range', '6kPa:9.5kPa', '--y-steps', '7', '--workers', '1', '--svg', join(dir, 'map.svg'), '--report', report]);
    expect(code).toBe(0);

    const context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      viewport: { width: 1280, height: 900 },
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
    const problems: string[] = [];
    try {
      const page = await context.newPage();
      watchProblems(page, problems);
      await page.goto(`file://${report}`, { waitUntil: 'load' });
      expect(await page.locator('#analysis-window-map > svg').count()).toBe(1);
      expect(await page.locator('#analysis-window-map > svg').evaluate((s) => s.getBoundingClientRect().width)).toBeGreaterThan(0);

      const live = page.locator('#analysis-window-map g.movable-point');
      expect(await live.getAttribute('visibility')).toBe('hidden');

      const field = page.locator('input[data-setting="inA.pressure"]');
      const shown = Number(await field.inputValue());
      expect(shown).toBe(7000);
      await field.fill(String(shown + 10));
      await field.dispatchEvent('change');
      await page.waitForFunction(() => Number(document.body.dataset.solves ?? '0') > 0, undefined, { timeout: 60_000 });

      // The live point stands 10 Pa to the right of the point as given, at its height: the map's
      // axes are inA.pressure and inB.pressure (the ranges were given), linear from domain to
      // frame; transforms are written to 0.01 px (src/render/svg.ts), hence the tolerance.
      expect(await live.getAttribute('visibility')).toBe('visible');
      const translate = (t: string | null) => t!.match(/^translate\(([-\d.]+),([-\d.]+)\)$/)!.slice(1).map(Number);
      const [lx, ly] = translate(await live.getAttribute('transform'));
      const [gx, gy] = translate(await page.locator('#analysis-window-map g.points path.marker').first().getAttribute('transform'));
      const [x0, , x1] = (await live.getAttribute('data-frame'))!.split(' ').map(Number);
      const [kPaFrom, kPaTo] = (await live.getAttribute('data-x-domain'))!.split(' ').map(Number);
      expect(Math.abs(ly! - gy!)).toBeLessThanOrEqual(0.02);
      expect(Math.abs(lx! - gx! - (0.01 / (kPaTo! - kPaFrom!)) * (x1! - x0!))).toBeLessThanOrEqual(0.02);
      const solution = (await page.evaluate(() => globalThis.stratiflowSolution)) as ChipSolution;
      mkdirSync('out', { recursive: true });
      await page.screenshot({ path: join('out', 'window-report-after.png'), fullPage: true });

      const chip = layoutToChip(layout, file);
      const reference = JSON.parse(JSON.stringify(solveChip(withSettings(chip, [[parseSetting('inA.pressure', chip), shown + 10]])).result, jsonNumbers)) as ChipSolution;
      expect(solution.converged).toBe(true);
      // Flows to 1e-9 of the largest: both solves settle every mass balance to 1e-12 of the
      // throughput (the solver's convergence test), from different start points.
      const scale = reference.segments.reduce((m, s) => Math.max(m, Math.abs(s.flowA) + Math.abs(s.flowB)), 0);
      reference.segments.forEach((r, i) => {
        expect(Math.abs(solution.segments[i]!.flowA - r.flowA), r.id).toBeLessThanOrEqual(1e-9 * scale);
        expect(Math.abs(solution.segments[i]!.flowB - r.flowB), r.id).toBeLessThanOrEqual(1e-9 * scale);
      });
      expect(solution.splits.map((s) => s.state)).toEqual(reference.splits.map((s) => s.state));
    } finally {
      await context.close();
    }
    expect(problems).toEqual([]);
  }, 120_000);
});

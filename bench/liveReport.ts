/**
 * The live report in headless chromium (playwright-core, as the browser tests): the time from a
 * changed setting to the redrawn page, for the well-designed ladder of bench/network.ts (invented
 * demo values, DESIGN_TEXT) at 64 and 1024 contactors, named in the report and in each row with
 * how many of its splits are pinned after the changes (all, where the chip works). Each size opens its report, makes one change to warm up
 * (the page builds its holdup tables then), and times CHANGES more changes of outB.pressure by a
 * few pascals up and down: the page's own split of solve and redraw (performance.now around
 * each; the redraw is the new results in the DOM), the time until the browser has laid them out
 * and painted them (the next frame), and the wall time the test side waits for that. Exports `benchLiveReport`.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium } from 'playwright-core';
import { build } from 'vite';
import { layoutToChip } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import { findManifolds } from '../src/analyses/manifolds.js';
import { chipReport } from '../src/render/report.js';
import { jsonNumbers } from '../src/cli/context.js';
import { DESIGN_TEXT, designedLadderLayout } from './network.js';
import type { Row } from './report.js';

const CHROMIUM = '/usr/bin/chromium';
/** The targets for a re-solve and redraw, s. */
const TARGET: Record<number, number> = { 64: 0.1, 1024: 1 };
const CHANGES = 5;

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)]!;

export async function benchLiveReport(): Promise<Row[]> {
  const folder = mkdtempSync(join(tmpdir(), 'stratiflow-bench-live-'));
  const profile = mkdtempSync(join(tmpdir(), 'stratiflow-chromium-'));
  const rows: Row[] = [];
  try {
    await build({ configFile: 'vite.page.config.ts', logLevel: 'silent', build: { outDir: join(folder, 'bundle'), emptyOutDir: true } });
    const scriptBase64 = readFileSync(join(folder, 'bundle', 'live.js')).toString('base64');
    const context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      viewport: { width: 1280, height: 900 },
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
    try {
      console.error(`live-report: ${DESIGN_TEXT}`);
      for (const n of [64, 1024]) {
        const name = `bench ladder of ${n} contactors`;
        const layout = { ...designedLadderLayout(n), name };
        const solved = solveChip(layoutToChip(layout, name));
        const file = join(folder, `ladder-${n}.html`);
        writeFileSync(file, chipReport(solved, findManifolds(solved), { live: { scriptBase64, layout, solution: JSON.parse(JSON.stringify(solved.result, jsonNumbers)) } }));
        const page = await context.newPage();
        await page.goto(`file://${file}`, { waitUntil: 'load' });
        const field = page.locator('input[data-setting="outB.pressure"]');
        const start = Number(await field.inputValue());
        const solve: number[] = [];
        const redraw: number[] = [];
        const wall: number[] = [];
        const painted: number[] = [];
        let converged = true;
        let pinned = n;
        for (let k = 0; k <= CHANGES; k++) {
          const before = Number(await page.evaluate(() => document.body.dataset.solves ?? '0'));
          const t0 = performance.now();
          await field.fill(String(start + (k % 2 === 0 ? 5 : -5)));
          await field.dispatchEvent('change');
          await page.waitForFunction((m) => Number(document.body.dataset.painted ?? '0') > m, before, { timeout: 120_000 });
          const t1 = performance.now();
          const figures = await page.evaluate(() => ({
            solve: Number(document.body.dataset.solveMs), redraw: Number(document.body.dataset.redrawMs), painted: Number(document.body.dataset.paintedMs),
            ...(({ converged, splits }) => ({ converged, pinned: splits.filter((sp) => sp.state === 'pinned').length }))(
              globalThis.stratiflowSolution as { converged: boolean; splits: Array<{ state: string }> },
            ),
          }));
          converged &&= figures.converged;
          pinned = Math.min(pinned, figures.pinned);
          if (k === 0) continue;
          solve.push(figures.solve / 1000);
          redraw.push(figures.redraw / 1000);
          painted.push(figures.painted / 1000);
          wall.push((t1 - t0) / 1000);
        }
        await page.close();
        rows.push(
          { name: `live report, ${name}: re-solve in the page (warm start), converged: ${converged ? 'yes' : 'NO'}, splits pinned: ${pinned} of ${n}`, value: median(solve), unit: 's' },
          { name: `live report, ${name}: redraw of the results`, value: median(redraw), unit: 's' },
          { name: `live report, ${name}: re-solve and redraw`, value: median(solve.map((s, i) => s + redraw[i]!)), unit: 's', target: TARGET[n] },
          { name: `live report, ${name}: until the browser has laid out and painted the new page`, value: median(painted), unit: 's' },
          { name: `live report, ${name}: change to painted page, seen from the test side`, value: median(wall), unit: 's' },
        );
      }
    } finally {
      await context.close();
    }
  } finally {
    rmSync(folder, { recursive: true, force: true });
    rmSync(profile, { recursive: true, force: true });
  }
  return rows;
}

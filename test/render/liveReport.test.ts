import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { build } from 'vite';
import { layoutToChip, loadLayout, parseLayout, readLayoutText } from '../../src/layout/load.js';
import { parseDataText } from '../../src/files.js';
import { solveChip, type ChipSolution } from '../../src/analyses/chip.js';
import { findManifolds } from '../../src/analyses/manifolds.js';
import { chipReport } from '../../src/render/report.js';
import { jsonNumbers } from '../../src/cli/context.js';
import { fmt } from '../../src/units/format.js';
import { watchProblems } from '../support/pageProblems.js';

/**
 * The live report in a real browser: Debian's chromium driven by playwright-core (the reference
 * browser of this project, as in ./browser.test.ts). The page script is bundled here with the
 * project's own vite configuration, so the test needs no earlier build. Screenshots before and
 * after a change go to out/ for a person to look at.
 */
const CHROMIUM = '/usr/bin/chromium';
const haveChromium = existsSync(CHROMIUM);
if (!haveChromium) console.warn(`live report test skipped: ${CHROMIUM} is missing (apt-get install chromium)`);

const DEMO = 'layouts/enzyme-atps-16.yaml';
const SCREENSHOTS = 'out';

/** The solution as `solve --json` prints it (SI units, non-finite numbers as null). */
const asJson = (result: ChipSolution) => JSON.parse(JSON.stringify(result, jsonNumbers)) as ChipSolution;

/** `solve --json` of the demo layout with inB held at `pressure` (Pa) instead of its flow. */
function referenceWithInB(pressure: number): ChipSolution {
  const layout = parseDataText(readLayoutText(DEMO), DEMO, 'layout file') as { nodes: Array<Record<string, unknown>> };
  const inB = layout.nodes.find((n) => n.id === 'inB')!;
  delete inB.flow;
  inB.pressure = pressure;
  return asJson(solveChip(layoutToChip(layout, DEMO)).result);
}

/**
 * Flows agree to 1e-9 of the largest flow: both solves settle every mass balance to 1e-12 of the
 * throughput (the solver's convergence test), so 1e-9 leaves room for the different start points.
 */
function expectSameSolution(page: ChipSolution, reference: ChipSolution): void {
  expect(page.converged).toBe(true);
  const scale = Math.max(...reference.segments.map((s) => Math.abs(s.flowA) + Math.abs(s.flowB)));
  expect(page.segments.map((s) => s.id)).toEqual(reference.segments.map((s) => s.id));
  page.segments.forEach((s, i) => {
    const r = reference.segments[i]!;
    expect(Math.abs(s.flowA - r.flowA), s.id).toBeLessThanOrEqual(1e-9 * scale);
    expect(Math.abs(s.flowB - r.flowB), s.id).toBeLessThanOrEqual(1e-9 * scale);
  });
  expect(page.splits.map((s) => s.state)).toEqual(reference.splits.map((s) => s.state));
  expect(page.contactors.map((c) => c.state)).toEqual(reference.contactors.map((c) => c.state));
}

describe.skipIf(!haveChromium)('the live report in headless chromium', () => {
  let context: BrowserContext;
  let profile: string;
  let pages: string;
  let file: string;
  const problems: string[] = [];

  beforeAll(async () => {
    profile = mkdtempSync(join(tmpdir(), 'stratiflow-chromium-'));
    pages = mkdtempSync(join(tmpdir(), 'stratiflow-live-'));
    mkdirSync(SCREENSHOTS, { recursive: true });
    await build({ configFile: 'vite.page.config.ts', logLevel: 'silent', build: { outDir: join(pages, 'bundle'), emptyOutDir: true } });
    const scriptBase64 = readFileSync(join(pages, 'bundle', 'live.js')).toString('base64');
    const solved = solveChip(loadLayout(DEMO));
    file = join(pages, 'report.html');
    const layout = parseDataText(readLayoutText(DEMO), DEMO, 'layout file');
    writeFileSync(file, chipReport(solved, findManifolds(solved), { live: { scriptBase64, layout, solution: asJson(solved.result) } }));
    context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      acceptDownloads: true,
      viewport: { width: 1280, height: 900 },
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
  }, 120_000);

  afterAll(async () => {
    await context?.close();
    rmSync(profile, { recursive: true, force: true });
    rmSync(pages, { recursive: true, force: true });
  });

  async function open(): Promise<Page> {
    const page = await context.newPage();
    watchProblems(page, problems);
    await page.goto(`file://${file}`, { waitUntil: 'load' });
    return page;
  }

  /** Types `value` into a setting field as a user does, and waits for the page's next solve. */
  async function change(page: Page, setting: string, value: number): Promise<ChipSolution> {
    const before = Number(await page.evaluate(() => document.body.dataset.solves ?? '0'));
    const field = page.locator(`input[data-setting="${setting}"]`);
    await field.fill(String(value));
    await field.press('Enter');
    await field.dispatchEvent('change');
    await page.waitForFunction((n) => Number(document.body.dataset.solves ?? '0') > n, before, { timeout: 60_000 });
    return (await page.evaluate(() => globalThis.stratiflowSolution)) as ChipSolution;
  }

  it('starts from the solution of the layout, as solve --json gives it', async () => {
    const page = await open();
    expectSameSolution((await page.evaluate(() => globalThis.stratiflowSolution)) as ChipSolution, asJson(solveChip(loadLayout(DEMO)).result));
    expect(await page.locator('input[data-setting]').count()).toBe(6);
    await page.close();
    expect(problems).toEqual([]);
  });

  it('solves again when inB.pressure is raised by 100 Pa through its field, as solve --json of the changed layout does', async () => {
    const page = await open();
    await page.screenshot({ path: join(SCREENSHOTS, 'live-report-before.png'), fullPage: false });
    const shown = Number(await page.locator('input[data-setting="inB.pressure"]').inputValue());
    const solution = await change(page, 'inB.pressure', shown + 100);
    expectSameSolution(solution, referenceWithInB(shown + 100));
    expect(solution.summary.inlets.find((i) => i.id === 'inB')!.pressure).toBeCloseTo(shown + 100, 6);
    // The page was redrawn from that solution: its summary names the new inlet pressure.
    expect(await page.locator('#live-results').textContent()).toContain(`inlet inB (B)${fmt((shown + 100) * 1e-3)} kPa`);
    await page.screenshot({ path: join(SCREENSHOTS, 'live-report-after.png'), fullPage: false });
    await page.locator('.drawing').screenshot({ path: join(SCREENSHOTS, 'live-report-drawing-after.png') });
    await page.close();
    expect(problems).toEqual([]);
  });

  it('returns to the layout\'s settings on reset', async () => {
    const page = await open();
    const shown = Number(await page.locator('input[data-setting="inB.pressure"]').inputValue());
    await change(page, 'inB.pressure', shown + 500);
    const before = Number(await page.evaluate(() => document.body.dataset.solves));
    await page.locator('#live-reset').click();
    await page.waitForFunction((n) => Number(document.body.dataset.solves) > n, before);
    expectSameSolution((await page.evaluate(() => globalThis.stratiflowSolution)) as ChipSolution, asJson(solveChip(loadLayout(DEMO)).result));
    await page.close();
    expect(problems).toEqual([]);
  });

  it('downloads the layout with the new settings as YAML that loads to the same chip', async () => {
    const page = await open();
    const shown = Number(await page.locator('input[data-setting="inB.pressure"]').inputValue());
    await change(page, 'inB.pressure', shown + 100);
    const [download] = await Promise.all([page.waitForEvent('download'), page.locator('#live-download').click()]);
    const text = readFileSync((await download.path())!, 'utf8');
    const chip = parseLayout(text, 'downloaded.yaml');
    const inB = chip.nodes.find((n) => n.id === 'inB')!;
    expect(inB.kind === 'inlet' && inB.flow === undefined && Math.abs(inB.pressure! - inB.head - (shown + 100)) < 1e-9).toBe(true);
    expectSameSolution(asJson(solveChip(chip).result), referenceWithInB(shown + 100));
    await page.close();
    expect(problems).toEqual([]);
  });

  it('shows a contactor\'s values where the pointer rests', async () => {
    const page = await open();
    // Two fifths of the way along, clear of the flow arrow at the middle and the number at a quarter.
    const band = page.locator('.drawing g.contactor[data-index="5"] path.band').first();
    await band.scrollIntoViewIfNeeded();
    const box = (await band.boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + 0.4 * box.height);
    expect(await page.locator('#live-contactor').textContent()).toMatch(/^k5: A [\d.]+ µL\/min, B [\d.]+ µL\/min, holdup of A 0\.\d{4}/);
    await page.close();
    expect(problems).toEqual([]);
  });
});

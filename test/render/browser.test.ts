import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext } from 'playwright-core';
import { ladderLayout, treeLayout } from '../../src/layout/generate.js';
import { layoutToChip } from '../../src/layout/load.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { solveChip, type SolvedChip } from '../../src/analyses/chip.js';
import { analyseExtraction, type ExtractionResult } from '../../src/analyses/extraction.js';
import { chipReport } from '../../src/render/report.js';
import { findManifolds } from '../../src/analyses/manifolds.js';

/**
 * The report in a real browser: Debian's chromium driven by playwright-core (the reference
 * browser of this project; `.ci/run` installs it). The screenshots go to
 * $STRATIFLOW_SCREENSHOTS, or to stratiflow-screenshots in the system's temporary folder, for
 * a person to look at.
 */
const CHROMIUM = '/usr/bin/chromium';
const haveChromium = existsSync(CHROMIUM);
if (!haveChromium) console.warn(`browser test skipped: ${CHROMIUM} is missing (apt-get install chromium)`);

const SCREENSHOTS = process.env.STRATIFLOW_SCREENSHOTS ?? join(tmpdir(), 'stratiflow-screenshots');
const NAME = `browser <chip> & "co"`;

/** Invented demo values: a 16-contactor ladder with one outlet raised so that splits leak both ways. */
function leakyLadder(): SolvedChip {
  const layout = ladderLayout({ contactors: 16, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } });
  (layout.nodes.find((n) => n.id === 'outB') as { pressure: unknown }).pressure = 600;
  return solveChip(layoutToChip(layout, 'ladder.yaml'));
}

/** A small ladder with its coordinates removed and markup characters in its strings. */
function withoutCoordinates(): SolvedChip {
  const layout = ladderLayout({ contactors: 3, drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } });
  const bare: LayoutFile = { ...layout, name: NAME, nodes: layout.nodes.map(({ x: _x, y: _y, ...n }) => n) as LayoutFile['nodes'] };
  return solveChip(layoutToChip(bare, 'bare.yaml'));
}

/** The leaky ladder with the extraction of an invented demo solute. */
function ladderExtraction(solved: SolvedChip): ExtractionResult {
  return analyseExtraction(solved, { label: 'demo dye', partition: 4, feedPhase: 'A', feedConcentration: 1, diffusivityA: 0.5e-9, diffusivityB: 1e-9 });
}

const CASES: Array<[string, () => SolvedChip, ((solved: SolvedChip) => ExtractionResult)?]> = [
  ['ladder-16', leakyLadder],
  ['tree-16', () => solveChip(layoutToChip(treeLayout({ drive: { A: { pressure: 10e3 }, B: { pressure: 8e3 } } }), 'tree.yaml'))],
  ['no-coordinates', withoutCoordinates],
  ['ladder-16-extraction', leakyLadder, ladderExtraction],
];

describe.skipIf(!haveChromium)('the HTML report in headless chromium', () => {
  let context: BrowserContext;
  let profile: string;
  let pages: string;

  beforeAll(async () => {
    profile = mkdtempSync(join(tmpdir(), 'stratiflow-chromium-'));
    pages = mkdtempSync(join(tmpdir(), 'stratiflow-report-'));
    mkdirSync(SCREENSHOTS, { recursive: true });
    // A fresh profile, and no network, sync, update or first-run traffic of the browser's own.
    context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      viewport: { width: 1280, height: 900 },
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
  });

  afterAll(async () => {
    await context?.close();
    rmSync(profile, { recursive: true, force: true });
    rmSync(pages, { recursive: true, force: true });
  });

  for (const [name, solve, extract] of CASES) {
    it(`opens the report of ${name} without console errors or requests, and takes its screenshot`, async () => {
      const solved = solve();
      const extraction = extract?.(solved);
      const file = join(pages, `${name}.html`);
      writeFileSync(file, chipReport(solved, findManifolds(solved), { extraction }));
      const page = await context.newPage();
      const problems: string[] = [];
      page.on('console', (m) => {
        if (m.type() === 'error' || m.type() === 'warning') problems.push(`console ${m.type()}: ${m.text()}`);
      });
      page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
      page.on('request', (r) => {
        if (!r.url().startsWith('file:')) problems.push(`request: ${r.url()}`);
      });
      await page.goto(`file://${file}`, { waitUntil: 'load' });

      // What the browser's HTML parser made of the page.
      expect(await page.title()).toBe(`${solved.chip.name} — stratiflow report`);
      expect(await page.locator('h1').textContent()).toBe(solved.chip.name);
      const contactors = solved.result.segments.filter((s) => s.kind === 'contactor').length;
      expect(await page.locator('.drawing svg g.contactor').count()).toBe(contactors);
      expect(await page.locator('.drawing svg line.interface').count()).toBe(contactors);
      expect(await page.locator('figure.chart > svg').count()).toBe(extraction ? 7 : 5);
      expect(await page.locator('.drawing svg g.contactor.by-approach').count()).toBe(extraction ? contactors : 0);
      expect(await page.locator('.drawing svg g.colour-bar.approach').count()).toBe(extraction ? 1 : 0);
      const sizes = await page.locator('.drawing > svg, figure.chart > svg').evaluateAll((all) => all.map((s) => s.getBoundingClientRect()).map((r) => r.width * r.height));
      expect(sizes.every((a) => a > 0)).toBe(true);

      const shot = join(SCREENSHOTS, `report-${name}.png`);
      await page.screenshot({ path: shot, fullPage: true });
      await page.locator('.drawing').screenshot({ path: join(SCREENSHOTS, `drawing-${name}.png`) });
      await page.close();
      // A PNG file: its eight-byte signature (ISO/IEC 15948:2004, section 5.2).
      expect(readFileSync(shot).subarray(0, 8)).toEqual(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]));
      expect(problems).toEqual([]);
    });
  }
});

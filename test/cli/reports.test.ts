/**
 * `--report FILE` of tune, tolerance, extract and window, as a user runs them: each writes one
 * self-contained, well-formed HTML page with the analysis as the command prints it, the chip
 * report, and (where the page script is built, `npm run build`) the live operating point; a
 * report path in a missing folder is refused before the work starts. Layouts: generated ladders
 * the bundled dye demo and the hand-worked single contactor of test/support/handWindow.ts
 * (invented demo values).
 */
import { describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { XMLValidator } from 'fast-xml-parser';
import { ladderLayout } from '../../src/layout/generate.js';
import { pageScript } from '../../src/cli/pageScript.js';
import { runCli } from '../support/cli.js';
import { singleContactor } from '../support/handWindow.js';

const live = pageScript() !== undefined;
if (!live) console.warn('report tests: dist/page/live.js is not built (npm run build); the live part is not checked');

function expectReport(path: string, heading: string): string {
  const html = readFileSync(path, 'utf8');
  expect(html.startsWith('<!DOCTYPE html>')).toBe(true);
  expect(XMLValidator.validate(html)).toBe(true);
  expect(html).toContain(`<h2>${heading}</h2>`);
  expect(html).toContain('<h2>Chip drawing</h2>');
  if (live) expect(html).toMatch(/<input id="field-[^"]+" type="number" step="any" data-setting="inA\.(pressure|flow)"/);
  expect(html).not.toMatch(/<link|<img|<iframe|@import|src=/i);
  return html;
}

describe('--report', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-reports-'));
  const ladder = join(dir, 'ladder.yaml');
  writeFileSync(ladder, stringify(ladderLayout({ contactors: 4 })));
  const one = join(dir, 'one.yaml');
  writeFileSync(one, stringify(singleContactor()));
  const windowArgs = ['window', one, '--x-range', '6:9kPa', '--x-steps', '7', '--y-range', '6kPa:9.5kPa', '--y-steps', '7', '--workers', '1', '--svg', join(dir, 'map.svg')];

  it('tune writes the tuning beside the tuned chip, live from the tuned settings', async () => {
    const report = join(dir, 'tune.html');
    const { code, err } = await runCli(['tune', ladder, '--throughput', '16uL/min', '--ratio', '0.18', '--vary', 'inA.pressure', '--vary', 'inB.pressure', '--vary', 'outA.pressure=0:5kPa', '--report', report]);
    expect(err).toBe('');
    expect(code).toBe(0);
    const html = expectReport(report, 'Tuning');
    expect(html).toContain('ladder-tuned.yaml');
  });

  it('tolerance writes the study and its charts beside the nominal chip', async () => {
    const report = join(dir, 'tolerance.html');
    const { code } = await runCli(['tolerance', ladder, '--depth', '1%', '--samples', '12', '--workers', '1', '--report', report]);
    expect(code).toBe(0);
    const html = expectReport(report, 'Tolerance study');
    expect(html).toMatch(/<figure class="chart" id="analysis-[^"]+"><svg/);
  });

  it('extract writes the extraction into the chip report', async () => {
    const report = join(dir, 'extract.html');
    const { code } = await runCli(['extract', 'layouts/dye-octanol-8.yaml', '--report', report]);
    expect(code).toBe(0);
    expectReport(report, 'Extraction');
  });

  it('window writes the map and its summary beside the chip at the layout\'s settings, live from them', async () => {
    const report = join(dir, 'window.html');
    const { code, err, out } = await runCli([...windowArgs, '--report', report]);
    expect(err).toBe('');
    expect(code).toBe(0);
    const html = expectReport(report, 'Operating window');
    // The map as the --svg file has it (with the traced region), live with the point the page
    // moves (hidden until a setting changes, tested in ./windowReport.test.ts), and the summary as printed.
    const map = readFileSync(join(dir, 'map.svg'), 'utf8');
    expect(map).toContain('working region (traced)');
    expect(map).not.toContain('movable-point');
    const shown = html.match(/<figure class="chart" id="analysis-window-map">(<svg.*?<\/svg>)<\/figure>/s)![1]!;
    if (live) {
      expect(shown).toContain('<g class="movable-point" visibility="hidden"');
      expect(shown).toContain('live: the settings of the page');
    } else {
      expect(shown).toBe(map);
    }
    expect(html).toContain(out.split('\n')[0]!.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;'));
    // The live part starts from the layout as given: inA at 7 kPa (test/support/handWindow.ts).
    if (live) expect(html).toMatch(/data-setting="inA\.pressure" value="7000"/);
  });

  it('refuses a report in a missing folder before the work starts, with one line and exit status 5', async () => {
    const missing = join(dir, 'no-such-folder', 'r.html');
    for (const args of [['tune', ladder, '--throughput', '16uL/min', '--report', missing], ['tolerance', ladder, '--depth', '1%', '--report', missing], ['extract', 'layouts/dye-octanol-8.yaml', '--report', missing], [...windowArgs, '--report', missing]]) {
      const { code, err } = await runCli(args);
      expect(code).toBe(5);
      expect(err.trim().split('\n')).toHaveLength(1);
      expect(err).toMatch(/--report/);
      expect(existsSync(missing)).toBe(false);
    }
  });
});

/**
 * `stratiflow window` as a user runs it, on the hand-worked single-contactor chip of
 * test/support/handWindow.ts: the files it writes and its summary, the traced region in the
 * JSON, and a range given the wrong way round; and with no options on the bundled enzyme chip,
 * whose working region is a band a few pascals wide. The map itself is checked against the hand
 * example in test/analyses/window.test.ts, the traced region in test/analyses/windowRegion.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLValidator } from 'fast-xml-parser';
import { stringify } from 'yaml';
import { runCli } from '../support/cli.js';
import { fileURLToPath } from 'node:url';
import { A1, A2, HAND, singleContactor } from '../support/handWindow.js';
import { segmentMeetsBox } from '../../src/analyses/windowFill.js';

describe('stratiflow window', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-window-'));
  const file = join(dir, 'one.yaml');
  writeFileSync(file, stringify(singleContactor()));

  it('writes the map, the grid as CSV and JSON, and a summary with the cautions', async () => {
    const svg = join(dir, 'map.svg');
    const csv = join(dir, 'map.csv');
    const json = join(dir, 'map.json');
    const { code, out, err } = await runCli(['window', file, '--x-range', '6:9kPa', '--x-steps', '13', '--y-range', '6kPa:9.5kPa', '--y-steps', '15', '--workers', '1', '--svg', svg, '--csv', csv, '--json', json]);
    expect(err).toBe('');
    expect(code).toBe(0);
    expect(XMLValidator.validate(readFileSync(svg, 'utf8'))).toBe(true);
    expect(readFileSync(svg, 'utf8')).toMatch(/inA\.pressure \(kPa\)/);
    const rows = readFileSync(csv, 'utf8').trim().split('\n');
    expect(rows[0]).toMatch(/^i,j,inA\.pressure_kPa,inB\.pressure_kPa,class,/);
    expect(rows).toHaveLength(1 + 13 * 15);
    const grid = JSON.parse(readFileSync(json, 'utf8'));
    expect(grid.points).toHaveLength(15);
    expect(grid.current).toEqual([7000, 7750]);
    expect(out).toMatch(/as given: inA\.pressure = 7 kPa, inB\.pressure = 7\.75 kPa \(all splits pinned\)/);
    expect(out).toMatch(/lab safety rules/);
    // The traced region: closed, its split pieces on the hand-derived lines a₁p_A + a₂p_B = ±200 Pa
    // (to 1e-6 of the window; the hand constants carry 7 digits).
    expect(grid.region.closed).toBe(true);
    for (const piece of grid.region.pieces.filter((p: { limit: { kind: string } }) => p.limit.kind.startsWith('split'))) {
      const limit = piece.limit.kind === 'split-low' ? HAND.low : HAND.high;
      for (const [pA, pB] of piece.points) expect(Math.abs(A1 * pA + A2 * pB - limit) / (HAND.high - HAND.low)).toBeLessThan(1e-6);
    }
    expect(out).toMatch(/working region .* traced exactly: closed/);
    // Every grid step that the traced boundary crosses has its four corners solved, not filled
    // (src/analyses/windowFill.ts); the files say which points were solved.
    expect(rows[0]).toMatch(/,class,solved,/);
    expect(grid.fill.solved + grid.fill.filled).toBe(13 * 15);
    const { points, xValues, yValues } = grid as { points: Array<Array<{ solved: boolean }>>; xValues: number[]; yValues: number[] };
    const polygon = grid.region.polygon as Array<[number, number]>;
    let crossed = 0;
    for (let j = 0; j + 1 < yValues.length; j++) {
      for (let i = 0; i + 1 < xValues.length; i++) {
        const box = { x: [xValues[i]!, xValues[i + 1]!] as [number, number], y: [yValues[j]!, yValues[j + 1]!] as [number, number] };
        if (!polygon.some((a, k) => k + 1 < polygon.length && segmentMeetsBox(a, polygon[k + 1]!, box))) continue;
        crossed++;
        for (const [a, b] of [[i, j], [i + 1, j], [i, j + 1], [i + 1, j + 1]] as const) expect(points[b]![a]!.solved, `${a},${b}`).toBe(true);
      }
    }
    expect(crossed).toBeGreaterThan(0);
  });

  it('draws the enzyme chip\'s working band with no options: mean and difference axes, the band a few pascals wide around the point as given', async () => {
    const enzyme = fileURLToPath(new URL('../../layouts/enzyme-atps-16.yaml', import.meta.url));
    const svg = join(dir, 'enzyme.svg');
    const json = join(dir, 'enzyme.json');
    // A coarse grid keeps the test short; the band itself is traced, not sampled.
    const { code, out } = await runCli(['window', enzyme, '--x-steps', '5', '--y-steps', '5', '--workers', '1', '--svg', svg, '--json', json]);
    expect(code).toBe(0);
    expect(out).toMatch(/axes: the mean and the difference of inA\.pressure and inB\.pressure/);
    const map = JSON.parse(readFileSync(json, 'utf8'));
    expect(map.spec.coordinates).toBe('mean-difference');
    expect(map.region.closed).toBe(true);
    const kinds = new Set(map.region.pieces.map((p: { limit: { kind: string } }) => p.limit.kind));
    expect(kinds.has('split-low') && kinds.has('split-high')).toBe(true);
    // The band: the difference of the inlet pressures may lie within about 9 Pa (16 splits on one line each side).
    const width = Number(/spans inA\.pressure − inB\.pressure [\d.]+ Pa … [\d.]+ Pa \(([\d.]+) Pa wide\)/.exec(out)?.[1]);
    expect(width).toBeGreaterThan(5);
    expect(width).toBeLessThan(15);
    expect(readFileSync(svg, 'utf8')).toMatch(/class="region-piece"/);
    // The hold tolerances at the point as given, as solve --json gives them.
    expect(map.hold.settings.map((h: { setting: { node: string } }) => h.setting.node)).toContain('inA');
    expect(out).toMatch(/hold tolerances/);
  });

  it('refuses a range whose ends are the wrong way round, naming the option', async () => {
    const { code, err } = await runCli(['window', file, '--x-range', '9kPa:6kPa', '--y-range', '6kPa:9kPa']);
    expect(code).toBe(2);
    expect(err).toMatch(/--x-range: the first end must be below the second/);
  });
});

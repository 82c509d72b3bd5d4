/**
 * `stratiflow window` as a user runs it, on the hand-worked single-contactor chip of
 * test/support/handWindow.ts: the files it writes and its summary, and a range given the wrong
 * way round. The map itself is checked against the hand example in test/analyses/window.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLValidator } from 'fast-xml-parser';
import { stringify } from 'yaml';
import { runCli } from '../support/cli.js';
import { singleContactor } from '../support/handWindow.js';

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
  });

  it('refuses a range whose ends are the wrong way round, naming the option', async () => {
    const { code, err } = await runCli(['window', file, '--x-range', '9kPa:6kPa', '--y-range', '6kPa:9kPa']);
    expect(code).toBe(2);
    expect(err).toMatch(/--x-range: the first end must be below the second/);
  });
});

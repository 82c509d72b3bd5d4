/**
 * `stratiflow make ladder|tree`: the written layouts load and validate, draw every node at a
 * position, and solve, both through the library and through `stratiflow solve`.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parse } from 'yaml';
import { runCli } from '../support/cli.js';
import { loadLayout } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';


const dir = mkdtempSync(join(tmpdir(), 'stratiflow-make-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const cases: Array<{ name: string; args: string[]; contactors: number }> = [
  { name: 'ladder.yaml', args: ['ladder', '--contactors', '8'], contactors: 8 },
  { name: 'ladder-middle.json', args: ['ladder', '--contactors', '5', '--inlets', 'middle', '--outlets', 'middle', '--tube-diameter', '250um'], contactors: 5 },
  { name: 'ladder-same.yaml', args: ['ladder', '--contactors', '6', '--outlets', 'same', '--pressure-a', '25 kPa', '--flow-b', '20 uL/min'], contactors: 6 },
  { name: 'tree.json', args: ['tree', '--levels', '3'], contactors: 8 },
  { name: 'tree-stacked.yaml', args: ['tree', '--levels', '2', '--orientation', 'stacked', '--contactor-width', '400um', '--depth', '60um'], contactors: 4 },
];

describe('stratiflow make', () => {
  for (const c of cases) {
    describe(`make ${c.args.join(' ')}`, () => {
      const file = join(dir, c.name);

      it('writes a layout file that loads and validates', async () => {
        const { code, err } = await runCli(['make', ...c.args, '--out', file]);
        expect(err).toBe('');
        expect(code).toBe(0);
        const text = readFileSync(file, 'utf8');
        expect(c.name.endsWith('.json') ? JSON.parse(text) : parse(text)).toHaveProperty('nodes');
        const chip = loadLayout(file);
        expect(chip.segments.filter((s) => chip.nodes.find((n) => n.id === s.from)?.kind === 'merge')).toHaveLength(c.contactors);
      });

      it('gives every node a drawing position', () => {
        const chip = loadLayout(file);
        for (const node of chip.nodes) {
          expect(Number.isFinite(node.x), `x of ${node.id}`).toBe(true);
          expect(Number.isFinite(node.y), `y of ${node.id}`).toBe(true);
        }
      });

      it('solves', async () => {
        const { result } = solveChip(loadLayout(file));
        expect(result.converged, `${result.message ?? ''} ${result.unsettled.join(', ')}`).toBe(true);
        expect(result.contactors).toHaveLength(c.contactors);
        const { code, out } = await runCli(['solve', file, '--json']);
        expect(code).toBe(0);
        expect(JSON.parse(out).converged).toBe(true);
      });
    });
  }

  it('writes chips whose splits are all pinned as generated: the default ladder and tree, their B back-pressure centred', async () => {
    for (const [name, args] of [['default-ladder.yaml', ['ladder']], ['default-tree.yaml', ['tree']]] as const) {
      const file = join(dir, name);
      const { code, out } = await runCli(['make', ...args, '--out', file]);
      expect(code).toBe(0);
      expect(out).toMatch(/outB back-pressure [\d.]+ Pa: (\d+) of \1 splits pinned/);
      const { result } = solveChip(loadLayout(file));
      expect(result.splits.every((s) => s.state === 'pinned'), name).toBe(true);
    }
  });

  it('keeps a back-pressure that is given', async () => {
    const file = join(dir, 'given.yaml');
    await runCli(['make', 'ladder', '--contactors', '4', '--outlet-b', '0', '--out', file]);
    expect(loadLayout(file).nodes.find((n) => n.id === 'outB')).toMatchObject({ pressure: 0 });
  });

  it('with --design sizes the feeds and outlet arms of a Z-shaped ladder for even flow, every split pinned', async () => {
    const file = join(dir, 'designed.yaml');
    const { code, out } = await runCli(['make', 'ladder', '--contactors', '8', '--outlets', 'opposite', '--design', '--out', file]);
    expect(code).toBe(0);
    expect(out).toMatch(/designed: flow per contactor CV/);
    const { result } = solveChip(loadLayout(file));
    expect(result.splits.every((s) => s.state === 'pinned')).toBe(true);
    expect(result.summary.spread.flowA.cv).toBeLessThanOrEqual(0.01);
    expect(result.summary.spread.flowB.cv).toBeLessThanOrEqual(0.01);
  });

  it('prints the layout as YAML on standard output without --out', async () => {
    const { code, out } = await runCli(['make', 'tree', '--levels', '1']);
    expect(code).toBe(0);
    const layout = parse(out);
    expect(layout.nodes.filter((n: { type: string }) => n.type === 'merge')).toHaveLength(2);
  });

  it('rejects a contactor count that is not a whole number, in one line with exit status 2', async () => {
    const { code, out, err } = await runCli(['make', 'ladder', '--contactors', '2.5']);
    expect(code).toBe(2);
    expect(out).toBe('');
    expect(err.trim().split('\n')).toHaveLength(1);
    expect(err).toMatch(/--contactors/);
  });

  it('refuses a tree deeper than eleven levels, whose leaf branches would be shorter than 1 um, in one line with exit status 2', async () => {
    const { code, out, err } = await runCli(['make', 'tree', '--levels', '12']);
    expect(code).toBe(2);
    expect(out).toBe('');
    expect(err.trim().split('\n')).toHaveLength(1);
    expect(err).toMatch(/--levels/);
  });
});

/**
 * `stratiflow solve FILE` as a user runs it: the JSON contract (`--json`), the readable table,
 * the dense linear solver option, and the example layouts shipped in layouts/.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { stringify } from 'yaml';
import { runCli } from '../support/cli.js';
import { singleContactorLayout, wellDesignedLadder } from '../support/layouts.js';
import { ladderLayout } from '../../src/layout/generate.js';


const dir = mkdtempSync(join(tmpdir(), 'stratiflow-solve-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const LAYOUTS = fileURLToPath(new URL('../../layouts/', import.meta.url));

function write(name: string, layout: object): string {
  const file = join(dir, name);
  writeFileSync(file, name.endsWith('.json') ? JSON.stringify(layout) : stringify(layout));
  return file;
}

/** Every number anywhere in a parsed JSON value, with its path. */
function numbersIn(value: unknown, path = ''): Array<[string, number]> {
  if (typeof value === 'number') return [[path, value]];
  if (Array.isArray(value)) return value.flatMap((v, i) => numbersIn(v, `${path}[${i}]`));
  if (value && typeof value === 'object') return Object.entries(value).flatMap(([k, v]) => numbersIn(v, `${path}.${k}`));
  return [];
}

const isFiniteNumber = (v: unknown) => typeof v === 'number' && Number.isFinite(v);

/** The contract of `solve --json` (tracker issue 3). */
function expectContract(json: Record<string, unknown>): void {
  expect(typeof json.converged).toBe('boolean');
  expect(Number.isInteger(json.iterations)).toBe(true);
  const nodes = json.nodes as Array<Record<string, unknown>>;
  const segments = json.segments as Array<Record<string, unknown>>;
  const splits = json.splits as Array<Record<string, unknown>>;
  expect(nodes.length).toBeGreaterThan(0);
  for (const n of nodes) {
    expect(typeof n.id).toBe('string');
    expect(isFiniteNumber(n.pressure), `pressure of ${n.id}`).toBe(true);
  }
  for (const s of segments) {
    expect(typeof s.id).toBe('string');
    for (const key of ['flowA', 'flowB', 'pressureDrop']) expect(isFiniteNumber(s[key]), `${key} of ${s.id}`).toBe(true);
    expect(s.holdupA === null || (isFiniteNumber(s.holdupA) && (s.holdupA as number) >= 0 && (s.holdupA as number) <= 1), `holdupA of ${s.id}`).toBe(true);
  }
  for (const s of splits) {
    expect(typeof s.id).toBe('string');
    expect(['pinned', 'leaking-A-to-B', 'leaking-B-to-A']).toContain(s.state);
    expect(isFiniteNumber(s.pressureDifference)).toBe(true);
    expect(s.window).toHaveLength(2);
    expect((s.window as unknown[]).every(isFiniteNumber)).toBe(true);
    for (const key of ['purityNear', 'purityFar']) {
      expect(isFiniteNumber(s[key]), `${key} of ${s.id}`).toBe(true);
      expect(s[key] as number).toBeGreaterThanOrEqual(0);
      expect(s[key] as number).toBeLessThanOrEqual(1 + 1e-12);
    }
  }
}

describe('stratiflow solve --json', () => {
  const layout = singleContactorLayout({ outletPressure: { A: 0, B: 150 } });
  const file = write('pinned.yaml', layout);

  it('prints one JSON object with converged, iterations, nodes, segments and splits', async () => {
    const { code, out, err } = await runCli(['solve', file, '--json']);
    expect(err).toBe('');
    expect(code).toBe(0);
    expect(out.trim().startsWith('{')).toBe(true);
    const json = JSON.parse(out);
    expectContract(json);
    expect(json.converged).toBe(true);
    expect(json.nodes.map((n: { id: string }) => n.id)).toEqual(['inA', 'inB', 'm', 's', 'outA', 'outB']);
    expect(json.segments.map((s: { id: string }) => s.id)).toEqual(['fA', 'fB', 'k', 'oA', 'oB']);
    expect(json.splits).toHaveLength(1);
    expect(json.splits[0]).toMatchObject({ id: 's', state: 'pinned', window: [-200, 200] });
  });

  it('carries the hold tolerance of every setting: how far it may move each way with the split pinned, and what bounds it', async () => {
    const json = JSON.parse((await runCli(['solve', file, '--json'])).out);
    const names = json.hold.settings.map((h: { setting: { node: string; quantity: string } }) => `${h.setting.node}.${h.setting.quantity}`);
    expect(names).toEqual(['inA.pressure', 'inB.pressure', 'outA.pressure', 'outB.pressure']);
    for (const h of json.hold.settings) {
      expect(h.down).toBeGreaterThan(0);
      expect(h.up).toBeGreaterThan(0);
      expect(h.upLimit.split).toBe('s');
      // The head of a pressure excursion is Δp/(ρ·g) of the liquid at that node (g standard, 9.80665 m/s²).
      const density = { A: Number(layout.phases.A.density), B: Number(layout.phases.B.density) }[h.liquid as 'A' | 'B'];
      expect(h.headUp).toBeCloseTo(h.up / (density * 9.80665), 12);
    }
  });

  it('writes no NaN and no Infinity anywhere, and only finite numbers', async () => {
    const leaking = write('leaking.json', singleContactorLayout({ outletPressure: { A: 0, B: 1000 } }));
    for (const f of [file, leaking]) {
      const { code, out } = await runCli(['solve', f, '--json']);
      expect(code).toBe(0);
      expect(out).not.toMatch(/NaN|Infinity/);
      for (const [path, value] of numbersIn(JSON.parse(out))) expect(Number.isFinite(value), path).toBe(true);
      expectContract(JSON.parse(out));
    }
  });

  it('reports a leaking split with its state, the window limit it sits at and the outlet purities', async () => {
    const { out } = await runCli(['solve', write('leak.yaml', singleContactorLayout({ outletPressure: { A: 0, B: 1000 } })), '--json']);
    const split = JSON.parse(out).splits[0];
    expect(split.state).toBe('leaking-B-to-A');
    expect(split.pressureDifference).toBeCloseTo(200, 6);
    expect(split.purityNear).toBeLessThan(1);
    expect(split.purityFar).toBe(1);
  });

  it('gives the same numbers with --linear dense', async () => {
    const ladder = write('ladder.yaml', wellDesignedLadder(4, { manifold: { width: 1e-3, depth: 100e-6 } }));
    const sparse = JSON.parse((await runCli(['solve', ladder, '--json'])).out);
    const dense = JSON.parse((await runCli(['solve', ladder, '--json', '--linear', 'dense'])).out);
    expect(dense.converged).toBe(true);
    const scale = Math.max(...sparse.segments.map((s: { flowA: number; flowB: number }) => Math.abs(s.flowA) + Math.abs(s.flowB)));
    sparse.segments.forEach((s: { flowA: number; flowB: number }, i: number) => {
      expect(Math.abs(dense.segments[i].flowA - s.flowA)).toBeLessThanOrEqual(1e-9 * scale);
      expect(Math.abs(dense.segments[i].flowB - s.flowB)).toBeLessThanOrEqual(1e-9 * scale);
    });
  });

  it('rejects an unknown linear solver in one line with exit status 2', async () => {
    const { code, out, err } = await runCli(['solve', file, '--linear', 'magic']);
    expect(code).toBe(2);
    expect(out).toBe('');
    expect(err.trim().split('\n')).toHaveLength(1);
    expect(err).toMatch(/--linear/);
    expect(err).toMatch(/sparse, dense/);
  });
});

describe('stratiflow --version', () => {
  it('prints the version of package.json', async () => {
    const { version } = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string };
    const { code, out } = await runCli(['--version']);
    expect(code).toBe(0);
    expect(out.trim()).toBe(version);
  });
});

describe('stratiflow solve', () => {
  it('prints the per-contactor table as text by default', async () => {
    const { code, out } = await runCli(['solve', write('text.yaml', singleContactorLayout())]);
    expect(code).toBe(0);
    expect(out).toMatch(/contactor/);
    expect(out).toMatch(/\bk\b/);
    expect(out).not.toMatch(/NaN|undefined/);
    expect(out).toMatch(/hold tolerances/);
    expect(out).toMatch(/inA\.pressure .* Pa … \+.* Pa/);
  });

  it('warns of a hold tolerance below what the controllers resolve, as the layout states it', async () => {
    // The split window of this chip (±200 Pa) lets each inlet pressure move by a few hundred pascals.
    const coarse = (await runCli(['solve', write('coarse.yaml', { ...singleContactorLayout(), controlResolution: { pressure: '1 kPa' } })])).out;
    expect(coarse).toMatch(/! inA\.pressure may move less than the 1000 Pa a pressure controller holds/);
    const fine = (await runCli(['solve', write('fine.yaml', { ...singleContactorLayout(), controlResolution: { pressure: '1 Pa' } })])).out;
    expect(fine).not.toMatch(/may move less than/);
  });

  for (const name of readdirSync(LAYOUTS).filter((f) => /\.ya?ml$|\.json$/.test(f))) {
    it(`solves the example layout ${name} and reports it converged`, async () => {
      const { code, out, err } = await runCli(['solve', join(LAYOUTS, name), '--json']);
      expect(err).toBe('');
      expect(code).toBe(0);
      const json = JSON.parse(out);
      expectContract(json);
      expect(json.converged).toBe(true);
    });
  }
});

describe('stratiflow solve and the loader', () => {
  it('prints what the loader found suspicious among the warnings: a merge and split listed the other way from the rest', async () => {
    const layout = ladderLayout({ contactors: 4 });
    for (const node of layout.nodes) {
      if (node.id === 'm2' && node.type === 'merge') node.inlets = ['fB2', 'fA2'];
      if (node.id === 's2' && node.type === 'split') node.outlets = ['oB2', 'oA2'];
    }
    const file = join(dir, 'swapped.yaml');
    writeFileSync(file, stringify(layout));
    const { out } = await runCli(['solve', file]);
    expect(out).toMatch(/merge m2: phase B on the near side/);
  });
});

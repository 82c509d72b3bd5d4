/**
 * `stratiflow solve` on broken layout files: every problem is reported on one line of its own
 * that names the file, the element (and the field), the exit status is 2, and nothing else is
 * printed (no stack trace, no partial result).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { main } from '../../src/cli/main.js';
import type { LayoutFile } from '../../src/layout/schema.js';
import { layoutOf, rect, singleContactorLayout } from '../support/layouts.js';
import { runCli } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'stratiflow-bad-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let counter = 0;

function write(content: string | object, extension = 'yaml'): string {
  const file = join(dir, `layout${++counter}.${extension}`);
  writeFileSync(file, typeof content === 'string' ? content : JSON.stringify(content, null, 2));
  return file;
}

async function solve(file: string): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(['node', 'stratiflow', 'solve', file], { out: (s) => (out += s), err: (s) => (err += s) });
  return { code, out, err };
}

/** One expected problem: the element (and field) it names and words of its message. */
interface Problem {
  element?: string;
  field?: string;
  message: RegExp;
}

/** Exit status 2, nothing on stdout, and exactly one line per problem, each naming its place. */
async function expectProblems(content: string | object, problems: Problem[], extension?: string): Promise<void> {
  const file = write(content, extension);
  const { code, out, err } = await solve(file);
  expect(code).toBe(2);
  expect(out).toBe('');
  const lines = err.split('\n').filter((line) => line !== '');
  expect(lines[0]).toMatch(/^stratiflow: /);
  expect(err).not.toMatch(/^\s+at /m);
  expect(err).not.toMatch(/internal error|TypeError|ReferenceError|ZodError|\bError:/);
  expect(lines, err).toHaveLength(problems.length);
  for (const problem of problems) {
    const place = [file, problem.element, problem.field].filter((part) => part !== undefined).join(': ');
    const matching = lines.filter((line) => line.includes(`${place}: `) && problem.message.test(line));
    expect(matching, `${place}: ${problem.message} in\n${err}`).toHaveLength(1);
  }
}

const good = (): LayoutFile => singleContactorLayout();

describe('a layout with a topology error', () => {
  it('names a node that has no path to an outlet', async () => {
    const layout = good();
    layout.nodes.push({ id: 'island', type: 'junction' }, { id: 'reef', type: 'junction' });
    layout.segments.push(rect('causeway', 'island', 'reef', 100e-6, 50e-6, 1e-3));
    await expectProblems(layout, [{ element: 'node island', message: /no path to an outlet/ }]);
  });

  it('names a merge fed by a contactor instead of two single-phase inlets', async () => {
    const layout = good();
    // The contactor k (which starts at merge m) runs into a second merge m2 as its first inlet.
    layout.nodes = layout.nodes.filter((n) => n.id !== 'outB').map((n) => (n.id === 's' ? { id: 'm2', type: 'merge', inlets: ['k', 'fC'] } : n));
    layout.nodes.push({ id: 'inC', type: 'inlet', phase: 'B', pressure: 1e4 });
    layout.segments = layout.segments.filter((s) => s.id !== 'oA' && s.id !== 'oB').map((s) => (s.id === 'k' ? { ...s, to: 'm2' } : s));
    layout.segments.push(rect('fC', 'inC', 'm2', 100e-6, 50e-6, 5e-3), rect('k2', 'm2', 'outA', 200e-6, 50e-6, 20e-3));
    await expectProblems(layout, [{ element: 'node m2', field: 'inlets.0', message: /is itself a contactor; a merge needs two single-phase inlets/ }]);
  });

  it('names a merge with a third arriving segment', async () => {
    const layout = good();
    layout.nodes.push({ id: 'inC', type: 'inlet', phase: 'A', pressure: 1e4 });
    layout.segments.push(rect('fC', 'inC', 'm', 100e-6, 50e-6, 5e-3));
    await expectProblems(layout, [
      { element: 'node m', field: 'inlets', message: /exactly two arriving segments.*found 3/ },
      { element: 'segment fC', field: 'to', message: /ends at merge "m" but is not one of its inlets/ },
    ]);
  });

  it('names a split that is not fed by a contactor', async () => {
    const layout = good();
    // The contactor now ends at a junction, and the split is fed from there by a plain segment.
    layout.nodes.push({ id: 'j', type: 'junction' });
    layout.segments = layout.segments.map((s) => (s.id === 'k' ? { ...s, to: 'j' } : s));
    layout.segments.push(rect('plain', 'j', 's', 200e-6, 50e-6, 1e-3));
    await expectProblems(layout, [{ element: 'node s', message: /a split needs exactly one arriving segment, a contactor that starts at a merge/ }]);
  });

  it('names a split with one leaving segment', async () => {
    const layout = good();
    layout.segments = layout.segments.map((s) => (s.id === 'oB' ? { ...s, from: 'outA' } : s));
    await expectProblems(layout, [
      { element: 'node s', field: 'outlets.1', message: /segment "oB" does not start at this split/ },
      { element: 'node s', field: 'outlets', message: /exactly two leaving segments.*found 1/ },
    ]);
  });

  it('names duplicate ids of nodes and of a segment that reuses a node id', async () => {
    const layout = good();
    layout.nodes.push({ id: 'outA', type: 'outlet', pressure: 0 });
    layout.segments = layout.segments.map((s) => (s.id === 'oB' ? { ...s, id: 'outB' } : s));
    layout.nodes = layout.nodes.map((n) => (n.type === 'split' ? { ...n, outlets: ['oA', 'outB'] } : n));
    await expectProblems(layout, [
      { element: 'node outA', field: 'id', message: /duplicate id/ },
      { element: 'segment outB', field: 'id', message: /duplicate id/ },
    ]);
  });

  it('names unknown nodes and segments that elements refer to', async () => {
    const layout = good();
    layout.segments = layout.segments.map((s) => (s.id === 'oA' ? { ...s, to: 'nowhere' } : s));
    layout.nodes = layout.nodes.map((n) => (n.type === 'merge' ? { ...n, inlets: ['fA', 'fX'] } : n));
    await expectProblems(layout, [
      { element: 'segment oA', field: 'to', message: /unknown node "nowhere"/ },
      { element: 'node m', field: 'inlets.1', message: /unknown segment "fX"/ },
      { element: 'segment fB', field: 'to', message: /ends at merge "m" but is not one of its inlets/ },
      { element: 'node outA', message: /an outlet must have a segment/ },
    ]);
  });

  it('names every segment of zero or negative size, with the field', async () => {
    const layout = good();
    layout.segments = layout.segments.map((s) => {
      if (s.id === 'k') return { ...s, width: 0 };
      if (s.id === 'fA') return { ...s, length: -5e-3 };
      return s;
    });
    layout.nodes.push({ id: 'outC', type: 'outlet', pressure: 0 });
    layout.segments.push({ id: 'hose', from: 'inA', to: 'outC', shape: 'tube', diameter: -1e-4, length: 0.1 });
    await expectProblems(layout, [
      { element: 'segment k', field: 'width', message: /must be positive/ },
      { element: 'segment fA', field: 'length', message: /must be positive/ },
      { element: 'segment hose', field: 'diameter', message: /must be positive/ },
    ]);
  });

  it('names a chip without a pressure reference', async () => {
    const layout = layoutOf(
      'no reference',
      [
        { id: 'in', type: 'inlet', phase: 'A', flow: 1e-11 },
        { id: 'j', type: 'junction' },
      ],
      [rect('a', 'in', 'j', 100e-6, 50e-6, 1e-3)],
    );
    await expectProblems(layout, [{ element: 'chip', message: /no pressure reference/ }]);
  });
});

describe('a layout that breaks the file format', () => {
  it('names unknown keys at the top level and inside a segment', async () => {
    const layout = { ...good(), colour: 'red' } as LayoutFile;
    layout.segments[2] = { ...layout.segments[2]!, roughness: 1e-6 } as never;
    await expectProblems(layout, [
      { message: /unknown key "colour"/ },
      { element: 'segment k', message: /unknown key "roughness"/ },
    ]);
  });

  it('names quantities written in units of the wrong kind, and unknown units', async () => {
    const text = `
name: wrong units
phases:
  A: { viscosity: 6.5 mPa.s }
  B: { viscosity: 1.9 kPa }
splitWindow: { low: -200 Pa, high: 200 Pa }
nodes:
  - { id: in, type: inlet, phase: A, pressure: 10 um }
  - { id: out, type: outlet, pressure: 0 Pa }
segments:
  - { id: a, from: in, to: out, shape: rect, width: 100 kPa, depth: 50 blorps, length: 5 mm }
`;
    await expectProblems(text, [
      { element: 'phase B', field: 'viscosity', message: /"1.9 kPa" is not a viscosity/ },
      { element: 'node in', field: 'pressure', message: /"10 um" is not a pressure/ },
      { element: 'segment a', field: 'width', message: /"100 kPa" is not a length/ },
      { element: 'segment a', field: 'depth', message: /blorps/ },
    ]);
  });

  it('names a missing required field as missing', async () => {
    const layout = good();
    delete (layout.segments[0] as Partial<LayoutFile['segments'][number]>).length;
    await expectProblems(layout, [{ element: 'segment fA', field: 'length', message: /missing|required/i }]);
  });

  it('names a choice outside its options with the options', async () => {
    const layout = good();
    (layout.nodes[0] as { phase: unknown }).phase = 'C';
    (layout.segments[1] as { shape: unknown }).shape = 'oval';
    await expectProblems(layout, [
      { element: 'node inA', field: 'phase', message: /"A"\|"B"/ },
      { element: 'segment fB', field: 'shape', message: /"rect"\|"tube"/ },
    ]);
  });

  it('names a quantity of the wrong type with the form it should take', async () => {
    const layout = good();
    (layout.nodes[1] as { pressure: unknown }).pressure = true;
    await expectProblems(layout, [{ element: 'node inB', field: 'pressure', message: /number|quantity/ }]);
  });

  it('names the line of broken YAML', async () => {
    await expectProblems('name: broken\nnodes: [ {id: a\nsegments: []\n', [{ message: /line \d+.*not valid YAML or JSON|not valid YAML or JSON.*line \d+/ }]);
  });

  it('reports broken JSON in one line', async () => {
    await expectProblems('{"name": "broken", "nodes": [}', [{ message: /not valid YAML or JSON/ }], 'json');
  });

  it('reports a file that does not exist', async () => {
    const file = join(dir, 'missing.yaml');
    const { code, err } = await solve(file);
    expect(code).toBe(2);
    expect(err).toBe(`stratiflow: ${file}: file not found\n`);
  });
});

describe('a layout that cannot work', () => {
  // Regression: each of these was solved with exit status 0.
  it('names a chip without an inlet of phase B', async () => {
    const layout = good();
    (layout.nodes[1] as { phase: string }).phase = 'A';
    await expectProblems(layout, [{ element: 'chip', message: /no inlet of phase B/ }]);
  });

  it('names a merge whose two inlets carry the same phase', async () => {
    const layout = good();
    layout.segments = layout.segments.map((s) => (s.id === 'fB' ? { ...s, from: 'inA' } : s));
    layout.segments.push(rect('spare', 'inB', 'outB', 100e-6, 50e-6, 5e-3));
    await expectProblems(layout, [{ element: 'node m', field: 'inlets', message: /both inlets carry phase A \(fA from inlet inA, fB from inlet inA\)/ }]);
  });

  it('names a split whose outlets are listed in the wrong order', async () => {
    const layout = good();
    layout.nodes = layout.nodes.map((n) => (n.type === 'split' ? { ...n, outlets: ['oB', 'oA'] } : n));
    await expectProblems(layout, [{ element: 'node s', field: 'outlets', message: /near lane carries phase A .* oB leads to outlet outB \(phase B\).*list the outlets as \[oA, oB\]/ }]);
  });
});

describe('a layout with implausible values', () => {
  // Regression: a bare width of 200 was read as 200 m, a rating of -1 kPa was taken, a depth of
  // 1 nm ended in a solver failure and a length of 1e308 in a crash.
  it('names a bare width of 200 with the unit it was probably meant in', async () => {
    const layout = good();
    layout.segments = layout.segments.map((s) => (s.id === 'k' ? { ...s, width: 200 } : s));
    await expectProblems(layout, [{ element: 'segment k', field: 'width', message: /^.*200 m is outside the range of a channel width or depth \(1 um to 10 mm\); did you mean 200 um\?$/ }]);
  });

  it('names a negative pressure rating, a depth of 1 nm and a length of 1e308', async () => {
    const layout = { ...good(), maxPressure: '-1 kPa' };
    layout.segments = layout.segments.map((s) => (s.id === 'k' ? { ...s, depth: '1 nm' } : s.id === 'fA' ? { ...s, length: 1e308 } : s));
    await expectProblems(layout, [
      { field: 'maxPressure', message: /the pressure rating must be positive/ },
      { element: 'segment k', field: 'depth', message: /"1 nm" is outside the range/ },
      { element: 'segment fA', field: 'length', message: /1e\+308 m is outside the range of a segment length/ },
    ]);
  });

  it('names a pressure, a flow and an interfacial tension of 1e308', async () => {
    const layout = { ...good(), interfacialTension: 1e308, contactAngleA: { angle: 120 } };
    layout.nodes = layout.nodes.map((n) => (n.id === 'inA' ? { id: 'inA', type: 'inlet', phase: 'A', flow: 1e308 } : n.id === 'inB' ? { ...n, pressure: 1e308 } : n));
    await expectProblems(layout, [
      { field: 'interfacialTension', message: /outside the range of an interfacial tension/ },
      { element: 'node inA', field: 'flow', message: /outside the range of a flow/ },
      { element: 'node inB', field: 'pressure', message: /outside the range of a gauge pressure/ },
    ]);
  });
});

describe('a layout with hostile names or contents', () => {
  it('names ids that JavaScript objects already carry, and draw and solve --out write nothing', async () => {
    // Regression: a contactor named __proto__ on a layout with a solute crashed solve --out (exit 70).
    const text = readFileSync(new URL('../../layouts/dye-octanol-8.yaml', import.meta.url), 'utf8').replace(/\bk1\b/g, '__proto__').replace(/\bm2\b/g, 'hasOwnProperty');
    const file = write(text);
    for (const args of [['draw', file, '--out', join(dir, 'hostile.svg')], ['solve', file, '--out', join(dir, 'hostile')]]) {
      const { code, out, err } = await runCli(args);
      expect(code, err).toBe(2);
      expect(out).toBe('');
      expect(err.split('\n').filter(Boolean)).toEqual([
        `stratiflow: ${file}: node #35: id: "hasOwnProperty" is a reserved name; choose another`,
        `stratiflow: ${file}: segment #3: id: "__proto__" is a reserved name; choose another`,
      ]);
    }
    expect(existsSync(join(dir, 'hostile.svg'))).toBe(false);
    expect(existsSync(join(dir, 'hostile'))).toBe(false);
  });

  it('names an empty file, a binary file and a file of several YAML documents', async () => {
    await expectProblems('', [{ message: /the file is empty/ }]);
    const binary = write('');
    writeFileSync(binary, Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0x00, 0x00, 0x00, 0x0d]));
    const { code, err } = await solve(binary);
    expect(code).toBe(2);
    expect(err).toBe(`stratiflow: ${binary}: a binary file, not YAML or JSON\n`);
    await expectProblems('name: a\n---\nname: b\n', [{ message: /several YAML documents/ }]);
  });
});

describe('the stratiflow process', () => {
  it('prints one line per problem to stderr and exits with status 2, without a stack trace', () => {
    const layout = good();
    layout.segments = layout.segments.map((s) => (s.id === 'k' ? { ...s, width: -1, to: 'nowhere' } : s));
    const file = write(layout);
    const root = fileURLToPath(new URL('../..', import.meta.url));
    const script = `import { main } from './src/cli/main.ts'; process.exitCode = await main(['node', 'stratiflow', 'solve', ${JSON.stringify(file)}]);`;
    const run = spawnSync(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', script], { cwd: root, encoding: 'utf8', timeout: 60_000 });
    expect(run.status).toBe(2);
    expect(run.stdout).toBe('');
    const lines = run.stderr.split('\n').filter((line) => line !== '');
    expect(run.stderr).not.toMatch(/^\s+at |\bError\b|internal error/m);
    for (const line of lines) expect(line.startsWith(`stratiflow: ${file}: `), line).toBe(true);
    expect(lines).toContain(`stratiflow: ${file}: segment k: width: width must be positive`);
    expect(lines).toContain(`stratiflow: ${file}: segment k: to: unknown node "nowhere"`);
  });
});

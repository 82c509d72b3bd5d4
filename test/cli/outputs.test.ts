/**
 * Where the commands may write (tracker issue 11, items 4–6): the one rule for output folders
 * (a folder option may create its last folder, a file option needs an existing folder), one line
 * and exit status 5 for every output path that cannot be written, no hang, nothing created or
 * left half-written on failure; and a reader that closes the pipe early ends the command quietly.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { stringify } from 'yaml';
import { runCli } from '../support/cli.js';
import { singleContactorLayout } from '../support/layouts.js';

const dir = mkdtempSync(join(tmpdir(), 'stratiflow-outputs-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const layout = join(dir, 'chip.yaml');
writeFileSync(layout, stringify(singleContactorLayout({ outletPressure: { A: 0, B: 150 } })));
/** A plain file, to stand where a folder should be. */
const aFile = join(dir, 'plain.txt');
writeFileSync(aFile, 'not a folder');

/** One line on stderr, naming the path and the option, with exit status 5 and nothing on stdout. */
function expectOutputError(run: { code: number; out: string; err: string }, path: string, option: string): void {
  expect(run.code).toBe(5);
  expect(run.out).toBe('');
  const lines = run.err.split('\n').filter((l) => l !== '');
  expect(lines).toHaveLength(1);
  expect(lines[0]!.startsWith(`stratiflow: ${path}: ${option}: `), lines[0]).toBe(true);
  expect(run.err).not.toMatch(/internal error|^\s+at /m);
}

describe('output folders', () => {
  it('--out creates its last folder when the one above it exists', async () => {
    const out = join(dir, 'fresh');
    const run = await runCli(['solve', layout, '--out', out]);
    expect(run.code).toBe(0);
    expect(readdirSync(out).sort()).toEqual(['chip.svg', 'contactors.csv', 'report.html', 'result.json']);
  });

  it('--out refuses to create two levels of folders, and creates none', async () => {
    const out = join(dir, 'missing', 'deeper');
    expectOutputError(await runCli(['solve', layout, '--out', out]), out, '--out');
    expect(existsSync(join(dir, 'missing'))).toBe(false);
  });

  it('--csv needs an existing folder and does not create one', async () => {
    const csv = join(dir, 'nonexistent', 'dir', 'x.csv');
    expectOutputError(await runCli(['solve', layout, '--csv', csv]), csv, '--csv');
    expect(existsSync(join(dir, 'nonexistent'))).toBe(false);
  });

  it('every command follows the same rule for its file outputs', async () => {
    const missing = (name: string) => join(dir, 'absent', name);
    const cases: Array<[string[], string, string]> = [
      [['draw', layout, '--out', missing('c.svg')], missing('c.svg'), '--out'],
      [['make', 'ladder', '--out', missing('l.yaml')], missing('l.yaml'), '--out'],
      [['section', '--width', '200um', '--depth', '50um', '--mu-a', '1mPa.s', '--mu-b', '1mPa.s', '--holdup', '0.5', '--plot', missing('p.svg')], missing('p.svg'), '--plot'],
      [['tune', layout, '--flow-a', '5uL/min', '--flow-b', '5uL/min', '--out', missing('t.yaml')], missing('t.yaml'), '--out'],
      [['window', layout, '--svg', missing('w.svg'), '--x-steps', '2', '--y-steps', '2'], missing('w.svg'), '--svg'],
      [['tolerance', layout, '--depth', '1%', '--samples', '2', '--csv', missing('t.csv')], missing('t.csv'), '--csv'],
      [['tolerance', layout, '--depth', '1%', '--samples', '2', '--svg', missing('charts')], missing('charts'), '--svg'],
    ];
    for (const [args, path, option] of cases) expectOutputError(await runCli(args), path, option);
    expect(existsSync(join(dir, 'absent'))).toBe(false);
  });
});

describe('output paths that cannot be written', () => {
  it('end with one line and exit status 5 when a part of the path is a file', async () => {
    const out = join(aFile, 'x');
    expectOutputError(await runCli(['solve', layout, '--out', out]), out, '--out');
  });

  it('end with one line and exit status 5 when the path is a folder where a file is wanted', async () => {
    expectOutputError(await runCli(['solve', layout, '--csv', dir]), dir, '--csv');
  });

  it.runIf(existsSync('/proc/self'))('end at once in a folder that refuses new folders (/proc), instead of retrying for ever', async () => {
    // Recursive mkdir in /proc never returns (Node 20); the tool must not call it there.
    expectOutputError(await runCli(['solve', layout, '--out', '/proc/forbidden']), '/proc/forbidden', '--out');
  }, 20_000);

  it.runIf(existsSync('/sys/kernel'))('end with one line and exit status 5 in a folder that does not permit writing (/sys)', async () => {
    expectOutputError(await runCli(['solve', layout, '--out', '/sys/kernel/x']), '/sys/kernel/x', '--out');
  });

  it('leave no file of the set behind when one of them cannot be written', async () => {
    const out = join(dir, 'partial');
    mkdirSync(out);
    mkdirSync(join(out, 'report.html'));
    const run = await runCli(['solve', layout, '--out', out]);
    expect(run.code).toBe(5);
    expect(readdirSync(out)).toEqual(['report.html']);
  });
});

describe('a reader that closes the pipe early', () => {
  it('ends the command quietly with status 0 (stratiflow make … | head -1)', () => {
    const root = fileURLToPath(new URL('../..', import.meta.url));
    const script = `import { main } from './src/cli/main.ts'; process.exitCode = await main(['node', 'stratiflow', 'make', 'ladder', '--contactors', '2000', '--outlet-b', '0']);`;
    const command = `node --import tsx --input-type=module -e "${script.replace(/"/g, '\\"')}" | head -1 > /dev/null; echo "status \${PIPESTATUS[0]}" >&2`;
    const run = spawnSync('bash', ['-c', command], { cwd: root, encoding: 'utf8', timeout: 60_000 });
    expect(run.stderr).toBe('status 0\n');
  });
});

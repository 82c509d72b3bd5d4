/**
 * The command at the scale of numbering-up: a 16 384-contactor ladder read from its JSON file,
 * solved and summarised (regression: the summary overflowed the call stack, and the loader
 * refused the 25 MB file and the 33 m long drawing), and output to a reader that closes the pipe
 * early (regression: an unhandled EPIPE crashed the command).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCli } from '../support/cli.js';
import { wellDesignedLadder } from '../support/layouts.js';

const dir = mkdtempSync(join(tmpdir(), 'stratiflow-scale-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const ROOT = fileURLToPath(new URL('../..', import.meta.url));

describe('stratiflow at scale', () => {
  it('solves a 16 384-contactor ladder from JSON and prints its summary', async () => {
    const file = join(dir, 'ladder-16384.json');
    writeFileSync(file, JSON.stringify(wellDesignedLadder(16384)));
    expect(statSync(file).size).toBeGreaterThan(16 * 2 ** 20);
    const { code, out, err } = await runCli(['solve', file, '--json']);
    expect(err).toBe('');
    expect(code).toBe(0);
    const solution = JSON.parse(out);
    expect(solution.converged).toBe(true);
    expect(solution.contactors).toHaveLength(16384);
  }, 120_000);

  it('ends quietly with status 0 when the reader closes the pipe early', async () => {
    const child = spawn(process.execPath, ['--import', 'tsx', join(ROOT, 'test/support/cliProcess.ts'), 'make', 'tree', '--levels', '10', '--outlet-b', '0'], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let err = '';
    child.stderr.on('data', (d: Buffer) => (err += d.toString()));
    // Read the first chunk, then close our end, as `| head -1` does.
    child.stdout.once('data', () => child.stdout.destroy());
    const code = await new Promise<number | null>((resolve) => child.on('close', resolve));
    expect(err).toBe('');
    expect(code).toBe(0);
  }, 60_000);
});

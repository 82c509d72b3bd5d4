/**
 * Runs the stratiflow command line in-process, capturing what it writes: the way the CLI tests
 * use the tool as a user would, without spawning a process. Exports `runCli`.
 */
import { main } from '../../src/cli/main.js';

export async function runCli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(['node', 'stratiflow', ...args], { out: (s) => (out += s), err: (s) => (err += s) });
  return { code, out, err };
}

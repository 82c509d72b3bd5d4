/**
 * The built code (dist/) for benchmarks that time what the CLI runs: `buildDist` compiles the
 * checkout (tsc -p tsconfig.build.json). Benchmarks run the built modules in a child process
 * of plain Node (bench/scale.ts, bench/tolerance.ts): imported here, under the bench's tsx
 * loader, they would be transformed again and run slower (a tolerance realisation solve took
 * 1.4–1.5 times as long, measured). Exports `buildDist`, `runBuilt`, `builtPath` and `ROOT`.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const ROOT = join(import.meta.dirname, '..');

export function buildDist(): void {
  execFileSync('npx', ['tsc', '-p', 'tsconfig.build.json'], { cwd: ROOT, stdio: 'inherit' });
}

/** The file URL-safe path of a built module, by its path under src/ without extension, for a child script's imports. */
export function builtPath(path: string): string {
  return JSON.stringify(join(ROOT, 'dist', `${path}.js`));
}

/**
 * Runs `script` (an ES module of plain JavaScript) in a child process of plain Node and returns
 * the last line it prints. A script file rather than --eval: worker threads inherit the child's
 * exec arguments, and --input-type would refuse their files.
 */
export function runBuilt(script: string, what: string): string {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-bench-'));
  try {
    const file = join(dir, 'bench.mjs');
    writeFileSync(file, script);
    const run = spawnSync(process.execPath, [file], { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (run.status !== 0) throw new Error(`${what} did not run: ${(run.stderr ?? '').split('\n').find((line) => /Error/.test(line)) ?? run.stderr}`);
    return run.stdout.trim().split('\n').pop()!;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

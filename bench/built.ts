/**
 * The built code (dist/) for benchmarks that time what the CLI runs: `buildDist` compiles the
 * checkout (tsc -p tsconfig.build.json). Benchmarks run the built modules in a child process
 * of plain Node (bench/scale.ts, bench/tolerance.ts): imported here, under the bench's tsx
 * loader, they would be transformed again and run slower. Exports `buildDist` and `ROOT`.
 */
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';

export const ROOT = join(import.meta.dirname, '..');

export function buildDist(): void {
  execFileSync('npx', ['tsc', '-p', 'tsconfig.build.json'], { cwd: ROOT, stdio: 'inherit' });
}

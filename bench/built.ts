/**
 * The built code (dist/) for benchmarks that time what the CLI runs: `buildDist` compiles the
 * checkout (tsc -p tsconfig.build.json), `builtModule` imports one module of it by its path
 * under src/ without extension. Exports both and `ROOT`.
 */
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';

export const ROOT = join(import.meta.dirname, '..');

export function buildDist(): void {
  execFileSync('npx', ['tsc', '-p', 'tsconfig.build.json'], { cwd: ROOT, stdio: 'inherit' });
}

export async function builtModule<T>(path: string): Promise<T> {
  return (await import(pathToFileURL(join(ROOT, 'dist', `${path}.js`)).href)) as T;
}

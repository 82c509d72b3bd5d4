/**
 * File output for the commands: every file is written to a temporary name beside its target and
 * renamed, so a failure never leaves a half-written result. Exports `writeFileAtomic`.
 */
import { mkdirSync, renameSync, writeFileSync, rmSync } from 'node:fs';
import { dirname, basename, join } from 'node:path';

export function writeFileAtomic(path: string, content: string): void {
  const dir = dirname(path);
  mkdirSync(dir, { recursive: true });
  const temp = join(dir, `.${basename(path)}.${process.pid}.tmp`);
  try {
    writeFileSync(temp, content);
    renameSync(temp, path);
  } catch (error) {
    rmSync(temp, { force: true });
    throw error;
  }
}

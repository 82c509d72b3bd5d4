/**
 * File output for the commands, with one rule for folders: a file option (`--csv FILE`,
 * `--svg FILE`, …) needs an existing folder; a folder option (`--out DIR`) may create its last
 * folder, but the one above it must exist. Nothing else is ever created. Targets are checked
 * before the work starts (`outputFile`, `outputFolder`), so a long run does not end in a path
 * error; at the end every file is written to a temporary name beside its target and only then
 * are all renamed (`writeOutputs`), so a failure leaves no half-written result. Every problem
 * is a StratiflowError('bad-output') naming the path and the option.
 * Exports `outputFile`, `outputFolder`, `writeOutputs`, `besideLayout` (the default path of a file derived from a layout).
 */
import { mkdirSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { basename, dirname, extname, join, resolve } from 'node:path';
import { StratiflowError } from '../errors.js';

/** A file to write, with the option that named it (for messages). */
export interface Output {
  path: string;
  content: string;
  option: string;
}

/** Plain words for the file-system errors a user can cause. */
const REASONS: Record<string, string> = {
  EACCES: 'permission denied',
  EPERM: 'operation not permitted',
  ENOENT: 'no such file or folder',
  ENOTDIR: 'a part of the path is not a folder',
  EISDIR: 'it is a folder',
  EROFS: 'the file system is read-only',
  ENOSPC: 'no space left on the device',
  EDQUOT: 'disk quota exceeded',
  ENAMETOOLONG: 'the name is too long',
  EEXIST: 'it already exists',
  EBUSY: 'it is busy',
  EINVAL: 'the name is not valid here',
};

function outputError(path: string, option: string, message: string): StratiflowError {
  return new StratiflowError('bad-output', message, { file: path, field: option });
}

function reasonOf(error: unknown): string {
  const code = (error as NodeJS.ErrnoException | undefined)?.code;
  return (code && REASONS[code]) ?? (error instanceof Error ? error.message : String(error));
}

function kindOf(path: string): 'folder' | 'file' | 'missing' | 'other' {
  try {
    const stat = statSync(path);
    return stat.isDirectory() ? 'folder' : stat.isFile() ? 'file' : 'other';
  } catch {
    return 'missing';
  }
}

/** Checks a file target of `option`: its folder exists, and the path is not a folder. */
export function outputFile(path: string, option: string): string {
  if (path.trim() === '') throw outputError(path, option, 'an empty path');
  const folder = dirname(resolve(path));
  if (kindOf(folder) !== 'folder') throw outputError(path, option, `the folder ${dirname(path)} does not exist (output files go into an existing folder)`);
  const kind = kindOf(path);
  if (kind === 'folder') throw outputError(path, option, 'is a folder; give a file name');
  if (kind === 'other') throw outputError(path, option, 'is not a regular file');
  return path;
}

/** Checks a folder target of `option`: it is a folder, or it is missing and the folder above it exists. */
export function outputFolder(path: string, option: string): string {
  if (path.trim() === '') throw outputError(path, option, 'an empty path');
  const kind = kindOf(path);
  if (kind === 'folder') return path;
  if (kind !== 'missing') throw outputError(path, option, 'exists and is not a folder');
  const parent = dirname(resolve(path));
  if (kindOf(parent) !== 'folder') throw outputError(path, option, `the folder above it, ${dirname(path)}, does not exist (only the last folder of an output folder is created)`);
  return path;
}

/** Creates `path` (one level) if missing; its targets were checked by `outputFolder`. */
function makeFolder(path: string, option: string): void {
  if (kindOf(path) === 'folder') return;
  try {
    mkdirSync(path);
  } catch (error) {
    throw outputError(path, option, `cannot create the folder: ${reasonOf(error)}`);
  }
}

/**
 * Writes every output: `folders` (paths of folder options) are created first where missing,
 * then each file goes to a temporary name and, once all are written, each is renamed into place.
 * On any failure the temporary files are removed and the error names the file and its option.
 */
export function writeOutputs(outputs: readonly Output[], folders: ReadonlyArray<{ path: string; option: string }> = []): void {
  for (const f of folders) makeFolder(f.path, f.option);
  const temps: string[] = [];
  const cleanUp = () => temps.forEach((t) => rmSync(t, { force: true }));
  try {
    for (const o of outputs) {
      outputFile(o.path, o.option);
      const temp = join(dirname(o.path), `.${basename(o.path)}.${process.pid}.tmp`);
      try {
        writeFileSync(temp, o.content);
      } catch (error) {
        throw outputError(o.path, o.option, `cannot write: ${reasonOf(error)}`);
      }
      temps.push(temp);
    }
    outputs.forEach((o, k) => {
      try {
        renameSync(temps[k]!, o.path);
      } catch (error) {
        throw outputError(o.path, o.option, `cannot write: ${reasonOf(error)}`);
      }
    });
  } catch (error) {
    cleanUp();
    throw error;
  }
}

/** The default path of a file derived from a layout: beside it, with `-suffix` in its name and the same extension. */
export function besideLayout(layout: string, suffix: string): string {
  const ext = extname(layout);
  return join(dirname(layout), `${basename(layout, ext)}-${suffix}${ext || '.yaml'}`);
}

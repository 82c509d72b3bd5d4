/**
 * Reading the input files (layouts, tolerance files): text of a bounded size, then data from
 * JSON or YAML, each failure one StratiflowError naming the file (and the line, for YAML).
 * Exports `readTextFile` and `parseDataText`.
 */
import { readFileSync, statSync } from 'node:fs';
import { parse as parseYaml, YAMLParseError } from 'yaml';
import { StratiflowError } from './errors.js';

/**
 * The text of the file at `path`, refused before reading when it is a folder or larger than
 * `maxBytes`. `what` names the file in messages ("layout file").
 */
export function readTextFile(path: string, what: string, maxBytes: number, format = /\.json$/i.test(path) ? 'JSON' : 'YAML'): string {
  try {
    const stat = statSync(path);
    if (stat.isDirectory()) throw new StratiflowError('bad-file', `is a folder, not a ${what}`, { file: path });
    if (stat.size > maxBytes) {
      throw new StratiflowError('bad-file', `is ${(stat.size / 2 ** 20).toFixed(0)} MB; a ${format} ${what} is at most ${maxBytes / 2 ** 20} MB`, { file: path });
    }
    return readFileSync(path, 'utf8');
  } catch (error) {
    if (error instanceof StratiflowError) throw error;
    const reason = (error as NodeJS.ErrnoException).code === 'ENOENT' ? 'file not found' : 'cannot be read';
    throw new StratiflowError('bad-file', reason, { file: path });
  }
}

/**
 * The data of a JSON or YAML text. A `.json` source goes through JSON.parse (two orders of
 * magnitude faster than a YAML parser on a chip of thousands of contactors); anything else, and
 * JSON that JSON.parse refuses, through the YAML parser (JSON is a subset of YAML), whose
 * message names the line.
 */
export function parseDataText(text: string, source: string, what: string): unknown {
  // Text never holds NUL; a file that does is an image, an archive or the like.
  if (text.includes('\0')) throw new StratiflowError('bad-file', 'a binary file, not YAML or JSON', { file: source });
  if (/\.json$/i.test(source)) {
    try {
      return JSON.parse(text);
    } catch (error) {
      if (!(error instanceof SyntaxError)) throw error;
    }
  }
  try {
    return parseYaml(text, { prettyErrors: true });
  } catch (error) {
    const where = error instanceof YAMLParseError && error.linePos ? `line ${error.linePos[0].line}` : undefined;
    const first = error instanceof Error ? error.message.split('\n')[0]!.replace(/ at line \d+, column \d+:?$/, '') : String(error);
    const message = first.startsWith('Source contains multiple documents') ? `it holds several YAML documents (---); a ${what} holds one` : first;
    throw new StratiflowError('bad-file', `not valid YAML or JSON: ${message}`, { file: source, element: where });
  }
}

/**
 * The page's stand-in for node:fs: a page reads no files (its layout comes inside it), so the
 * file readers of src/files.ts, bundled with the layout loader, fail with a plain message if
 * they are ever called. Bundled in place of node:fs by vite.page.config.ts.
 */
export function readFileSync(): never {
  throw new Error('a report page reads no files');
}

export function statSync(): never {
  throw new Error('a report page reads no files');
}

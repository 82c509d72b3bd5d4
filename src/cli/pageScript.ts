/**
 * The script of a live report: the bundle `npm run build` writes to dist/page/live.js
 * (vite.page.config.ts), read as base64 for render/report.ts to inline. Exports `pageScript`.
 * Found beside the code that runs, dist/ or src/ alike (both two folders below the package).
 */
import { readFileSync } from 'node:fs';

const BUNDLE = new URL('../../dist/page/live.js', import.meta.url);

/** The bundle as base64, or undefined when it has not been built (the report is then written without its live part). */
export function pageScript(): string | undefined {
  try {
    return readFileSync(BUNDLE).toString('base64');
  } catch {
    return undefined;
  }
}

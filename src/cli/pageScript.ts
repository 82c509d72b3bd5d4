/**
 * The live part of the reports the commands write: the page script that `npm run build` bundles
 * into dist/page/live.js (vite.page.config.ts), read as base64 for render/report.ts to inline,
 * with the layout as read and the solution as `--json` prints it. Exports `pageScript` and
 * `liveReport`. The bundle is found beside the code that runs, dist/ or src/ alike (both two
 * folders below the package).
 */
import { readFileSync } from 'node:fs';
import { parseDataText } from '../files.js';
import { readLayoutText } from '../layout/load.js';
import type { ReportOptions } from '../render/report.js';

const BUNDLE = new URL('../../dist/page/live.js', import.meta.url);

/** The bundle as base64, or undefined when it has not been built (the report is then written without its live part). */
export function pageScript(): string | undefined {
  try {
    return readFileSync(BUNDLE).toString('base64');
  } catch {
    return undefined;
  }
}

/**
 * What makes a report live: the page script, the layout (the file's text, or given as text for a
 * layout the command wrote) and the solution. Undefined without a built page script.
 */
export function liveReport(layout: { file: string } | { text: string; source: string }, solution: unknown): ReportOptions['live'] {
  const scriptBase64 = pageScript();
  if (scriptBase64 === undefined) return undefined;
  const [text, source] = 'file' in layout ? [readLayoutText(layout.file), layout.file] : [layout.text, layout.source];
  // The solution goes in as it is: the page's data block writes it through jsonNumbers (render/liveReport.ts
  // liveData), as --json does. A copy through JSON here cost a second at 16 384 contactors.
  return { scriptBase64, layout: parseDataText(text, source, 'layout file'), solution };
}

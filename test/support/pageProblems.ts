/**
 * What a page in the browser tests must not do, collected as lines: console errors and
 * warnings, uncaught page errors, and requests for anything but the page's own file and the
 * blobs it makes (a self-contained report fetches nothing). Exports `watchProblems`.
 */
import type { Page } from 'playwright-core';

export function watchProblems(page: Page, problems: string[]): void {
  page.on('console', (m) => {
    if (m.type() === 'error' || m.type() === 'warning') problems.push(`console ${m.type()}: ${m.text()}`);
  });
  page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  page.on('request', (r) => {
    if (!r.url().startsWith('file:') && !r.url().startsWith('blob:')) problems.push(`request: ${r.url()}`);
  });
}

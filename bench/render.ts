/**
 * Rendering solved, converged chips: the time and size of the chip drawing (SVG), of the charts
 * and of the whole HTML report, for the well-designed ladder of bench/network.ts (invented demo
 * values) at 1024 and 16 384 contactors. Exports `benchRender`. The solve is set-up, not the
 * figure; its time and its convergence are reported for reference.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { buildDist, builtPath, runBuilt, ROOT } from './built.js';
import type { Row } from './report.js';
import { designedLadderLayout } from './network.js';

const SIZES = [1024, 16384];
/** Usable: a few seconds to draw, and a file that a browser opens without fuss; 16 384 contactors in 10 s (the scale issue). */
const TARGET: Record<number, { drawingSeconds: number; drawingMegabytes?: number; reportSeconds: number; reportMegabytes?: number }> = {
  1024: { drawingSeconds: 3, drawingMegabytes: 10, reportSeconds: 6, reportMegabytes: 20 },
  16384: { drawingSeconds: 10, reportSeconds: 10 },
};
/** Samples per figure (after a warm-up call and a batch probe): 3, and 1 at 16 384 contactors. */
const TIMING = { samples: 3, samples16k: 1 };

/**
 * The child's script: solve each layout file, then time the drawing, the charts and the report
 * as bench/report.ts's `medianSecondsPerCall` does (one warm-up call, one batch probe, then the
 * median of the samples); prints one JSON line.
 */
function childScript(files: Array<{ n: number; file: string }>): string {
  return `
import { loadLayout } from ${builtPath('layout/load')};
import { solveChip } from ${builtPath('analyses/chip')};
import { findManifolds } from ${builtPath('analyses/manifolds')};
import { chipDrawing } from ${builtPath('render/chipDrawing')};
import { chipCharts } from ${builtPath('render/chipCharts')};
import { chipReport } from ${builtPath('render/report')};
const median = (fn, samples) => {
  fn(); fn();
  const times = [];
  for (let s = 0; s < samples; s++) { const start = performance.now(); fn(); times.push((performance.now() - start) / 1000); }
  times.sort((a, b) => a - b);
  return times[Math.floor(samples / 2)];
};
const out = [];
for (const { n, file } of ${JSON.stringify(files)}) {
  const start = performance.now();
  const solved = solveChip(loadLayout(file));
  const solveSeconds = (performance.now() - start) / 1000;
  const samples = n > 4096 ? ${TIMING.samples16k} : ${TIMING.samples};
  // The first drawing of a chip also lays it out (placement, widths, side-by-side routes), which
  // later drawings of the same chip take from a cache: a command draws once, so this is its cost.
  const first = performance.now();
  chipDrawing(solved);
  const firstDrawingSeconds = (performance.now() - first) / 1000;
  out.push({
    n, converged: solved.result.converged, solveSeconds, firstDrawingSeconds,
    drawingSeconds: median(() => chipDrawing(solved).length, samples),
    drawingMegabytes: Buffer.byteLength(chipDrawing(solved), 'utf8') / 1e6,
    chartSeconds: median(() => chipCharts(solved, findManifolds(solved)).length, samples),
    reportSeconds: median(() => chipReport(solved, findManifolds(solved)).length, samples),
    reportMegabytes: Buffer.byteLength(chipReport(solved, findManifolds(solved)), 'utf8') / 1e6,
  });
}
console.log(JSON.stringify(out));
`;
}

/**
 * Timed in a child process of plain Node on the built modules, as the CLI runs them (bench/built.ts):
 * under the bench's tsx loader the 16 384-contactor report took 10.4 s against 9.3–9.7 s there.
 */
export function benchRender(): Row[] {
  buildDist();
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-render-'));
  try {
    const files = SIZES.map((n) => {
      const file = join(dir, `ladder-${n}.json`);
      writeFileSync(file, JSON.stringify(designedLadderLayout(n)));
      return { n, file };
    });
    const results = JSON.parse(runBuilt(childScript(files), 'the render benchmark')) as Array<{ n: number; converged: boolean; solveSeconds: number; firstDrawingSeconds: number; drawingSeconds: number; drawingMegabytes: number; chartSeconds: number; reportSeconds: number; reportMegabytes: number }>;
    const rows = results.flatMap((r) => {
      const target = TARGET[r.n]!;
      return [
        { name: `solve (set-up), ${r.n} contactors, converged: ${r.converged ? 'yes' : 'NO'}`, value: r.solveSeconds, unit: 's' },
        { name: `chip drawing, first of the chip (with its layout), ${r.n} contactors`, value: r.firstDrawingSeconds, unit: 's', target: target.drawingSeconds },
        { name: `chip drawing, again (layout cached), ${r.n} contactors`, value: r.drawingSeconds, unit: 's' },
        { name: `chip drawing size, ${r.n} contactors`, value: r.drawingMegabytes, unit: 'MB', target: target.drawingMegabytes },
        { name: `charts, ${r.n} contactors`, value: r.chartSeconds, unit: 's' },
        { name: `HTML report, ${r.n} contactors`, value: r.reportSeconds, unit: 's', target: target.reportSeconds },
        { name: `HTML report size, ${r.n} contactors`, value: r.reportMegabytes, unit: 'MB', target: target.reportMegabytes },
      ];
    });
    // As a user runs it: one CLI process writing result.json, contactors.csv, chip.svg and report.html,
    // less the same process without --out (load and solve).
    const big = files.find((f) => f.n === 16384)!;
    const cli = (...extra: string[]) => {
      const start = performance.now();
      const run = spawnSync(process.execPath, [join(ROOT, 'bin', 'stratiflow.js'), 'solve', big.file, ...extra], { encoding: 'utf8', maxBuffer: 1 << 28 });
      if (run.status !== 0) throw new Error(`stratiflow solve ${extra.join(' ')} failed: ${run.stderr.split('\n')[0]}`);
      return (performance.now() - start) / 1000;
    };
    const plain = cli();
    const withOut = cli('--out', join(dir, 'out-16384'));
    rows.push(
      { name: 'stratiflow solve, 16384 contactors, wall', value: plain, unit: 's' },
      { name: 'stratiflow solve --out, 16384 contactors: writing the four files (difference of walls)', value: withOut - plain, unit: 's', target: TARGET[16384]!.reportSeconds },
    );
    return rows;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/**
 * Rendering solved, converged chips: the time and size of the chip drawing (SVG), of the charts
 * and of the whole HTML report, for the well-designed ladder of bench/network.ts (invented demo
 * values) at 1024 and 16 384 contactors. Exports `benchRender`. The solve is set-up, not the
 * figure; its time and its convergence are reported for reference.
 */
import { findManifolds } from '../src/analyses/manifolds.js';
import { layoutToChip } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import { chipDrawing } from '../src/render/chipDrawing.js';
import { chipCharts } from '../src/render/chipCharts.js';
import { chipReport } from '../src/render/report.js';
import { medianSecondsPerCall, type Row } from './report.js';
import { designedLadderLayout } from './network.js';

const SIZES = [1024, 16384];
/** Usable: a few seconds to draw, and a file that a browser opens without fuss; 16 384 contactors in 10 s (the scale issue). */
const TARGET: Record<number, { drawingSeconds: number; drawingMegabytes?: number; reportSeconds: number; reportMegabytes?: number }> = {
  1024: { drawingSeconds: 3, drawingMegabytes: 10, reportSeconds: 6, reportMegabytes: 20 },
  16384: { drawingSeconds: 10, reportSeconds: 10 },
};
const TIMING = { warmupCalls: 1, samples: 3, minBatchMs: 0 };

const megabytes = (text: string) => Buffer.byteLength(text, 'utf8') / 1e6;

export function benchRender(): Row[] {
  return SIZES.flatMap((n) => {
    const start = performance.now();
    const solved = solveChip(layoutToChip(designedLadderLayout(n), 'bench'));
    const solveSeconds = (performance.now() - start) / 1000;
    const drawing = chipDrawing(solved);
    const report = chipReport(solved, findManifolds(solved));
    const target = TARGET[n]!;
    const timing = n > 4096 ? { ...TIMING, samples: 1 } : TIMING;
    return [
      { name: `solve (set-up), ${n} contactors, converged: ${solved.result.converged ? 'yes' : 'NO'}`, value: solveSeconds, unit: 's' },
      { name: `chip drawing, ${n} contactors`, value: medianSecondsPerCall(() => chipDrawing(solved).length, timing), unit: 's', target: target.drawingSeconds },
      { name: `chip drawing size, ${n} contactors`, value: megabytes(drawing), unit: 'MB', target: target.drawingMegabytes },
      { name: `charts, ${n} contactors`, value: medianSecondsPerCall(() => chipCharts(solved, findManifolds(solved)).length, timing), unit: 's' },
      { name: `HTML report, ${n} contactors`, value: medianSecondsPerCall(() => chipReport(solved, findManifolds(solved)).length, timing), unit: 's', target: target.reportSeconds },
      { name: `HTML report size, ${n} contactors`, value: megabytes(report), unit: 'MB', target: target.reportMegabytes },
    ];
  });
}

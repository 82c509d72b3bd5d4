/**
 * Rendering a 1024-contactor ladder: the time and size of the chip drawing (SVG), of the charts,
 * and of the whole HTML report. Exports `benchRender`. The chip is the ladder generator's with
 * its default (invented demo) fluids and drives. The solve is set-up, not the figure: it runs
 * once with a small iteration budget, because the drawing's cost depends on the number of
 * elements, not on whether the split states have settled; its time is reported for reference.
 */
import { findManifolds } from '../src/analyses/manifolds.js';
import { ladderLayout } from '../src/layout/generate.js';
import { layoutToChip } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import { chipDrawing } from '../src/render/chipDrawing.js';
import { chipCharts } from '../src/render/chipCharts.js';
import { chipReport } from '../src/render/report.js';
import { medianSecondsPerCall, type Row } from './report.js';

const CONTACTORS = 1024;
/** Usable: a few seconds to draw, and a file that a browser opens without fuss. */
const TARGET = { drawingSeconds: 3, drawingMegabytes: 10, reportSeconds: 6, reportMegabytes: 20 };
const SOLVE_BUDGET = { maxIterations: 12 };
const TIMING = { warmupCalls: 1, samples: 3, minBatchMs: 0 };

const megabytes = (text: string) => Buffer.byteLength(text, 'utf8') / 1e6;

export function benchRender(): Row[] {
  const start = performance.now();
  const solved = solveChip(layoutToChip(ladderLayout({ contactors: CONTACTORS }), 'bench'), SOLVE_BUDGET);
  const solveSeconds = (performance.now() - start) / 1000;

  const drawing = chipDrawing(solved);
  const report = chipReport(solved);
  return [
    { name: `solve (set-up; at most ${SOLVE_BUDGET.maxIterations} steps), ${CONTACTORS} contactors`, value: solveSeconds, unit: 's' },
    { name: `chip drawing, ${CONTACTORS} contactors`, value: medianSecondsPerCall(() => chipDrawing(solved).length, TIMING), unit: 's', target: TARGET.drawingSeconds },
    { name: 'chip drawing size', value: megabytes(drawing), unit: 'MB', target: TARGET.drawingMegabytes },
    { name: `charts, ${CONTACTORS} contactors`, value: medianSecondsPerCall(() => chipCharts(solved, findManifolds(solved)).length, TIMING), unit: 's' },
    { name: `HTML report, ${CONTACTORS} contactors`, value: medianSecondsPerCall(() => chipReport(solved).length, TIMING), unit: 's', target: TARGET.reportSeconds },
    { name: 'HTML report size', value: megabytes(report), unit: 'MB', target: TARGET.reportMegabytes },
  ];
}

/**
 * Entry point of `npm run bench`: runs the registered benchmarks one after another and prints one
 * table of their figures. `npm run bench -- section` runs only the named ones.
 * To add a benchmark, export a function returning `Row[]` (or a promise of it; `Row` lives in
 * bench/report.ts, with the median timer) from a module in bench/ and add it to BENCHMARKS below.
 * A benchmark that throws is reported, the rest still run, and the exit status is 1. A missed
 * target is flagged OVER in the table but does not change the exit status: timings are noisy.
 */
import { formatTable, type Row } from './report.js';
import { benchSection } from './section.js';
import { benchShapedSection } from './shapedSection.js';
import { benchEtchedContactors } from './etchedContactors.js';
import { benchCurvedInterface } from './curvedInterface.js';
import { benchRender } from './render.js';
import { benchNetwork } from './network.js';
import { benchTolerance } from './tolerance.js';
import { benchExtraction } from './extraction.js';
import { benchWindow } from './window.js';
import { benchSparseLu } from './sparseLu.js';
import { benchMaldistribution } from './maldistribution.js';
import { benchScale } from './scale.js';
import { benchLiveReport } from './liveReport.js';
import { benchDesign } from './design.js';

interface Benchmark {
  name: string;
  run: () => Row[] | Promise<Row[]>;
}

const BENCHMARKS: Benchmark[] = [
  { name: 'section', run: benchSection },
  { name: 'shaped-section', run: benchShapedSection },
  { name: 'etched-contactors', run: benchEtchedContactors },
  { name: 'curved-interface', run: benchCurvedInterface },
  { name: 'render', run: benchRender },
  { name: 'live-report', run: benchLiveReport },
  { name: 'network', run: benchNetwork },
  { name: 'maldistribution', run: benchMaldistribution },
  { name: 'sparse-lu', run: benchSparseLu },
  { name: 'scale', run: benchScale },
  { name: 'extraction', run: benchExtraction },
  { name: 'tolerance', run: benchTolerance },
  { name: 'design', run: benchDesign },
  { name: 'window', run: benchWindow },
];

async function main(argv: string[]): Promise<number> {
  const wanted = argv.slice(2);
  const unknown = wanted.filter((name) => !BENCHMARKS.some((b) => b.name === name));
  if (unknown.length > 0) {
    console.error(`unknown benchmark ${unknown.join(', ')}; known: ${BENCHMARKS.map((b) => b.name).join(', ')}`);
    return 2;
  }
  const selected = wanted.length === 0 ? BENCHMARKS : BENCHMARKS.filter((b) => wanted.includes(b.name));

  let status = 0;
  const results: Array<{ benchmark: string; rows: Row[] }> = [];
  for (const benchmark of selected) {
    const start = performance.now();
    try {
      results.push({ benchmark: benchmark.name, rows: await benchmark.run() });
      console.error(`${benchmark.name}: ${((performance.now() - start) / 1000).toFixed(1)} s`);
    } catch (error) {
      console.error(`${benchmark.name}: failed: ${error instanceof Error ? error.message : String(error)}`);
      status = 1;
    }
  }
  console.log(`Node ${process.version}, ${process.platform}/${process.arch}; medians after warm-up`);
  console.log(formatTable(results));
  return status;
}

main(process.argv).then((code) => {
  process.exitCode = code;
});

/**
 * A worker thread of the window-map sweep (./window.ts): takes lines of grid points, solves them
 * with continuation, or single points of a refinement from their own seeds, and posts each
 * point back as it is done. Started by `windowMap`; never run
 * directly.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { SolverWorkspace } from '../solver/newton.js';
import { solveGridPoints, sweepLine, type SweepJob, type SweepMessage, type SweepWorkerData } from './window.js';

const { chip, spec } = workerData as SweepWorkerData;
const port = parentPort!;
const post = (message: SweepMessage) => port.postMessage(message);
// One workspace for every line and batch this thread solves (its holdup tables built once).
const workspace = new SolverWorkspace();

port.on('message', (job: SweepJob) => {
  try {
    if (job.kind === 'line') sweepLine(chip, spec, job.line, job.seed, (point, warm) => post({ kind: 'point', id: job.id, point, warm: job.stream ? warm : undefined }), workspace);
    else solveGridPoints(chip, spec, job.points, (point, warm) => post({ kind: 'point', id: job.id, point, warm }), workspace);
    post({ kind: 'done', id: job.id });
  } catch (error) {
    post({ kind: 'error', message: error instanceof Error ? error.message : String(error) });
  }
});

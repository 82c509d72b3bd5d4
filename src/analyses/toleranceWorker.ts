/**
 * A worker thread of a tolerance study (./tolerance.ts): receives batches of jobs (a realisation
 * to solve, or a difference step of one parameter) and posts their outcomes back. Started by
 * `runJobs`; never run directly.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { runJob, type JobContext } from './toleranceModel.js';
import { SolverWorkspace } from '../solver/newton.js';
import type { WorkerBatch, WorkerReply } from './tolerance.js';

const context = workerData as JobContext;
const workspace = new SolverWorkspace();
const port = parentPort!;
const post = (reply: WorkerReply) => port.postMessage(reply);

port.on('message', (batch: WorkerBatch) => {
  try {
    post({ kind: 'done', id: batch.id, outcomes: batch.jobs.map((job) => runJob(context, job, workspace)) });
  } catch (error) {
    post({ kind: 'error', message: error instanceof Error ? error.message : String(error) });
  }
});

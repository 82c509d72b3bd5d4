/**
 * The worker pool of the sweeps (src/analyses/workers.ts `runPool`): every task is run once, a
 * worker takes the next task when its message says the last one ended, tasks may be submitted
 * from the replies, and a worker that exits with an error status ends the pool with an error.
 */
import { describe, expect, it } from 'vitest';
import { Worker } from 'node:worker_threads';
import { runPool } from '../../src/analyses/workers.js';

/** A worker that answers each number n with n² and, when n is negative, exits with status 3. */
const squarer = () =>
  new Worker(
    `const { parentPort } = require('node:worker_threads');
     parentPort.on('message', (n) => { if (n < 0) process.exit(3); parentPort.postMessage({ n, square: n * n }); });`,
    { eval: true },
  );

describe('runPool', () => {
  it('runs every submitted task once on two workers, including tasks submitted from replies', async () => {
    const squares = new Map<number, number>();
    await runPool<number, { n: number; square: number }>(
      [squarer(), squarer()],
      (pool) => [1, 2, 3].forEach((n) => pool.submit(n)),
      (reply, pool) => {
        squares.set(reply.n, reply.square);
        if (reply.n === 3) pool.submit(10);
        if (squares.size === 4) pool.finish();
        return true;
      },
    );
    expect([...squares].sort((a, b) => a[0] - b[0])).toEqual([[1, 1], [2, 4], [3, 9], [10, 100]]);
  });

  it('ends with an error naming the exit status when a worker stops with one', async () => {
    const run = runPool<number, unknown>([squarer()], (pool) => pool.submit(-1), () => true);
    await expect(run).rejects.toThrow(/stopped with exit code 3/);
  });
});

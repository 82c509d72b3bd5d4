/**
 * Starting a worker thread on a module that sits beside its caller: the compiled .js when the
 * caller runs compiled, or the TypeScript source loaded through tsx when the caller itself runs
 * from source (tests, benchmarks); and the pool that runs tasks on them. Exports
 * `startWorkerBeside`, `runPool` and the `Pool` type.
 */
import { Worker } from 'node:worker_threads';

/** `callerUrl` is the caller's import.meta.url; `name` the worker module's name without extension. */
export function startWorkerBeside(callerUrl: string, name: string, workerData: unknown): Worker {
  const fromSource = callerUrl.endsWith('.ts');
  const entry = new URL(`./${name}.${fromSource ? 'ts' : 'js'}`, callerUrl);
  if (!fromSource) return new Worker(entry, { workerData });
  const loader = import.meta.resolve('tsx/esm/api');
  const bootstrap = `import(${JSON.stringify(loader)}).then((tsx) => { tsx.register(); return import(${JSON.stringify(entry.href)}); })`;
  return new Worker(bootstrap, { eval: true, workerData });
}

/** What a pool's callbacks may do: queue a task for the next idle worker, or end the pool. */
export interface Pool<Task> {
  submit(task: Task): void;
  /** Stops every worker and settles the pool's promise (rejected with `error` when given). */
  finish(error?: Error): void;
}

/**
 * Runs tasks on worker threads, the one pool of the sweeps (window maps, tolerance studies):
 * `start` submits the first tasks; each message from a worker goes to `onMessage`, which returns
 * true when the message ends that worker's task (the worker then takes the next queued task) and
 * may submit more tasks or finish the pool. A worker's error or non-zero exit ends the pool with
 * an error. Tasks go to idle workers in the order submitted.
 */
export function runPool<Task, Reply>(workers: Worker[], start: (pool: Pool<Task>) => void, onMessage: (reply: Reply, pool: Pool<Task>) => boolean): Promise<void> {
  return new Promise((resolve, reject) => {
    const idle = [...workers];
    const queue: Task[] = [];
    let finished = false;
    const dispatch = () => {
      while (!finished && idle.length > 0 && queue.length > 0) idle.shift()!.postMessage(queue.shift()!);
    };
    const pool: Pool<Task> = {
      submit(task) {
        queue.push(task);
        dispatch();
      },
      finish(error) {
        if (finished) return;
        finished = true;
        for (const w of workers) void w.terminate();
        if (error) reject(error);
        else resolve();
      },
    };
    for (const worker of workers) {
      worker.on('message', (reply: Reply) => {
        if (finished) return;
        if (onMessage(reply, pool)) {
          idle.push(worker);
          dispatch();
        }
      });
      worker.on('error', (error) => pool.finish(error));
      worker.on('exit', (code) => {
        if (code !== 0) pool.finish(new Error(`a worker thread stopped with exit code ${code}`));
      });
    }
    start(pool);
  });
}

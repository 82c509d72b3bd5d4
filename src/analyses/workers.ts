/**
 * Starting a worker thread on a module that sits beside its caller: the compiled .js when the
 * caller runs compiled, or the TypeScript source loaded through tsx when the caller itself runs
 * from source (tests, benchmarks). Exports `startWorkerBeside`.
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

/** Node adapter: a pool of worker_threads serving batches. */
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { fail } from '../errors.ts';
import type { FromWorker } from './batchServer.ts';
import { makePoolExecutor, type BatchPort } from './workerPool.ts';
import type { BatchExecutor } from './runSimulation.ts';

/** Number of cores the runner may use. */
export function defaultWorkerCount(): number {
  return Math.max(1, availableParallelism());
}

/** Starts `workers` worker threads and returns an executor over them (call `close()` when done). */
export function makeNodeWorkerExecutor(workers: number = defaultWorkerCount()): BatchExecutor {
  if (!(Number.isInteger(workers) && workers >= 1))
    fail('E_BAD_WORKERS', 'workers', 'must be a whole number >= 1', workers);
  const boot = new URL('./worker-boot.node.mjs', import.meta.url);
  const entry = new URL('./batchWorker.node.ts', import.meta.url).href;
  const ports: BatchPort[] = [];
  for (let i = 0; i < workers; i++) {
    const w = new Worker(boot, { argv: [entry] });
    w.unref();
    ports.push({
      post: (m) => w.postMessage(m),
      onMessage: (h) => w.on('message', (m: FromWorker) => h(m)),
      onError: (h) => {
        w.on('error', h);
        w.on('exit', (code) => h(new Error(`the worker stopped (exit code ${code})`)));
      },
      terminate: async () => {
        await w.terminate();
      },
    });
  }
  return makePoolExecutor(ports);
}

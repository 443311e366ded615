/**
 * Browser adapter. In the worker script: `serveBatchesInWorker(self)`. In the page: `makeWebWorkerExecutor(workers)`
 * with Web Workers started on such a script (the app hosts and bundles it).
 */
import type { FromWorker, ToWorker } from './batchServer.ts';
import { makeBatchServer } from './batchServer.ts';
import { makePoolExecutor } from './workerPool.ts';
import type { BatchExecutor } from './runSimulation.ts';

/** The part of a worker's global scope used here. */
export interface WorkerScopeLike {
  postMessage(msg: unknown): void;
  addEventListener(type: 'message', h: (e: { data: unknown }) => void): void;
}

/** Serves batches from a Web Worker's messages. */
export function serveBatchesInWorker(scope: WorkerScopeLike): void {
  const handle = makeBatchServer((m) => scope.postMessage(m));
  scope.addEventListener('message', (e) => void handle(e.data as ToWorker));
}

/** The part of a Worker object used here. */
export interface WorkerLike {
  postMessage(msg: unknown): void;
  /** `message` events carry `data`; `error` events a `message`. */
  addEventListener(type: 'message' | 'error', h: (e: { data?: unknown; message?: string }) => void): void;
  terminate(): void;
}

/** An executor over started Web Workers (each running {@link serveBatchesInWorker}). */
export function makeWebWorkerExecutor(workers: WorkerLike[]): BatchExecutor {
  return makePoolExecutor(
    workers.map((w) => ({
      post: (m: ToWorker) => w.postMessage(m),
      onMessage: (h: (m: FromWorker) => void) =>
        w.addEventListener('message', (e) => h(e.data as FromWorker)),
      terminate: async () => w.terminate(),
    })),
  );
}

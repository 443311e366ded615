/**
 * Entry of a Web Worker that serves batches, for the app to start with
 * `new Worker(new URL('./batchWorker.web.ts', import.meta.url), { type: 'module' })`.
 */
import { serveBatchesInWorker, type WorkerScopeLike } from './runner.web.ts';

serveBatchesInWorker(globalThis as unknown as WorkerScopeLike);

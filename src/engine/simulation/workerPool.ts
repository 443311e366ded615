/**
 * A pool executor over message ports (the platform adapters wrap worker_threads or Web Workers as ports).
 * Each worker holds at most two batches (one computing, one queued) so messages overlap computation.
 */
import { EngineError } from '../errors.ts';
import type { RunSpec } from './runSpec.ts';
import type { BatchResult } from './batch.ts';
import type { BatchExecutor } from './runSimulation.ts';
import type { FromWorker, ToWorker } from './batchServer.ts';

/** One worker as a message port. */
export interface BatchPort {
  post(msg: ToWorker): void;
  onMessage(handler: (msg: FromWorker) => void): void;
  /** Optional: called when the worker itself fails (crash, failed start); its pending batches are rejected. */
  onError?(handler: (error: unknown) => void): void;
  terminate(): Promise<void>;
}

/** An executor over `ports`; specs are sent once per worker per run (keyed by spec object). */
export function makePoolExecutor(ports: BatchPort[]): BatchExecutor {
  if (ports.length === 0) throw new EngineError('E_BAD_WORKERS', 'workers must be at least 1');
  const runIds = new WeakMap<RunSpec, number>();
  let nextRun = 1;
  const sent = ports.map(() => new Set<number>());
  const load = ports.map(() => 0);
  const pending = new Map<
    string,
    { resolve: (r: BatchResult) => void; reject: (e: unknown) => void; port: number }
  >();
  ports.forEach((port, pi) =>
    port.onMessage((msg) => {
      const key = `${msg.runId}:${msg.index}`;
      const p = pending.get(key);
      if (!p) return;
      pending.delete(key);
      load[pi]!--;
      if (msg.type === 'batch') p.resolve(msg.result);
      else p.reject(new EngineError(msg.error.code, msg.error.message, msg.error.issues));
    }),
  );
  ports.forEach((port, pi) =>
    port.onError?.((error) => {
      for (const [key, p] of pending)
        if (p.port === pi) {
          pending.delete(key);
          load[pi]!--;
          p.reject(
            new EngineError(
              'E_WORKER',
              `a simulation worker failed: ${(error as Error)?.message ?? String(error)}`,
            ),
          );
        }
    }),
  );
  return {
    concurrency: ports.length * 2,
    execute(spec, index) {
      let runId = runIds.get(spec);
      if (runId === undefined) {
        runId = nextRun++;
        runIds.set(spec, runId);
      }
      let pi = 0;
      for (let i = 1; i < ports.length; i++) if (load[i]! < load[pi]!) pi = i;
      load[pi]!++;
      const first = !sent[pi]!.has(runId);
      sent[pi]!.add(runId);
      const id = runId;
      return new Promise<BatchResult>((resolve, reject) => {
        pending.set(`${id}:${index}`, { resolve, reject, port: pi });
        ports[pi]!.post(
          first ? { type: 'batch', runId: id, spec, index } : { type: 'batch', runId: id, index },
        );
      });
    },
    async close() {
      for (const [, p] of pending) p.reject(new EngineError('E_CLOSED', 'the worker pool was closed'));
      pending.clear();
      await Promise.all(ports.map((p) => p.terminate()));
    },
  };
}

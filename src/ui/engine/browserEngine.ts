/**
 * Starts the engine worker and returns a protocol client. If the worker dies (a crash, or it could not load),
 * the calls in flight reject with `E_WORKER_FAILED` and the next call starts a fresh worker.
 */
import {
  createEngineClient,
  type CallOptions,
  type EngineClient,
  type EngineMethod,
  type ArgsOf,
  type ResultOf,
  type MessageEndpoint,
} from '../../engine/api/index.ts';

/** Something that can start a worker-like endpoint and stop it. */
export interface WorkerHandle {
  endpoint: MessageEndpoint;
  onFailure(listener: (message: string) => void): void;
  terminate(): void;
}

function startWorker(): WorkerHandle {
  const worker = new Worker(new URL('./engine.worker.ts', import.meta.url), {
    type: 'module',
    name: 'engine',
  });
  return {
    endpoint: worker as unknown as MessageEndpoint,
    onFailure(listener) {
      worker.addEventListener('error', (ev) => {
        ev.preventDefault();
        listener(ev.message || 'it could not be loaded');
      });
      worker.addEventListener('messageerror', () => listener('a message could not be read'));
    },
    terminate: () => worker.terminate(),
  };
}

/** A client that restarts its worker after a failure (`start` is replaceable in tests). */
export function restartingClient(start: () => WorkerHandle): EngineClient {
  let current: { handle: WorkerHandle; client: EngineClient } | null = null;
  const ensure = (): EngineClient => {
    if (current) return current.client;
    const handle = start();
    const client = createEngineClient(handle.endpoint);
    const mine = { handle, client };
    current = mine;
    handle.onFailure((message) => {
      if (current !== mine) return;
      current = null;
      handle.terminate();
      client.close(`the engine worker stopped: ${message}; the next action starts it again`);
    });
    return client;
  };
  return {
    call<M extends EngineMethod>(method: M, args: ArgsOf<M>, options?: CallOptions): Promise<ResultOf<M>> {
      return ensure().call(method, args, options);
    },
    close(reason) {
      current?.client.close(reason);
      current?.handle.terminate();
      current = null;
    },
  };
}

export function startBrowserEngine(): EngineClient {
  return restartingClient(startWorker);
}

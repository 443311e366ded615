import { describe, it, expect } from 'vitest';
import { MessageChannel } from 'node:worker_threads';
import { restartingClient, type WorkerHandle } from '../../src/ui/engine/browserEngine.ts';
import {
  serveEngine,
  isApiError,
  API_ERROR_CODES,
  PROTOCOL_VERSION,
  type MessageEndpoint,
} from '../../src/engine/api/index.ts';

/** A fake worker: a served MessageChannel whose failure can be triggered. */
function fakeWorkers(hang = false) {
  const started: { fail(m: string): void; terminated: boolean }[] = [];
  const start = (): WorkerHandle => {
    const ch = new MessageChannel();
    serveEngine(ch.port1 as unknown as MessageEndpoint, {
      'engine.info': () => (hang ? new Promise(() => {}) : { protocol: PROTOCOL_VERSION, methods: [] }),
    });
    let onFail: (m: string) => void = () => {};
    const rec = {
      fail: (m: string) => onFail(m),
      terminated: false,
    };
    started.push(rec);
    return {
      endpoint: ch.port2 as unknown as MessageEndpoint,
      onFailure: (l) => (onFail = l),
      terminate: () => {
        rec.terminated = true;
        ch.port1.close();
        ch.port2.close();
      },
    };
  };
  return { start, started };
}

describe('engine worker restarts', () => {
  it('starts the worker on first use only', async () => {
    const w = fakeWorkers();
    const c = restartingClient(w.start);
    expect(w.started).toHaveLength(0);
    await c.call('engine.info', {});
    await c.call('engine.info', {});
    expect(w.started).toHaveLength(1);
    c.close();
  });
  it('a worker failure rejects the calls in flight and the next call starts a new worker', async () => {
    const w = fakeWorkers(true);
    const c = restartingClient(w.start);
    const p = c.call('engine.info', {});
    w.started[0]!.fail('out of memory');
    const e = await p.then(
      () => null,
      (x: unknown) => x,
    );
    expect(isApiError(e) && e.code).toBe(API_ERROR_CODES.workerFailed);
    expect(isApiError(e) && e.message).toMatch(/out of memory.*starts it again/);
    expect(w.started[0]!.terminated).toBe(true);
    const again = c.call('engine.info', {}).catch((x: unknown) => x);
    expect(w.started).toHaveLength(2);
    c.close('test over');
    expect(isApiError(await again) && ((await again) as { code: string }).code).toBe(
      API_ERROR_CODES.workerFailed,
    );
  });
});

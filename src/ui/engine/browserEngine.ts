/** Starts the engine worker and returns a protocol client; a crashed worker rejects every pending call. */
import { createEngineClient, type EngineClient, type MessageEndpoint } from '../../engine/api/index.ts';

export function startBrowserEngine(): EngineClient {
  const worker = new Worker(new URL('./engine.worker.ts', import.meta.url), {
    type: 'module',
    name: 'engine',
  });
  const client = createEngineClient(worker as unknown as MessageEndpoint);
  worker.addEventListener('error', (ev) => {
    ev.preventDefault();
    client.close(`the engine worker stopped: ${ev.message || 'it could not be loaded'}`);
  });
  return client;
}

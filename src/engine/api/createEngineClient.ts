/**
 * The caller side of the protocol: `call(method, args, { signal, onProgress })` returns a promise of the
 * method's result, typed by {@link EngineMethods}. A rejected call rejects with an {@link ApiError} (plain data).
 */
import {
  API_ERROR_CODES,
  PROTOCOL_VERSION,
  type ApiError,
  type ArgsOf,
  type ClientMessage,
  type EngineMethod,
  type MessageEndpoint,
  type ProgressReport,
  type ResultOf,
} from './protocol.ts';

/** Options of one call. */
export interface CallOptions {
  /** Aborting it sends a cancel message; the call rejects with `E_CANCELLED`. */
  signal?: AbortSignal;
  onProgress?: (p: ProgressReport) => void;
}

export interface EngineClient {
  call<M extends EngineMethod>(method: M, args: ArgsOf<M>, options?: CallOptions): Promise<ResultOf<M>>;
  /** Rejects every pending call with `E_WORKER_FAILED` (e.g. when the worker crashed) and stops listening. */
  close(reason?: string): void;
}

interface Pending {
  resolve(v: unknown): void;
  reject(e: ApiError): void;
  onProgress?: (p: ProgressReport) => void;
  cleanup(): void;
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** True when a rejected call's reason is a protocol error object. */
export function isApiError(e: unknown): e is ApiError {
  return (
    isRecord(e) &&
    typeof e['code'] === 'string' &&
    typeof e['message'] === 'string' &&
    Array.isArray(e['issues'])
  );
}

/** Creates a client on an endpoint (a Worker in the browser; a MessagePort in tests). */
export function createEngineClient(endpoint: MessageEndpoint): EngineClient {
  let nextId = 1;
  let closed: string | null = null;
  const pending = new Map<number, Pending>();
  const send = (m: ClientMessage): void => endpoint.postMessage(m);

  const onMessage = (ev: { data: unknown }): void => {
    const m = ev.data;
    if (!isRecord(m) || m['v'] !== PROTOCOL_VERSION || typeof m['id'] !== 'number') return;
    const p = pending.get(m['id']);
    if (!p) return;
    if (m['kind'] === 'progress') {
      p.onProgress?.(m['progress'] as ProgressReport);
      return;
    }
    pending.delete(m['id']);
    p.cleanup();
    if (m['kind'] === 'result') p.resolve(m['result']);
    else if (m['kind'] === 'error') p.reject(m['error'] as ApiError);
  };
  endpoint.addEventListener('message', onMessage);

  return {
    call(method, args, options = {}) {
      if (closed !== null)
        return Promise.reject<never>({ code: API_ERROR_CODES.workerFailed, message: closed, issues: [] });
      const { signal, onProgress } = options;
      if (signal?.aborted)
        return Promise.reject<never>({ code: API_ERROR_CODES.cancelled, message: 'cancelled', issues: [] });
      const id = nextId++;
      return new Promise((resolve, reject) => {
        const onAbort = (): void => send({ v: PROTOCOL_VERSION, kind: 'cancel', id });
        signal?.addEventListener('abort', onAbort, { once: true });
        pending.set(id, {
          resolve: resolve as (v: unknown) => void,
          reject,
          onProgress,
          cleanup: () => signal?.removeEventListener('abort', onAbort),
        });
        send({ v: PROTOCOL_VERSION, kind: 'request', id, method, args });
      });
    },
    close(reason = 'the engine stopped') {
      closed = reason;
      endpoint.removeEventListener('message', onMessage);
      for (const p of pending.values()) {
        p.cleanup();
        p.reject({ code: API_ERROR_CODES.workerFailed, message: reason, issues: [] });
      }
      pending.clear();
    },
  };
}

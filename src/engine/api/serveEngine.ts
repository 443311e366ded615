/**
 * The engine side of the protocol: reads requests from an endpoint (a worker's global scope),
 * runs the handler, posts the result, progress or a plain error; cancels on request.
 */
import { toPlainError } from '../errors.ts';
import {
  API_ERROR_CODES,
  PROTOCOL_VERSION,
  type ApiError,
  type EngineHandlers,
  type EngineMethod,
  type MessageEndpoint,
  type ProgressReport,
  type ServerMessage,
} from './protocol.ts';

/** Options of {@link serveEngine}. */
export interface ServeOptions {
  /** Smallest interval between two progress messages of one request (milliseconds, default 50). */
  progressIntervalMs?: number;
  /** Clock (milliseconds), replaceable in tests. */
  now?: () => number;
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Converts anything thrown into an {@link ApiError}; an abort becomes `E_CANCELLED`. */
export function toApiError(e: unknown, signal?: AbortSignal): ApiError {
  if (signal?.aborted || (isRecord(e) && e['name'] === 'AbortError'))
    return { code: API_ERROR_CODES.cancelled, message: 'cancelled', issues: [] };
  const p = toPlainError(e);
  return { code: p.code, message: p.message, issues: p.issues };
}

/**
 * Serves `handlers` on `endpoint` until the returned function is called.
 * @returns stop: removes the listener and cancels every running request
 */
export function serveEngine(
  endpoint: MessageEndpoint,
  handlers: Partial<EngineHandlers>,
  options: ServeOptions = {},
): () => void {
  const running = new Map<number, AbortController>();
  const interval = options.progressIntervalMs ?? 50;
  const now = options.now ?? (() => Date.now());
  const post = (m: ServerMessage): void => endpoint.postMessage(m);

  const onMessage = (ev: { data: unknown }): void => {
    const m = ev.data;
    if (!isRecord(m) || typeof m['id'] !== 'number') return;
    const id = m['id'];
    if (m['v'] !== PROTOCOL_VERSION) {
      post({
        v: PROTOCOL_VERSION,
        kind: 'error',
        id,
        error: {
          code: API_ERROR_CODES.badRequest,
          message: `protocol version ${String(m['v'])} is not served (this engine speaks version ${PROTOCOL_VERSION})`,
          issues: [],
        },
      });
      return;
    }
    if (m['kind'] === 'cancel') {
      running.get(id)?.abort();
      return;
    }
    if (m['kind'] !== 'request' || typeof m['method'] !== 'string') {
      post({
        v: PROTOCOL_VERSION,
        kind: 'error',
        id,
        error: { code: API_ERROR_CODES.badRequest, message: 'a request needs a method name', issues: [] },
      });
      return;
    }
    const method = m['method'] as EngineMethod;
    const handler = Object.prototype.hasOwnProperty.call(handlers, method)
      ? (handlers[method] as ((a: unknown, c: unknown) => unknown) | undefined)
      : undefined;
    if (!handler) {
      post({
        v: PROTOCOL_VERSION,
        kind: 'error',
        id,
        error: {
          code: API_ERROR_CODES.unknownMethod,
          message: `the engine does not serve "${method}"`,
          issues: [],
        },
      });
      return;
    }
    const ac = new AbortController();
    running.set(id, ac);
    let lastProgress = -Infinity;
    const progress = (p: ProgressReport): void => {
      if (ac.signal.aborted) return;
      const t = now();
      if (t - lastProgress < interval && p.fraction < 1) return;
      lastProgress = t;
      const fraction = Math.max(0, Math.min(1, Number.isFinite(p.fraction) ? p.fraction : 0));
      post({ v: PROTOCOL_VERSION, kind: 'progress', id, progress: { ...p, fraction } });
    };
    Promise.resolve()
      .then(() => handler(m['args'] ?? {}, { signal: ac.signal, progress }))
      .then(
        (result) => {
          if (ac.signal.aborted)
            post({ v: PROTOCOL_VERSION, kind: 'error', id, error: toApiError(null, ac.signal) });
          else post({ v: PROTOCOL_VERSION, kind: 'result', id, result });
        },
        (e: unknown) => post({ v: PROTOCOL_VERSION, kind: 'error', id, error: toApiError(e, ac.signal) }),
      )
      .finally(() => running.delete(id));
  };

  endpoint.addEventListener('message', onMessage);
  return () => {
    endpoint.removeEventListener('message', onMessage);
    for (const ac of running.values()) ac.abort();
    running.clear();
  };
}

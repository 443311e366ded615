/**
 * First check of a request's arguments at the protocol boundary: each named argument has the expected kind.
 * (The engine then checks the content itself, field by field.) A mismatch is refused with `E_BAD_REQUEST`
 * naming the argument, instead of failing somewhere inside the engine.
 */
import { EngineError, issue } from '../errors.ts';
import { API_ERROR_CODES } from './protocol.ts';

/** Kind of one argument; a trailing `?` marks it optional. */
export type ArgKind = 'string' | 'object' | 'array' | 'any' | 'string?' | 'object?' | 'array?';

function kindOf(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'array';
  return typeof v;
}

/** Throws `E_BAD_REQUEST` for the first argument of `method` that is missing or of the wrong kind. */
export function checkArgs(method: string, args: unknown, shape: Record<string, ArgKind>): void {
  if (typeof args !== 'object' || args === null || Array.isArray(args)) {
    const i = issue(API_ERROR_CODES.badRequest, method, 'takes its arguments as one object', kindOf(args));
    throw new EngineError(i.code, i.message, [i]);
  }
  const a = args as Record<string, unknown>;
  for (const [name, want] of Object.entries(shape)) {
    const optional = want.endsWith('?');
    const base = want.replace('?', '');
    const v = a[name];
    if (v === undefined && optional) continue;
    const got = kindOf(v);
    if (base !== 'any' && got !== base) {
      const i = issue(
        API_ERROR_CODES.badRequest,
        `${method}.${name}`,
        `must be ${base === 'array' ? 'a list' : `a ${base}`}`,
        got,
      );
      throw new EngineError(i.code, i.message, [i]);
    }
    if (base === 'any' && v === undefined) {
      const i = issue(API_ERROR_CODES.badRequest, `${method}.${name}`, 'is required', 'nothing');
      throw new EngineError(i.code, i.message, [i]);
    }
  }
}

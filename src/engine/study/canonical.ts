/**
 * Canonical JSON: one text per value, so equal studies hash equally on every machine.
 * Rules: object keys sorted by UTF-16 code units; no whitespace; numbers in the shortest form that reads back
 * to the same double (ECMAScript Number::toString, ECMA-262 sec. 6.1.6.1.20, which is the shortest round-trip
 * form), with -0 written as 0; strings escaped as JSON.stringify does; `undefined` members left out as JSON does.
 * Non-finite numbers have no JSON form and are refused (the field is named).
 */
import { fail } from '../errors.ts';

function write(value: unknown, path: string, out: string[]): void {
  if (value === null) {
    out.push('null');
    return;
  }
  switch (typeof value) {
    case 'number':
      if (!Number.isFinite(value))
        fail('E_NOT_FINITE', path || '(root)', 'must be a finite number to be saved', value);
      out.push(Object.is(value, -0) ? '0' : String(value));
      return;
    case 'string':
      out.push(JSON.stringify(value));
      return;
    case 'boolean':
      out.push(value ? 'true' : 'false');
      return;
    case 'object': {
      if (Array.isArray(value)) {
        out.push('[');
        value.forEach((v, i) => {
          if (i > 0) out.push(',');
          write(v === undefined ? null : v, `${path}[${i}]`, out);
        });
        out.push(']');
        return;
      }
      if (ArrayBuffer.isView(value)) {
        write(Array.from(value as unknown as ArrayLike<number>), path, out);
        return;
      }
      const obj = value as Record<string, unknown>;
      const keys = Object.keys(obj)
        .filter((k) => obj[k] !== undefined)
        .sort();
      out.push('{');
      keys.forEach((k, i) => {
        if (i > 0) out.push(',');
        out.push(JSON.stringify(k), ':');
        write(obj[k], path ? `${path}.${k}` : k, out);
      });
      out.push('}');
      return;
    }
    default:
      fail('E_NOT_SERIALISABLE', path || '(root)', 'must be plain JSON data', typeof value);
  }
}

/** Canonical JSON text of a plain value (sorted keys, shortest round-trip numbers, no whitespace). */
export function canonicalJson(value: unknown): string {
  const out: string[] = [];
  write(value, '', out);
  return out.join('');
}

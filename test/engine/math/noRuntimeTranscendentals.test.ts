import { describe, it, expect } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

// The engine must give the same bits in every runtime, so it may not call the runtime's transcendental functions
// (not specified to the last bit by ECMAScript, and measured to differ between engine versions); it uses
// src/engine/math/detMath.ts instead. IEEE basic operations, Math.sqrt, Math.abs/floor/ceil/round/trunc/min/max/
// sign/fround and the constants Math.PI, Math.E, ... are correctly rounded or exact everywhere and stay allowed.

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
const engine = path.join(root, 'src/engine');

/**
 * Paths (relative to the repository, '/'-separated; a trailing '/' means a folder) not yet checked. Shorten this list
 * as folders are converted; it can be empty (detMath.ts itself passes the scan: it names Math.* only in comments).
 */
const NOT_YET_CHECKED: readonly string[] = [];

const FORBIDDEN =
  /\bMath\s*\.\s*(exp|log|pow|sin|cos|tan|atan2|atan|asin|acos|expm1|log1p|cbrt|hypot|sinh|cosh|tanh|log2|log10|asinh|acosh|atanh)\b/g;

/**
 * The source with comments, string literals, template-literal text and regular-expression literals blanked out
 * (newlines kept, so line numbers stay right); template expressions `${...}` are kept as code.
 */
function codeOnly(src: string): string {
  const out: string[] = [];
  const braces: boolean[] = []; // true for a brace that opened a template expression
  let i = 0;
  const n = src.length;
  let last = ''; // last significant code character, to tell a regular expression from a division
  const blank = (from: number, to: number): void => {
    for (let k = from; k < to; k++) out.push(src[k] === '\n' ? '\n' : ' ');
  };
  const template = (from: number): number => {
    let k = from;
    while (k < n) {
      if (src[k] === '\\') k += 2;
      else if (src[k] === '`') return k + 1;
      else if (src[k] === '$' && src[k + 1] === '{') {
        braces.push(true);
        return k + 2;
      } else k++;
    }
    return n;
  };
  while (i < n) {
    const c = src[i]!;
    if (c === '/' && src[i + 1] === '/') {
      const j = src.indexOf('\n', i);
      const end = j < 0 ? n : j;
      blank(i, end);
      i = end;
    } else if (c === '/' && src[i + 1] === '*') {
      const j = src.indexOf('*/', i + 2);
      const end = j < 0 ? n : j + 2;
      blank(i, end);
      i = end;
    } else if (c === "'" || c === '"') {
      let j = i + 1;
      while (j < n && src[j] !== c && src[j] !== '\n') j += src[j] === '\\' ? 2 : 1;
      blank(i, j + 1);
      i = j + 1;
      last = 'a';
    } else if (c === '`' || (c === '}' && braces.length > 0 && braces[braces.length - 1])) {
      if (c === '}') braces.pop();
      const j = template(i + 1);
      blank(i, j);
      i = j;
      last = 'a';
    } else if (c === '/' && !/[\w$)\]]/.test(last)) {
      let j = i + 1;
      let inClass = false;
      while (j < n && src[j] !== '\n') {
        if (src[j] === '\\') j++;
        else if (src[j] === '[') inClass = true;
        else if (src[j] === ']') inClass = false;
        else if (src[j] === '/' && !inClass) break;
        j++;
      }
      blank(i, j + 1);
      i = j + 1;
      last = 'a';
    } else {
      if (c === '{') braces.push(false);
      else if (c === '}') braces.pop();
      out.push(c);
      if (!/\s/.test(c)) last = c;
      i++;
    }
  }
  return out.join('');
}

function engineFiles(dir: string): string[] {
  const files: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = path.join(dir, name);
    if (statSync(p).isDirectory()) files.push(...engineFiles(p));
    else if (name.endsWith('.ts')) files.push(p);
  }
  return files;
}

function findings(rel: string, src: string): string[] {
  const code = codeOnly(src);
  const lines = code.split('\n');
  const found: string[] = [];
  lines.forEach((line, k) => {
    for (const m of line.matchAll(FORBIDDEN)) found.push(`${rel}:${k + 1}: ${m[0]}`);
    if (line.includes('**')) found.push(`${rel}:${k + 1}: ** (use pow(a, b), or a * a for a square)`);
  });
  return found;
}

describe('the engine does not call the runtime transcendental functions', () => {
  it('no Math.exp/log/pow/sin/cos/... and no ** in src/engine outside the paths not yet checked', () => {
    const bad: string[] = [];
    for (const file of engineFiles(engine)) {
      const rel = path.relative(root, file).split(path.sep).join('/');
      if (NOT_YET_CHECKED.some((p) => (p.endsWith('/') ? rel.startsWith(p) : rel === p))) continue;
      bad.push(...findings(rel, readFileSync(file, 'utf8')));
    }
    if (bad.length > 0) throw new Error(`runtime transcendentals in the engine:\n${bad.join('\n')}`);
    expect(bad).toEqual([]);
  });

  it('the scan sees code and ignores comments, strings and template text (self-check on a sample)', () => {
    const sample = [
      '/** Math.exp in a doc comment, and 2 ** 3 */',
      "const a = 'Math.log(x) in a string';",
      'const b = `text Math.sin ${Math.cos(1)} more`; // Math.pow here',
      'const c = x ** 2;',
      'const d = /\\*\\*/.test(s);',
      'const e = Math.sqrt(2) / Math.PI;',
    ].join('\n');
    expect(findings('sample.ts', sample)).toEqual([
      'sample.ts:3: Math.cos',
      'sample.ts:4: ** (use pow(a, b), or a * a for a square)',
    ]);
  });

  it('detMath.ts itself passes the scan', () => {
    const file = path.join(engine, 'math/detMath.ts');
    expect(findings('src/engine/math/detMath.ts', readFileSync(file, 'utf8'))).toEqual([]);
  });
});

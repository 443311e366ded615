import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../../src/engine/deal');

/** Every module specifier imported (statically or dynamically) by a file. */
function specifiers(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  const out: string[] = [];
  for (const m of text.matchAll(/(?:import|export)\s[^;]*?from\s+'([^']+)'/g)) out.push(m[1]!);
  for (const m of text.matchAll(/import\(\s*'([^']+)'\s*\)/g)) out.push(m[1]!);
  return out;
}

/** The transitive module graph from `entry`: local files and bare package names. */
function graph(entry: string): { files: Set<string>; packages: Set<string> } {
  const files = new Set<string>();
  const packages = new Set<string>();
  const stack = [entry];
  while (stack.length > 0) {
    const f = stack.pop()!;
    if (files.has(f)) continue;
    files.add(f);
    for (const s of specifiers(f)) {
      if (s.startsWith('.')) stack.push(path.resolve(path.dirname(f), s));
      else packages.add(s);
    }
  }
  return { files, packages };
}

describe('the evaluator side of the deal layer stays light and safe', () => {
  it.each(['dealEvaluator.ts', 'dealPayoffFactory.ts'])(
    '%s does not import mathjs, directly or indirectly',
    (entry) => {
      const g = graph(path.join(root, entry));
      expect([...g.packages].filter((p) => p.startsWith('mathjs'))).toEqual([]);
      expect([...g.files].some((f) => f.endsWith('checkExpression.ts'))).toBe(false);
    },
  );

  it('no deal module uses eval, new Function or Node built-ins', () => {
    for (const f of readdirSync(root).filter((x) => x.endsWith('.ts'))) {
      const text = readFileSync(path.join(root, f), 'utf8');
      expect(/\beval\s*\(/.test(text), `${f} uses eval`).toBe(false);
      expect(/new\s+Function\b/.test(text), `${f} uses new Function`).toBe(false);
      expect(
        specifiers(path.join(root, f)).filter((s) => s.startsWith('node:')),
        f,
      ).toEqual([]);
    }
  });
});

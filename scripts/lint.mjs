#!/usr/bin/env node
// House rules the type checker cannot see: the engine stays pure, no code generation at run time.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';

const problems = [];
function walk(dir, out = []) {
  for (const f of readdirSync(dir)) {
    const p = path.join(dir, f);
    if (statSync(p).isDirectory()) walk(p, out);
    else if (/\.(ts|tsx|mjs|cjs|js)$/.test(f)) out.push(p);
  }
  return out;
}
const forbidden =
  /from\s+['"](react|react-dom|electron|node:[a-z_/]+|fs|path|os|child_process|worker_threads)['"]/;
for (const f of walk('src/engine')) {
  if (/\.node\.(ts|mjs|cjs)$/.test(f)) continue; // Node adapters are the one place Node built-ins may appear
  readFileSync(f, 'utf8')
    .split('\n')
    .forEach((line, i) => {
      if (forbidden.test(line))
        problems.push(`${f}:${i + 1}: engine code imports a UI/shell/Node module: ${line.trim()}`);
    });
}
for (const f of walk('src')) {
  readFileSync(f, 'utf8')
    .split('\n')
    .forEach((line, i) => {
      if (/\beval\s*\(|new\s+Function\s*\(/.test(line) && !line.includes('lint-allow'))
        problems.push(`${f}:${i + 1}: eval/new Function is not allowed: ${line.trim()}`);
    });
}
for (const f of walk('test')) {
  readFileSync(f, 'utf8')
    .split('\n')
    .forEach((line, i) => {
      if (/\b(it|test|describe)\.(only|skip|todo)\(/.test(line))
        problems.push(`${f}:${i + 1}: focused or skipped test`);
    });
}
if (problems.length) {
  console.error(problems.join('\n'));
  process.exit(1);
}
console.log('lint: engine purity and no-eval rules hold');

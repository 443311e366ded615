#!/usr/bin/env node
// Runs the whole suite (lint, then vitest) and prints the plain 'N passed, N failed' line.
import { spawnSync } from 'node:child_process';
import { readFileSync, mkdirSync } from 'node:fs';

const lint = spawnSync('npm', ['run', '-s', 'lint'], { stdio: 'inherit' });
mkdirSync('artifacts', { recursive: true });
const out = 'artifacts/vitest.json';
const r = spawnSync(
  'npx',
  [
    'vitest',
    'run',
    '--reporter=default',
    '--reporter=json',
    `--outputFile.json=${out}`,
    ...process.argv.slice(2),
  ],
  { stdio: 'inherit' },
);
let passed = 0;
let failed = 0;
try {
  const j = JSON.parse(readFileSync(out, 'utf8'));
  passed = j.numPassedTests;
  failed = j.numFailedTests + (j.numRuntimeErrorTestSuites ?? 0);
  if (j.numFailedTestSuites && !j.numFailedTests) failed += j.numFailedTestSuites;
} catch {
  failed += 1;
}
if (lint.status !== 0) {
  console.log('lint failed: run `npm run lint` to see where');
  failed += 1;
}
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed === 0 && r.status === 0 && lint.status === 0 ? 0 : 1);

#!/usr/bin/env node
// Runs a TypeScript entry with tsx registered from this package (not from the caller's directory).
import { register } from 'tsx/esm/api';
import { pathToFileURL, fileURLToPath } from 'node:url';
import path from 'node:path';

register();
const here = path.dirname(fileURLToPath(import.meta.url));
const entry = process.argv[2];
if (!entry) {
  console.error('usage: run-ts.mjs ENTRY.ts [args]');
  process.exit(2);
}
process.argv.splice(2, 1);
await import(pathToFileURL(path.resolve(here, '..', entry)).href);

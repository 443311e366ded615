#!/usr/bin/env node
// Command-line entry: registers tsx from this package, then runs the TypeScript CLI.
import { register } from 'tsx/esm/api';
register();
const { main } = await import('../src/cli/main.ts');
process.exitCode = await main(process.argv.slice(2));

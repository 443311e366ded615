/**
 * `npm run bench`: runs every `bench/*.bench.ts` (or those named on the command line) in turn.
 * Each bench prints its timings beside a baseline measured in the same run, as ratios.
 *
 * With several benches, each runs in a process of its own: a bench's heap, compiled code and background threads
 * (garbage collection of a previous bench's memory is counted in this process's CPU time) must not distort the
 * next one's figures. Options starting with `--` are passed on (e.g. `--no-memory` for the simulation bench).
 */
import { readdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { fileURLToPath, pathToFileURL } from 'node:url';
import path from 'node:path';

const here = path.dirname(fileURLToPath(import.meta.url));
const args = process.argv.slice(2);
const only = args.filter((a) => !a.startsWith('--'));
const flags = args.filter((a) => a.startsWith('--'));
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => only.length === 0 || only.some((o) => f.includes(o)))
  .sort();
if (files.length === 1) {
  const f = files[0]!;
  console.log(`\n=== ${f.replace('.bench.ts', '')} ===`);
  const mod = (await import(pathToFileURL(path.join(here, f)).href)) as { run?: () => Promise<void> };
  if (mod.run) await mod.run();
} else {
  const runner = path.join(here, '..', 'bin', 'run-ts.mjs');
  let failed = 0;
  for (const f of files) {
    const r = spawnSync(process.execPath, [runner, 'bench/index.ts', f, ...flags], {
      stdio: 'inherit',
      cwd: path.join(here, '..'),
    });
    if (r.status !== 0) {
      failed++;
      console.error(`bench ${f} failed (exit ${r.status ?? r.signal})`);
    }
  }
  if (failed) process.exitCode = 1;
}

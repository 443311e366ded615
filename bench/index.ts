/**
 * `npm run bench`: runs every `bench/*.bench.ts` (or those named on the command line) in turn.
 * Each bench prints its timings beside a baseline measured in the same run, as ratios.
 */
import { readdirSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import path from 'node:path';

const here = path.dirname(fileURLToPath(import.meta.url));
const only = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => only.length === 0 || only.some((o) => f.includes(o)))
  .sort();
for (const f of files) {
  console.log(`\n=== ${f.replace('.bench.ts', '')} ===`);
  const mod = (await import(pathToFileURL(path.join(here, f)).href)) as { run?: () => Promise<void> };
  if (mod.run) await mod.run();
}

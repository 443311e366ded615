/**
 * Deal evaluation cost beside path generation, on the same batch: the autocallable (quarterly events) and the range
 * accrual (daily events with a rate observable). Target: evaluation well under generation (ratio < 0.5).
 * Also the cost of checking one payoff expression (type-as-you-check in the app).
 */
import { readFileSync } from 'node:fs';
import { compileDeal } from '../src/engine/deal/compileDeal.ts';
import { checkExpression } from '../src/engine/deal/checkExpression.ts';
import * as dealFactory from '../src/engine/deal/dealPayoffFactory.ts';
import { batchNormals, makeBatchContext } from '../src/engine/simulation/index.ts';
import { benchHybridVariant } from './fixtures.ts';
import { fmtTime, timePerCall } from './timing.ts';

const variant = benchHybridVariant('hybrid');

function bench(file: string, maxStep: number): void {
  const compiled = compileDeal(
    JSON.parse(readFileSync(new URL(`../samples/deals/${file}`, import.meta.url), 'utf8')),
  );
  const description = { deals: [compiled] };
  const n = 8192;
  const ctx = makeBatchContext(
    {
      variants: [variant],
      payoff: { factory: 'deal', description },
      grid: { eventTimes: dealFactory.eventTimes(description), maxStep },
      seed: 'bench',
      maxPaths: n,
      batchSize: n,
    },
    dealFactory,
  );
  const normals = batchNormals(ctx, 0, n);
  const pv = ctx.prepared[0]!;
  const evaluate = ctx.evaluators[0]![0]!;
  const batch = pv.simulate(normals, n);
  const tGen = timePerCall(() => pv.simulate(normals, n).nPaths, 300, 5);
  const tEval = timePerCall(() => evaluate(batch).length, 300, 5);
  const occurrences = compiled.events.reduce((s, e) => s + e.times.length, 0);
  const steps = ctx.grid.times.length - 1;
  console.log(
    `${file.padEnd(34)} ${n} paths, ${steps} grid steps, ${occurrences} event dates\n` +
      `  path generation ${fmtTime(tGen).padStart(10)}  (${fmtTime(tGen / (n * steps))} per path-step)\n` +
      `  deal evaluation ${fmtTime(tEval).padStart(10)}  (${fmtTime(tEval / (n * occurrences))} per path-event)\n` +
      `  evaluation / generation = ${(tEval / tGen).toFixed(3)}  target < 0.5: ${tEval / tGen < 0.5 ? 'met' : 'NOT met'}`,
  );
}

export async function run(): Promise<void> {
  bench('autocallable-memory.json', 1 / 52);
  bench('range-accrual.json', 1 / 52);
  const ctx = {
    field: 'amount',
    symbols: { ALDR: 'equity', K: 'parameter', obs: 'schedule', DOM: 'rateCurrency' } as const,
  };
  const text =
    'perf(ALDR) >= 1 ? max(ALDR - K, 0) + 0.05 * index : (lowest(ALDR, obs) > 0.6 * start(ALDR) ? 1 : perf(ALDR))';
  const tCheck = timePerCall(
    () => checkExpression(text, { ...ctx, symbols: { ...ctx.symbols } }).errors.length,
    200,
    3,
  );
  const tBase = timePerCall(() => JSON.parse(JSON.stringify({ text })).text.length, 200, 3);
  console.log(
    `checkExpression (${text.length} chars) ${fmtTime(tCheck)}   ${(tCheck / tBase).toFixed(1)} x a JSON round trip of the text`,
  );
}

if (import.meta.url === `file://${process.argv[1]}`) await run();

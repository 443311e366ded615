/**
 * Benchmark of the full factor study of the long-dated note (every variant, Greeks, sweeps, local-vol diagnostic,
 * 200,000 paths) on all cores, with the share of wall time in calibration, path simulation and payoff evaluation.
 * Baseline measured in the same run: one plain pricing run of the base variant alone on the same grid and paths.
 * Target: the full study under 60 s on 2 cores.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { runStudy, DEFAULT_SETTINGS } from '../src/engine/study/index.ts';
import { makeNodeWorkerExecutor } from '../src/engine/simulation/runner.node.ts';
import { inProcessExecutor } from '../src/engine/simulation/runSimulation.ts';
import { report, fmtTime } from './timing.ts';

export async function run(): Promise<void> {
  const root = new URL('../', import.meta.url);
  const deal = JSON.parse(readFileSync(new URL('samples/deals/long-dated-floating-note.json', root), 'utf8'));
  const market = JSON.parse(readFileSync(new URL('samples/market/demo-market.json', root), 'utf8'));
  const workers = Math.max(1, Math.min(2, availableParallelism()));
  const paths = Number(process.env.FT_BENCH_PATHS ?? 200000);
  const makeExecutor = (w: number) => (w > 1 ? makeNodeWorkerExecutor(w) : inProcessExecutor());

  // Baseline: the base variant alone, no Greeks, no sweeps, no diagnostics, same paths.
  const t0 = performance.now();
  await runStudy(
    {
      deal,
      markets: [market],
      settings: {
        ...DEFAULT_SETTINGS,
        paths,
        firstPaths: paths,
        batchSize: 5000,
        greeks: null,
        sweeps: null,
        localVol: false,
        rules: { ...DEFAULT_SETTINGS.rules, rateCandidateMaturity: 100, volCandidateMaturity: 100 },
        extraCandidates: [],
        auxiliaryFraction: 0.025,
      },
    },
    { workers, makeExecutor },
  );
  const baseline = (performance.now() - t0) / 1000;

  const t1 = performance.now();
  const s = await runStudy(
    {
      deal,
      markets: [market],
      settings: {
        ...DEFAULT_SETTINGS,
        paths,
        firstPaths: Math.max(5000, Math.round(paths / 8 / 5000) * 5000),
        batchSize: 5000,
      },
    },
    { workers, makeExecutor },
  );
  const total = (performance.now() - t1) / 1000;
  const t = s.timings;
  console.log(report(`baseline: base variant only, ${paths} paths`, baseline, baseline));
  console.log(
    report(
      `full study, ${s.ladder.length} variants + Greeks + sweeps + LV, ${workers} workers`,
      total,
      baseline,
      { seconds: 60 },
    ),
  );
  const pct = (x: number) => `${((100 * x) / t.total).toFixed(1)}%`;
  console.log(
    `  split: calibration ${fmtTime(t.calibration)} (${pct(t.calibration)}), simulation ${fmtTime(t.simulation)} (${pct(t.simulation)}), payoff evaluation ${fmtTime(t.payoff)} (${pct(t.payoff)}), other ${fmtTime(Math.max(0, t.total - t.calibration - t.simulation - t.payoff))}`,
  );
  console.log(
    `  stages: ${Object.entries(t.stages ?? {})
      .map(([k, v]) => `${k} ${fmtTime(v)}`)
      .join(', ')}`,
  );
  console.log(`  verdicts: ${s.verdicts.map((v) => `${v.factor} ${v.verdict}`).join(', ')}`);
}

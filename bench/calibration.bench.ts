/**
 * Calibration timings: a Heston fit to a 5 × 8 grid (target < 0.1 s from a cold start), a Hull–White fit to 10 caplet
 * quotes, a full ladder calibration with analytic and approximate refits (target < 2 s), and the Monte Carlo-corrected
 * refit timed separately. Baseline, measured in the same run: one residual evaluation of the 5 × 8 grid by COS
 * (40 model prices), so every ratio reads as "fit cost in residual evaluations".
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { fmtTime, report, timePerCall } from './timing.ts';
import type { MarketSnapshot } from '../src/engine/market/types.ts';
import { makeCurve } from '../src/engine/market/curve.ts';
import {
  calibrateHeston,
  calibrateHullWhite,
  gridQuotes,
  hestonModelPrices,
  refitHestonUnderRates,
} from '../src/engine/calibration/index.ts';
import { sqrtVarianceTable } from '../src/engine/calibration/h1hwCharFn.ts';
import { calibrateLadder, snapshotLadderBasis } from '../src/engine/study/ladderCalibration.ts';

const here = path.dirname(fileURLToPath(import.meta.url));

export async function run(): Promise<void> {
  const snapshot = JSON.parse(
    readFileSync(path.join(here, '../samples/market/demo-market.json'), 'utf8'),
  ) as MarketSnapshot;
  const eq = snapshot.equities.ALDR!;
  const curve = makeCurve(snapshot.curves.DOM!);
  // 5 expiries × 8 strikes of the demo grid.
  const rows = [1, 2, 3, 4, 5];
  const cols = [0, 1, 2, 3, 4, 5, 6, 7];
  const quotes = gridQuotes(eq, curve, 'equities.ALDR').filter(
    (q) => rows.includes(q.row) && cols.includes(q.col),
  );
  const p0 = { v0: 0.03, kappa: 1.5, theta: 0.04, sigma: 0.5, rho: -0.6 };

  const tCold0 = performance.now();
  const cold = calibrateHeston({ name: 'ALDR', equity: eq, curve, quotes });
  const heston5x8Cold = (performance.now() - tCold0) / 1000;

  const baseline = timePerCall(() => hestonModelPrices(p0, quotes)[0]!);
  console.log(`baseline: one residual evaluation of the 5 × 8 grid (40 COS prices): ${fmtTime(baseline)}`);
  console.log(report('Heston fit 5 × 8, cold start (start rule)', heston5x8Cold, baseline, { seconds: 0.1 }));
  console.log(
    `  (${cold.fit.evaluations} residual evaluations and ${cold.fit.jacobians} full Jacobians (differences) in the best start, ${cold.fit.iterations} iterations, ${cold.starts.length} start(s) run, ${cold.skippedStarts.starts.length} skipped; RMSE ${cold.rmseVolPoints.toFixed(3)} vol points, residuals by the ${cold.pricer.residualPricer} COS slices, pricer check ${cold.pricer.disagreementVolPoints.toExponential(1)} vol points)`,
  );
  const heston5x8 = timePerCall(
    () => calibrateHeston({ name: 'ALDR', equity: eq, curve, quotes }).rmseVolPoints,
    500,
    3,
  );
  console.log(
    report(`Heston fit 5 × 8, warm (start rule: ${cold.starts.length} run)`, heston5x8, baseline, {
      seconds: 0.1,
    }),
  );
  const hestonAll = timePerCall(
    () => calibrateHeston({ name: 'ALDR', equity: eq, curve, quotes, startRule: 'all' }).rmseVolPoints,
    500,
    3,
  );
  console.log(report('Heston fit 5 × 8, warm (all 4 starts)', hestonAll, baseline, { seconds: 0.1 }));
  const hestonOne = timePerCall(
    () => calibrateHeston({ name: 'ALDR', equity: eq, curve, quotes, starts: [p0] }).rmseVolPoints,
    500,
    3,
  );
  console.log(report('Heston fit 5 × 8, warm (1 start)', hestonOne, baseline, { seconds: 0.1 }));

  // The H1-HW refit's analytic step: the same grid under Hull–White rates (E√v table, differenced Jacobian).
  const hwParams = { a: 0.05, sigma: 0.01 };
  const table = timePerCall(() => sqrtVarianceTable(cold.params, 5)(1), 300, 3);
  console.log(report('E[√v] table for T ≤ 5 (Hermite, adaptive nodes)', table, baseline));
  const h1hwFit = timePerCall(
    () =>
      calibrateHeston({
        name: 'ALDR',
        equity: eq,
        curve,
        quotes,
        rates: { hw: hwParams, rhoSR: 0.15 },
        starts: [cold.params],
      }).rmseVolPoints,
    500,
    3,
  );
  console.log(report('H1-HW refit 5 × 8, warm (1 start)', h1hwFit, baseline));

  const hw = timePerCall(
    () => calibrateHullWhite({ currency: 'DOM', curve, rateVols: snapshot.rateVols!.DOM! }).rmseVol,
    300,
    3,
  );
  console.log(report('Hull–White fit, 10 caplets', hw, baseline));

  const tl = performance.now();
  const L = calibrateLadder({
    snapshot,
    analysis: snapshotLadderBasis(snapshot, { equities: ['ALDR', 'BRIX', 'KESO'] }),
    candidates: ['stochVol', 'domesticRate', 'foreignRate'],
    required: [],
    mode: 'fair',
    scheme: 'qe',
  });
  const ladder = (performance.now() - tl) / 1000;
  console.log(
    report(`ladder, 3 equities, ${L.variants.length} variants (analytic + H1-HW)`, ladder, baseline, {
      seconds: 2,
    }),
  );

  const tm = performance.now();
  const r = refitHestonUnderRates({
    name: 'ALDR',
    equity: eq,
    curve,
    curveSpec: snapshot.curves.DOM!,
    currency: 'DOM',
    hw: L.hullWhite.DOM!.params,
    rhoSR: 0.15,
    quotes,
    start: cold.params,
    monteCarlo: { paths: 32768, seed: 'bench', maxIterations: 3 },
  });
  const mc = (performance.now() - tm) / 1000;
  console.log(report('Heston refit under HW, Monte Carlo-corrected', mc, baseline));
  console.log(
    `  (status ${r.status}, ${r.iterations.length} checks of 32768 paths, last max error ${r.iterations.at(-1)?.maxErrorPoints.toFixed(3)} vol points)`,
  );
}

/**
 * `factor-triage simulate [--paths N] [--seed S] [--workers W] [--json]`: a demonstration of the Monte Carlo engine.
 * Prices one European call on the invented index ALDR under Black–Scholes and under Black–Scholes–Hull–White on the
 * same paths (common random numbers), prints both prices, their difference Δ with its paired standard error, and
 * the closed-form values beside them.
 */
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { EngineError, issue } from '../../engine/errors.ts';
import { makeCurve } from '../../engine/market/curve.ts';
import { bsHullWhite, bsPrice } from '../../engine/models/index.ts';
import type { VariantSpec } from '../../engine/simulation/types.ts';
import { BUILTIN_TEST_PAYOFFS, type RunSpec } from '../../engine/simulation/runSpec.ts';
import { columnStats } from '../../engine/simulation/momentSums.ts';
import {
  inProcessExecutor,
  runSimulation,
  type BatchExecutor,
} from '../../engine/simulation/runSimulation.ts';
import { makeNodeWorkerExecutor } from '../../engine/simulation/runner.node.ts';

export const summary =
  'Demonstrate the Monte Carlo engine: a call under Black–Scholes and Black–Scholes–Hull–White on the same paths.';
export const usage = [
  'usage: factor-triage simulate [--paths N] [--seed S] [--workers W] [--json]',
  '',
  '  --paths N    number of paths (default 100000)',
  '  --seed S     run seed, a whole number >= 0 or a word (default 1)',
  '  --workers W  worker threads (default 1 = in this process)',
  '  --json       print the results as JSON',
].join('\n');

export const SIMULATE_RESULTS_FORMAT = 'factor-triage/simulate-results@1';
const CAUTION =
  "Model output informs pricing decisions; it is not investment advice. Model choice remains subject to your firm's model-risk policy and independent validation.";

/** The invented demo deal and market (fictional index ALDR in the fictional currency DOM). */
const DEMO = {
  spot: 100,
  strike: 100,
  expiry: 5,
  q: 0.01,
  vol: 0.2,
  rate: 0.03,
  hw: { a: 0.05, sigma: 0.01 },
  rhoSr: 0.3,
};

function demoVariants(): VariantSpec[] {
  const curve = { currency: 'DOM', times: [1, 5, 10], zeroRates: [DEMO.rate, DEMO.rate, DEMO.rate] };
  const base = (id: string, label: string, stochasticRate: boolean): VariantSpec => ({
    id,
    label,
    domestic: 'DOM',
    equities: [
      {
        name: 'ALDR',
        currency: 'DOM',
        spot: DEMO.spot,
        divYield: DEMO.q,
        dynamics: { kind: 'bs', volTimes: [DEMO.expiry], vols: [DEMO.vol] },
      },
    ],
    rates: { DOM: stochasticRate ? { curve, hw: DEMO.hw } : { curve } },
    fx: [],
    correlation: {
      names: ['eq:ALDR', 'rate:DOM'],
      matrix: [
        [1, DEMO.rhoSr],
        [DEMO.rhoSr, 1],
      ],
    },
  });
  return [base('bs', 'Black-Scholes', false), base('bshw', 'Black-Scholes-Hull-White', true)];
}

interface Options {
  paths: number;
  seed: string | number;
  workers: number;
  json: boolean;
}

function bad(field: string, rule: string, value: unknown, hint: string): never {
  const i = issue('E_BAD_OPTION', field, rule, value, hint);
  throw new EngineError('E_BAD_OPTION', i.message, [i]);
}

function parse(args: string[]): Options {
  const o: Options = { paths: 100_000, seed: 1, workers: 1, json: false };
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!;
    const value = () => {
      const v = args[++i];
      if (v === undefined) bad(a, 'needs a value', undefined, `e.g. ${a} 10`);
      return v;
    };
    if (a === '--json') o.json = true;
    else if (a === '--paths') {
      const v = value();
      const n = Number(v);
      if (!(Number.isSafeInteger(n) && n >= 2))
        bad('--paths', 'must be a whole number >= 2', v, 'e.g. --paths 100000');
      o.paths = n;
    } else if (a === '--seed') {
      const v = value();
      o.seed = /^\d+$/.test(v) && Number.isSafeInteger(Number(v)) ? Number(v) : v;
    } else if (a === '--workers') {
      const v = value();
      const n = Number(v);
      if (!(Number.isInteger(n) && n >= 1 && n <= 64))
        bad('--workers', 'must be a whole number from 1 to 64', v, 'e.g. --workers 2');
      o.workers = n;
    } else bad(a, 'is not an option of simulate', a, 'see factor-triage simulate --help');
  }
  return o;
}

export async function run(args: string[], io: CliIo): Promise<number> {
  const o = parse(args);
  const variants = demoVariants();
  const spec: RunSpec = {
    variants,
    payoff: {
      factory: BUILTIN_TEST_PAYOFFS,
      description: [{ kind: 'call', equity: 'ALDR', strike: DEMO.strike, expiry: DEMO.expiry }],
    },
    grid: { eventTimes: [DEMO.expiry], maxStep: 0.25 },
    seed: o.seed,
    maxPaths: o.paths,
    // Independent of --workers, so every worker count gives the same numbers.
    batchSize: Math.min(4096, Math.max(2, Math.ceil(o.paths / 16))),
  };
  const executor: BatchExecutor = o.workers > 1 ? makeNodeWorkerExecutor(o.workers) : inProcessExecutor();
  let result;
  try {
    result = await runSimulation(spec, executor, { onProgress: (p) => io.progress(p.fraction, 'simulate') });
  } finally {
    await executor.close();
  }
  const st = columnStats(result.sums);
  const curve = makeCurve({
    currency: 'DOM',
    times: [1, 5, 10],
    zeroRates: [DEMO.rate, DEMO.rate, DEMO.rate],
  });
  const analytic = [
    bsPrice({
      type: 'call',
      S: DEMO.spot,
      K: DEMO.strike,
      T: DEMO.expiry,
      r: -Math.log(curve.df(DEMO.expiry)) / DEMO.expiry,
      q: DEMO.q,
      vol: DEMO.vol,
    }),
    bsHullWhite({
      type: 'call',
      S: DEMO.spot,
      K: DEMO.strike,
      T: DEMO.expiry,
      q: DEMO.q,
      curve,
      vol: DEMO.vol,
      hw: DEMO.hw,
      rho: DEMO.rhoSr,
    }).price,
  ];
  const rows = variants.map((v, i) => ({
    model: v.label,
    price: st.mean(i),
    stdError: st.se(i),
    analytic: analytic[i]!,
  }));
  const diff = {
    price: st.mean(1) - st.mean(0),
    stdError: st.seOfDifference(0, 1),
    analytic: analytic[1]! - analytic[0]!,
  };
  if (o.json) {
    io.out(
      JSON.stringify(
        {
          format: SIMULATE_RESULTS_FORMAT,
          deal: { kind: 'european-call', underlying: 'ALDR', currency: 'DOM', ...DEMO },
          paths: result.paths,
          seed: o.seed,
          workers: o.workers,
          results: rows,
          difference: diff,
          elapsedMs: Math.round(result.elapsedMs),
          caution: CAUTION,
        },
        null,
        2,
      ),
    );
    return EXIT.ok;
  }
  const f = (x: number, d = 4) => x.toFixed(d).padStart(10);
  io.out(
    `Invented demo: European call on ALDR (DOM), S0 ${DEMO.spot}, K ${DEMO.strike}, ${DEMO.expiry}y; DOM curve flat ${DEMO.rate * 100}%,`,
  );
  io.out(
    `Hull-White a ${DEMO.hw.a}, sigma ${DEMO.hw.sigma}, corr(ALDR, DOM rate) ${DEMO.rhoSr}; ${result.paths} paths, seed ${o.seed}, ${o.workers} worker(s)`,
  );
  io.out('');
  io.out(`${'model'.padEnd(28)}${'price'.padStart(10)}${'std err'.padStart(10)}${'analytic'.padStart(10)}`);
  for (const r of rows) io.out(`${r.model.padEnd(28)}${f(r.price)}${f(r.stdError)}${f(r.analytic)}`);
  io.out(`${'difference (paired paths)'.padEnd(28)}${f(diff.price)}${f(diff.stdError)}${f(diff.analytic)}`);
  io.out('');
  io.out(`${Math.round(result.elapsedMs)} ms. ${CAUTION}`);
  return EXIT.ok;
}

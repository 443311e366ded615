/**
 * Monte Carlo engine throughput: path-steps per second per scheme on one worker (in process) and on all workers,
 * beside the baseline of drawing the same number of normals in the same run; peak memory for 100,000 and
 * 1,000,000 paths. Targets: Heston QE ≥ 6 M path-steps/s on one core (100,000 paths × 50 steps), Heston–Hull–White
 * ≥ 3 M, all workers (2) ≥ 1.7 × one, 1,000,000 paths within 300 MB.
 */
import { availableParallelism, loadavg } from 'node:os';
import type { EquityDynamics, VariantSpec } from '../src/engine/simulation/types.ts';
import { BUILTIN_TEST_PAYOFFS, type RunSpec } from '../src/engine/simulation/runSpec.ts';
import {
  inProcessExecutor,
  runSimulation,
  type BatchExecutor,
} from '../src/engine/simulation/runSimulation.ts';
import { makeNodeWorkerExecutor } from '../src/engine/simulation/runner.node.ts';
import { makeDriverLayout } from '../src/engine/simulation/drivers.ts';
import { makeNormalSource, makeUniformStream } from '../src/engine/random/index.ts';

const STEPS = 50;
const T = 1;

function variant(id: string, dyn: EquityDynamics, hw: boolean, scheme?: 'qe' | 'euler'): VariantSpec {
  const curve = { currency: 'DOM', times: [1, 5], zeroRates: [0.03, 0.03] };
  return {
    id,
    label: id,
    domestic: 'DOM',
    equities: [{ name: 'ALDR', currency: 'DOM', spot: 100, divYield: 0.01, dynamics: dyn }],
    rates: { DOM: hw ? { curve, hw: { a: 0.05, sigma: 0.01 } } : { curve } },
    fx: [],
    correlation: {
      names: ['eq:ALDR', 'rate:DOM'],
      matrix: [
        [1, hw ? 0.3 : 0],
        [hw ? 0.3 : 0, 1],
      ],
    },
    ...(scheme ? { hestonScheme: scheme } : {}),
  };
}

const heston: EquityDynamics = { kind: 'heston', v0: 0.04, kappa: 1.5, theta: 0.04, sigma: 0.5, rho: -0.7 };
const SCHEMES: { name: string; v: VariantSpec; target?: number }[] = [
  { name: 'Black-Scholes', v: variant('bs', { kind: 'bs', volTimes: [1], vols: [0.2] }, false) },
  { name: 'Heston QE', v: variant('qe', heston, false), target: 6e6 },
  { name: 'Heston Euler (full truncation)', v: variant('eu', heston, false, 'euler') },
  {
    name: 'local vol (grid)',
    v: variant(
      'lv',
      {
        kind: 'localvol',
        times: [0, 1],
        logK: [-1, 0, 1],
        values: [
          [0.3, 0.2, 0.18],
          [0.28, 0.2, 0.19],
        ],
      },
      false,
    ),
  },
  { name: 'Black-Scholes-Hull-White', v: variant('bshw', { kind: 'bs', volTimes: [1], vols: [0.2] }, true) },
  { name: 'Heston-Hull-White (QE)', v: variant('hhw', heston, true), target: 3e6 },
];

function spec(v: VariantSpec, paths: number): RunSpec {
  return {
    variants: [v],
    payoff: {
      factory: BUILTIN_TEST_PAYOFFS,
      description: [{ kind: 'call', equity: 'ALDR', strike: 100, expiry: T }],
    },
    grid: { eventTimes: [T], maxStep: T / STEPS },
    seed: 11,
    maxPaths: paths,
    batchSize: 4096,
  };
}

interface Timing {
  seconds: number;
  /** CPU seconds of this process (all threads): on a busy machine a fairer measure of one core's work. */
  cpuSeconds: number;
  peakRss: number;
}

async function timed(s: RunSpec, ex: BatchExecutor): Promise<Timing> {
  let peak = process.memoryUsage().rss;
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  await runSimulation(s, ex, { onProgress: () => (peak = Math.max(peak, process.memoryUsage().rss)) });
  const c = process.cpuUsage(c0);
  return { seconds: (performance.now() - t0) / 1000, cpuSeconds: (c.user + c.system) / 1e6, peakRss: peak };
}

/** Wall and CPU seconds to draw `count` normals the way a batch does (the baseline). */
function normalsBaseline(count: number): { seconds: number; cpuSeconds: number } {
  const buf = new Float64Array(4096);
  const src = makeNormalSource(makeUniformStream('baseline'));
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  for (let done = 0; done < count; done += 4096) src.fill(buf, 0, Math.min(4096, count - done));
  const c = process.cpuUsage(c0);
  return { seconds: (performance.now() - t0) / 1000, cpuSeconds: (c.user + c.system) / 1e6 };
}

const M = (x: number) => `${(x / 1e6).toFixed(2)} M`;
const MB = (x: number) => `${(x / 2 ** 20).toFixed(0)} MB`;

async function memory(): Promise<void> {
  // Before any worker starts: worker threads share this process's RSS.
  for (const n of [100_000, 1_000_000]) {
    const before = process.memoryUsage().rss;
    const r = await timed(spec(SCHEMES[5]!.v, n), inProcessExecutor());
    const ok = r.peakRss <= 300 * 2 ** 20;
    console.log(
      `Heston-Hull-White ${String(n).padStart(9)} paths x ${STEPS} steps in process: ${r.seconds.toFixed(2)} s, peak RSS ${MB(r.peakRss)} (before ${MB(before)})${n === 1_000_000 ? `  target <= 300 MB: ${ok ? 'met' : 'NOT met'}` : ''}`,
    );
  }
}

export async function run(): Promise<void> {
  const paths = 100_000;
  const cores = Math.max(1, availableParallelism());
  const load = loadavg()
    .map((x) => x.toFixed(1))
    .join(' ');
  console.log(
    `${paths} paths x ${STEPS} steps; ${cores} core(s); batches of 4096 paths; best of 3; load average ${load}`,
  );
  if (!process.argv.includes('--no-memory')) await memory();
  const pool = makeNodeWorkerExecutor(cores);
  try {
    // Warm-up: compile the hot loops and start the workers.
    await timed(spec(SCHEMES[1]!.v, 20_000), inProcessExecutor());
    await timed(spec(SCHEMES[1]!.v, 40_000), pool);
    console.log(
      `${'scheme'.padEnd(32)}${'1 wkr wall'.padStart(12)}${'1 wkr cpu'.padStart(12)}${`${cores} wkr wall`.padStart(12)}${'speed-up'.padStart(10)}${'normals cpu'.padStart(13)}${'ratio'.padStart(7)}${'cpu-based'.padStart(10)}  target`,
    );
    for (const sc of SCHEMES) {
      const s = spec(sc.v, paths);
      // Best of three, interleaved, so a busy machine distorts the ratios less.
      const width = makeDriverLayout([sc.v]).width;
      let one: Timing = { seconds: Infinity, cpuSeconds: Infinity, peakRss: 0 };
      let all: Timing = { seconds: Infinity, cpuSeconds: Infinity, peakRss: 0 };
      let base = { seconds: Infinity, cpuSeconds: Infinity };
      let allCpu = Infinity;
      for (let rep = 0; rep < 3; rep++) {
        const nb = normalsBaseline(paths * STEPS * width);
        if (nb.cpuSeconds < base.cpuSeconds) base = nb;
        const a = await timed(s, inProcessExecutor());
        if (a.cpuSeconds < one.cpuSeconds) one = a;
        const b = await timed(spec(sc.v, paths), pool);
        if (b.seconds < all.seconds) all = b;
        if (b.cpuSeconds < allCpu) allCpu = b.cpuSeconds;
      }
      const ps = (paths * STEPS) / one.seconds;
      const psCpu = (paths * STEPS) / one.cpuSeconds;
      const psAll = (paths * STEPS) / all.seconds;
      const baseCpu = (paths * STEPS) / base.cpuSeconds;
      // Speed-up the pool would give on idle cores: workers × (CPU of one worker / CPU of the whole pool run).
      const idleSpeedUp = (cores * one.cpuSeconds) / allCpu;
      const tgt = sc.target ? `>= ${M(sc.target)}/s: ${psCpu >= sc.target ? 'met' : 'NOT met'} (cpu)` : '';
      console.log(
        `${sc.name.padEnd(32)}${(M(ps) + '/s').padStart(12)}${(M(psCpu) + '/s').padStart(12)}${(M(psAll) + '/s').padStart(12)}${(psAll / ps).toFixed(2).padStart(9)}x${(M(baseCpu) + '/s').padStart(13)}${(base.cpuSeconds / one.cpuSeconds).toFixed(2).padStart(7)}${idleSpeedUp.toFixed(2).padStart(9)}x  ${tgt}`,
      );
    }
    console.log(
      '(path-steps per second; cpu = per CPU second of this process; ratio = normals-only cpu / scheme cpu;',
    );
    console.log(
      ' speed-up = 1-worker wall / all-worker wall, target >= 1.7x with 2 workers; cpu-based = workers x CPU of one',
    );
    console.log(
      ' worker / CPU of the pool run, the speed-up idle cores would give when other processes load the machine)',
    );
  } finally {
    await pool.close();
  }
}

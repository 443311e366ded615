import { describe, it, expect } from 'vitest';
import { inProcessExecutor, runSimulation } from '../../../src/engine/simulation/runSimulation.ts';
import { makeNodeWorkerExecutor } from '../../../src/engine/simulation/runner.node.ts';
import { columnStats } from '../../../src/engine/simulation/momentSums.ts';
import { EngineError } from '../../../src/engine/errors.ts';
import { bsPrice } from '../../../src/engine/models/blackScholes.ts';
import { bsDyn, oneEquity, spec } from './helpers.ts';

const heston = oneEquity({
  id: 'h',
  spot: 100,
  r: 0.02,
  dynamics: { kind: 'heston', v0: 0.04, kappa: 1.5, theta: 0.04, sigma: 0.5, rho: -0.7 },
  hw: { a: 0.05, sigma: 0.01 },
  rhoSr: 0.2,
});
const bs = oneEquity({ id: 'bs', spot: 100, r: 0.02, dynamics: bsDyn(0.2) });
const payoffs = [
  { kind: 'call' as const, equity: 'A', strike: 100, expiry: 2 },
  { kind: 'zcb' as const, maturity: 2 },
];

describe('the runner gives the same numbers for any number of workers', () => {
  it('1 worker, 2 workers and in-process runs are bit-identical', async () => {
    const s = spec([bs, heston], payoffs, { maxStep: 0.25, paths: 24_000, batchSize: 3000 });
    const inProc = await runSimulation(s, inProcessExecutor());
    const w1 = makeNodeWorkerExecutor(1);
    const w2 = makeNodeWorkerExecutor(2);
    try {
      const r1 = await runSimulation(s, w1);
      const r2 = await runSimulation(s, w2);
      expect(Array.from(r1.sums.mean)).toEqual(Array.from(inProc.sums.mean));
      expect(Array.from(r2.sums.mean)).toEqual(Array.from(r1.sums.mean));
      expect(Array.from(r2.sums.comoment)).toEqual(Array.from(r1.sums.comoment));
      expect(r2.paths).toBe(24_000);
      expect(r2.batches).toBe(8);
    } finally {
      await w1.close();
      await w2.close();
    }
  });

  it('a worker pool stops dispatching on cancellation and returns a partial result in batch order', async () => {
    const s = spec([heston], payoffs, { maxStep: 0.05, paths: 2_000_000, batchSize: 2000 });
    const ac = new AbortController();
    const w = makeNodeWorkerExecutor(2);
    try {
      const r = await runSimulation(s, w, {
        signal: ac.signal,
        onProgress: (p) => p.batchesDone === 2 && ac.abort(),
      });
      expect(r.partial).toBe(true);
      expect(r.batches).toBe(2);
      const ref = await runSimulation({ ...s, maxPaths: 4000 }, inProcessExecutor());
      expect(Array.from(r.sums.mean)).toEqual(Array.from(ref.sums.mean));
    } finally {
      await w.close();
    }
  });

  it('a worker that dies fails the run with a clear error instead of hanging', async () => {
    const factory = new URL('./fixtures/crashingFactory.ts', import.meta.url).href;
    const s = {
      ...spec([bs], payoffs, { maxStep: 0.25, paths: 4000, batchSize: 2000 }),
      payoff: { factory, description: null },
      grid: { eventTimes: [1], maxStep: 0.25 },
    };
    const w = makeNodeWorkerExecutor(1);
    try {
      await expect(runSimulation(s, w)).rejects.toThrow(/simulation worker failed: worker crash/);
    } finally {
      await w.close();
    }
  });

  it('a worker reports a bad input as an EngineError naming the field', async () => {
    const bad = spec([{ ...bs, equities: [{ ...bs.equities[0]!, spot: -1 }] }], payoffs, {
      maxStep: 0.25,
      paths: 2000,
      batchSize: 1000,
    });
    const w = makeNodeWorkerExecutor(1);
    try {
      await expect(runSimulation(bad, w)).rejects.toThrow(/equities\[0\]\.spot/);
    } finally {
      await w.close();
    }
  });
});

describe('stopping rules', () => {
  it('stops at a target standard error, at a batch boundary, identically every time', async () => {
    const s = {
      ...spec([bs], payoffs.slice(0, 1), { maxStep: 2, paths: 1_000_000, batchSize: 2000 }),
      targetSe: { se: 0.1 },
    };
    const a = await runSimulation(s, inProcessExecutor());
    const b = await runSimulation(s, inProcessExecutor());
    expect(a.stopReason).toBe('target-se');
    expect(columnStats(a.sums).se(0)).toBeLessThanOrEqual(0.1);
    expect(a.paths).toBeLessThan(1_000_000);
    expect(a.paths % 2000).toBe(0);
    expect(b.paths).toBe(a.paths);
    expect(b.sums.mean[0]).toBe(a.sums.mean[0]);
  });

  it('cancellation stops within one batch and marks the result partial', async () => {
    const s = spec([heston], payoffs, { maxStep: 0.05, paths: 2_000_000, batchSize: 2000 });
    const ac = new AbortController();
    const seen: number[] = [];
    const r = await runSimulation(s, inProcessExecutor(), {
      signal: ac.signal,
      onProgress: (p) => {
        seen.push(p.batchesDone);
        if (p.batchesDone === 3) ac.abort();
      },
    });
    expect(r.partial).toBe(true);
    expect(r.stopReason).toBe('cancelled');
    expect(r.batches).toBe(3);
    expect(seen).toEqual([1, 2, 3]);
  });

  it('rejects a zero path budget naming the setting', async () => {
    const s = spec([bs], payoffs, { maxStep: 0.25, paths: 0 });
    await expect(runSimulation(s, inProcessExecutor())).rejects.toBeInstanceOf(EngineError);
    await expect(runSimulation(s, inProcessExecutor())).rejects.toThrow(/maxPaths/);
  });

  it('rejects a stopping rule or a control that names a column that does not exist', async () => {
    const base = spec([bs], payoffs.slice(0, 1), { maxStep: 2, paths: 4000, batchSize: 2000 });
    await expect(
      runSimulation({ ...base, targetSe: { se: 0.1, columns: [3] } }, inProcessExecutor()),
    ).rejects.toThrow(/targetSe\.columns\[0\] must be a column index 0\.\.0/);
    await expect(
      runSimulation({ ...base, controls: [{ target: 0, control: 2, known: {} }] }, inProcessExecutor()),
    ).rejects.toThrow(/controls\[0\]\.control/);
  });

  it('reports a control-variate estimate with a smaller standard error', async () => {
    // Control variate with known mean (Glasserman 2003, Sec. 4.1): the discounted asset S(T)/B(T) = S0 e^{−qT}.
    const s = {
      ...spec(
        [bs],
        [
          { kind: 'call' as const, equity: 'A', strike: 90, expiry: 1 },
          { kind: 'discountedAsset' as const, equity: 'A', time: 1 },
        ],
        { maxStep: 1, paths: 20_000 },
      ),
      controls: [{ target: 0, control: 1, known: { bs: 100 } }],
    };
    const r = await runSimulation(s, inProcessExecutor());
    const c = r.controlled[0]!;
    expect(c.se).toBeLessThan(columnStats(r.sums).se(0) / 2);
    // Second method in the project: the Black–Scholes closed form of the models layer.
    const exact = bsPrice({ type: 'call', S: 100, K: 90, T: 1, r: 0.02, q: 0, vol: 0.2 });
    expect(Math.abs(c.mean - exact), `cv ${c.mean} ± ${c.se}, exact ${exact}`).toBeLessThanOrEqual(3 * c.se);
  });
});

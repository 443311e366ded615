import { describe, it, expect } from 'vitest';
import type { VariantSpec } from '../../../src/engine/simulation/types.ts';
import { makeTimeGrid } from '../../../src/engine/simulation/timeGrid.ts';
import { makeDriverLayout } from '../../../src/engine/simulation/drivers.ts';
import { normalsBlockSize, prepareVariant } from '../../../src/engine/simulation/pathGenerator.ts';
import { makeNormalSource, makeUniformStream } from '../../../src/engine/random/index.ts';
import {
  makeWebWorkerExecutor,
  serveBatchesInWorker,
  type WorkerLike,
} from '../../../src/engine/simulation/runner.web.ts';
import { inProcessExecutor, runSimulation } from '../../../src/engine/simulation/runSimulation.ts';
import { bsDyn, flatRate, spec } from './helpers.ts';

const twoEquities: VariantSpec = {
  id: 'two',
  label: 'two equities',
  domestic: 'DOM',
  equities: [
    { name: 'ALDR', currency: 'DOM', spot: 100, divYield: 0, dynamics: bsDyn(0.2) },
    {
      name: 'BRIX',
      currency: 'DOM',
      spot: 50,
      divYield: 0.02,
      dynamics: { kind: 'heston', v0: 0.09, kappa: 2, theta: 0.09, sigma: 0.3, rho: -0.5 },
    },
  ],
  rates: { DOM: flatRate('DOM', 0.02) },
  fx: [],
  correlation: {
    names: ['eq:ALDR', 'eq:BRIX'],
    matrix: [
      [1, 0.6],
      [0.6, 1],
    ],
  },
};

describe('several equities', () => {
  it('one-step log returns carry the equity correlation of the spec', () => {
    // Sample correlation of bivariate normals has standard error ≈ (1 − ρ²)/√n (common practice).
    const grid = makeTimeGrid([0.01], 0.01);
    const layout = makeDriverLayout([twoEquities]);
    const pv = prepareVariant(twoEquities, grid, layout);
    const n = 50_000;
    const z = new Float64Array(normalsBlockSize(grid, layout, n));
    makeNormalSource(makeUniformStream('corr')).fill(z, 0, z.length);
    const b = pv.simulate(z, n);
    const x = Float64Array.from({ length: n }, (_, p) => Math.log(b.equity.ALDR![n + p]! / 100));
    const y = Float64Array.from({ length: n }, (_, p) => Math.log(b.equity.BRIX![n + p]! / 50));
    const mx = x.reduce((s, v) => s + v, 0) / n;
    const my = y.reduce((s, v) => s + v, 0) / n;
    let sxy = 0,
      sxx = 0,
      syy = 0;
    for (let p = 0; p < n; p++) {
      sxy += (x[p]! - mx) * (y[p]! - my);
      sxx += (x[p]! - mx) ** 2;
      syy += (y[p]! - my) ** 2;
    }
    const c = sxy / Math.sqrt(sxx * syy);
    expect(Math.abs(c - 0.6), `sample correlation ${c}`).toBeLessThanOrEqual(
      (3 * (1 - 0.36)) / Math.sqrt(n) + 0.01,
    );
    expect(b.variance.BRIX).toBeDefined();
    expect(b.variance.ALDR).toBeUndefined();
  });
});

/** A Web Worker stand-in: messages cross by structuredClone on the task queue, as in a browser. */
function fakeWorkerPair(): WorkerLike {
  const toWorker: ((e: { data: unknown }) => void)[] = [];
  const toPage: ((e: { data: unknown }) => void)[] = [];
  serveBatchesInWorker({
    postMessage: (m) => setTimeout(() => toPage.forEach((h) => h({ data: structuredClone(m) })), 0),
    addEventListener: (_t, h) => toWorker.push(h),
  });
  return {
    postMessage: (m) => setTimeout(() => toWorker.forEach((h) => h({ data: structuredClone(m) })), 0),
    addEventListener: (t, h) => {
      if (t === 'message') toPage.push(h);
    },
    terminate: () => {},
  };
}

describe('browser adapter', () => {
  it('serves batches over worker messages with the same numbers as in process', async () => {
    const s = spec([twoEquities], [{ kind: 'call', equity: 'BRIX', strike: 50, expiry: 1 }], {
      maxStep: 0.25,
      paths: 6000,
      batchSize: 1000,
    });
    const web = makeWebWorkerExecutor([fakeWorkerPair(), fakeWorkerPair()]);
    const a = await runSimulation(s, web);
    const b = await runSimulation(s, inProcessExecutor());
    expect(Array.from(a.sums.mean)).toEqual(Array.from(b.sums.mean));
    expect(Array.from(a.sums.comoment)).toEqual(Array.from(b.sums.comoment));
    await web.close();
  });
});

import { describe, it, expect } from 'vitest';
import { runInLooks } from '../../../src/engine/study/runInLooks.ts';
import { batchSums } from '../../../src/engine/simulation/momentSums.ts';
import type { BatchExecutor } from '../../../src/engine/simulation/runSimulation.ts';
import type { RunSpec } from '../../../src/engine/simulation/runSpec.ts';

/** A fake executor: batch b's values are a fixed function of b; batches finish in a scrambled order. */
function fakeExecutor(concurrency: number, delay: (b: number) => number): BatchExecutor {
  return {
    concurrency,
    execute: async (spec, index) => {
      await new Promise((r) => setTimeout(r, delay(index)));
      const n = Math.min(spec.batchSize!, spec.maxPaths - index * spec.batchSize!);
      const a = Float64Array.from({ length: n }, (_, p) => Math.sin(index * 977 + p) * 1e3 + 1 / (p + 1));
      const b = Float64Array.from({ length: n }, (_, p) => Math.cos(index * 131 + p) * 1e-3);
      return { index, paths: n, sums: batchSums([a, b], n), outputs: 1, warnings: [] };
    },
    close: async () => {},
  };
}

const spec = { batchSize: 100, maxPaths: 800 } as unknown as RunSpec;

describe('runInLooks', () => {
  // Merging strictly in batch order makes floating-point sums independent of completion order (common practice:
  // the simulation layer's batch-order merge, Chan, Golub & LeVeque 1979 for the pairwise update).
  it('gives bit-identical sums at every look whatever the concurrency and completion order', async () => {
    const one = await runInLooks({ spec, executor: fakeExecutor(1, () => 0), lookPaths: [200, 400, 800] });
    const three = await runInLooks({
      spec,
      executor: fakeExecutor(3, (b) => ((b * 7) % 5) * 3),
      lookPaths: [200, 400, 800],
    });
    expect(one.looks).toHaveLength(3);
    one.looks.forEach((s, i) => {
      expect(three.looks[i]!.count).toBe(s.count);
      expect(Array.from(three.looks[i]!.mean)).toEqual(Array.from(s.mean));
      expect(Array.from(three.looks[i]!.comoment)).toEqual(Array.from(s.comoment));
    });
    expect(one.looks.map((s) => s.count)).toEqual([200, 400, 800]);
  });
  it('refuses a look that is not on a batch boundary, naming the setting', async () => {
    await expect(
      runInLooks({ spec, executor: fakeExecutor(1, () => 0), lookPaths: [150, 800] }),
    ).rejects.toThrow(/batch size/);
  });
  it('stops with a clear error when cancelled', async () => {
    const ac = new AbortController();
    ac.abort();
    await expect(
      runInLooks({ spec, executor: fakeExecutor(2, () => 1), lookPaths: [800], signal: ac.signal }),
    ).rejects.toThrow(/cancelled/);
  });
});
